from django.urls import path

from durability.web import views

app_name = "durability"

urlpatterns = [
    path("", views.CatalogueView.as_view(), name="catalogue"),
    path("<str:code>/", views.method_detail, name="method-detail"),
]
