"""Observations on a witness piece: the first record kind on the revision mechanism."""

from __future__ import annotations

import datetime
from collections.abc import Sequence

from django.core.exceptions import ValidationError
from django.db import IntegrityError, transaction

from labrecords import clock
from labrecords.access import require_role
from labrecords.models import Observation, WitnessPiece
from labrecords.roles import Role
from labrecords.services.audit import audit_record, snapshot

DEFECT_TYPES = (
    "peeling",
    "flaking",
    "blistering",
    "cracking",
    "crazing",
    "haze",
    "stain_discoloration",
    "spots",
    "pinholes",
    "scratches",
    "digs",
    "coating_removal",
    "delamination",
)
_GRADE_KEYS = ("quantity", "size", "intensity")


class StaleRevisionError(Exception):
    """A correction was based on a revision that someone else already corrected."""

    def __init__(self, current: Observation):
        self.current = current
        super().__init__(
            f"Someone else corrected this record first: revision {current.number} by "
            f"{current.recorded_by} at {current.recorded_at:%Y-%m-%d %H:%M} UTC is current. "
            "Nothing was saved; review the current value and correct that one if needed."
        )


def _clean_defects(no_defects: bool, defects: Sequence[dict]) -> list[dict]:
    if no_defects and defects:
        raise ValidationError({"defects": "'No defects observed' cannot list defects."})
    if not no_defects and not defects:
        raise ValidationError(
            {"defects": "List what was seen, or record 'no defects observed' explicitly."}
        )
    cleaned = []
    for index, defect in enumerate(defects, start=1):
        kind = defect.get("defect")
        if kind not in DEFECT_TYPES:
            raise ValidationError({"defects": f"Defect {index}: unknown defect type {kind!r}."})
        row = {
            "defect": kind,
            "zone": str(defect.get("zone", "")),
            "extent": str(defect.get("extent", "")),
        }
        for key in _GRADE_KEYS:
            grade = defect.get(key)
            if grade is None or grade == "":
                continue
            if not isinstance(grade, int) or not 0 <= grade <= 5:
                raise ValidationError(
                    {
                        "defects": f"Defect {index}: {key} grade must be a whole number 0 to 5 "
                        "(ISO 4628-1 style scale)."
                    }
                )
            row[key] = grade
        cleaned.append(row)
    return cleaned


def _check_observed_at(observed_at: datetime.datetime, now: datetime.datetime) -> None:
    if observed_at > now:
        raise ValidationError({"observed_at": "When the work was done cannot be in the future."})


@transaction.atomic
def observation_record(
    *,
    actor,
    piece: WitnessPiece,
    point: str,
    observed_at: datetime.datetime,
    no_defects: bool,
    defects: Sequence[dict] = (),
    lighting: str = "",
    background: str = "",
    magnification: str = "",
    notes: str = "",
) -> Observation:
    """Record a new inspection of a witness piece (revision 1 of a new record)."""
    require_role(actor, Role.TECHNICIAN, Role.ENGINEER)
    now = clock.now()
    _check_observed_at(observed_at, now)
    observation = Observation(
        piece=piece,
        point=point,
        no_defects=no_defects,
        defects=_clean_defects(no_defects, defects),
        lighting=lighting,
        background=background,
        magnification=magnification,
        notes=notes,
        recorded_by=actor,
        recorded_at=now,
        observed_at=observed_at,
    )
    observation.full_clean()
    observation.save()
    audit_record(actor=actor, action="record", obj=observation, after=snapshot(observation))
    return observation


@transaction.atomic
def observation_correct(
    *,
    actor,
    revision: Observation,
    reason: str,
    observed_at: datetime.datetime | None = None,
    no_defects: bool,
    defects: Sequence[dict] = (),
    lighting: str = "",
    background: str = "",
    magnification: str = "",
    notes: str = "",
) -> Observation:
    """Correct an observation: a new revision naming the one it supersedes.

    The earlier revision stays as it was. Refused with StaleRevisionError when
    `revision` is no longer current (someone corrected it first).
    """
    require_role(actor, Role.TECHNICIAN, Role.ENGINEER)
    if not reason.strip():
        raise ValidationError({"reason": "Say why the observation is corrected."})
    now = clock.now()
    observed_at = observed_at or revision.observed_at
    _check_observed_at(observed_at, now)
    correction = Observation(
        record_key=revision.record_key,
        number=revision.number + 1,
        supersedes=revision,
        piece=revision.piece,
        point=revision.point,
        no_defects=no_defects,
        defects=_clean_defects(no_defects, defects),
        lighting=lighting,
        background=background,
        magnification=magnification,
        notes=notes,
        recorded_by=actor,
        recorded_at=now,
        observed_at=observed_at,
        reason=reason,
    )
    correction.full_clean(validate_unique=False, validate_constraints=False)
    try:
        with transaction.atomic():
            correction.save()
    except IntegrityError:
        current = Observation.objects.current().get(record_key=revision.record_key)
        raise StaleRevisionError(current) from None
    audit_record(
        actor=actor,
        action="correct",
        obj=correction,
        before=snapshot(revision),
        after=snapshot(correction),
        reason=reason,
    )
    return correction
