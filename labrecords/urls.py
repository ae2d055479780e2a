from django.urls import path

from labrecords.views import lots

app_name = "labrecords"

urlpatterns = [
    path("", lots.HomeView.as_view(), name="home"),
    path("lots/<int:pk>/", lots.lot_detail, name="lot-detail"),
    path("pieces/<str:ident>/", lots.piece_detail, name="piece-detail"),
    path("specs/<int:pk>/", lots.spec_detail, name="spec-detail"),
]
