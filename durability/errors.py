"""Errors raised by the pure computations."""


class InputError(ValueError):
    """Bad input: the message names what is wrong and where (line, field, item)."""
