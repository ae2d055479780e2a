"""Bench entry: photos of a witness piece, checked by their bytes and kept as evidence."""

from __future__ import annotations

import uuid
from dataclasses import dataclass
from typing import Any

from django.core.exceptions import ValidationError

from labrecords.models import Evidence, EvidenceKind, WitnessPiece
from labrecords.services.evidence import display_name, evidence_create, upload_bytes

MAX_PHOTOS = 10

# ---------------------------------------------------------------- photos

# Magic bytes: JPEG starts FF D8 FF; PNG has an 8-byte signature. (content type, the name
# endings that agree with it, the bytes it starts with)
_PHOTO_TYPES = (
    ("image/jpeg", (".jpg", ".jpeg"), b"\xff\xd8\xff"),
    ("image/png", (".png",), b"\x89PNG\r\n\x1a\n"),
)


@dataclass(frozen=True)
class CheckedPhoto:
    """An uploaded photo's bytes, its content type from those bytes, and its name as a label."""

    data: bytes
    content_type: str
    name: str


def photo_check(upload: Any) -> CheckedPhoto:
    """Read and check a photo: at most settings.EVIDENCE_MAX_BYTES, a JPEG or PNG by its
    first bytes, and a name whose ending agrees with them. Refused naming the file."""
    name = display_name(str(getattr(upload, "name", "") or "photo"))
    try:
        data = upload_bytes(upload, field="photos")
    except ValidationError as exc:
        raise ValidationError({"photos": f"{name}: {exc.message_dict['photos'][0]}"}) from None
    found = next((t for t in _PHOTO_TYPES if data.startswith(t[2])), None)
    if found is None:
        raise ValidationError({"photos": (
            f"{name}: the content is not a JPEG or PNG image (checked from the file's first "
            "bytes, not its name).")})
    suffix = "." + name.rsplit(".", 1)[-1].lower() if "." in name else ""
    if suffix not in found[1]:
        said = next((t[0] for t in _PHOTO_TYPES if suffix in t[1]), None)
        named = said.split("/")[1].upper() if said else f"{suffix or 'no type'!r}"
        raise ValidationError({"photos": (
            f"{name}: the content is a {found[0].split('/')[1].upper()} image but the name "
            f"says {named}; save it again with the right type.")})
    return CheckedPhoto(data=data, content_type=found[0], name=name)


def photo_store(*, actor, piece: WitnessPiece, step_key: uuid.UUID, photo: CheckedPhoto,
                stage: str = "after", note: str = "") -> Evidence:
    """Keep a checked photo of a piece at a step as evidence (call inside a transaction).

    The evidence services store it under MEDIA_ROOT by its SHA-256; the client's file name
    is kept only as a label, never in the path.
    """
    return evidence_create(
        actor=actor, kind=EvidenceKind.PHOTO, data=photo.data, original_name=photo.name,
        content_type=photo.content_type, summary={}, lot=piece.lot, piece=piece,
        step_key=step_key, stage=stage, note=note)
