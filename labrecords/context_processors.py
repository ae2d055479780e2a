from labrecords.lab import lab_identity
from labrecords.roles import roles_of


def lab(request):
    roles = roles_of(getattr(request, "user", None))
    return {
        "lab_name": lab_identity().name,
        "user_roles": sorted(role.value for role in roles),
        "is_lab_staff": any(role.value != "customer" for role in roles),
    }
