"""Forms of the quality pages: dispositions, authorisations, deviations, consumables."""

from __future__ import annotations

from django import forms
from django.contrib.auth import get_user_model
from django.utils import timezone

from durability.models import Method
from labrecords import clock
from labrecords.models import ChamberRun, ConsumableKind, Disposition
from labrecords.roles import Role
from labrecords.services.consumables import CHECK_QUANTITIES

_DATE = forms.DateInput(attrs={"type": "date"})


class DispositionForm(forms.Form):
    disposition = forms.ChoiceField(choices=[("", "—")] + list(Disposition.choices),
                                    widget=forms.RadioSelect)
    disposition_note = forms.CharField(required=False, widget=forms.Textarea(attrs={"rows": 3}),
                                       label="Why (and for a retest, anything to add)")
    customer_agreement_ref = forms.CharField(
        required=False, max_length=120, label="Customer's agreement reference (concession)")


class GrantForm(forms.Form):
    user = forms.ModelChoiceField(
        queryset=get_user_model().objects.filter(
            groups__name__in=[Role.TECHNICIAN.value, Role.ENGINEER.value,
                              Role.REVIEWER.value]).distinct()
        .order_by("username"),
        label="Person")
    method = forms.ModelChoiceField(queryset=Method.objects.order_by("code"))
    reason = forms.CharField(required=False, max_length=200, label="Basis (training, record)")


class RevokeForm(forms.Form):
    reason = forms.CharField(max_length=200, label="Why revoked",
                             error_messages={"required": "Say why the authorisation is revoked."})


class DeviationForm(forms.Form):
    since = forms.DateField(widget=_DATE, label="Out of tolerance since")
    description = forms.CharField(widget=forms.Textarea(attrs={"rows": 3}),
                                  label="What was found")
    take_out_of_service = forms.BooleanField(required=False, initial=True,
                                             label="Take the instrument out of service")


class ConsumableForm(forms.Form):
    kind = forms.ChoiceField(choices=ConsumableKind.choices)
    name = forms.CharField(max_length=120)
    grade = forms.CharField(max_length=60, required=False, label="Grade (e.g. solvent grade)")
    supplier = forms.CharField(max_length=120, required=False)
    supplier_lot = forms.CharField(max_length=60, label="Supplier's lot")
    received_on = forms.DateField(widget=_DATE, initial=lambda: timezone.localdate(clock.now()))
    expiry = forms.DateField(widget=_DATE, label="Usable through")
    concentration_pct = forms.DecimalField(required=False, max_digits=6, decimal_places=2,
                                           label="Concentration (%)")
    ph = forms.DecimalField(required=False, max_digits=4, decimal_places=2, label="pH")
    note = forms.CharField(max_length=200, required=False)


class ConsumableCheckForm(forms.Form):
    quantity = forms.ChoiceField(choices=CHECK_QUANTITIES, label="Check")
    value = forms.DecimalField(max_digits=8, decimal_places=3)
    run = forms.ModelChoiceField(queryset=ChamberRun.objects.none(), required=False,
                                 label="Salt fog run (for a collection-rate check)")

    def __init__(self, *args, runs=None, **kwargs):
        super().__init__(*args, **kwargs)
        self.fields["run"].queryset = runs if runs is not None else ChamberRun.objects.none()
