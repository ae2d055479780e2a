from django.conf import settings
from django.core.management import call_command
from django.core.management.base import BaseCommand, CommandError
from django.db import connection

from labrecords.demo import build


class Command(BaseCommand):
    help = (
        "Build the invented demo lab through the real services (safe to repeat: does nothing "
        "when it is already there). Refuses to run with production settings."
    )

    def add_arguments(self, parser):
        parser.add_argument(
            "--reset",
            action="store_true",
            help="recreate the database first (every record in it is lost)",
        )
        parser.add_argument(
            "--dry-run", action="store_true", help="say what would happen and change nothing"
        )

    def handle(self, *args, **options):
        if getattr(settings, "IS_PRODUCTION", False):
            raise CommandError("The demo lab is invented data; it is never built in production.")
        if options["dry_run"]:
            state = "already built" if build.already_built() else "not built yet"
            self.stdout.write(f"The demo lab is {state}; --reset={options['reset']}. Nothing done.")
            return
        if options["reset"]:
            self._recreate_database()
        if build.already_built():
            self.stdout.write("The demo lab is already built; nothing changed.")
        else:
            call_command("catalogue_seed", verbosity=0)
            lab = build.build_all()
            self.stdout.write(self.style.SUCCESS(
                f"Built the demo lab with {len(lab.lots)} lots: plans, bench results, chamber "
                "runs, spectra, reports, resources and custody."))
        self.stdout.write("Demo logins (user name / password / role):")
        for username, password, role in build.logins():
            self.stdout.write(f"  {username:8} {password:22} {role}")

    def _recreate_database(self):
        """Drop everything and migrate again: append-only tables cannot be emptied row by row."""
        self.stdout.write("Recreating the database ...")
        with connection.cursor() as cursor:
            if connection.vendor == "postgresql":
                cursor.execute("DROP SCHEMA public CASCADE")
                cursor.execute("CREATE SCHEMA public")
            elif connection.vendor == "sqlite":
                cursor.execute("PRAGMA foreign_keys = OFF")
                cursor.execute(
                    "SELECT name FROM sqlite_master WHERE type = 'table' "
                    "AND name NOT LIKE 'sqlite_%'"
                )
                for (table,) in cursor.fetchall():
                    cursor.execute(f'DROP TABLE IF EXISTS "{table}"')
                cursor.execute("PRAGMA foreign_keys = ON")
            else:
                raise CommandError(f"--reset does not know the {connection.vendor} database.")
        call_command("migrate", verbosity=0, interactive=False)
