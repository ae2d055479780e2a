from django.contrib.auth.decorators import login_required
from django.contrib.auth.mixins import LoginRequiredMixin
from django.http import Http404
from django.shortcuts import get_object_or_404, render
from django.views.decorators.http import require_safe
from django_filters.views import FilterView
from django_tables2 import SingleTableMixin

from durability.models import Method
from durability.safety import cautions_for
from durability.web.filters import MethodFilter
from durability.web.tables import MethodTable
from labrecords.roles import is_lab_staff


class LabStaffMixin(LoginRequiredMixin):
    def dispatch(self, request, *args, **kwargs):
        if request.user.is_authenticated and not is_lab_staff(request.user):
            raise Http404
        return super().dispatch(request, *args, **kwargs)


class CatalogueView(LabStaffMixin, SingleTableMixin, FilterView):
    """The method catalogue: every method's current version with its parameters' status."""

    table_class = MethodTable
    filterset_class = MethodFilter
    template_name = "durability/catalogue.html"
    paginate_by = 100

    def get_queryset(self):
        return Method.objects.select_related("standard").prefetch_related("versions")


@require_safe
@login_required
def method_detail(request, code: str):
    if not is_lab_staff(request.user):
        raise Http404
    method = get_object_or_404(Method.objects.select_related("standard"), code=code)
    versions = list(method.versions.select_related("created_by").order_by("-number"))
    current = versions[0] if versions else None
    return render(request, "durability/method_detail.html", {
        "method": method,
        "current": current,
        "parameters": current.parameters() if current else [],
        "versions": versions,
        "cautions": cautions_for(current.hazards) if current else [],
    })
