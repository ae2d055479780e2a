"""Before/after plots: SVG and PNG bytes, limits drawn, deterministic, no pyplot."""

from __future__ import annotations

import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from durability.errors import InputError
from durability.spectra import Band, SpectralLimit, Spectrum, read_spectrum
from durability.spectra.plot import build_figure, plot_spectra

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = ROOT / "fixtures" / "instrument-files" / "spectra"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


def pair() -> tuple[Spectrum, Spectrum]:
    return (
        read_spectrum(str(SAMPLES / "witness-before.csv")),
        read_spectrum(str(SAMPLES / "witness-after-humidity.csv")),
    )


LIMIT = SpectralLimit(Band(450, 650), "R", "average", "<=", 1.5, "%", "R avg <= 1.5 % (invented)")


def test_it_returns_svg_and_png_bytes() -> None:
    before, after = pair()
    result = plot_spectra(before, after, limits=[LIMIT], band=LIMIT.band, title="W-0008")
    root = ET.fromstring(result.svg)
    assert root.tag.endswith("svg")
    assert result.png.startswith(PNG_SIGNATURE)
    assert result.unit == "%"


def test_the_output_is_deterministic_and_undated() -> None:
    before, after = pair()
    first = plot_spectra(before, after, limits=[LIMIT])
    second = plot_spectra(before, after, limits=[LIMIT])
    assert first.svg == second.svg
    assert first.png == second.png
    assert b"<dc:date>" not in first.svg


def test_the_limits_and_both_curves_are_drawn() -> None:
    before, after = pair()
    svg = plot_spectra(before, after, limits=[LIMIT]).svg
    for gid in (b'id="limit-0"', b'id="spectrum-before"', b'id="spectrum-after"'):
        assert gid in svg
    figure, _ = build_figure(before, after, limits=[LIMIT])
    lines = {line.get_gid(): line for line in figure.axes[0].get_lines()}
    assert list(lines["limit-0"].get_xdata()) == [450.0, 650.0]
    assert list(lines["limit-0"].get_ydata()) == [1.5, 1.5]
    assert tuple(lines["spectrum-after"].get_ydata()) == after.values


def test_other_units_are_converted_for_the_plot_and_said() -> None:
    before, after = pair()
    fraction_after = after.in_unit("fraction")
    fraction_limit = SpectralLimit(Band(450, 650), "R", "maximum", "<=", 0.02, "fraction")
    figure, notes = build_figure(before, fraction_after, limits=[fraction_limit])
    lines = {line.get_gid(): line for line in figure.axes[0].get_lines()}
    assert list(lines["limit-0"].get_ydata()) == pytest.approx([2.0, 2.0])
    assert lines["spectrum-after"].get_ydata() == pytest.approx(after.values)
    assert any("after converted from fraction to %" in n for n in notes)
    assert any("drawn in %" in n for n in notes)


def test_r_and_t_are_not_drawn_together() -> None:
    before, _ = pair()
    t = Spectrum((400.0, 800.0), (90.0, 91.0), "%", "T", "test")
    with pytest.raises(InputError, match="not drawn on one axes"):
        plot_spectra(before, t)


def test_importing_the_package_or_plotting_never_loads_pyplot() -> None:
    code = (
        "import sys\n"
        "import durability.spectra\n"
        "assert 'matplotlib' not in sys.modules, 'matplotlib imported at package import'\n"
        "from durability.spectra import Spectrum\n"
        "from durability.spectra.plot import plot_spectra\n"
        "s = Spectrum((400.0, 500.0, 600.0), (1.0, 2.0, 1.5), '%', 'R', 'test')\n"
        "plot_spectra(s)\n"
        "assert 'matplotlib.pyplot' not in sys.modules, 'pyplot loaded'\n"
    )
    result = subprocess.run(
        [sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=False
    )
    assert result.returncode == 0, result.stderr
