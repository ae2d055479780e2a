from django.conf import settings

from labrecords.roles import roles_of


def lab(request):
    roles = roles_of(getattr(request, "user", None))
    return {
        "lab_name": settings.LAB_NAME,
        "user_roles": sorted(role.value for role in roles),
        "is_lab_staff": any(role.value != "customer" for role in roles),
    }
