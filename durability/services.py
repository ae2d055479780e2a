"""Writes to the catalogue and the lab's reference data. Audited like every record.

Methods never change in place: `method_version_create` adds a version, and
`catalogue_seed` only inserts (missing methods, and new seed versions on top
of untouched seed versions). A version a lab has edited or confirmed is never
overwritten by seeding.
"""

from __future__ import annotations

import datetime
import hashlib
import json
from dataclasses import dataclass, field
from decimal import Decimal
from pathlib import Path
from typing import Any

from django.core.exceptions import ValidationError
from django.db import transaction

from durability.models import (
    Coater,
    CoatingDesign,
    Glass,
    Instrument,
    LabProfile,
    Method,
    MethodVersion,
    ParameterStatus,
    Standard,
    WitnessStock,
)
from durability.models.methods import TYPED_PARAMETERS
from labrecords import clock
from labrecords.access import require_role
from labrecords.roles import Role
from labrecords.services.audit import audit_record, change_audited, create_audited, snapshot

CATALOGUE_SEED = Path(__file__).resolve().parent.parent / "fixtures" / "catalogue" / "methods.json"
_INTEGER_PARAMETERS = {"cycles", "strokes"}
_TEXT_PARAMETERS = {"solution"}


@dataclass
class SeedReport:
    standards_added: list[str] = field(default_factory=list)
    methods_added: list[str] = field(default_factory=list)
    versions_added: list[str] = field(default_factory=list)
    kept_lab_versions: list[str] = field(default_factory=list)


def _digest(entry: dict[str, Any]) -> str:
    return hashlib.sha256(json.dumps(entry, sort_keys=True).encode()).hexdigest()


def _typed(name: str, value: Any) -> Any:
    if value is None:
        return None if name not in _TEXT_PARAMETERS else ""
    if name in _TEXT_PARAMETERS:
        return str(value)
    if name in _INTEGER_PARAMETERS:
        return int(value)
    return Decimal(str(value))


def _version_fields(entry: dict[str, Any]) -> dict[str, Any]:
    """Turn a seed (or form) entry into MethodVersion field values."""
    fields: dict[str, Any] = {"extra": {}, "parameter_status": {}}
    for name, spec in entry.get("parameters", {}).items():
        status = {
            "status": spec.get("status", ParameterStatus.TO_BE_ENTERED),
            "placeholder": bool(spec.get("placeholder", False)),
            "note": spec.get("note", ""),
            "unit": spec.get("unit", ""),
        }
        for key in ("confirmed_by", "confirmed_on", "copy"):
            if spec.get(key):
                status[key] = spec[key]
        fields["parameter_status"][name] = status
        if name in TYPED_PARAMETERS:
            fields[name] = _typed(name, spec.get("value"))
        else:
            fields["extra"][name] = spec.get("value")
    acceptance = entry.get("acceptance", {})
    fields.update(
        acceptance_text=acceptance.get("text", ""),
        acceptance_rule=acceptance.get("rule", {}),
        acceptance_status=acceptance.get("status", ParameterStatus.TO_BE_ENTERED),
        destructive=bool(entry.get("destructive", False)),
        hazards=list(entry.get("hazards", [])),
        group=entry.get("group", "") or "",
        note=entry.get("note", "") or "",
    )
    return fields


def version_as_entry(version: MethodVersion) -> dict[str, Any]:
    """A version's content in the seed entry's shape (for editing and confirming)."""
    parameters = {}
    for row in version.parameters():
        value = row["value"]
        if isinstance(value, Decimal):
            value = float(value)
        if value == "":
            value = None
        spec = {
            "value": value,
            "unit": row["unit"],
            "status": row["status"],
            "placeholder": row["placeholder"],
            "note": row["note"],
        }
        for key in ("confirmed_by", "confirmed_on", "copy"):
            if row[key]:
                spec[key] = row[key]
        parameters[row["name"]] = spec
    return {
        "group": version.group,
        "destructive": version.destructive,
        "hazards": list(version.hazards),
        "parameters": parameters,
        "acceptance": {
            "text": version.acceptance_text,
            "rule": version.acceptance_rule,
            "status": version.acceptance_status,
        },
        "note": version.note,
    }


