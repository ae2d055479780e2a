from pathlib import Path

from django.core.management.base import BaseCommand, CommandError

from durability.errors import InputError
from durability.services import CATALOGUE_SEED, catalogue_seed


class Command(BaseCommand):
    help = (
        "Load the published test methods from the seed file into the catalogue. Insert-only: "
        "adds missing methods and new seed versions; never overwrites a version the lab edited "
        "or confirmed. Safe to repeat."
    )

    def add_arguments(self, parser):
        parser.add_argument("--file", type=Path, default=CATALOGUE_SEED, help="seed JSON file")
        parser.add_argument("--dry-run", action="store_true", help="report, then roll back")

    def handle(self, *args, **options):
        from django.db import transaction

        path: Path = options["file"]
        if not path.is_file():
            raise CommandError(f"No seed file at {path}")
        try:
            with transaction.atomic():
                report = catalogue_seed(path=path)
                if options["dry_run"]:
                    transaction.set_rollback(True)
        except InputError as exc:
            raise CommandError(f"{path}: {exc}") from None
        if options["verbosity"] < 1:
            return
        prefix = "Would add" if options["dry_run"] else "Added"
        self.stdout.write(
            self.style.SUCCESS(
                f"{prefix} {len(report.standards_added)} standard(s), {len(report.methods_added)} "
                f"method(s), {len(report.versions_added)} version(s)."
            )
        )
        for code in report.kept_lab_versions:
            self.stdout.write(f"Kept the lab's own version of {code}.")
