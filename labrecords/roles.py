"""The roles, defined once. Each is a Django group of the same name."""

from enum import StrEnum


class Role(StrEnum):
    TECHNICIAN = "technician"  # records results
    ENGINEER = "engineer"  # plans and releases tests
    REVIEWER = "reviewer"  # checks and signs
    QUALITY_MANAGER = "quality manager"  # nonconformances, instruments, methods
    CUSTOMER = "customer"  # read-only, own organisation only
    ADMINISTRATOR = "administrator"  # users and reference data


LAB_ROLES = frozenset(
    {Role.TECHNICIAN, Role.ENGINEER, Role.REVIEWER, Role.QUALITY_MANAGER, Role.ADMINISTRATOR}
)


def roles_of(user) -> frozenset[Role]:
    """The user's roles, cached on the user object for the request."""
    if not getattr(user, "is_authenticated", False) or not user.is_active:
        return frozenset()
    cached = getattr(user, "_labrecords_roles", None)
    if cached is None:
        names = set(user.groups.values_list("name", flat=True))
        cached = frozenset(role for role in Role if role.value in names)
        user._labrecords_roles = cached
    return cached


def has_role(user, *roles: Role) -> bool:
    return bool(roles_of(user) & set(roles))


def is_lab_staff(user) -> bool:
    return bool(roles_of(user) & LAB_ROLES)
