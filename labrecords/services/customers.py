from __future__ import annotations

from django.contrib.auth import get_user_model
from django.contrib.auth.models import Group
from django.db import transaction

from labrecords.models import Customer, CustomerUser
from labrecords.roles import Role
from labrecords.services.audit import audit_record, create_audited


@transaction.atomic
def customer_create(
    *,
    actor,
    name: str,
    code: str,
    contact_name: str = "",
    contact_email: str = "",
    address: str = "",
) -> Customer:
    """Register a customer organisation."""
    customer = Customer(
        name=name,
        code=code,
        contact_name=contact_name,
        contact_email=contact_email,
        address=address,
    )
    return create_audited(actor=actor, obj=customer)


@transaction.atomic
def user_create(
    *,
    actor,
    username: str,
    password: str,
    full_name: str,
    roles: list[Role],
    email: str = "",
    customer: Customer | None = None,
):
    """Create a login with its roles; a customer user is tied to one organisation."""
    if Role.CUSTOMER in roles and customer is None:
        raise ValueError("A customer user needs the customer organisation it belongs to.")
    if customer is not None and roles != [Role.CUSTOMER]:
        raise ValueError("A login tied to a customer organisation has the customer role only.")
    first, _, last = full_name.partition(" ")
    user = get_user_model()(username=username, email=email, first_name=first, last_name=last)
    user.set_password(password)
    user.full_clean()
    user.save()
    for role in roles:
        group, _ = Group.objects.get_or_create(name=role.value)
        user.groups.add(group)
    if customer is not None:
        CustomerUser.objects.create(user=user, customer=customer)
    audit_record(
        actor=actor,
        action="create",
        obj=user,
        after={
            "username": username,
            "full_name": full_name,
            "roles": sorted(r.value for r in roles),
            "customer": customer.pk if customer else None,
        },
    )
    return user


def roles_ensure() -> list[Group]:
    """Create the role groups if missing (idempotent)."""
    return [Group.objects.get_or_create(name=role.value)[0] for role in Role]
