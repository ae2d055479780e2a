"""JCAMP-DX import: the ASDF compressed forms, the checks, refusals, fuzzing.

Source for the expected decodings: the ASDF character tables and the DIF Y-check
rule of JCAMP-DX 4.24 (R. S. McDonald and P. A. Wilks, Applied Spectroscopy 42(1),
151-162, 1988) [mem]: SQZ @ A-I a-i = 0, +1..+9, -1..-9 as a number's first digit
and sign; DIF % J-R j-r = the same for a difference from the previous value; DUP
S-Z s = repeat count 1..9 (the value or difference occurs that many times in all);
a line ending in DIF form is followed by a line whose first Y repeats its last Y.
Each decoding below was worked by hand from those tables.
"""

from __future__ import annotations

import functools
import importlib.util
import math
from pathlib import Path
from types import ModuleType

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.errors import InputError
from durability.spectra import parse_spectrum, read_spectrum
from durability.spectra.jcamp import decode_xydata, normalise_label

SAMPLES = Path(__file__).resolve().parents[2] / "fixtures" / "instrument-files" / "spectra"
JCAMP_SAMPLES = [
    "ar-mgf2-affn.jdx",
    "ar-mgf2-difdup.jdx",
    "ar-mgf2-pac.jdx",
    "ar-mgf2-xypoints.jdx",
]


def decoded(*lines: str) -> list[float]:
    return [float(y) for y in decode_xydata(list(enumerate(lines, start=1))).ys]


def jdx(data: str, **labels: str) -> str:
    """A minimal JCAMP-DX file around `data`; labels override or add header values."""
    header = {
        "TITLE": "test",
        "JCAMP-DX": "4.24",
        "XUNITS": "NANOMETERS",
        "YUNITS": "%R",
        "XFACTOR": "1",
        "YFACTOR": "1",
    }
    table = labels.pop("XYPOINTS", "")
    header.update({key.replace("_", " "): value for key, value in labels.items()})
    text = "".join(f"##{key}={value}\n" for key, value in header.items() if value != "")
    text += f"##XYPOINTS={table}\n" if table else "##XYDATA=(X++(Y..Y))\n"
    return text + data + "\n##END=\n"


# --- hand-decoded lines --------------------------------------------------------------


def test_sqz_letters_carry_the_first_digit_and_sign() -> None:
    # A23 = +123, b45 = -245, @ = 0, A.5 = 1.5 (SQZ table).
    assert decoded("400A23b45@A.5") == [123, -245, 0, 1.5]


def test_dif_letters_are_differences_from_the_previous_value() -> None:
    # A10 = 110; J = +1 -> 111; % = 0 -> 111; j = -1 -> 110; R2 = +92 -> 202.
    assert decoded("400A10J%jR2") == [110, 111, 111, 110, 202]


def test_dup_repeats_the_previous_difference() -> None:
    # A10 = 110; J = +1 -> 111; U = DUP 3: the difference +1 occurs 3 times in all.
    assert decoded("400A10JU") == [110, 111, 112, 113]


def test_dup_repeats_an_absolute_value_and_takes_several_digits() -> None:
    # A10 U = 110 three times; A S0 = 1 ten times (S0 = DUP 10).
    assert decoded("400A10U") == [110, 110, 110]
    assert decoded("400AS0") == [1] * 10


def test_pac_and_affn_forms() -> None:
    # PAC: the sign is the separator. AFFN: free numbers with exponents.
    assert decoded("400+12-3+4") == [12, -3, 4]
    assert decoded("400 1.5E+01 2 -3.25") == [15, 2, -3.25]


def test_the_dif_y_check_value_is_checked_and_dropped() -> None:
    # Line 1 ends in DIF (112); line 2 starts with A12 = 112, the check, then J -> 113.
    assert decoded("400A10JJ", "403A12J") == [110, 111, 112, 113]
    # A final line holding only X and the check value closes the table.
    assert decoded("400A10JJ", "402A12") == [110, 111, 112]


def test_no_y_check_after_a_line_that_ends_in_sqz() -> None:
    assert decoded("400A10B20", "402A30") == [110, 220, 130]


def test_a_wrong_y_check_value_names_the_line() -> None:
    with pytest.raises(InputError, match="line 2: Y-check value 113 does not equal .* 112"):
        decoded("400A10JJ", "403A13J")