@transaction.atomic
def method_version_create(
    *,
    actor,
    method: Method,
    entry: dict[str, Any],
    reason: str,
    origin: str = "lab",
    seed_digest: str = "",
) -> MethodVersion:
    """Add a new version of a method. The previous versions stay as they were."""
    if origin == "lab":
        require_role(actor, Role.QUALITY_MANAGER)
        if not reason.strip():
            raise ValidationError({"reason": "Say why the method gets a new version."})
    Method.objects.select_for_update().filter(pk=method.pk).first()
    latest = method.versions.order_by("-number").first()
    version = MethodVersion(
        method=method,
        number=(latest.number + 1) if latest else 1,
        origin=origin,
        reason=reason,
        created_by=actor if getattr(actor, "pk", None) else None,
        created_at=clock.now(),
        seed_digest=seed_digest,
        **_version_fields(entry),
    )
    version.full_clean()
    version.save()
    audit_record(
        actor=actor, action="new version", obj=version, after=snapshot(version), reason=reason
    )
    return version


@transaction.atomic
def method_parameter_confirm(
    *,
    actor,
    method: Method,
    parameter: str,
    copy: str,
    value: Any = None,
    on: datetime.date | None = None,
) -> MethodVersion:
    """Confirm one parameter against the lab's own copy of the standard (a new version).

    `value` replaces the value when the lab's copy says otherwise; None keeps it.
    """
    require_role(actor, Role.QUALITY_MANAGER)
    if not copy.strip():
        raise ValidationError({"copy": "Name the copy of the standard it was checked against."})
    current = method.current_version()
    if current is None:
        raise ValidationError({"method": f"{method.code} has no version to confirm."})
    entry = version_as_entry(current)
    spec = entry["parameters"].get(parameter)
    if parameter == "acceptance":
        entry["acceptance"]["status"] = ParameterStatus.CONFIRMED
    elif spec is None:
        raise ValidationError({"parameter": f"{method.code} has no parameter {parameter!r}."})
    else:
        if value is not None:
            spec["value"] = value
        if spec.get("value") in (None, ""):
            raise ValidationError({"value": f"Enter the value of {parameter} from the lab's copy."})
        spec.update(
            status=ParameterStatus.CONFIRMED,
            placeholder=False,
            confirmed_by=actor.get_full_name() or actor.username,
            confirmed_on=(on or clock.now().date()).isoformat(),
            copy=copy,
        )
    return method_version_create(
        actor=actor,
        method=method,
        entry=entry,
        reason=f"{parameter} confirmed against {copy}",
        origin="lab",
    )


@transaction.atomic
def standard_create(
    *,
    actor,
    designation: str,
    edition: str = "",
    title: str = "",
    status: str = "active",
    note: str = "",
) -> Standard:
    """Add a standard or a new edition of one."""
    if actor is not None:
        require_role(actor, Role.QUALITY_MANAGER)
    return create_audited(
        actor=actor,
        obj=Standard(
            designation=designation, edition=edition, title=title, status=status, note=note
        ),
    )


@transaction.atomic
def lab_method_create(
    *,
    actor,
    code: str,
    standard: Standard,
    name: str,
    kind: str,
    entry: dict[str, Any],
    clause: str = "",
    test_key: str = "",
) -> Method:
    """Add one of the lab's own procedures (or a method of a new edition) with version 1."""
    require_role(actor, Role.QUALITY_MANAGER)
    method = create_audited(
        actor=actor,
        obj=Method(
            code=code,
            standard=standard,
            name=name,
            kind=kind,
            clause=clause,
            test_key=test_key,
            lab_procedure=True,
        ),
    )
    method_version_create(actor=actor, method=method, entry=entry, reason="new lab procedure")
    return method


