"""Everything tied to a customer or a lot: access-checked and audited."""
