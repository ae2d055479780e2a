"""Waiting work: which lots wait for which tests (lab staff only)."""

from django.contrib.auth.mixins import LoginRequiredMixin
from django.http import Http404
from django_filters.views import FilterView
from django_tables2 import SingleTableMixin

from durability.errors import InputError
from durability.safety import cautions_for
from labrecords import clock
from labrecords.exports import csv_response
from labrecords.filters_waiting import WaitingFilter
from labrecords.roles import is_lab_staff
from labrecords.selectors_waiting import waiting_assignments, waiting_rows
from labrecords.tables_waiting import WaitingTable


class WaitingView(LoginRequiredMixin, SingleTableMixin, FilterView):
    """Per lot and piece: the next step, what it waits for, how long, due and late.

    `?export=csv` downloads every filtered row through the same table.
    """

    table_class = WaitingTable
    filterset_class = WaitingFilter
    template_name = "labrecords/waiting/list.html"
    paginate_by = 100
    http_method_names = ["get", "head"]

    def dispatch(self, request, *args, **kwargs):
        if request.user.is_authenticated and not is_lab_staff(request.user):
            raise Http404
        return super().dispatch(request, *args, **kwargs)

    def get_queryset(self):
        return waiting_assignments()

    def promised_dates(self):
        """Lot id -> promised date from the lab's schedule (computed once per request)."""
        if not hasattr(self, "_promised"):
            from labrecords.selectors_schedule import promised_dates

            self._promised = promised_dates()
        return self._promised

    def get_table_data(self):
        # FilterView leaves the filtered assignments (or none, for invalid filters) here.
        rows = waiting_rows(self.object_list, now=clock.now(), promised=self.promised_dates())
        filterset = self.filterset
        if filterset.is_bound and filterset.is_valid() and filterset.form.cleaned_data.get("kind"):
            rows = [row for row in rows if row.kind == filterset.form.cleaned_data["kind"]]
        self.rows = rows
        return rows

    def get_table_kwargs(self):
        if not self.promised_dates():  # no resources scheduled yet: no promised column
            return {"exclude": ("promised",)}
        return {}

    def get(self, request, *args, **kwargs):
        if request.GET.get("export") != "csv":
            return super().get(request, *args, **kwargs)
        self.filterset = self.get_filterset(self.get_filterset_class())
        valid = not self.filterset.is_bound or self.filterset.is_valid()
        self.object_list = self.filterset.qs if valid else self.filterset.queryset.none()
        return csv_response("waiting-work.csv", self.get_table().as_values())

    def get_context_data(self, **kwargs):
        context = super().get_context_data(**kwargs)
        hazards = sorted({h for row in self.rows for h in row.hazards})
        try:
            context["cautions"] = cautions_for(hazards)
        except InputError:
            context["cautions"] = []
        query = self.request.GET.copy()
        query["export"] = "csv"
        query.pop("page", None)
        context["export_query"] = query.urlencode()
        context["row_count"] = len(self.rows)
        return context
