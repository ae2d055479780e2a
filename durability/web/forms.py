from django import forms

from durability.models import MethodKind, Standard, StandardStatus


class ConfirmForm(forms.Form):
    parameter = forms.CharField(max_length=60)
    value = forms.CharField(
        max_length=60, required=False, help_text="leave empty to keep the value shown"
    )
    copy = forms.CharField(
        max_length=200,
        label="Checked against (the lab's copy)",
        help_text="e.g. MIL-C-48497A amendment 3, controlled copy no. 2",
    )


class StandardForm(forms.Form):
    designation = forms.CharField(max_length=80)
    edition = forms.CharField(max_length=80, help_text="edition or year")
    title = forms.CharField(max_length=300, required=False)
    status = forms.ChoiceField(choices=StandardStatus.choices)


HAZARD_CHOICES = [
    ("solvent", "Solvents"),
    ("salt_fog", "Salt fog"),
    ("boiling_water", "Boiling water"),
    ("hot_chamber", "Hot chamber"),
    ("cold_chamber", "Cold chamber"),
    ("laser", "Laser"),
    ("sharp_blade", "Sharp blade"),
]


class LabMethodForm(forms.Form):
    code = forms.CharField(max_length=80, help_text="e.g. LAB:boil-tape")
    standard = forms.ModelChoiceField(queryset=Standard.objects.all())
    name = forms.CharField(max_length=120)
    kind = forms.ChoiceField(choices=MethodKind.choices)
    parameters = forms.CharField(
        required=False,
        widget=forms.Textarea(attrs={"rows": 4}),
        help_text="one per line: name = value unit, e.g. duration_h = 1 h",
    )
    acceptance_text = forms.CharField(widget=forms.Textarea(attrs={"rows": 2}))
    destructive = forms.BooleanField(required=False)
    hazards = forms.MultipleChoiceField(
        choices=HAZARD_CHOICES, required=False, widget=forms.CheckboxSelectMultiple
    )

    def clean_parameters(self) -> dict[str, dict[str, object]]:
        parsed: dict[str, dict[str, object]] = {}
        for number, line in enumerate(self.cleaned_data["parameters"].splitlines(), start=1):
            if not line.strip():
                continue
            name, sep, rest = line.partition("=")
            name = name.strip()
            if not sep or not name.replace("_", "").isalnum():
                raise forms.ValidationError(
                    f"Line {number}: write 'name = value unit' (got {line.strip()!r})."
                )
            value_text, _, unit = rest.strip().partition(" ")
            try:
                value: object = float(value_text.replace(",", "."))
            except ValueError:
                value = value_text or None
            parsed[name] = {
                "value": value,
                "unit": unit.strip(),
                "status": "confirmed",
                "placeholder": False,
                "note": "the lab's own procedure",
            }
        return parsed
