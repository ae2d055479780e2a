"""The crosshatch, scratch-dig and surface durability commands, end to end."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from durability.cli import main

ROOT = Path(__file__).resolve().parents[2]


def run_command(*args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "durability", *args],
        cwd=ROOT,
        capture_output=True,
        text=True,
        check=False,
    )


def call(capsys, *args: str) -> tuple[int, dict | None, str]:
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, (json.loads(out) if out.strip() else None), err


# ---------------------------------------------------------------- crosshatch


def test_crosshatch_prints_both_classes_and_the_convention_as_one_json_object():
    # 7 % detached: "over 5 to 15 %" = ISO 2409 class 2 = ASTM D3359 3B (test-methods.md [pub]).
    done = run_command("crosshatch", "7")
    assert done.returncode == 0, done.stderr
    data = json.loads(done.stdout)
    assert data["iso2409"] == 2
    assert data["astm_d3359"] == "3B"
    assert "better class" in data["convention"]
    assert "not as equivalent tests" in data["correspondence"]


def test_crosshatch_boundary_convention_is_an_option(capsys):
    # Exactly 5 %: ISO 2409 words class 1 as "not greater than 5 %" (better), the other reading
    # gives class 2.
    assert call(capsys, "crosshatch", "5")[1]["iso2409"] == 1
    code, data, _ = call(capsys, "crosshatch", "5", "--on-boundary", "worse")
    assert (code, data["iso2409"], data["astm_d3359"]) == (0, 2, "3B")
    assert call(capsys, "crosshatch", "2,5")[1]["iso2409"] == 1


@pytest.mark.parametrize(
    ("value", "message"), [("abc", "is not a number"), ("120", "outside 0-100"), ("nan", "finite")]
)
def test_crosshatch_bad_input_exits_2_with_the_message_on_stderr(capsys, value, message):
    code, data, err = call(capsys, "crosshatch", value)
    assert code == 2
    assert data is None
    assert message in err
    assert err.startswith("crosshatch:")


# ---------------------------------------------------------------- scratch-dig


def test_scratch_dig_evaluates_the_published_worked_example():
    # Sydor Optics "Scratch-Dig Paper", example 1 (public vendor note): 80-50, D = 2.55, one #80,
    # two #60 and one #40 of 0.5 each -> NS = 47 > 40, not good. A failing verdict exits 0.
    done = run_command(
        "scratch-dig",
        "80-50",
        "--aperture-mm",
        "2.55",
        "--scratch",
        "80:0.5",
        "--scratch",
        "60:0.5",
        "--scratch",
        "60:0.5",
        "--scratch",
        "40:0.5",
    )
    assert done.returncode == 0, done.stderr
    data = json.loads(done.stdout)
    assert data["pass"] is False
    assert data["scratch_sum"] == pytest.approx(47.06, abs=0.01)
    assert data["scratch_sum_limit"] == 40
    assert data["diameter_mm"] == 2.55
    assert any("MIL-PRF-13830B" in r for r in data["reasons"])


def test_scratch_dig_uses_the_equal_area_diameter_and_reads_digs(capsys):
    code, data, _ = call(
        capsys,
        "scratch-dig",
        "S/D 60/40",
        "--aperture-mm",
        "25",
        "--aperture-area-mm2",
        "600",
        "--dig",
        "0.5x0.3@0,0",
        "--dig",
        "0.4@30,0",
    )
    assert code == 0
    # sqrt(4 * 600 / pi) = 27.6395 mm (hand).
    assert data["diameter_mm"] == pytest.approx(27.6395, abs=1e-4)
    assert "equal-area" in data["diameter_basis"]
    assert data["max_size_digs"] == 2
    assert data["pass"] is True


def test_scratch_dig_without_an_aperture_is_bad_input(capsys):
    code, data, err = call(capsys, "scratch-dig", "60-40", "--scratch", "40:1")
    assert (code, data) == (2, None)
    assert "--aperture-mm" in err


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--scratch", "60"], "--scratch item 1 '60': expected NUMBER:LENGTH_MM"),
        (["--scratch", "40:1", "--scratch", "x:1"], "--scratch item 2"),
        (["--dig", "0.2@5"], "--dig item 1 '0.2@5': position"),
        (["--dig", "big"], "--dig item 1 'big', diameter"),
        (["--dig", "-0.1"], "dig 1: length or diameter"),
    ],
)
def test_scratch_dig_names_the_bad_item(capsys, args, message):
    code, _, err = call(capsys, "scratch-dig", "60-40", "--aperture-mm", "20", *args)
    assert code == 2
    assert message in err


def test_scratch_dig_bad_callout_names_the_position():
    done = run_command("scratch-dig", "60-4x", "--aperture-mm", "20")
    assert done.returncode == 2
    assert done.stdout == ""
    assert "position 5" in done.stderr


# ---------------------------------------------------------------- surface (ISO 10110-7)


def test_surface_reports_the_area_used_and_the_budget():
    # 5/3x0.16: budget 3 x 0.16^2 = 0.0768 mm2; used 0.1^2 + pi 0.15^2/4 + 1.5 x 0.01
    # = 0.01 + 0.0176715 + 0.015 = 0.0426715 mm2 (hand). The 4 mm scratch is one long scratch.
    done = run_command(
        "surface",
        "5/3x0,16; L2x0.004; E0.5",
        "--imperfection",
        "0.1",
        "--dig",
        "0.15",
        "--long-scratch",
        "1.5:0.01",
        "--long-scratch",
        "4:0.003",
        "--chip",
        "0.4",
    )
    assert done.returncode == 0, done.stderr
    data = json.loads(done.stdout)
    assert data["pass"] is True
    assert data["area_mm2"] == pytest.approx(0.0426715, abs=1e-7)
    assert data["area_budget_mm2"] == pytest.approx(0.0768)
    assert data["long_scratches"] == 1
    assert any("edition assumed" in c for c in data["conventions"])


def test_surface_fails_an_edge_chip_beyond_e(capsys):
    code, data, _ = call(capsys, "surface", "5/3x0.16; E0.5", "--chip", "0.6")
    assert code == 0
    assert data["pass"] is False
    assert "E field" in data["reasons"][0]


def test_surface_bad_input_names_the_field_or_item(capsys):
    code, _, err = call(capsys, "surface", "5/3x0.16; L2")
    assert code == 2
    assert "field 2 'L2'" in err
    code, _, err = call(capsys, "surface", "5/3x0.16", "--long-scratch", "4")
    assert code == 2
    assert "--long-scratch item 1 '4'" in err
    code, _, err = call(
        capsys, "surface", "5/3x0.16", "--imperfection", "0.1", "--imperfection", "?"
    )
    assert code == 2
    assert "--imperfection item 2" in err


@pytest.mark.parametrize("command", ["crosshatch", "scratch-dig", "surface"])
def test_the_help_texts_print(capsys, command):
    # argparse expands % in help strings; a stray % would crash --help.
    for argv in (["--help"], [command, "--help"]):
        with pytest.raises(SystemExit) as stop:
            main(argv)
        assert stop.value.code == 0
    assert command in capsys.readouterr().out
