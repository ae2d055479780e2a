"""Observations (revisions), stock movements and the audit trail are append-only."""

from django.db import migrations

from labrecords.immutability import protect_tables


class Migration(migrations.Migration):
    dependencies = [("labrecords", "0001_records_first_version")]

    operations = [
        protect_tables(
            "labrecords_observation", "labrecords_auditentry", "labrecords_stockmovement"
        )
    ]
