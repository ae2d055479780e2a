"""URLs of the bench and quality pages (included into labrecords.urls, same namespace)."""

from django.urls import path

from labrecords.views import bench, quality

urlpatterns = [
    path("bench/", bench.bench_home, name="bench"),
    path("bench/<str:ident>/<uuid:step_key>/", bench.step_entry, name="bench-step"),
    path("results/<uuid:record_key>/", bench.result_detail, name="result-detail"),
    path("results/<uuid:record_key>/correct/", bench.result_correct, name="result-correct"),
    path("pieces/<str:ident>/results/", bench.piece_results, name="piece-results"),
    path("nonconformances/", quality.NonconformanceListView.as_view(), name="nonconformances"),
    path("nonconformances/<str:number>/", quality.nonconformance_detail,
         name="nonconformance-detail"),
    path("nonconformances/<str:number>/disposition/", quality.nonconformance_dispose,
         name="nonconformance-dispose"),
    path("authorisations/", quality.AuthorisationListView.as_view(), name="authorisations"),
    path("authorisations/<int:pk>/revoke/", quality.authorisation_revoke,
         name="authorisation-revoke"),
    path("instruments/", quality.InstrumentListView.as_view(), name="instruments"),
    path("instruments/<str:ident>/", quality.instrument_detail, name="instrument-detail"),
    path("instruments/<str:ident>/deviation/", quality.instrument_deviation,
         name="instrument-deviation"),
    path("consumables/", quality.ConsumableListView.as_view(), name="consumables"),
    path("consumables/<int:pk>/", quality.consumable_detail, name="consumable-detail"),
    path("consumables/<int:pk>/checks/", quality.consumable_check, name="consumable-check"),
]
