"""End-to-end checks of ``python -m durability callout``."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from durability.cli import main

ROOT = Path(__file__).resolve().parents[2]


def run_command(*args: str, stdin: str | None = None) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "durability", "callout", *args],
        cwd=ROOT,
        input=stdin,
        capture_output=True,
        text=True,
        encoding="utf-8",
        check=False,
    )


def test_it_prints_requirements_as_one_json_object():
    done = run_command("MIL-C-48497A, severe abrasion, salt fog; ISO 9022-12-06-1")
    assert done.returncode == 0, done.stderr
    payload = json.loads(done.stdout)
    assert set(payload) == {"requirements", "errors"}
    assert payload["errors"] == []
    mil, code = payload["requirements"]
    # MIL-C-48497A basic tests plus the named ones (shared/reference/test-methods.md [pub]).
    assert mil["standard"] == "MIL-C-48497A"
    assert mil["tests"] == [
        "adhesion",
        "humidity",
        "moderate_abrasion",
        "severe_abrasion",
        "salt_fog",
    ]
    assert mil["kind"] == "coating_spec"
    assert mil["text"] == "MIL-C-48497A, severe abrasion, salt fog"
    # ISO 9022 test code MM-SS-O [mem per test-methods.md], method 12 -> part 2.
    assert (code["standard"], code["method"], code["severity"], code["state"]) == (
        "ISO 9022-2",
        "12",
        "06",
        "1",
    )
    assert (code["line"], code["column"]) == (1, 42)
    for requirement in payload["requirements"]:
        assert {
            "text",
            "normal",
            "kind",
            "standard",
            "edition",
            "method",
            "severity",
            "state",
            "tests",
            "limit",
            "assumptions",
            "needs_review",
            "line",
        } <= set(requirement)


def test_a_crosshatch_limit_carries_its_share_in_the_output():
    done = run_command("ISO 2409 class 1 max\nASTM D3359 4B min")
    assert done.returncode == 0, done.stderr
    limits = [r["limit"] for r in json.loads(done.stdout)["requirements"]]
    # ISO 2409 class 1 == ASTM D3359 4B == at most 5 % detached (test-methods.md table [pub]).
    assert [lim["max_share_detached_pct"] for lim in limits] == [5.0, 5.0]


def test_an_error_exits_2_and_still_prints_what_was_read():
    done = run_command("60-40, ISO 9022-12-06-7")
    assert done.returncode == 2
    payload = json.loads(done.stdout)
    assert [r["kind"] for r in payload["requirements"]] == ["scratch_dig"]
    (error,) = payload["errors"]
    assert error == {
        "text": "ISO 9022-12-06-7",
        "line": 1,
        "column": 23,
        "message": error["message"],
    }
    assert "state of operation '7'" in error["message"]
    assert "line 1, column 23" in done.stderr


def test_it_reads_stdin_with_a_dash():
    done = run_command("-", stdin="S/D 60/40\n5/3x0,16; L2x0.004; E0.5\n")
    assert done.returncode == 0, done.stderr
    requirements = json.loads(done.stdout)["requirements"]
    assert [(r["kind"], r["line"]) for r in requirements] == [
        ("scratch_dig", 1),
        ("iso10110_7", 2),
    ]
    assert requirements[0]["limit"] == {"scratch": 60, "dig": 40}


def test_it_reads_a_file(tmp_path, capsys):
    path = tmp_path / "order.txt"
    path.write_text("\ufeff1. Coating per MIL-C-48497\n2. ISO 9211-4-01-02\n", encoding="utf-8")
    assert main(["callout", "--file", str(path)]) == 0
    requirements = json.loads(capsys.readouterr().out)["requirements"]
    mil, method = requirements
    # The revision letter is missing and must not be invented.
    assert (mil["standard"], mil["needs_review"]) == ("MIL-C-48497", True)
    assert (method["method"], method["severity"], method["line"]) == ("01", "02", 2)


def test_a_missing_file_is_bad_input(tmp_path, capsys):
    missing = tmp_path / "nope.txt"
    assert main(["callout", "--file", str(missing)]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    assert "not found" in captured.err and "nope.txt" in captured.err


def test_a_file_that_is_not_utf8_is_bad_input(tmp_path, capsys):
    path = tmp_path / "latin1.txt"
    path.write_bytes("MIL-C-48497A \xb1".encode("latin-1"))
    assert main(["callout", "--file", str(path)]) == 2
    assert "not UTF-8" in capsys.readouterr().err


@pytest.mark.parametrize(
    "argv",
    [
        ["callout"],
        ["callout", "60-40", "--file", "x.txt"],
    ],
)
def test_no_text_or_two_sources_is_bad_input(argv, capsys):
    assert main(argv) == 2
    assert capsys.readouterr().err.startswith("callout: ")


def test_the_options_reach_the_parser(capsys):
    assert main(["callout", "--mil-48497-temperature-solvent-basic", "MIL-C-48497A"]) == 0
    (mil,) = json.loads(capsys.readouterr().out)["requirements"]
    assert "temperature" in mil["tests"] and "solvent_solubility" in mil["tests"]

    assert main(["callout", "--crosshatch-boundary", "worse", "ISO 2409 class 2 max"]) == 0
    (limit,) = json.loads(capsys.readouterr().out)["requirements"]
    assert limit["limit"]["max_share_included"] is False
