"""Tables of the quality pages: nonconformances, instruments, consumables, authorisations."""

import django_tables2 as tables
from django.urls import reverse
from django.utils import timezone
from django.utils.html import format_html

from durability.models import Instrument
from labrecords import clock
from labrecords.models import Consumable, MethodAuthorisation, Nonconformance
from labrecords.services.instruments import instrument_state


class NonconformanceTable(tables.Table):
    number = tables.LinkColumn("labrecords:nonconformance-detail", args=[tables.A("number")],
                               verbose_name="Number")
    lot = tables.LinkColumn("labrecords:lot-detail", args=[tables.A("lot_id")],
                            accessor="lot__number", verbose_name="Lot")
    customer = tables.Column(accessor="lot__order__customer__name", verbose_name="Customer")
    piece = tables.Column(accessor="result__piece__ident", verbose_name="Piece",
                          default="—")
    step = tables.Column(accessor="result__step__name", verbose_name="Step", default="—")
    opened_at = tables.DateTimeColumn(format="Y-m-d H:i", verbose_name="Opened")
    state = tables.Column(accessor="disposition", verbose_name="Disposition",
                          orderable=True)

    class Meta:
        model = Nonconformance
        fields = ("number", "kind", "lot", "customer", "piece", "step", "opened_at", "state")
        attrs = {"class": "records"}
        empty_text = "No nonconformances."

    def render_state(self, record):
        return record.get_disposition_display() if record.disposition else "open"


class InstrumentTable(tables.Table):
    ident = tables.LinkColumn("labrecords:instrument-detail", args=[tables.A("ident")],
                              verbose_name="Instrument")
    calibration_due = tables.DateColumn(format="Y-m-d", verbose_name="Calibrated through")
    status = tables.Column(empty_values=(), orderable=False, verbose_name="Calibration status")

    class Meta:
        model = Instrument
        fields = ("ident", "name", "kind", "location", "calibration_due", "status")
        attrs = {"class": "records"}
        empty_text = "No instruments."

    def render_status(self, record):
        state = instrument_state(record, timezone.localdate(clock.now()))
        return format_html('<span class="calibration calibration-{}">{}</span>',
                           state.status.value, state.label)


class ConsumableTable(tables.Table):
    name = tables.LinkColumn("labrecords:consumable-detail", args=[tables.A("pk")])
    expiry = tables.DateColumn(format="Y-m-d", verbose_name="Usable through")
    state = tables.Column(empty_values=(), orderable=False, verbose_name="State")

    class Meta:
        model = Consumable
        fields = ("kind", "name", "grade", "supplier", "supplier_lot", "received_on", "expiry",
                  "state")
        attrs = {"class": "records"}
        empty_text = "No consumables registered."

    def render_state(self, record):
        if record.usable_on(timezone.localdate(clock.now())):
            return format_html('<span class="verdict-pass">{}</span>', "usable")
        return format_html('<span class="verdict-invalid">{}</span>', "expired")


class AuthorisationTable(tables.Table):
    user = tables.Column(accessor="user__username", verbose_name="Person")
    full_name = tables.Column(empty_values=(), orderable=False, verbose_name="Name")
    method = tables.Column(accessor="method__code", verbose_name="Method")
    method_name = tables.Column(accessor="method__name", verbose_name="Method name")
    granted = tables.Column(empty_values=(), orderable=False, verbose_name="Granted")
    revoked = tables.Column(empty_values=(), orderable=False, verbose_name="Revoked")
    action = tables.Column(empty_values=(), orderable=False, verbose_name="")

    class Meta:
        model = MethodAuthorisation
        fields = ("user", "full_name", "method", "method_name", "granted", "revoked", "action")
        attrs = {"class": "records"}
        empty_text = "Nobody is authorised yet."

    def render_action(self, record):
        # A small form per row; built here rather than from a template, so no context
        # processor runs once per row.
        context = getattr(self, "context", None) or {}
        if not context.get("can_manage") or record.revoked_at is not None:
            return ""
        return format_html(
            '<form method="post" action="{}" class="inline">'
            '<input type="hidden" name="csrfmiddlewaretoken" value="{}">'
            '<label for="revoke-{}">Why revoked</label>'
            '<input id="revoke-{}" name="reason" maxlength="200" required> '
            '<button type="submit">Revoke</button></form>',
            reverse("labrecords:authorisation-revoke", args=[record.pk]),
            context.get("csrf_token", ""), record.pk, record.pk)

    def render_full_name(self, record):
        return record.user.get_full_name()

    def render_granted(self, record):
        return (f"{timezone.localtime(record.granted_at):%Y-%m-%d} by "
                f"{record.granted_by.get_username()}")

    def render_revoked(self, record):
        if record.revoked_at is None:
            return "—"
        return (f"{timezone.localtime(record.revoked_at):%Y-%m-%d} by "
                f"{record.revoked_by.get_username()}")