def test_a_dif_value_cannot_open_a_line() -> None:
    with pytest.raises(InputError, match="line 1: the first Y after X is a DIF"):
        decoded("400J5")


def test_dup_needs_something_to_repeat() -> None:
    with pytest.raises(InputError, match="line 1: DUP"):
        decoded("400U")
    with pytest.raises(InputError, match="line 1: DUP"):
        decoded("400A1TU")


def test_a_missing_value_or_stray_character_names_the_line() -> None:
    with pytest.raises(InputError, match="line 2: '\\?' marks a missing value"):
        decoded("400 1 2", "402 ? 4")
    with pytest.raises(InputError, match="line 1, column 5"):
        decoded("400 !1")


def test_labels_ignore_case_spaces_hyphens_slashes_and_underscores() -> None:
    assert normalise_label("X UNITS") == normalise_label("xunits") == "XUNITS"
    assert normalise_label("JCAMP-DX") == "JCAMPDX"
    assert normalise_label("DATA_TYPE") == "DATATYPE"


# --- the sample files ------------------------------------------------------------------


def test_the_compressed_sample_decodes_to_the_same_values_as_its_affn_form() -> None:
    affn = read_spectrum(str(SAMPLES / "ar-mgf2-affn.jdx"))
    compressed = read_spectrum(str(SAMPLES / "ar-mgf2-difdup.jdx"))
    packed = read_spectrum(str(SAMPLES / "ar-mgf2-pac.jdx"))
    assert compressed.wavelength_nm == affn.wavelength_nm == packed.wavelength_nm
    assert compressed.values == affn.values == packed.values
    assert len(affn.values) == 81
    assert any("DIF, DUP, SQZ" in note and "Y-check" in note for note in compressed.notes)
    raw = (SAMPLES / "ar-mgf2-difdup.jdx").read_text()
    assert any(ch in raw.split("##XYDATA")[1] for ch in "STUVWXYZs")  # DUP really used


def test_the_jcamp_samples_match_the_csv_sample() -> None:
    csv = read_spectrum(str(SAMPLES / "ar-mgf2-header.csv"))
    affn = read_spectrum(str(SAMPLES / "ar-mgf2-affn.jdx"))
    assert affn.wavelength_nm == csv.wavelength_nm
    assert (affn.unit, affn.quantity) == ("%", "R")
    # The JCAMP files hold % to 3 decimals (YFACTOR 0.001), the CSV to 4.
    assert affn.values == pytest.approx(csv.values, abs=5.1e-4)
    points = read_spectrum(str(SAMPLES / "ar-mgf2-xypoints.jdx"))
    assert points.wavelength_nm == csv.wavelength_nm[::4]
    assert points.values == csv.values[::4]


def test_xfactor_scales_the_line_start_x_values() -> None:
    spectrum = parse_spectrum(
        jdx("4000 1 2 3", XFACTOR="0.1", FIRSTX="400", LASTX="402", NPOINTS="3")
    )
    assert spectrum.wavelength_nm == (400.0, 401.0, 402.0)


def test_yfactor_scales_the_values() -> None:
    spectrum = parse_spectrum(
        jdx("400 1000 2000", YFACTOR="0.001", FIRSTX="400", LASTX="401", NPOINTS="2")
    )
    assert spectrum.values == (1.0, 2.0)


# --- consistency checks ----------------------------------------------------------------


def difdup_text() -> str:
    return (SAMPLES / "ar-mgf2-difdup.jdx").read_text()


def test_npoints_disagreeing_with_the_data_is_refused() -> None:
    # Without DELTAX, which would disagree first.
    text = difdup_text().replace("##NPOINTS=81", "##NPOINTS=82").replace("##DELTAX=5\n", "")
    with pytest.raises(InputError, match=r"line \d+: ##NPOINTS=82 but the table .* holds 81"):
        parse_spectrum(text)


def test_a_lost_line_in_dif_data_is_caught() -> None:
    lines = difdup_text().splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("##XYDATA"))
    del lines[start + 3]
    with pytest.raises(InputError, match=r"line \d+: Y-check value"):
        parse_spectrum("\n".join(lines))


def test_a_lost_line_in_affn_data_is_caught_by_the_x_check() -> None:
    lines = (SAMPLES / "ar-mgf2-affn.jdx").read_text().splitlines()
    start = next(i for i, line in enumerate(lines) if line.startswith("##XYDATA"))
    del lines[start + 3]
    with pytest.raises(InputError, match="NPOINTS|a line lost"):
        parse_spectrum("\n".join(lines))


