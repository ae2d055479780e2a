from django.urls import path

from labrecords.views import chambers, evidence, lots, planning, reports, waiting

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
    path("waiting/", waiting.WaitingView.as_view(), name="waiting"),
    path("chambers/", chambers.ChamberRunListView.as_view(), name="chamber-list"),
    path("chambers/new/", chambers.chamber_run_new, name="chamber-new"),
    path("chambers/<int:pk>/", chambers.chamber_run_detail, name="chamber-detail"),
    path("chambers/<int:pk>/unload/", chambers.chamber_run_unload, name="chamber-unload"),
    path("chambers/<int:pk>/log/", chambers.chamber_log_upload, name="chamber-log"),
    path("chambers/<int:pk>/recheck/", chambers.exposure_recheck, name="chamber-recheck"),
    path("pieces/<str:ident>/spectra/", evidence.piece_spectra_page, name="piece-spectra"),
    path("evidence/<int:pk>/download/", evidence.evidence_download, name="evidence-download"),
    path("evidence/<int:pk>/plot.png", evidence.spectrum_plot_png, name="spectrum-plot-png"),
    path("evidence/<int:pk>/plot.svg", evidence.spectrum_plot_svg, name="spectrum-plot-svg"),
    path("lots/<int:pk>/review/", reports.lot_review, name="lot-review"),
    path("lots/<int:pk>/report/", reports.lot_report, name="lot-report"),
    path("lots/<int:pk>/report/draft.pdf", reports.lot_report_draft_pdf, name="lot-report-draft"),
    path("reports/", reports.ReportListView.as_view(), name="report-list"),
    path("reports/<str:number>/", reports.report_detail, name="report-detail"),
    path("reports/<str:number>/pdf/", reports.report_pdf, name="report-pdf"),
    path("reports/<str:number>/amend/", reports.report_amend, name="report-amend"),
    path("reports/<str:number>/reissue/", reports.report_reissue, name="report-reissue"),
    path("orders/<int:pk>/results.csv", reports.order_results_csv, name="order-results-csv"),
    path("orders/<int:pk>/results.xlsx", reports.order_results_xlsx, name="order-results-xlsx"),
    path("verify/", reports.verify_lookup, name="report-verify"),
    path("verify/<str:code>/", reports.verify_code, name="report-verify-code"),
]
