"""`python -m durability crosshatch PERCENT_DETACHED`: crosshatch classes for a detached share."""

from __future__ import annotations

import argparse
import math

from durability.errors import InputError
from durability.grading import BoundaryConvention, crosshatch_grade

HELP = "ISO 2409 and ASTM D3359 (method B) crosshatch classes for a detached share in percent."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Add the command's arguments."""
    parser.add_argument(
        "percent_detached",
        metavar="PERCENT_DETACHED",
        help="share of the lattice area detached, 0-100 %%",
    )
    parser.add_argument(
        "--on-boundary",
        choices=[c.value for c in BoundaryConvention],
        default=BoundaryConvention.BETTER_CLASS.value,
        help="class taken by a share exactly on 5, 15, 35 or 65 %% (default: better)",
    )


def parse_number(text: str, what: str) -> float:
    """Read a finite number (decimal point or comma); InputError naming ``what`` otherwise."""
    try:
        value = float(text.strip().replace(",", "."))
    except ValueError:
        raise InputError(f"{what}: {text!r} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{what}: {text!r} is not a finite number")
    return value


def run(args: argparse.Namespace) -> dict[str, object]:
    """Grade the share and return the classes with the convention used."""
    share = parse_number(args.percent_detached, "PERCENT_DETACHED")
    grade = crosshatch_grade(share, args.on_boundary)
    result = grade.as_json()
    return {
        "iso2409": result["iso2409"],
        "astm_d3359": result["astm_d3359"],
        "convention": result["convention"],
        "correspondence": result["correspondence"],
        "share_pct": result["share_pct"],
        "max_share_pct": result["max_share_pct"],
    }
