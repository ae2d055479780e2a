"""Evidence files: stored by content, never by the name the client sent.

A file lands under MEDIA_ROOT at ``evidence/<first two hex digits>/<sha256>``: the same
bytes are stored once, and nothing a client chose (a name, an extension, a path) ever
reaches the file system. The client's name is kept only as text on the Evidence row, for
the download's suggested name. Callers parse and check the bytes before anything is
written, so a bad file stores nothing.
"""

from __future__ import annotations

import hashlib
import re
import unicodedata
import uuid

from django.conf import settings
from django.core.exceptions import ValidationError
from django.core.files.base import ContentFile
from django.core.files.storage import default_storage

from labrecords import clock
from labrecords.models import ChamberRun, Evidence, Lot, WitnessPiece
from labrecords.services.audit import audit_record, snapshot

_UNSAFE_NAME = re.compile(r"[\x00-\x1f\x7f\"\\/]")


def upload_bytes(upload, *, field: str = "file") -> bytes:
    """Read an uploaded file, refusing one above settings.EVIDENCE_MAX_BYTES or empty."""
    limit = settings.EVIDENCE_MAX_BYTES
    size = getattr(upload, "size", None)
    if size is not None and size > limit:
        raise ValidationError(
            {field: f"The file is {size} bytes; evidence files may be at most {limit} bytes."}
        )
    data = upload.read(limit + 1)
    if len(data) > limit:
        raise ValidationError(
            {field: f"The file is larger than {limit} bytes, the limit for evidence files."}
        )
    if not data:
        raise ValidationError({field: "The file is empty."})
    return data


def check_size(data: bytes, *, field: str = "file") -> None:
    """Refuse bytes above settings.EVIDENCE_MAX_BYTES (services called without a form)."""
    limit = settings.EVIDENCE_MAX_BYTES
    if len(data) > limit:
        raise ValidationError(
            {field: f"The file is {len(data)} bytes; evidence files may be at most {limit} bytes."}
        )
    if not data:
        raise ValidationError({field: "The file is empty."})


def display_name(name: str) -> str:
    """The client's file name reduced to a harmless label: last path part, no control
    characters, quotes or slashes, at most 200 characters."""
    base = re.split(r"[\\/]", name or "")[-1]
    base = unicodedata.normalize("NFC", base)
    base = _UNSAFE_NAME.sub("_", base).strip(" .")
    return (base or "upload")[:200]


def stored_name(sha256: str) -> str:
    return f"evidence/{sha256[:2]}/{sha256}"


def store_bytes(data: bytes) -> tuple[str, str]:
    """Write the bytes under their SHA-256 (once); returns (storage name, sha256)."""
    sha256 = hashlib.sha256(data).hexdigest()
    name = stored_name(sha256)
    if not default_storage.exists(name):
        saved = default_storage.save(name, ContentFile(data))
        if saved != name:  # a concurrent upload of the same bytes won the name
            default_storage.delete(saved)
    return name, sha256


def read_bytes(evidence: Evidence) -> bytes:
    """The stored bytes of an evidence file, checked against its recorded SHA-256."""
    with default_storage.open(evidence.file.name, "rb") as handle:
        data = handle.read()
    if hashlib.sha256(data).hexdigest() != evidence.sha256:
        raise ValidationError(
            f"The stored file of evidence {evidence.pk} does not match its recorded SHA-256."
        )
    return data


def evidence_create(
    *,
    actor,
    kind: str,
    data: bytes,
    original_name: str,
    content_type: str,
    summary: dict,
    lot: Lot | None = None,
    piece: WitnessPiece | None = None,
    step_key: uuid.UUID | None = None,
    chamber_run: ChamberRun | None = None,
    stage: str = "",
    note: str = "",
) -> Evidence:
    """Store the bytes and record the Evidence row with its audit entry.

    Called by the evidence services inside their transaction, after the bytes were parsed
    and checked; not a service of its own (it checks no role).
    """
    check_size(data)
    name, sha256 = store_bytes(data)
    evidence = Evidence(
        kind=kind,
        lot=lot,
        piece=piece,
        step_key=step_key,
        chamber_run=chamber_run,
        stage=stage,
        sha256=sha256,
        original_name=display_name(original_name),
        content_type=content_type,
        size=len(data),
        summary=summary,
        note=note,
        uploaded_by=actor,
        uploaded_at=clock.now(),
    )
    evidence.file.name = name
    evidence.full_clean()
    evidence.save()
    after = snapshot(
        evidence,
        [
            "kind",
            "lot_id",
            "piece_id",
            "step_key",
            "chamber_run_id",
            "stage",
            "sha256",
            "original_name",
            "size",
            "note",
        ],
    )
    audit_record(actor=actor, action="upload evidence", obj=evidence, after=after)
    return evidence