def test_a_line_start_x_out_of_place_is_refused() -> None:
    text = jdx("400 1 2\n410 3 4", FIRSTX="400", LASTX="403", NPOINTS="4")
    with pytest.raises(InputError, match="line 12: X = 410 .* point 3, which lies at 402"):
        parse_spectrum(text)


def test_deltax_must_agree_with_firstx_lastx_npoints() -> None:
    text = jdx("400 1 2 3", FIRSTX="400", LASTX="402", NPOINTS="3", DELTAX="2")
    with pytest.raises(InputError, match="##DELTAX=2 but .* = 1"):
        parse_spectrum(text)


def test_firsty_must_agree_with_the_first_value() -> None:
    text = jdx("400 1 2 3", FIRSTX="400", LASTX="402", NPOINTS="3", FIRSTY="7")
    with pytest.raises(InputError, match="##FIRSTY=7 but the first Y decodes to 1"):
        parse_spectrum(text)


def test_missing_abscissa_labels_are_named() -> None:
    with pytest.raises(InputError, match="needs ##FIRSTX, ##NPOINTS"):
        parse_spectrum(jdx("400 1 2 3", LASTX="402"))


@pytest.mark.parametrize(
    ("labels", "message"),
    [
        ({"XFACTOR": "0"}, "XFACTOR=0"),
        ({"NPOINTS": "2.5"}, "not a whole number"),
        ({"FIRSTX": "abc"}, "is not a number"),
        ({"XUNITS": "SECONDS"}, "not a wavelength or wavenumber unit"),
        ({"YUNITS": "ABSORBANCE"}, "absorbance"),
        ({"YUNITS": "ARBITRARY UNITS"}, "not a reflectance or transmittance"),
        ({"BLOCKS": "2"}, "compound file"),
        ({"NTUPLES": "NMR SPECTRUM"}, "NTUPLES"),
        ({"PEAK TABLE": "(XY..XY)"}, "peak table"),
    ],
)
def test_refusals_name_the_problem(labels: dict[str, str], message: str) -> None:
    base = {"FIRSTX": "400", "LASTX": "402", "NPOINTS": "3"}
    base.update(labels)
    with pytest.raises(InputError, match=message):
        parse_spectrum(jdx("400 1 2 3", **base))


def test_a_file_without_end_or_with_two_blocks_is_refused() -> None:
    text = jdx("400 1 2 3", FIRSTX="400", LASTX="402", NPOINTS="3")
    with pytest.raises(InputError, match="without ##END"):
        parse_spectrum(text.replace("##END=\n", ""))
    with pytest.raises(InputError, match="text after ##END"):
        parse_spectrum(text + text)
    with pytest.raises(InputError, match="second ##TITLE"):
        parse_spectrum(text.replace("##END=\n", "") + text)
    with pytest.raises(InputError, match="line 1: text before the first label"):
        parse_spectrum("hello\n" + text, file_format="jcamp")


def test_wavenumber_and_micrometre_axes_are_converted() -> None:
    wn = parse_spectrum(jdx("20000 1 2", XUNITS="1/CM", FIRSTX="20000", LASTX="19000", NPOINTS="2"))
    assert wn.wavelength_nm == pytest.approx((500.0, 1e7 / 19000), abs=1e-6)
    assert wn.values == (1.0, 2.0)  # sorted with their wavelengths
    um = parse_spectrum(
        jdx("0.5 1 2", XUNITS="MICROMETERS", FIRSTX="0.5", LASTX="0.6", NPOINTS="2")
    )
    assert um.wavelength_nm == (500.0, 600.0)


def test_transmittance_without_percent_is_inferred_from_the_values() -> None:
    text = jdx("400 0.91 0.92", YUNITS="TRANSMITTANCE", FIRSTX="400", LASTX="401", NPOINTS="2")
    spectrum = parse_spectrum(text)
    assert (spectrum.unit, spectrum.quantity, spectrum.unit_inferred) == ("fraction", "T", True)


