"""The admin shows reference data; methods and versions are read-only here.

A method changes only through a new version made by the catalogue service, so
its history stays complete.
"""

from django.contrib import admin

from durability.models import (
    Coater,
    CoatingDesign,
    Glass,
    Instrument,
    Method,
    MethodVersion,
    Standard,
    WitnessStock,
)


class ReadOnlyAdmin(admin.ModelAdmin):
    def has_add_permission(self, request, obj=None):
        return False

    def has_change_permission(self, request, obj=None):
        return False

    def has_delete_permission(self, request, obj=None):
        return False


@admin.register(Method)
class MethodAdmin(ReadOnlyAdmin):
    list_display = ("code", "name", "kind", "standard")
    list_filter = ("kind", "standard")
    search_fields = ("code", "name")


@admin.register(MethodVersion)
class MethodVersionAdmin(ReadOnlyAdmin):
    list_display = ("method", "number", "origin", "created_at", "created_by")
    list_filter = ("origin",)


@admin.register(Standard)
class StandardAdmin(ReadOnlyAdmin):
    list_display = ("designation", "edition", "status", "title")


for model in (Glass, CoatingDesign, Coater, Instrument, WitnessStock):
    admin.site.register(model, ReadOnlyAdmin)
