"""Method versions are immutable: records point at the version they used."""

from django.db import migrations

from labrecords.immutability import protect_tables


class Migration(migrations.Migration):
    dependencies = [("durability", "0001_catalogue_and_reference")]

    operations = [protect_tables("durability_methodversion")]