def test_comments_and_label_spelling_variants_are_accepted() -> None:
    text = jdx("400 1 2 3 $$ a comment", FIRSTX="400", LASTX="402", NPOINTS="3")
    text = text.replace("##XUNITS=", "##X UNITS=").replace("##YUNITS=%R", "##y_units=%R $$ unit")
    spectrum = parse_spectrum(text)
    assert spectrum.values == (1.0, 2.0, 3.0)
    assert (spectrum.unit, spectrum.quantity) == ("%", "R")


def test_xypoints_pairs_and_their_checks() -> None:
    good = jdx("400,1.5; 410,1.25\n420,1.0", XYPOINTS="(XY..XY)", NPOINTS="3", LASTX="420")
    spectrum = parse_spectrum(good)
    assert spectrum.wavelength_nm == (400.0, 410.0, 420.0)
    assert spectrum.values == (1.5, 1.25, 1.0)
    with pytest.raises(InputError, match="ends with an x value that has no y"):
        parse_spectrum(jdx("400,1.5; 410", XYPOINTS="(XY..XY)"))
    with pytest.raises(InputError, match="##LASTX=430 but the table gives 420"):
        parse_spectrum(jdx("400,1.5 410,1.25 420,1", XYPOINTS="(XY..XY)", LASTX="430"))
    with pytest.raises(InputError, match="SQZ value in ##XYPOINTS"):
        parse_spectrum(jdx("400,A5 410,1.25", XYPOINTS="(XY..XY)"))


# --- round trip through the sample generator's encoder ---------------------------------


@functools.cache
def _generator() -> ModuleType:
    spec = importlib.util.spec_from_file_location("make_samples", SAMPLES / "make_samples.py")
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@settings(max_examples=150)
@given(
    ys=st.lists(st.integers(min_value=-4_000, max_value=120_000), min_size=2, max_size=60),
    per_line=st.integers(min_value=1, max_value=12),
    runs=st.lists(st.integers(min_value=0, max_value=4), max_size=10),
)
def test_dif_dup_encoding_round_trips(ys: list[int], per_line: int, runs: list[int]) -> None:
    # Insert runs of equal steps so DUP is exercised.
    for run in runs:
        if run:
            last, step = ys[-1], ys[-1] - ys[-2]
            ys.extend([last + step * (k + 1) for k in range(run)])
    xs = list(range(1000, 1000 + len(ys)))
    lines = _generator().difdup_lines(xs, ys, per_line)
    text = jdx(
        "\n".join(lines),
        FIRSTX=str(xs[0]),
        LASTX=str(xs[-1]),
        NPOINTS=str(len(ys)),
        YUNITS="%R",
        YFACTOR="0.000001",  # keeps every generated value within -5 % .. 150 %
    )
    spectrum = parse_spectrum(text)
    assert spectrum.values == tuple(y * 0.000001 for y in ys)


# --- fuzz --------------------------------------------------------------------------------

_ALPHABET = list("0123456789.+-, ?@ABCDEFGHIabcdefghiJKLMNOPQRjklmnopqr%STUVWXYZs$#=\n")


@settings(max_examples=200)
@given(
    name=st.sampled_from(JCAMP_SAMPLES),
    edits=st.lists(
        st.tuples(
            st.sampled_from(["delete", "replace", "insert", "truncate"]),
            st.integers(min_value=0, max_value=5000),
            st.sampled_from(_ALPHABET),
        ),
        min_size=1,
        max_size=4,
    ),
)
def test_fuzz_mutated_jcamp_files_give_a_spectrum_or_input_error(
    name: str, edits: list[tuple[str, int, str]]
) -> None:
    text = (SAMPLES / name).read_text()
    for action, position, char in edits:
        position %= max(len(text), 1)
        if action == "delete":
            text = text[:position] + text[position + 1 :]
        elif action == "replace":
            text = text[:position] + char + text[position + 1 :]
        elif action == "insert":
            text = text[:position] + char + text[position:]
        else:
            text = text[:position]
    try:
        spectrum = parse_spectrum(text, filename=name)
    except InputError:
        return
    assert all(math.isfinite(v) for v in spectrum.values)


@settings(max_examples=150)
@given(st.lists(st.text(alphabet=_ALPHABET, max_size=30), max_size=8))
def test_fuzz_random_data_lines_give_a_spectrum_or_input_error(lines: list[str]) -> None:
    text = jdx("\n".join(lines), FIRSTX="400", LASTX="410", NPOINTS="11")
    try:
        parse_spectrum(text)
    except InputError:
        pass
