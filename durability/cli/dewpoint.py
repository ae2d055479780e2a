"""`python -m durability dewpoint TEMP_C RH_PERCENT`: dew point (and frost point) of chamber air."""

from __future__ import annotations

import argparse
import math

from durability.dewpoint import COEFFICIENTS, DEFAULT_COEFFICIENTS, dew_point
from durability.errors import InputError

HELP = "Dew point (Magnus formula) of air at TEMP_C and RH_PERCENT; frost point below 0 °C."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Add the command's arguments."""
    parser.add_argument("temperature", metavar="TEMP_C", help="air temperature, °C")
    parser.add_argument("rh", metavar="RH_PERCENT", help="relative humidity, %% (0 < RH <= 100)")
    parser.add_argument(
        "--coefficients",
        choices=list(COEFFICIENTS),
        default=DEFAULT_COEFFICIENTS.key,
        help=f"Magnus coefficients over water (default: {DEFAULT_COEFFICIENTS.key})",
    )
    parser.add_argument(
        "--surface",
        metavar="C",
        help="temperature of a part's surface: say whether moisture condenses on it",
    )


def _number(text: str, what: str) -> float:
    try:
        value = float(text.strip().replace(",", "."))
    except ValueError:
        raise InputError(f"{what}: {text!r} is not a number") from None
    if not math.isfinite(value):
        raise InputError(f"{what}: {text!r} is not a finite number")
    return value


def run(args: argparse.Namespace) -> dict[str, object]:
    """Compute the dew point and return it with the coefficients used."""
    result = dew_point(
        _number(args.temperature, "TEMP_C"),
        _number(args.rh, "RH_PERCENT"),
        coefficients=args.coefficients,
    )
    output = result.as_dict()
    if args.surface is not None:
        surface = _number(args.surface, "--surface")
        output["surface_c"] = surface
        output["condenses"] = result.condenses_on(surface)
    return output
