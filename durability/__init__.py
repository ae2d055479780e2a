"""Published knowledge, the lab's reference data, and the pure computations.

The computation modules here take plain values and return plain values; they
never import Django, so `python -m durability ...` and their tests run without
a database.
"""
