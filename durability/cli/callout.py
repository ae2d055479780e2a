"""``python -m durability callout``: read requirement callouts into structured requirements."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any

from durability.callouts import ParseOptions, parse_callouts
from durability.errors import InputError
from durability.grading import BoundaryConvention

HELP = (
    "Read requirement callouts (MIL coating specs, ISO 9022 test codes, ISO 9211-4 methods, "
    "crosshatch classes, scratch-dig, ISO 10110-7) into structured requirements."
)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Callout text as an argument, from ``--file PATH``, or ``-`` for standard input."""
    parser.add_argument(
        "text",
        nargs="?",
        help="the callouts (newlines, commas or semicolons between them); '-' reads stdin",
    )
    parser.add_argument("--file", metavar="PATH", help="read the callouts from a UTF-8 text file")
    parser.add_argument(
        "--mil-48497-temperature-solvent-basic",
        action="store_true",
        help="treat MIL-C-48497A temperature and solvent solubility as basic tests "
        "(default: when specified; sources disagree)",
    )
    parser.add_argument(
        "--crosshatch-boundary",
        choices=[c.value for c in BoundaryConvention],
        default=BoundaryConvention.BETTER_CLASS.value,
        help="class of a share exactly on a class boundary (default: better)",
    )


def _read_text(args: argparse.Namespace) -> str:
    if args.file is not None and args.text is not None:
        raise InputError("give the callouts either as text or with --file, not both")
    if args.file is not None:
        path = Path(args.file)
        try:
            return path.read_text(encoding="utf-8-sig")
        except FileNotFoundError:
            raise InputError(f"file {args.file!r} not found") from None
        except IsADirectoryError:
            raise InputError(f"{args.file!r} is a directory, not a file") from None
        except UnicodeDecodeError as exc:
            raise InputError(
                f"file {args.file!r} is not UTF-8 text (byte {exc.start}: {exc.reason})"
            ) from None
        except OSError as exc:
            raise InputError(f"file {args.file!r} cannot be read: {exc.strerror}") from None
    if args.text is None:
        raise InputError("no callouts given: pass the text, '-' for stdin, or --file PATH")
    if args.text == "-":
        try:
            return sys.stdin.read()
        except UnicodeDecodeError as exc:
            raise InputError(f"standard input is not UTF-8 text ({exc.reason})") from None
    return str(args.text)


def run(args: argparse.Namespace) -> dict[str, Any] | tuple[dict[str, Any], int]:
    """Print every requirement read; exit 2 (still printing them) when a callout has an error."""
    options = ParseOptions(
        mil_48497_temperature_solvent_basic=args.mil_48497_temperature_solvent_basic,
        crosshatch_boundary=BoundaryConvention(args.crosshatch_boundary),
    )
    result = parse_callouts(_read_text(args), options)
    payload = result.as_json()
    if result.errors:
        for error in result.errors:
            print(f"callout: {error}", file=sys.stderr)
        return payload, 2
    return payload
