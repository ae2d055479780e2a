from django.urls import path

from durability.web import views

app_name = "durability"

urlpatterns = [
    path("", views.CatalogueView.as_view(), name="catalogue"),
    path("standards/new/", views.standard_create, name="standard-create"),
    path("procedures/new/", views.lab_method_create, name="lab-method-create"),
    path("<str:code>/", views.method_detail, name="method-detail"),
    path("<str:code>/confirm/", views.method_confirm, name="method-confirm"),
]
