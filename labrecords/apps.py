from django.apps import AppConfig


class LabrecordsConfig(AppConfig):
    name = "labrecords"
    verbose_name = "Records"
    default_auto_field = "django.db.models.BigAutoField"

    def ready(self) -> None:
        from django.db.backends.signals import connection_created

        from labrecords import immutability

        connection_created.connect(immutability.register_sqlite_switch)
