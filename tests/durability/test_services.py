"""The catalogue service: insert-only seeding, versions, confirmation."""

import io
import json

import pytest
from django.core.exceptions import ValidationError
from django.core.management import call_command
from django.core.management.base import CommandError

from durability.models import Method, MethodVersion
from durability.services import CATALOGUE_SEED, catalogue_seed, method_parameter_confirm

pytestmark = pytest.mark.django_db


def test_seeding_twice_adds_nothing_the_second_time():
    first = catalogue_seed()
    assert len(first.methods_added) == Method.objects.count() > 40
    versions = MethodVersion.objects.count()
    second = catalogue_seed()
    assert (second.methods_added, second.versions_added) == ([], [])
    assert MethodVersion.objects.count() == versions


def test_a_changed_seed_entry_adds_a_version_but_never_over_a_lab_confirmed_one(cast, tmp_path):
    catalogue_seed()
    confirmed = Method.objects.get(code="MIL-C-48497A:humidity")
    method_parameter_confirm(
        actor=cast.quality_manager,
        method=confirmed,
        parameter="temperature_tolerance_c",
        copy="lab copy no. 1",
    )
    data = json.loads(CATALOGUE_SEED.read_text(encoding="utf-8"))
    for entry in data["methods"]:
        if entry["code"] in {"MIL-C-48497A:humidity", "MIL-C-48497A:adhesion"}:
            entry["note"] += " (seed file edited)"
    edited = tmp_path / "methods.json"
    edited.write_text(json.dumps(data), encoding="utf-8")
    report = catalogue_seed(path=edited)
    assert report.versions_added == ["MIL-C-48497A:adhesion"]
    assert report.kept_lab_versions == ["MIL-C-48497A:humidity"]
    current = confirmed.current_version()
    assert current.origin == "lab" and current.number == 2


def test_confirming_needs_the_copy_and_the_quality_manager_role(cast):
    catalogue_seed()
    method = Method.objects.get(code="MIL-C-48497A:humidity")
    with pytest.raises(ValidationError, match="copy"):
        method_parameter_confirm(
            actor=cast.quality_manager, method=method, parameter="duration_h", copy=" "
        )
    with pytest.raises(Exception, match="role"):
        method_parameter_confirm(
            actor=cast.engineer, method=method, parameter="duration_h", copy="x"
        )
    assert method.versions.count() == 1


def test_the_seed_command_reports_a_bad_file_with_the_method_and_field(tmp_path):
    data = json.loads(CATALOGUE_SEED.read_text(encoding="utf-8"))
    data["methods"][1]["kind"] = "levitation"
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(data), encoding="utf-8")
    with pytest.raises(CommandError, match=r"methods\[1\].*kind"):
        call_command("catalogue_seed", "--file", str(bad), stdout=io.StringIO())
    assert not Method.objects.exists()


def test_the_seed_command_dry_run_changes_nothing():
    out = io.StringIO()
    call_command("catalogue_seed", "--dry-run", stdout=out)
    assert "Would add" in out.getvalue()
    assert not Method.objects.exists()


def test_method_versions_are_immutable_in_the_database():
    from django.db import DatabaseError, IntegrityError, connection, transaction

    catalogue_seed()
    version = MethodVersion.objects.first()
    with (
        pytest.raises((DatabaseError, IntegrityError), match="append-only"),
        transaction.atomic(),
        connection.cursor() as cursor,
    ):
        cursor.execute("UPDATE durability_methodversion SET note = 'x' WHERE id = %s", [version.pk])
