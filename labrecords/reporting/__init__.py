"""Report layout and exports: the PDF (platypus), its plots, and CSV/XLSX result files.

Everything here takes the plain dataclasses of `labrecords.selectors_reports` and returns
bytes; nothing here queries the database.
"""