@transaction.atomic
def catalogue_seed(*, path: Path = CATALOGUE_SEED, actor=None) -> SeedReport:
    """Insert the published methods from the seed file. Insert-only and safe to repeat."""
    from durability.catalogue_data import load_catalogue

    load_catalogue(path)  # validates every entry first, naming the method and field
    data = json.loads(path.read_text(encoding="utf-8"))
    report = SeedReport()
    standards: dict[str, Standard] = {}
    for row in data["standards"]:
        existing = Standard.objects.filter(designation=row["designation"]).order_by("pk").first()
        if existing is not None:
            standard = existing
        else:
            standard = create_audited(
                actor=actor,
                obj=Standard(
                    designation=row["designation"],
                    edition=row.get("edition", ""),
                    title=row.get("title", ""),
                    status=row.get("status", "active"),
                    note=row.get("note", ""),
                ),
            )
            report.standards_added.append(row["designation"])
        standards[row["designation"]] = standard
    for entry in data["methods"]:
        digest = _digest(entry)
        found = Method.objects.filter(code=entry["code"]).first()
        if found is not None:
            method = found
        else:
            method = create_audited(
                actor=actor,
                obj=Method(
                    code=entry["code"],
                    standard=standards[entry["standard"]],
                    clause=entry.get("clause", ""),
                    name=entry["name"],
                    kind=entry["kind"],
                    test_key=entry.get("test_key") or "",
                    lab_procedure=entry["standard"] == "LAB",
                ),
            )
            report.methods_added.append(method.code)
        current = method.current_version()
        if current is not None and current.origin != "seed":
            report.kept_lab_versions.append(method.code)
            continue
        if current is not None and current.seed_digest == digest:
            continue
        method_version_create(
            actor=actor,
            method=method,
            entry=entry,
            origin="seed",
            seed_digest=digest,
            reason="seeded from the published-methods file",
        )
        report.versions_added.append(method.code)
    return report


# Reference data: plain audited creates and changes.


@transaction.atomic
def glass_create(*, actor, **fields: Any) -> Glass:
    return create_audited(actor=actor, obj=Glass(**fields))


@transaction.atomic
def coating_design_create(*, actor, **fields: Any) -> CoatingDesign:
    return create_audited(actor=actor, obj=CoatingDesign(**fields))


@transaction.atomic
def coater_create(*, actor, name: str, description: str = "") -> Coater:
    return create_audited(actor=actor, obj=Coater(name=name, description=description))


@transaction.atomic
def witness_stock_create(*, actor, glass: Glass, form: str) -> WitnessStock:
    return create_audited(actor=actor, obj=WitnessStock(glass=glass, form=form))


@transaction.atomic
def instrument_create(*, actor, **fields: Any) -> Instrument:
    if actor is not None:
        require_role(actor, Role.QUALITY_MANAGER, Role.ADMINISTRATOR)
    return create_audited(actor=actor, obj=Instrument(**fields))


@transaction.atomic
def instrument_update(*, actor, instrument: Instrument, reason: str, **changes: Any) -> Instrument:
    """Change calibration due date or service state (quality manager; audited with reason)."""
    require_role(actor, Role.QUALITY_MANAGER)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the instrument record changes."})
    locked = Instrument.objects.select_for_update().get(pk=instrument.pk)
    return change_audited(actor=actor, obj=locked, changes=changes, reason=reason)


@transaction.atomic
def lab_profile_set(*, actor, name: str, address: str, accreditation: str = "") -> LabProfile:
    """Record the lab's name and address as reports print them (the newest counts)."""
    if actor is not None:
        require_role(actor, Role.ADMINISTRATOR, Role.QUALITY_MANAGER)
    profile = LabProfile(name=name, address=address, accreditation=accreditation,
                         valid_from=clock.now())
    return create_audited(actor=actor, obj=profile)
