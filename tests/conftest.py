"""Shared fixtures: hypothesis profiles, the fixed cast of users, and the one
place where tests pass the append-only triggers (emptying the database after
a transactional test)."""

from __future__ import annotations

import os

import pytest
from hypothesis import HealthCheck, settings

# CI runs without per-example deadlines: a loaded machine must not turn a slow
# example into a failure. Locally the same, with fewer examples.
settings.register_profile(
    "ci", deadline=None, max_examples=100, suppress_health_check=[HealthCheck.too_slow]
)
settings.register_profile("dev", deadline=None, max_examples=50)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci" if os.environ.get("CI") else "dev"))


@pytest.fixture
def _flush_in_maintenance_window():
    """Let Django's flush (run when a transactional test ends) empty append-only tables.

    Set up before pytest-django's `_django_db_helper` and torn down after it, so
    the flush it runs goes through `maintenance_window`; nothing else does.
    """
    from django.core.management.commands import flush

    from labrecords.immutability import maintenance_window

    original = flush.Command.handle

    def handle(self, **options):
        with maintenance_window(options.get("database", "default")):
            return original(self, **options)

    flush.Command.handle = handle
    yield
    flush.Command.handle = original


@pytest.fixture
def _django_db_helper(_flush_in_maintenance_window, _django_db_helper):  # noqa: F811
    """pytest-django's database helper (behind `db`, `transactional_db` and the
    django_db marker), with the flush of transactional tests routed through the
    maintenance switch."""
    return _django_db_helper


@pytest.fixture
def cast(db):
    """A fixed cast: one user per role, plus a customer of another organisation and an
    outsider (a logged-in user with no role at all)."""
    from tests.factories import CustomerFactory, UserFactory, customer_user

    own = CustomerFactory(name="Invented Lens Works", code="ILW")
    other = CustomerFactory(name="Imaginary Photonics", code="IMP")

    class Cast:
        technician = UserFactory(username="tech", roles=["technician"])
        engineer = UserFactory(username="eng", roles=["engineer"])
        reviewer = UserFactory(username="rev", roles=["reviewer"])
        quality_manager = UserFactory(username="qm", roles=["quality manager"])
        administrator = UserFactory(username="admin1", roles=["administrator"])
        customer = customer_user(own, "cust")
        other_customer = customer_user(other, "othercust")
        outsider = UserFactory(username="nobody")
        customer_org = own
        other_org = other

    return Cast
