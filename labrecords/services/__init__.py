"""Every write to a lab record goes through a function in this package.

Each is keyword-only and typed, validates with `full_clean()`, runs in one
transaction and writes the audit trail. Forms, the admin, management commands
and the demo builder all call these; nothing else writes.
"""
