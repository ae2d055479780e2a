"""`python -m durability spectrum FILE --band 400:700`: band figures of a spectrum file."""

from __future__ import annotations

import argparse
from typing import Any

from durability.spectra.analysis import AVERAGE_METHODS, Band, analyze_band, compare_spectra
from durability.spectra.importers import QUANTITIES, UNITS, X_UNITS, Spectrum, read_spectrum

HELP = (
    "Read a spectrophotometer export (CSV/TXT or JCAMP-DX) and report the band average, "
    "minimum and maximum (with parabola-refined extremum wavelengths)."
)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """Options of the spectrum command."""
    parser.add_argument("file", help="the export: CSV/TXT with header lines, or JCAMP-DX")
    parser.add_argument("--band", required=True, help="band in nm as START:END, e.g. 400:700")
    parser.add_argument(
        "--average",
        choices=AVERAGE_METHODS,
        default="trapezoid",
        help="band average: trapezoid integral / width (default) or plain mean of samples",
    )
    parser.add_argument("--format", choices=("auto", "text", "jcamp"), default="auto")
    parser.add_argument("--x-unit", choices=X_UNITS, help="x unit when the file does not say")
    parser.add_argument("--y-unit", choices=UNITS, help="y unit when the file does not say")
    parser.add_argument("--quantity", choices=QUANTITIES, help="R or T when the file does not say")
    parser.add_argument(
        "--y-column", type=int, help="column of the y values (from 1) when there are several"
    )
    parser.add_argument(
        "--after",
        metavar="FILE",
        help="the same piece measured after the test: adds the change over the band",
    )
    parser.add_argument(
        "--extremum",
        choices=("minimum", "maximum"),
        default="minimum",
        help="whose wavelength shift --after reports (default minimum, as for an AR witness)",
    )


def _read(path: str, args: argparse.Namespace) -> Spectrum:
    return read_spectrum(
        path,
        file_format=args.format,
        x_unit=args.x_unit,
        y_unit=args.y_unit,
        quantity=args.quantity,
        y_column=args.y_column,
    )


def run(args: argparse.Namespace) -> dict[str, Any]:
    """Read the file(s), analyse the band, return the JSON-ready result."""
    band = Band.parse(args.band)
    spectrum = _read(args.file, args)
    analysis = analyze_band(spectrum, band, average_method=args.average)
    result: dict[str, Any] = {"file": args.file, "format": spectrum.source_format}
    result.update(analysis.as_dict())
    result["unit_inferred"] = spectrum.unit_inferred
    result["import_notes"] = list(spectrum.notes)
    if args.after:
        after = _read(args.after, args)
        change = compare_spectra(
            spectrum, after, band, extremum=args.extremum, average_method=args.average
        )
        result["after"] = {
            "file": args.after,
            "format": after.source_format,
            **change.after.as_dict(),
            "unit_inferred": after.unit_inferred,
            "import_notes": list(after.notes),
        }
        result["change"] = change.as_dict()
    return result
