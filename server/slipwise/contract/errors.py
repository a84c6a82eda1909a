"""The one error a refused input value raises: the field it concerns and a message naming the allowed range."""

from __future__ import annotations


class FieldError(ValueError):
    """A value the contract refuses; ``field`` names it, ``message`` says what is allowed."""

    code = "invalid_input"

    def __init__(self, message: str, field: str | None = None):
        super().__init__(message)
        self.message = message
        self.field = field
