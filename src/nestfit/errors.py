"""The exception and warning hierarchy of nestfit.

Every error nestfit raises on bad input is a :class:`NestfitError`. Each
subclass also derives from the matching built-in exception (``ValueError``,
``KeyError``...) so that generic handlers keep working. Messages name the
column, level or model at fault and say what to do about it.

Warnings are :class:`NestfitWarning` subclasses; the test suite turns them
into errors so no test can hide one.
"""

from __future__ import annotations

__all__ = [
    "ColumnError",
    "ContrastError",
    "DataError",
    "FactorError",
    "ModelError",
    "NestfitError",
    "NestfitWarning",
    "NotNestedError",
    "ParseError",
    "RankDeficiencyWarning",
    "RankDeficientError",
    "ZeroResidualDfWarning",
]


class NestfitError(Exception):
    """Base class of every error raised by nestfit on bad input or an ill-posed request."""


class DataError(NestfitError, ValueError):
    """The data cannot be used as given: NaN/inf, too few observations, mismatched lengths."""


class ColumnError(DataError, KeyError):
    """A named column is missing, or has the wrong type (for example non-numeric)."""

    def __str__(self) -> str:  # KeyError would otherwise repr() the message
        return str(self.args[0]) if self.args else ""


class FactorError(DataError):
    """A factor is unusable: empty, a single level, an unknown level, a duplicated label."""


class ParseError(NestfitError, ValueError):
    """A partition spec or a contrast expression could not be parsed.

    Attributes
    ----------
    text : str
        The text that was being parsed.
    position : int
        Zero-based offset of the offending character.
    reason : str
        The message without the caret lines.
    """

    def one_line(self) -> str:
        """The message on one line, with the position in words."""
        if self.text and self.position >= 0:
            return f"{self.reason} (at character {self.position + 1} of {self.text!r})"
        return self.reason

    def __init__(self, message: str, text: str = "", position: int = -1) -> None:
        self.text = text
        self.position = position
        self.reason = message
        if text and position >= 0:
            message = f"{message}\n    {text}\n    {' ' * position}^"
        super().__init__(message)


class ModelError(NestfitError, ValueError):
    """A model (design) cannot be fitted or used as asked."""


class RankDeficientError(ModelError):
    """The design has aliased columns and the caller asked for full rank."""


class NotNestedError(ModelError):
    """Two models that were to be compared are not nested, or differ in rows or response."""


class ContrastError(NestfitError, ValueError):
    """A contrast is malformed or not estimable in the fitted model."""


class NestfitWarning(UserWarning):
    """Base class of every warning issued by nestfit."""


class RankDeficiencyWarning(NestfitWarning):
    """The design has aliased columns; their coefficients are reported as not estimable."""


class ZeroResidualDfWarning(NestfitWarning):
    """The model has no residual degrees of freedom, so no error variance can be estimated."""
