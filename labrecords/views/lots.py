from django.contrib import messages
from django.contrib.auth.decorators import login_required
from django.contrib.auth.mixins import LoginRequiredMixin
from django.core.exceptions import ValidationError
from django.http import Http404
from django.shortcuts import redirect, render
from django.views.decorators.http import require_POST, require_safe
from django_filters.views import FilterView
from django_tables2 import SingleTableMixin

from labrecords import selectors, selectors_custody, selectors_schedule
from labrecords.access import lot_for_user, piece_for_user, require_role
from labrecords.filters import LotFilter
from labrecords.models import Lot
from labrecords.roles import Role, has_role, is_lab_staff
from labrecords.services import lots as lot_services
from labrecords.tables import LotTable


class HomeView(LoginRequiredMixin, SingleTableMixin, FilterView):
    """The lots the user may see, with their stage."""

    table_class = LotTable
    filterset_class = LotFilter
    template_name = "labrecords/home.html"
    paginate_by = 50

    def get_queryset(self):
        return Lot.objects.visible_to(self.request.user).for_listing()

    def get_filterset_kwargs(self, filterset_class):
        kwargs = super().get_filterset_kwargs(filterset_class)
        kwargs["user"] = self.request.user
        return kwargs


@require_safe
@login_required
def lot_detail(request, pk: int):
    lot = lot_for_user(request.user, pk)
    return render(
        request,
        "labrecords/lot_detail.html",
        {
            "lot": lot,
            "pieces": selectors.lot_pieces(lot),
            "audit": selectors.audit_trail(lot),
            "promise": selectors_schedule.lot_promise(lot),
            "can_prioritise": has_role(request.user, Role.ENGINEER, Role.QUALITY_MANAGER),
        },
    )


@require_safe
@login_required
def piece_detail(request, ident: str):
    piece = piece_for_user(request.user, ident)
    return render(
        request,
        "labrecords/piece_detail.html",
        {
            "piece": piece,
            "observations": selectors.piece_observations(piece),
            "custody": selectors_custody.piece_custody(piece)
            if is_lab_staff(request.user) else None,
        },
    )


@require_POST
@login_required
def lot_priority(request, pk: int):
    """Mark a lot as a rush (or back to normal); the promised dates follow."""
    lot = lot_for_user(request.user, pk)
    if not is_lab_staff(request.user):
        raise Http404
    require_role(request.user, Role.ENGINEER, Role.QUALITY_MANAGER)
    try:
        priority = int(request.POST.get("priority", ""))
        lot_services.lot_priority_set(actor=request.user, lot=lot, priority=priority,
                                      reason=request.POST.get("reason", ""))
    except ValueError:
        messages.error(request, "Priority: enter a whole number, 0 for normal.")
    except ValidationError as exc:
        for field, errors in exc.message_dict.items():
            messages.error(request, f"{field}: {' '.join(errors)}")
    else:
        messages.success(request, f"Lot {lot.number} priority set to {priority}.")
    return redirect(lot.get_absolute_url())
