"""The durability commands: `python -m durability COMMAND ...`.

Every command prints one JSON object on stdout. Exit 0 when a result was
computed (a failing verdict is still a result), 2 on bad input with the
message on stderr.

Each command lives in its own module under `durability.cli` and provides
`HELP` (one line), `add_arguments(parser)` and `run(args)`. `run` returns the
JSON-ready dict, or a `(dict, exit_code)` pair when it must print what it read
and still exit 2 (the callout command does this). It raises
`durability.errors.InputError` for bad input.
"""

from __future__ import annotations

import argparse
import importlib
import json
import sys
from collections.abc import Sequence
from types import ModuleType

from durability.errors import InputError

COMMANDS: dict[str, str] = {
    "callout": "durability.cli.callout",
    "crosshatch": "durability.cli.crosshatch",
    "scratch-dig": "durability.cli.scratch_dig",
    "surface": "durability.cli.surface",
    "exposure": "durability.cli.exposure",
    "spectrum": "durability.cli.spectrum",
    "dewpoint": "durability.cli.dewpoint",
    "schedule": "durability.cli.schedule",
}

EXIT_OK = 0
EXIT_BAD_INPUT = 2


class _Parser(argparse.ArgumentParser):
    """argparse exits 2 on usage errors already; keep its message on stderr."""


def _available() -> dict[str, ModuleType]:
    modules: dict[str, ModuleType] = {}
    for name, path in COMMANDS.items():
        try:
            modules[name] = importlib.import_module(path)
        except ModuleNotFoundError as exc:
            if exc.name != path:
                raise
    return modules


def main(argv: Sequence[str] | None = None) -> int:
    modules = _available()
    parser = _Parser(prog="python -m durability", description=__doc__.splitlines()[0])
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name, module in modules.items():
        command_parser = sub.add_parser(name, help=module.HELP, description=module.HELP)
        module.add_arguments(command_parser)
    args = parser.parse_args(argv)
    module = modules[args.command]
    try:
        result = module.run(args)
    except InputError as exc:
        print(f"{args.command}: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    code = EXIT_OK
    if isinstance(result, tuple):
        result, code = result
    json.dump(result, sys.stdout, ensure_ascii=False, indent=2, default=str)
    sys.stdout.write("\n")
    return code
