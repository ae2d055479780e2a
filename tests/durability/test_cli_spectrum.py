"""`python -m durability spectrum`, end to end."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from durability.cli import main

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = ROOT / "fixtures" / "instrument-files" / "spectra"


def run_cli(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "durability", "spectrum", *args],
        cwd=ROOT,
        capture_output=True,
        text=True,
        check=False,
    )


def test_it_reports_the_band_figures_of_a_csv_export() -> None:
    result = run_cli(str(SAMPLES / "witness-before.csv"), "--band", "400:700")
    assert result.returncode == 0, result.stderr
    data = json.loads(result.stdout)
    # Reference: numpy.trapezoid over the file's own rows (every 2 nm, edges on samples).
    rows = np.loadtxt(SAMPLES / "witness-before.csv", delimiter=",", skiprows=4)
    inside = (rows[:, 0] >= 400) & (rows[:, 0] <= 700)
    expected = np.trapezoid(rows[inside, 1], rows[inside, 0]) / 300.0
    assert data["band_average"] == pytest.approx(expected, rel=1e-12)
    assert data["minimum"] == pytest.approx(rows[inside, 1].min())
    assert data["wavelength_of_minimum_nm"] == 550.0
    assert data["maximum"] == pytest.approx(rows[inside, 1].max())
    assert data["wavelength_of_maximum_nm"] == 400.0
    assert data["unit"] == "%"
    assert data["quantity"] == "R"
    assert data["refined_minimum"]["wavelength_nm"] == pytest.approx(550.0, abs=0.5)
    assert data["refined_maximum"]["wavelength_nm"] is None
    assert "first sample" in data["refined_maximum"]["note"]
    assert "trapezoid" in data["convention"]["average"]


def test_it_reads_jcamp_compressed_files(capsys: pytest.CaptureFixture[str]) -> None:
    code = main(["spectrum", str(SAMPLES / "ar-mgf2-difdup.jdx"), "--band", "450:650"])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    assert data["format"].startswith("JCAMP-DX 4.24 XYDATA")
    assert data["wavelength_of_minimum_nm"] == 550.0


def test_sample_mean_is_offered_and_labelled(capsys: pytest.CaptureFixture[str]) -> None:
    path = str(SAMPLES / "ar-mgf2-wavenumber.csv")
    main(["spectrum", path, "--band", "450:650"])
    trapezoid = json.loads(capsys.readouterr().out)
    main(["spectrum", path, "--band", "450:650", "--average", "sample-mean"])
    mean = json.loads(capsys.readouterr().out)
    assert mean["average_method"] == "sample-mean"
    assert "plain mean" in mean["convention"]["average"]
    # Uneven sampling in nm (even in cm⁻¹): the two averages differ.
    assert mean["band_average"] != pytest.approx(trapezoid["band_average"], rel=1e-6)


def test_after_adds_the_change(capsys: pytest.CaptureFixture[str]) -> None:
    code = main(
        [
            "spectrum",
            str(SAMPLES / "witness-before.csv"),
            "--band",
            "450:650",
            "--after",
            str(SAMPLES / "witness-after-humidity.csv"),
        ]
    )
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    # Quarter-wave point moves by 550 * (1.39 / 1.38 - 1) nm (the samples' model).
    assert data["change"]["extremum_shift_nm"] == pytest.approx(550 * (1.39 / 1.38 - 1), abs=0.3)
    assert data["change"]["band_average_change"] == pytest.approx(
        data["after"]["band_average"] - data["band_average"]
    )


def test_options_state_what_the_file_leaves_unsaid(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = tmp_path / "bare.txt"
    path.write_text("400 1.2\n450 0.6\n500 0.4\n550 0.5\n600 0.9\n")
    assert main(["spectrum", str(path), "--band", "400:600"]) == 2
    assert "no x unit" in capsys.readouterr().err
    code = main(
        [
            "spectrum",
            str(path),
            "--band",
            "400:600",
            "--x-unit",
            "nm",
            "--y-unit",
            "%",
            "--quantity",
            "R",
        ]
    )
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    assert (data["unit"], data["quantity"], data["unit_inferred"]) == ("%", "R", False)


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--band", "700:400"], "start must be below the end"),
        (["--band", "300:700"], "reaches outside the data"),
        (["--band", "four:seven"], "START:END"),
    ],
)
def test_bad_bands_exit_2_with_the_reason_on_stderr(args: list[str], message: str) -> None:
    result = run_cli(str(SAMPLES / "ar-mgf2-header.csv"), *args)
    assert result.returncode == 2
    assert message in result.stderr
    assert result.stdout == ""


def test_a_malformed_file_exits_2_naming_the_line(tmp_path: Path) -> None:
    path = tmp_path / "broken.csv"
    path.write_text("nm,%R\n400,1.8\n450,1.5\n500,??\n550,1.3\n")
    result = run_cli(str(path), "--band", "400:550")
    assert result.returncode == 2
    assert "line 4" in result.stderr
    missing = run_cli(str(tmp_path / "nothing.csv"), "--band", "400:550")
    assert missing.returncode == 2
    assert "cannot read" in missing.stderr
