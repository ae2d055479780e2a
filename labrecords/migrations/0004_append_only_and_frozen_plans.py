"""Results, evidence, chamber-run links, checks, custody, reviews, signatures and
reports are append-only; released test plans are frozen."""

from django.db import migrations

from labrecords.immutability import freeze_released_plans, protect_tables

APPEND_ONLY = (
    "labrecords_stepresult",
    "labrecords_stepresultinstrument",
    "labrecords_stepresultconsumable",
    "labrecords_evidence",
    "labrecords_chamberrunpiece",
    "labrecords_exposurecheck",
    "labrecords_consumablecheck",
    "labrecords_instrumentdeviation",
    "labrecords_custodyevent",
    "labrecords_review",
    "labrecords_reviewedresult",
    "labrecords_signature",
    "labrecords_report",
)


class Migration(migrations.Migration):
    dependencies = [("labrecords", "0003_plans_results_evidence_reports")]

    operations = [protect_tables(*APPEND_ONLY), freeze_released_plans()]
