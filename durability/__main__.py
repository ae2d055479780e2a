import os
import sys

from durability.cli import main

try:
    code = main()
    sys.stdout.flush()
except BrokenPipeError:
    # The reader (say `head`) stopped reading: not an error of ours. Python's documented
    # recipe: point stdout at devnull so the interpreter's final flush stays quiet.
    os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    code = 0
sys.exit(code)
