from django.urls import path

from labrecords.views import lots, planning

app_name = "labrecords"

urlpatterns = [
    path("", lots.HomeView.as_view(), name="home"),
    path("lots/<int:pk>/", lots.lot_detail, name="lot-detail"),
    path("pieces/<str:ident>/", lots.piece_detail, name="piece-detail"),
    path("specs/<int:pk>/", planning.spec_detail, name="spec-detail"),
    path("specs/<int:pk>/callouts/", planning.spec_callouts, name="spec-callouts"),
    path("specs/<int:pk>/allocate/", planning.witness_allocate, name="witness-allocate"),
    path("lots/<int:pk>/plan/", planning.lot_plan, name="lot-plan"),
    path("lots/<int:pk>/plan/new/", planning.plan_create, name="plan-create"),
    path("lots/<int:pk>/plan/assign/", planning.plan_assign, name="plan-assign"),
    path("lots/<int:pk>/plan/release/", planning.plan_release, name="plan-release"),
    path("lots/<int:pk>/plan/revise/", planning.plan_revise, name="plan-revise"),
    path("lots/<int:pk>/plan/steps/<int:step_pk>/", planning.plan_step_edit, name="plan-step-edit"),
]
