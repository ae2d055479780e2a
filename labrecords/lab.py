"""The lab's identity for screens and reports."""

from __future__ import annotations

from dataclasses import dataclass

from django.conf import settings

from durability.models import LabProfile


@dataclass(frozen=True)
class LabIdentity:
    name: str
    address: str
    accreditation: str


def lab_identity() -> LabIdentity:
    """The newest lab profile, or the LAB_NAME / LAB_ADDRESS settings when none is recorded."""
    profile = LabProfile.objects.first()
    if profile is not None:
        return LabIdentity(profile.name, profile.address, profile.accreditation)
    return LabIdentity(settings.LAB_NAME or "Durability records", settings.LAB_ADDRESS, "")
