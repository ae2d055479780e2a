"""The demo lab: an invented scenario, built through the real services.

Everything here is fictional: the lab, its customers, people and part numbers.
It exists only for trying the app out and is never loaded in production.
"""
