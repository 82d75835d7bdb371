"""Exceptions that carry a message meant for the user."""


class ParameterError(ValueError):
    """A parameter is missing, of the wrong kind or outside its allowed values.

    The message always names the parameter and what is allowed.
    """


class NonFiniteStateError(FloatingPointError):
    """The state holds NaN or infinite values; the run must stop."""
