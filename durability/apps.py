from django.apps import AppConfig


class DurabilityConfig(AppConfig):
    name = "durability"
    verbose_name = "Methods and reference data"
    default_auto_field = "django.db.models.BigAutoField"
