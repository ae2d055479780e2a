"""`python -m durability surface "5/3x0.16; L2x0.004; E0.5" ...`: ISO 10110-7 evaluation."""

from __future__ import annotations

import argparse

from durability.cli.crosshatch import parse_number
from durability.errors import InputError
from durability.surface.iso10110 import (
    DEFAULT_EDITION,
    Iso10110Observation,
    Iso10110Settings,
    SurfaceScratch,
    evaluate_iso10110_7,
)

HELP = "Evaluate surface imperfections on one surface against an ISO 10110-7 callout."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Add the command's arguments."""
    parser.add_argument("spec", metavar="SPEC", help='ISO 10110-7 callout, e.g. "5/3x0.16; E0.5"')
    parser.add_argument(
        "--imperfection",
        action="append",
        default=[],
        metavar="SQRT_AREA_MM",
        help="one localized imperfection as the square root of its area in mm (repeat)",
    )
    parser.add_argument(
        "--dig",
        action="append",
        default=[],
        metavar="DIAMETER_MM",
        help="one round dig by diameter in mm; its area is pi d^2/4 (repeat)",
    )
    parser.add_argument(
        "--long-scratch",
        action="append",
        default=[],
        metavar="LENGTH_MM:WIDTH_MM",
        help="one scratch by length and width in mm; up to 2 mm long it counts as a localized "
        "imperfection of area length x width (repeat)",
    )
    parser.add_argument(
        "--coating",
        action="append",
        default=[],
        metavar="SQRT_AREA_MM",
        help="one coating imperfection as the square root of its area in mm (repeat)",
    )
    parser.add_argument(
        "--chip",
        action="append",
        default=[],
        metavar="EXTENT_MM",
        help="one edge chip by its extent from the edge in mm (repeat)",
    )
    parser.add_argument(
        "--edition",
        default=DEFAULT_EDITION,
        help=f"edition applied, recorded in the output (default {DEFAULT_EDITION})",
    )


def _numbers(values: list[str], option: str) -> tuple[float, ...]:
    return tuple(
        parse_number(text, f"{option} item {i} {text!r}") for i, text in enumerate(values, start=1)
    )


def _scratch(text: str, index: int) -> SurfaceScratch:
    what = f"--long-scratch item {index} {text!r}"
    length_text, sep, width_text = text.partition(":")
    if not sep:
        raise InputError(f"{what}: expected LENGTH_MM:WIDTH_MM, e.g. 5:0.004")
    return SurfaceScratch(
        length_mm=parse_number(length_text, f"{what}, length"),
        width_mm=parse_number(width_text, f"{what}, width"),
    )


def run(args: argparse.Namespace) -> dict[str, object]:
    """Evaluate the surface and return the verdict with the areas used."""
    observation = Iso10110Observation(
        imperfections_mm=_numbers(args.imperfection, "--imperfection"),
        dig_diameters_mm=_numbers(args.dig, "--dig"),
        scratches=tuple(_scratch(t, i) for i, t in enumerate(args.long_scratch, start=1)),
        coating_imperfections_mm=_numbers(args.coating, "--coating"),
        edge_chips_mm=_numbers(args.chip, "--chip"),
    )
    settings = Iso10110Settings(edition=args.edition)
    return evaluate_iso10110_7(args.spec, observation, settings).as_json()
