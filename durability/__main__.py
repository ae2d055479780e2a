import sys

from durability.cli import main

sys.exit(main())
