from django.conf import settings
from django.db import models


class CustomerQuerySet(models.QuerySet):
    def visible_to(self, user) -> "CustomerQuerySet":
        from labrecords.access import customer_filter

        return self.filter(customer_filter(user, "id"))


class Customer(models.Model):
    name = models.CharField(max_length=120, unique=True)
    code = models.CharField(max_length=12, unique=True)
    contact_name = models.CharField(max_length=120, blank=True)
    contact_email = models.EmailField(blank=True)
    address = models.TextField(blank=True)

    objects = CustomerQuerySet.as_manager()

    class Meta:
        ordering = ["name"]

    def __str__(self) -> str:
        return self.name


class CustomerUser(models.Model):
    """Links a login of the customer role to the one organisation it belongs to."""

    user = models.OneToOneField(
        settings.AUTH_USER_MODEL, on_delete=models.PROTECT, related_name="customer_link"
    )
    customer = models.ForeignKey(Customer, on_delete=models.PROTECT, related_name="users")

    def __str__(self) -> str:
        return f"{self.user} @ {self.customer}"
