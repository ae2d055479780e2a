"""Copy every issued report's stored PDF and a manifest of their SHA-256 digests, for archiving."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

from django.core.exceptions import ValidationError
from django.core.management.base import BaseCommand, CommandError

from labrecords.models import Order, Report
from labrecords.services.reports import report_pdf_bytes

MANIFEST = "manifest.json"
CHECKSUMS = "SHA256SUMS"


class Command(BaseCommand):
    help = (
        "Write every issued report (reports, amendments and re-issues, superseded ones "
        "included) as the PDF stored at issue, plus manifest.json and SHA256SUMS with their "
        "SHA-256 digests, into a folder for archiving. Each stored PDF is checked against "
        "its recorded digest first; a mismatch stops the export and writes nothing. A file "
        "already in the folder with the same bytes is left alone; one with other bytes is "
        "never overwritten."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "--out", required=True, type=Path, help="the folder to write into (created if missing)"
        )
        parser.add_argument(
            "--order", metavar="NUMBER", help="only the reports of this lab order number"
        )
        parser.add_argument(
            "--dry-run",
            action="store_true",
            help="check the stored files and say what would be written; write nothing",
        )

    def handle(self, *args, **options):
        out: Path = options["out"]
        if out.exists() and not out.is_dir():
            raise CommandError(f"--out {out} is a file, not a folder.")
        reports = Report.objects.select_related(
            "lot__order__customer", "amends", "replaces", "replaced_by"
        ).order_by("issued_at", "number")
        if options["order"]:
            if not Order.objects.filter(number=options["order"]).exists():
                raise CommandError(f"--order {options['order']}: no order has this number.")
            reports = reports.filter(lot__order__number=options["order"])
        files: list[tuple[Report, Path, bytes]] = []
        problems = []
        for report in reports:
            try:
                data = report_pdf_bytes(report)
            except (ValidationError, OSError) as exc:
                message = exc.messages[0] if isinstance(exc, ValidationError) else str(exc)
                problems.append(f"{report.number}: {message}")
                continue
            target = out / f"{report.number}.pdf"
            if target.exists() and hashlib.sha256(target.read_bytes()).hexdigest() != report.sha256:
                problems.append(
                    f"{report.number}: {target} exists with other bytes; it is not overwritten"
                )
                continue
            files.append((report, target, data))
        if problems:
            raise CommandError("Nothing exported:\n  " + "\n  ".join(problems))
        manifest = [_entry(report, target.name) for report, target, _ in files]
        if options["dry_run"]:
            for report, target, _ in files:
                self.stdout.write(f"would write {target} ({report.sha256})")
            self.stdout.write(
                f"would write {out / MANIFEST} and {out / CHECKSUMS}; "
                f"{len(files)} report(s). Nothing written (dry run)."
            )
            return
        out.mkdir(parents=True, exist_ok=True)
        written = 0
        for _report, target, data in files:
            if not target.exists():
                target.write_bytes(data)
                written += 1
        (out / MANIFEST).write_text(
            json.dumps({"reports": manifest}, indent=2) + "\n", encoding="utf-8"
        )
        (out / CHECKSUMS).write_text(
            "".join(f"{entry['sha256']}  {entry['file']}\n" for entry in manifest), encoding="utf-8"
        )
        self.stdout.write(
            self.style.SUCCESS(
                f"Exported {len(files)} report(s) to {out} ({written} new file(s)), with "
                f"{MANIFEST} and {CHECKSUMS}."
            )
        )


def _entry(report: Report, file_name: str) -> dict[str, object]:
    replaced_by = getattr(report, "replaced_by", None)
    return {
        "number": report.number,
        "kind": report.kind,
        "file": file_name,
        "sha256": report.sha256,
        "issued_at": report.issued_at.isoformat(),
        "lot": report.lot.number,
        "order": report.lot.order.number,
        "customer": report.lot.order.customer.name,
        "amends": report.amends.number if report.amends else None,
        "replaces": report.replaces.number if report.replaces else None,
        "replaced_by": replaced_by.number if replaced_by is not None else None,
    }
