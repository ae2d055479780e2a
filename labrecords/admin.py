"""Lab records are read-only in the admin: every write goes through the services."""

from django.contrib import admin

from durability.admin import ReadOnlyAdmin
from labrecords.models import (
    AuditEntry,
    CoatingSpec,
    Customer,
    Lot,
    Observation,
    Order,
    WitnessPiece,
)


@admin.register(AuditEntry)
class AuditEntryAdmin(ReadOnlyAdmin):
    list_display = ("at", "actor", "action", "model", "object_repr", "reason")
    list_filter = ("action", "model")


for model in (Customer, Order, CoatingSpec, Lot, WitnessPiece, Observation):
    admin.site.register(model, ReadOnlyAdmin)
