"""CSV/TXT spectrophotometer exports: dialects, units, refusals, and fuzzing.

The sample files are checked against the reference library tmm (S. J. Byrnes,
arXiv:1603.02720, `tmm.coh_tmm`), per shared/reference/computations.md, Optics [pub]:
a quarter-wave MgF2-like layer (n 1.38) on glass (n 1.52) at 550 nm.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest
import tmm
from hypothesis import given, settings
from hypothesis import strategies as st

from durability.errors import InputError
from durability.spectra import Spectrum, parse_spectrum, read_spectrum

SAMPLES = Path(__file__).resolve().parents[2] / "fixtures" / "instrument-files" / "spectra"
TEXT_SAMPLES = [
    "ar-mgf2-header.csv",
    "ar-mgf2-semicolon-decimal-comma.txt",
    "ar-mgf2-micrometres.txt",
    "ar-mgf2-wavenumber.csv",
    "ar-mgf2-fraction.csv",
    "witness-before.csv",
]


def tmm_reflectance_percent(wavelength_nm: float, n_film: float = 1.38) -> float:
    """Reference: tmm.coh_tmm at normal incidence, air / film / glass 1.52, the film
    550 / (4 * 1.38) nm thick (a quarter wave of n 1.38 at 550 nm, the samples' design)."""
    thickness = 550.0 / (4 * 1.38)
    result = tmm.coh_tmm(
        "s", [1.0, n_film, 1.52], [math.inf, thickness, math.inf], 0.0, wavelength_nm
    )
    return 100.0 * result["R"]


def sample(name: str) -> Spectrum:
    return read_spectrum(str(SAMPLES / name))


@pytest.mark.parametrize("name", TEXT_SAMPLES)
def test_each_text_sample_reads_to_the_model_curve(name: str) -> None:
    spectrum = sample(name)
    assert spectrum.quantity == "R"
    assert spectrum.source_format == "text"
    assert spectrum.wavelength_nm[0] == pytest.approx(400.0)
    assert spectrum.wavelength_nm[-1] == pytest.approx(800.0)
    assert list(spectrum.wavelength_nm) == sorted(spectrum.wavelength_nm)
    as_percent = spectrum.in_unit("%")
    for wavelength, value in zip(as_percent.wavelength_nm, as_percent.values, strict=True):
        # The files round to 4 decimals in % (6 in fraction); tmm is the outside reference.
        assert value == pytest.approx(tmm_reflectance_percent(wavelength), abs=1e-4)


def test_it_reads_the_header_csv_with_metadata_and_column_names() -> None:
    spectrum = sample("ar-mgf2-header.csv")
    assert spectrum.unit == "%"
    assert not spectrum.unit_inferred
    assert len(spectrum.values) == 81
    assert spectrum.metadata["Measurement"] == "Specular reflectance 8 deg"
    assert spectrum.metadata["columns"] == "Wavelength (nm) | R (%)"
    assert any("6 header line" in note or "7 header line" in note for note in spectrum.notes)


def test_the_semicolon_decimal_comma_file_gives_the_same_numbers_as_the_csv() -> None:
    csv = sample("ar-mgf2-header.csv")
    txt = sample("ar-mgf2-semicolon-decimal-comma.txt")
    assert txt.wavelength_nm == csv.wavelength_nm
    assert txt.values == csv.values
    assert txt.unit == "%"
    assert any("semicolon-separated, decimal comma" in note for note in txt.notes)


def test_micrometres_are_converted_to_nanometres_exactly() -> None:
    csv = sample("ar-mgf2-header.csv")
    um = sample("ar-mgf2-micrometres.txt")
    assert um.wavelength_nm == csv.wavelength_nm
    assert any("µm" in note for note in um.notes)


def test_wavenumbers_are_converted_and_sorted_ascending() -> None:
    spectrum = sample("ar-mgf2-wavenumber.csv")
    # 1e7 / (k in cm⁻¹) = λ in nm (definition of the wavenumber).
    assert spectrum.wavelength_nm[0] == pytest.approx(1e7 / 25000.0)
    assert spectrum.wavelength_nm[1] == pytest.approx(1e7 / 24875.0, abs=1e-6)
    assert spectrum.wavelength_nm[-1] == pytest.approx(1e7 / 12500.0)


def test_a_stated_fraction_stays_a_fraction() -> None:
    spectrum = sample("ar-mgf2-fraction.csv")
    assert spectrum.unit == "fraction"
    assert not spectrum.unit_inferred
    assert max(spectrum.values) < 0.05


# --- inline exports ----------------------------------------------------------------

CURVE = "400,1.8\n450,1.5\n500,1.3\n550,1.26\n600,1.31\n"


def test_whitespace_separated_decimal_comma() -> None:
    spectrum = parse_spectrum("Wavelength nm   R %\n400 1,8\n450 1,5\n500 1,3\n")
    assert spectrum.values == (1.8, 1.5, 1.3)
    assert spectrum.unit == "%"


def test_values_at_most_1_5_with_no_unit_are_inferred_as_fraction_and_say_so() -> None:
    spectrum = parse_spectrum("Wavelength (nm),R\n400,0.018\n450,0.015\n500,0.013\n")
    assert spectrum.unit == "fraction"
    assert spectrum.unit_inferred
    assert any("inferred as fraction" in note for note in spectrum.notes)


def test_an_ar_curve_in_percent_below_1_5_is_read_right_when_the_unit_is_given() -> None:
    text = "Wavelength (nm),R\n400,1.2\n450,0.4\n500,0.3\n"
    assert parse_spectrum(text).unit == "fraction"  # the inference cannot know
    spectrum = parse_spectrum(text, y_unit="%")
    assert spectrum.unit == "%"
    assert not spectrum.unit_inferred


def test_values_above_1_5_with_no_unit_are_inferred_as_percent() -> None:
    spectrum = parse_spectrum("Wavelength (nm),T\n" + "400,91.5\n500,92.0\n")
    assert (spectrum.unit, spectrum.quantity, spectrum.unit_inferred) == ("%", "T", True)


@pytest.mark.parametrize("header", ["Wavelength (nm),Absorbance", "nm,Abs", "nm;A (absorbance)"])
def test_absorbance_is_refused(header: str) -> None:
    separator = ";" if ";" in header else ","
    with pytest.raises(InputError, match="absorbance"):
        parse_spectrum(f"{header}\n400{separator}0.1\n500{separator}0.2\n")


def test_percent_t_is_transmittance_in_percent() -> None:
    spectrum = parse_spectrum("nm,%T\n400,91.0\n500,92.0\n")
    assert (spectrum.unit, spectrum.quantity) == ("%", "T")


def test_a_mode_line_gives_the_quantity() -> None:
    spectrum = parse_spectrum("Mode: Transmittance (%)\nnm,value\n400,91.0\n500,92.0\n")
    assert (spectrum.unit, spectrum.quantity) == ("%", "T")


def test_a_header_naming_both_r_and_t_leaves_the_quantity_unset() -> None:
    spectrum = parse_spectrum("Mode: %R\nnm,%T\n400,91.0\n500,92.0\n")
    assert spectrum.quantity is None
    assert any("both reflectance and transmittance" in note for note in spectrum.notes)


def test_a_caller_unit_that_contradicts_the_file_is_refused() -> None:
    with pytest.raises(InputError, match="says the y unit is %"):
        parse_spectrum("nm,%R\n" + CURVE, y_unit="fraction")
    with pytest.raises(InputError, match="says the y axis is R"):
        parse_spectrum("nm,%R\n" + CURVE, quantity="T")


def test_no_x_unit_is_refused_unless_given() -> None:
    text = "a,b\n" + CURVE
    with pytest.raises(InputError, match="no x unit"):
        parse_spectrum(text, y_unit="%", quantity="R")
    spectrum = parse_spectrum(text, x_unit="nm", y_unit="%", quantity="R")
    assert spectrum.wavelength_nm[0] == 400.0
    assert any("as given by the caller" in note for note in spectrum.notes)


def test_a_column_named_wavelength_without_unit_is_read_as_nm_with_a_note() -> None:
    spectrum = parse_spectrum("Wavelength,%R\n" + CURVE)
    assert any("read as nm" in note for note in spectrum.notes)


def test_micrometre_values_labelled_nm_are_refused_as_implausible() -> None:
    with pytest.raises(InputError, match="line 2: .*is the x unit right"):
        parse_spectrum("nm,%R\n0.40,1.8\n0.45,1.5\n")


def test_a_bad_row_in_the_data_names_its_line() -> None:
    text = "Sample: X\nnm,%R\n400,1.8\n450,1.5\n500,oops\n550,1.26\n"
    with pytest.raises(InputError, match=r"line 5: '500,oops' is not a row of numbers"):
        parse_spectrum(text)


def test_a_broken_first_data_row_is_refused_not_taken_as_header() -> None:
    text = "nm,%R\n400,1.8x\n450,1.5\n500,1.3\n"
    with pytest.raises(InputError, match="line 2: .*looks like a data row"):
        parse_spectrum(text)


def test_nan_and_infinity_are_not_numbers() -> None:
    with pytest.raises(InputError, match="line 4"):
        parse_spectrum("nm,%R\n400,1.8\n450,1.5\n500,nan\n")
    with pytest.raises(InputError, match="line 3"):
        parse_spectrum("nm,%R\n400,1.8\n450,1e999\n500,1.3\n")


def test_a_repeated_wavelength_names_both_lines() -> None:
    with pytest.raises(InputError, match="lines 2 and 4 both give the wavelength 400 nm"):
        parse_spectrum("nm,%R\n400,1.8\n450,1.5\n400,1.3\n")


def test_three_columns_need_a_y_column() -> None:
    text = "nm,%R,%T\n400,1.8,97.0\n450,1.5,97.5\n"
    with pytest.raises(InputError, match=r"3 columns \(nm, %R, %T\).*y_column"):
        parse_spectrum(text)
    spectrum = parse_spectrum(text, y_column=3)
    assert (spectrum.values, spectrum.quantity) == ((97.0, 97.5), "T")
    with pytest.raises(InputError, match="y_column 4"):
        parse_spectrum(text, y_column=4)


def test_text_after_the_data_is_refused_with_its_line() -> None:
    with pytest.raises(InputError, match="line 4: 'End of data'"):
        parse_spectrum("nm,%R\n400,1.8\n450,1.5\nEnd of data\n")


def test_a_short_row_is_refused_with_its_line() -> None:
    with pytest.raises(InputError, match="line 3"):
        parse_spectrum("nm\t%R\n400\t1.8\n450\n500\t1.3\n")


def test_explicit_fraction_with_percent_sized_values_is_refused() -> None:
    with pytest.raises(InputError, match="line 4: value 45"):
        parse_spectrum("Y unit: fraction\nnm,R\n400,0.5\n450,45\n")


def test_a_percent_value_far_above_100_is_refused() -> None:
    with pytest.raises(InputError, match="line 3: value 250"):
        parse_spectrum("nm,%T\n400,91\n450,250\n")


def test_empty_binary_and_one_point_files_are_refused() -> None:
    with pytest.raises(InputError, match="empty"):
        parse_spectrum(b"")
    with pytest.raises(InputError, match="binary"):
        parse_spectrum(b"nm,%R\n400,1\x00\n")
    with pytest.raises(InputError, match="at least 2"):
        parse_spectrum("nm,%R\n400,1.8\n")


def test_utf16_with_a_byte_order_mark_is_read() -> None:
    data = ("Wavelength (nm)\t%R\n" + CURVE.replace(",", "\t")).encode("utf-16")
    spectrum = parse_spectrum(data)
    assert spectrum.values[0] == 1.8


def test_hash_comment_headers_are_text_not_jcamp() -> None:
    spectrum = parse_spectrum("## exported by a lab script\n## R in percent\nnm,%R\n" + CURVE)
    assert spectrum.source_format == "text"
    assert spectrum.values[0] == 1.8


def test_a_missing_file_is_an_input_error() -> None:
    with pytest.raises(InputError, match="cannot read"):
        read_spectrum(str(SAMPLES / "no-such-file.csv"))


def test_unit_conversion_is_explicit_and_reversible() -> None:
    spectrum = parse_spectrum("nm,%R\n" + CURVE)
    fraction = spectrum.in_unit("fraction")
    assert fraction.values[0] == pytest.approx(0.018)
    assert "converted from % to fraction" in fraction.notes[-1]
    assert fraction.in_unit("%").values == pytest.approx(spectrum.values)
    assert spectrum.in_unit("%") is spectrum


def test_a_spectrum_built_by_hand_is_validated() -> None:
    with pytest.raises(InputError, match="rise strictly"):
        Spectrum((500.0, 400.0), (1.0, 2.0), "%", "R", "test")
    with pytest.raises(InputError, match="at least 2"):
        Spectrum((500.0,), (1.0,), "%", "R", "test")


# --- generated exports: every dialect round-trips ---------------------------------

_DIALECTS = [("\t", "."), ("\t", ","), (";", "."), (";", ","), (",", "."), (" ", "."), (" ", ",")]


@settings(max_examples=150)
@given(
    steps=st.lists(st.integers(min_value=1, max_value=5000), min_size=2, max_size=40),
    values=st.lists(st.integers(min_value=-400, max_value=10_000), min_size=40, max_size=40),
    dialect=st.sampled_from(_DIALECTS),
    header_lines=st.integers(min_value=0, max_value=4),
)
def test_generated_exports_round_trip_in_every_dialect(
    steps: list[int], values: list[int], dialect: tuple[str, str], header_lines: int
) -> None:
    separator, decimal = dialect
    wavelengths = []
    position = 300_000  # thousandths of a nm
    for step in steps:
        position += step
        wavelengths.append(position / 1000)
    ys = [v / 100 for v in values[: len(wavelengths)]]
    rows = []
    for x, y in zip(wavelengths, ys, strict=True):
        row = f"{x:.3f}{separator}{y:.2f}"
        if decimal == ",":
            row = f"{x:.3f}".replace(".", ",") + separator + f"{y:.2f}".replace(".", ",")
        rows.append(row)
    header = "".join(f"Meta {i}: value {i}\n" for i in range(header_lines))
    header += f"Wavelength (nm){separator}%R\n" if separator != " " else "nm %R\n"
    spectrum = parse_spectrum(header + "\n".join(rows) + "\n")
    assert spectrum.wavelength_nm == pytest.approx(wavelengths)
    assert spectrum.values == pytest.approx(ys)
    assert (spectrum.unit, spectrum.quantity) == ("%", "R")


# --- fuzz: bad input gives InputError and nothing else ----------------------------


@settings(max_examples=200)
@given(st.text(alphabet=st.sampled_from(list("0123456789.,;\t -+eE%RTnm#:\n\r µ")), max_size=300))
def test_fuzz_numeric_looking_text_gives_a_spectrum_or_input_error(text: str) -> None:
    try:
        spectrum = parse_spectrum(text)
    except InputError:
        return
    assert len(spectrum.values) >= 2


@settings(max_examples=100)
@given(st.binary(max_size=300))
def test_fuzz_arbitrary_bytes_give_a_spectrum_or_input_error(data: bytes) -> None:
    try:
        parse_spectrum(data)
    except InputError:
        pass


@settings(max_examples=200)
@given(
    name=st.sampled_from(TEXT_SAMPLES),
    edits=st.lists(
        st.tuples(
            st.sampled_from(["delete", "replace", "insert", "duplicate", "truncate"]),
            st.integers(min_value=0, max_value=10_000),
            st.characters(codec="utf-8", exclude_categories=("Cs",)),
        ),
        min_size=1,
        max_size=4,
    ),
)
def test_fuzz_mutated_sample_files_give_a_spectrum_or_input_error(
    name: str, edits: list[tuple[str, int, str]]
) -> None:
    text = (
        (SAMPLES / name)
        .read_bytes()
        .decode("cp1252" if name.endswith(".txt") and "semicolon" in name else "utf-8")
    )
    for action, position, char in edits:
        position %= max(len(text), 1)
        if action == "delete":
            text = text[:position] + text[position + 1 :]
        elif action == "replace":
            text = text[:position] + char + text[position + 1 :]
        elif action == "insert":
            text = text[:position] + char + text[position:]
        elif action == "duplicate":
            lines = text.splitlines(keepends=True)
            index = position % max(len(lines), 1)
            text = "".join(lines[: index + 1] + lines[index:])
        else:
            text = text[:position]
    try:
        parse_spectrum(text, filename=name)
    except InputError:
        pass
