"""manage.py export_reports: the stored PDFs and their digests, for the archive."""

import datetime
import hashlib
import json

import pytest
from django.core.management import CommandError, call_command

from labrecords import clock
from labrecords.services import reports, reviews
from tests.labrecords.report_fixtures import MOMENT, PASSWORD, finished_lot

pytestmark = pytest.mark.django_db


@pytest.fixture(autouse=True)
def media(settings, tmp_path):
    settings.MEDIA_ROOT = str(tmp_path / "media")


@pytest.fixture
def issued(cast):
    made = []
    for customer in (cast.customer_org, cast.other_org):
        lot = finished_lot(cast, customer=customer)
        with clock.frozen_at(MOMENT + datetime.timedelta(hours=3)):
            reviews.review_sign(actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev")
            made.append(
                reports.report_issue(
                    actor=cast.reviewer, lot=lot, password=PASSWORD, username="rev"
                )
            )
    with clock.frozen_at(MOMENT + datetime.timedelta(days=1)):
        made.append(
            reports.report_reissue(
                actor=cast.reviewer,
                report=made[0],
                password=PASSWORD,
                username="rev",
                change_description="address corrected",
            )
        )
    return made


def test_it_writes_every_stored_pdf_and_a_manifest_of_digests(tmp_path, issued, capsys):
    out = tmp_path / "archive"
    call_command("export_reports", "--out", str(out))
    manifest = json.loads((out / "manifest.json").read_text())["reports"]
    assert {entry["number"] for entry in manifest} == {r.number for r in issued}
    for report in issued:
        data = (out / f"{report.number}.pdf").read_bytes()
        assert hashlib.sha256(data).hexdigest() == report.sha256
    first = next(e for e in manifest if e["number"] == issued[0].number)
    assert first["replaced_by"] == issued[2].number
    # The checksum file reads like `sha256sum` output: "<digest>  <file>".
    lines = (out / "SHA256SUMS").read_text().splitlines()
    assert f"{issued[1].sha256}  {issued[1].number}.pdf" in lines
    assert "Exported 3 report(s)" in capsys.readouterr().out
    # Running it again changes nothing and refuses nothing.
    call_command("export_reports", "--out", str(out))


def test_it_filters_by_order(tmp_path, issued):
    out = tmp_path / "one"
    call_command("export_reports", "--out", str(out), "--order", issued[1].lot.order.number)
    assert sorted(p.name for p in out.glob("*.pdf")) == [f"{issued[1].number}.pdf"]


def test_dry_run_writes_nothing(tmp_path, issued, capsys):
    out = tmp_path / "dry"
    call_command("export_reports", "--out", str(out), "--dry-run")
    assert not out.exists()
    text = capsys.readouterr().out
    assert "Nothing written (dry run)" in text and issued[0].sha256 in text


def test_an_unknown_order_is_refused(tmp_path, issued):
    with pytest.raises(CommandError, match="--order NOPE: no order has this number"):
        call_command("export_reports", "--out", str(tmp_path / "x"), "--order", "NOPE")


def test_a_damaged_stored_pdf_stops_the_export(tmp_path, issued):
    with open(issued[1].pdf.path, "ab") as handle:
        handle.write(b"!")
    out = tmp_path / "bad"
    with pytest.raises(CommandError, match=f"{issued[1].number}: The stored PDF"):
        call_command("export_reports", "--out", str(out))
    assert not out.exists()


def test_an_archive_file_with_other_bytes_is_never_overwritten(tmp_path, issued):
    out = tmp_path / "archive"
    out.mkdir()
    (out / f"{issued[0].number}.pdf").write_bytes(b"something else")
    with pytest.raises(CommandError, match="exists with other bytes"):
        call_command("export_reports", "--out", str(out))
    assert (out / f"{issued[0].number}.pdf").read_bytes() == b"something else"


def test_out_must_be_a_folder(tmp_path, issued):
    target = tmp_path / "file.txt"
    target.write_text("x")
    with pytest.raises(CommandError, match="is a file, not a folder"):
        call_command("export_reports", "--out", str(target))


def test_it_has_help():
    from labrecords.management.commands.export_reports import Command

    parser = Command().create_parser("manage.py", "export_reports")
    text = parser.format_help()
    assert "--out" in text and "--order" in text and "--dry-run" in text
    assert "SHA-256" in text
