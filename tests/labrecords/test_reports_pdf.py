"""The report PDF as a reader sees it: text extracted with pypdf, pages rendered to PNG.

ISO/IEC 17025 7.8.2.1 d) wants the report's ID on every page, "page n of N" and a clear end
(shared/reference/records-and-security.md [pub]); these tests read that back from the file.
"""

import io
import os
import shutil
import subprocess

import pytest
from pypdf import PdfReader

from labrecords.reporting.pdf import render_report
from tests.labrecords.report_fixtures import synthetic_content

ON_CI = os.environ.get("CI", "").lower() in ("1", "true", "yes")


def pages_text(data: bytes) -> list[str]:
    return [page.extract_text() for page in PdfReader(io.BytesIO(data)).pages]


@pytest.fixture(scope="module")
def long_report() -> bytes:
    return render_report(synthetic_content(pieces=40, steps=7, plots=2))


def test_every_page_carries_the_number_and_page_n_of_n(long_report):
    texts = pages_text(long_report)
    total = len(texts)
    assert total >= 5  # 280 result rows cannot fit on fewer pages
    for number, text in enumerate(texts, start=1):
        assert f"Report R26-0042 · page {number} of {total}" in text
        assert "Verification code ABCD-EFGH-IJKL-MNOP" in text


def test_the_end_marker_is_on_the_last_page_only(long_report):
    texts = pages_text(long_report)
    assert "End of report R26-0042" in texts[-1]
    assert not any("End of report" in text for text in texts[:-1])


def test_a_results_table_repeats_its_header_on_every_page_it_runs_over():
    # One piece with 80 steps: its table must run over several pages.
    data = render_report(synthetic_content(pieces=1, steps=80, plots=0))
    holding = [t for t in pages_text(data) if "LAB:synthetic" in t and "Pass" in t]
    assert len(holding) >= 3
    for text in holding:
        # "Verdict" and "Uncertainty" appear only in the header row of the table.
        for heading in ("Verdict", "Reason", "Uncertainty"):
            assert heading in text


def test_symbols_outside_latin_1_survive_in_the_embedded_font(long_report):
    text = "\n".join(pages_text(long_report))
    for symbol in ("≤", "Δλ", "µm", "°C"):
        assert symbol in text
    reader = PdfReader(io.BytesIO(long_report))
    fonts = set()
    for page in reader.pages:
        for font in page["/Resources"]["/Font"].values():
            font = font.get_object()
            fonts.add(str(font["/BaseFont"]))
            descriptor = font.get("/FontDescriptor")
            if descriptor is not None:
                assert "/FontFile2" in descriptor.get_object()  # the TrueType program is embedded
    assert any("DejaVuSans" in name for name in fonts)
    assert not any(name.endswith(("Helvetica", "Times-Roman")) for name in fonts)


def test_plots_and_the_qr_code_are_vector_drawings(long_report):
    reader = PdfReader(io.BytesIO(long_report))
    assert all(not page.images for page in reader.pages)
    text = "\n".join(pages_text(long_report))
    assert "Wavelength (nm)" in text and "Piece SYN-W02: R before and after the tests" in text


def test_the_same_content_gives_the_same_bytes():
    content = synthetic_content(pieces=3, steps=2, plots=1)
    assert render_report(content) == render_report(content)


def test_an_amendment_is_titled_as_one_and_ends_as_one():
    data = render_report(
        synthetic_content(pieces=2, steps=2, plots=0, kind="amendment", number="R26-0041-A1")
    )
    texts = pages_text(data)
    joined = " ".join(" ".join(t.split()) for t in texts)
    assert "Amends report R26-0041" in joined and "A value was corrected." in joined
    assert "End of amendment R26-0041-A1" in texts[-1]
    for number, text in enumerate(texts, start=1):
        assert f"Report R26-0041-A1 · page {number} of {len(texts)}" in text


def test_a_rendered_page_is_not_blank(tmp_path, long_report):
    if shutil.which("pdftoppm") is None:
        if ON_CI:
            pytest.fail("pdftoppm (Debian package poppler-utils) is required under CI")
        pytest.skip("pdftoppm not installed: apt-get install -y poppler-utils")
    from PIL import Image

    path = tmp_path / "report.pdf"
    path.write_bytes(long_report)
    subprocess.run(
        ["pdftoppm", "-r", "40", "-png", "-f", "1", "-l", "2", str(path), str(tmp_path / "page")],
        check=True,
        timeout=60,
    )
    images = sorted(tmp_path.glob("page-*.png"))
    assert len(images) == 2
    for image_path in images:
        image = Image.open(image_path).convert("L")
        histogram = image.histogram()
        dark = sum(histogram[:128])
        # Text and table rules: a share of dark pixels, far from an empty white page.
        assert dark / (image.width * image.height) > 0.01
