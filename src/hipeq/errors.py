"""The one typed list of errors that hipeq raises.

Every error a user can see derives from :class:`HipeqError`. Input errors also derive from
``ValueError`` (and ``KeyError`` for lookups) so that generic handlers keep working. Compiled kernels never
raise: they return status codes, and the Python layer turns those into these exceptions or into
per-state status fields of batch results.
"""
from __future__ import annotations


class HipeqError(Exception):
    """Base class of every error raised by hipeq."""


class InputError(HipeqError, ValueError):
    """An argument is outside its allowed range or has the wrong shape.

    The message names the field (``field``) and the allowed range.
    """

    def __init__(self, field: str, message: str) -> None:
        self.field = field
        super().__init__(f"{field}: {message}")


class UnknownSpeciesError(HipeqError, KeyError):
    """A species name, formula or CAS number is not in the species registry."""

    def __init__(self, name: str, suggestions: list[str] | None = None) -> None:
        self.name = name
        self.suggestions = list(suggestions or [])
        hint = f"; did you mean {', '.join(repr(s) for s in self.suggestions)}?" if self.suggestions else ""
        super().__init__(f"unknown species {name!r}{hint}")

    def __str__(self) -> str:  # KeyError would otherwise repr() the message
        return self.args[0]


class UnbalancedReactionError(HipeqError, ValueError):
    """A reaction does not conserve every element; the message says which element is off by how much."""


class OutOfRangeWarning(UserWarning):
    """A correlation is evaluated outside the range its source states (explicit extrapolation)."""


class NotConvergedError(HipeqError, RuntimeError):
    """An iterative solve stopped before meeting its tolerance; the message says why and where it stopped."""

    def __init__(self, message: str, result: object | None = None) -> None:
        self.result = result
        super().__init__(message)
