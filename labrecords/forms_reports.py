"""Forms for reviews, report issue and corrections, and the public verification page.

They only validate what was typed; the services check the credentials and decide.
"""

from __future__ import annotations

from django import forms


class SigningForm(forms.Form):
    """The credentials a signature asks for again: the user name only on the session's
    first signing, the password every time."""

    username = forms.CharField(
        label="User name",
        max_length=150,
        widget=forms.TextInput(attrs={"autocomplete": "username"}),
    )
    password = forms.CharField(
        label="Password",
        strip=False,
        widget=forms.PasswordInput(attrs={"autocomplete": "current-password"}),
    )

    def __init__(self, *args, first_in_session: bool, **kwargs):
        super().__init__(*args, **kwargs)
        if not first_in_session:
            del self.fields["username"]


class ReviewForm(SigningForm):
    comment = forms.CharField(
        label="Comment (optional)", required=False, widget=forms.Textarea(attrs={"rows": 3})
    )

    field_order = ["comment", "username", "password"]


class CorrectionForm(SigningForm):
    change_description = forms.CharField(
        label="What changed and why", widget=forms.Textarea(attrs={"rows": 4})
    )

    field_order = ["change_description", "username", "password"]


class VerifyForm(forms.Form):
    code = forms.CharField(
        label="Verification code",
        max_length=40,
        widget=forms.TextInput(attrs={"autocomplete": "off", "spellcheck": "false"}),
    )
