"""`python -m durability scratch-dig SPEC ...`: MIL-PRF-13830B evaluation of one surface."""

from __future__ import annotations

import argparse

from durability.cli.crosshatch import parse_number
from durability.errors import InputError
from durability.surface.scratch_dig import (
    Dig,
    Scratch,
    ScratchDigObservation,
    ScratchDigSettings,
    evaluate_scratch_dig,
)

HELP = "Evaluate scratches and digs on one surface against a MIL-PRF-13830B scratch-dig callout."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Add the command's arguments."""
    parser.add_argument("spec", metavar="SPEC", help='scratch-dig callout, e.g. "60-40"')
    parser.add_argument(
        "--aperture-mm",
        metavar="D",
        help="clear-aperture diameter in mm (needed unless --aperture-area-mm2 is given)",
    )
    parser.add_argument(
        "--aperture-area-mm2",
        metavar="A",
        help="clear-aperture area in mm2 for a non-round aperture; the equal-area diameter "
        "sqrt(4A/pi) is then used",
    )
    parser.add_argument(
        "--scratch",
        action="append",
        default=[],
        metavar="NUMBER:LENGTH_MM",
        help="one scratch: scratch number and length in mm (repeat for each)",
    )
    parser.add_argument(
        "--dig",
        action="append",
        default=[],
        metavar="DIAMETER_MM",
        help="one dig: diameter in mm, or LENGTHxWIDTH for an irregular dig; add @X,Y for its "
        "position in mm (repeat for each)",
    )
    parser.add_argument(
        "--ignore-digs-below-mm",
        metavar="MM",
        default="0.025",
        help="digs smaller than this are disregarded (default 0.025, recalled from memory)",
    )


def _scratch(text: str, index: int) -> Scratch:
    what = f"--scratch item {index} {text!r}"
    number_text, sep, length_text = text.partition(":")
    if not sep:
        raise InputError(f"{what}: expected NUMBER:LENGTH_MM, e.g. 60:3.5")
    try:
        number = int(number_text.strip())
    except ValueError:
        raise InputError(f"{what}: scratch number {number_text!r} is not a whole number") from None
    length = parse_number(length_text, f"{what}, length")
    return Scratch(number=number, length_mm=length)


def _dig(text: str, index: int) -> Dig:
    what = f"--dig item {index} {text!r}"
    size_text, at, position_text = text.partition("@")
    position: tuple[float, float] | None = None
    if at:
        parts = position_text.split(";") if ";" in position_text else position_text.split(",")
        if len(parts) != 2:
            raise InputError(f"{what}: position must be X,Y in mm")
        position = (
            parse_number(parts[0], f"{what}, position x"),
            parse_number(parts[1], f"{what}, position y"),
        )
    lowered = size_text.lower().replace("×", "x")
    if "x" in lowered:
        length_text, _, width_text = lowered.partition("x")
        return Dig(
            length_mm=parse_number(length_text, f"{what}, length"),
            width_mm=parse_number(width_text, f"{what}, width"),
            position_mm=position,
        )
    return Dig(length_mm=parse_number(size_text, f"{what}, diameter"), position_mm=position)


def run(args: argparse.Namespace) -> dict[str, object]:
    """Evaluate the surface and return the verdict with the figures used."""
    diameter = (
        parse_number(args.aperture_mm, "--aperture-mm") if args.aperture_mm is not None else None
    )
    area = (
        parse_number(args.aperture_area_mm2, "--aperture-area-mm2")
        if args.aperture_area_mm2 is not None
        else None
    )
    if diameter is None and area is None:
        raise InputError("give --aperture-mm D or --aperture-area-mm2 A")
    observation = ScratchDigObservation(
        aperture_diameter_mm=diameter,
        aperture_area_mm2=area,
        scratches=tuple(_scratch(t, i) for i, t in enumerate(args.scratch, start=1)),
        digs=tuple(_dig(t, i) for i, t in enumerate(args.dig, start=1)),
    )
    settings = ScratchDigSettings(
        ignore_digs_below_mm=parse_number(args.ignore_digs_below_mm, "--ignore-digs-below-mm")
    )
    return evaluate_scratch_dig(args.spec, observation, settings).as_json()
