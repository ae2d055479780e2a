"""Screens for the method catalogue and reference data (thin views)."""
