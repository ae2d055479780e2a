import zoneinfo

from django.conf import settings
from django.utils import timezone


class LabTimeZoneMiddleware:
    """Show every time in the lab's time zone (stored times stay UTC)."""

    def __init__(self, get_response):
        self.get_response = get_response
        self.zone = zoneinfo.ZoneInfo(settings.TIME_ZONE)

    def __call__(self, request):
        timezone.activate(self.zone)
        try:
            return self.get_response(request)
        finally:
            timezone.deactivate()
