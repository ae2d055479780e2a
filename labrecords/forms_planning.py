from django import forms

from durability.models import WitnessStock
from labrecords.models import Lot


class CalloutsForm(forms.Form):
    callout_text = forms.CharField(
        label="Callouts as the drawing or order states them",
        widget=forms.Textarea(attrs={"rows": 5}),
        required=False,
    )
    reason = forms.CharField(label="Why the callouts change", max_length=300)


class NeffForm(forms.Form):
    n_eff = forms.DecimalField(
        label="Effective index n_eff (your estimate)",
        min_value=1,
        max_value=4,
        decimal_places=3,
        required=False,
    )


class AllocateForm(forms.Form):
    lot = forms.ModelChoiceField(queryset=Lot.objects.none())
    stock = forms.ModelChoiceField(
        queryset=WitnessStock.objects.select_related("glass"), label="Witness stock"
    )
    count = forms.IntegerField(min_value=1, max_value=200, label="Pieces")

    def __init__(self, *args, spec=None, **kwargs):
        super().__init__(*args, **kwargs)
        if spec is not None:
            self.fields["lot"].queryset = spec.lots.all()


class PlanCreateForm(forms.Form):
    pieces_per_sequence = forms.IntegerField(min_value=1, max_value=10, initial=1)
    spare_pieces = forms.IntegerField(min_value=0, max_value=20, initial=0)


class StepEditForm(forms.Form):
    hours = forms.DecimalField(label="Duration (h)", min_value=0, max_digits=7, decimal_places=2)
    wait_hours_before = forms.DecimalField(
        label="Minimum wait before (h)", min_value=0, max_digits=7, decimal_places=2
    )
    note = forms.CharField(required=False, widget=forms.Textarea(attrs={"rows": 2}))


class ReleaseForm(forms.Form):
    review_items_acknowledged = forms.BooleanField(
        required=False, label="I have reviewed every item flagged for engineering review"
    )


class ReasonForm(forms.Form):
    reason = forms.CharField(max_length=300, label="Why")
