"""The one exception family of carboy.

``model`` and ``store`` raise these; only ``tui`` turns them into a message on
screen or an exit status.  Every error names the value that was wrong.  The errors that
are dataclasses compare and hash by identity, as exceptions do (``eq=False``: nothing
compares two errors, and Python 3.11 compiles each ``__eq__`` as the class is made).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import ClassVar

QUOTE_LIMIT = 80
"""Characters of a bad value an error message quotes at most (the rest is elided)."""


def quoted(value: object, limit: int = QUOTE_LIMIT) -> str:
    """``repr(value)`` for a message, cut to about ``limit`` characters.

    ``repr`` escapes control, invisible and bidirectional characters, so a stored or
    typed value cannot reach a terminal as an escape sequence through an error line.
    A long value is cut before it is formatted (a 100,000-character argument costs
    nothing) and the cut is marked with ``…`` and the full length.
    """
    if isinstance(value, str) and len(value) > limit:
        return f"{value[:limit]!r}… ({len(value)} characters)"
    text = repr(value)
    return text if len(text) <= limit + 2 else text[:limit] + "…"


class CarboyError(Exception):
    """Base class of every error carboy raises on purpose."""


class Refused(CarboyError):
    """The store refuses an action by rule (not because the input was unreadable).

    Public: every rule refusal derives from it (a closed or full container, an
    incompatible waste, a database whose protections were changed, a file that is not
    the one carboy opened).  The command line exits with status 1 for it and 2 for
    every other error; the app shows the message and writes nothing.  A subclass is
    usually a dataclass with the fields its message needs and its own ``__str__``.
    """

    overridable: ClassVar[bool] = False
    """A person may go ahead anyway, giving a reason (see :class:`NeedsConfirmation`)."""
    findings: tuple = ()
    """What the rules found, for a front end that lists them (:class:`HazardRefused`)."""


@dataclass(eq=False)
class InvalidInput(CarboyError, ValueError):
    """A value given by the user or a caller is not acceptable."""

    what: str
    value: object
    reason: str
    field: str = ""
    """The form field or command-line option the value came from ("" when none): screens
    put the message beside that field without reading the text."""

    def __str__(self) -> str:
        return f"{self.what} {quoted(self.value)}: {self.reason}"


@dataclass(eq=False)
class MissingInput(InvalidInput):
    """A required value was not given; ``reason`` says what is needed, with an example."""

    def __str__(self) -> str:
        return f"{self.what}: {self.reason}"


@dataclass(eq=False)
class UnknownCompound(CarboyError, KeyError):
    """A compound name or formula is not in the catalog."""

    name: str
    suggestions: tuple[str, ...] = field(default_factory=tuple)

    def __str__(self) -> str:
        msg = f"unknown compound {quoted(self.name)}"
        if self.suggestions:
            msg += "; closest matches: " + ", ".join(self.suggestions)
        return msg


@dataclass(eq=False)
class CatalogError(CarboyError, ValueError):
    """A catalog entry (built-in or user-defined) is inconsistent."""

    entry: str
    reason: str

    def __str__(self) -> str:
        return f"catalog entry {quoted(self.entry)}: {self.reason}"


@dataclass(eq=False)
class TemperatureOutOfRange(CarboyError, ValueError):
    """A temperature lies outside the range the data support."""

    temperature_c: float
    low_c: float
    high_c: float

    def __str__(self) -> str:
        return (
            f"temperature {self.temperature_c!r} °C is outside the supported range "
            f"{self.low_c:g}–{self.high_c:g} °C"
        )


@dataclass(eq=False)
class NoConvergence(CarboyError, RuntimeError):
    """An iterative solve did not meet its tolerance."""

    what: str
    iterations: int
    detail: str = ""

    def __str__(self) -> str:
        msg = f"{self.what} did not converge after {self.iterations} iterations"
        return msg + (f": {self.detail}" if self.detail else "")


@dataclass(eq=False)
class HazardRefused(Refused):
    """carboy will not do this: a safety rule forbids it, and nothing was written.

    ``what`` says what was asked ("adding NaCN to MA-01"), ``reason`` names the hazard
    in one line, ``findings`` carries what the rules found (for a front end that lists
    them).  No reason a person gives can override it.
    """

    what: str
    reason: str
    findings: tuple = ()

    overridable: ClassVar[bool] = False

    def __str__(self) -> str:
        return f"refused: {self.what}: {self.reason}"


@dataclass(eq=False)
class NeedsConfirmation(HazardRefused):
    """Not done until a person confirms it with a reason, which the journal keeps (a
    lesser mismatch, such as a base into an acid-waste container)."""

    overridable: ClassVar[bool] = True

    def __str__(self) -> str:
        return f"needs a reason to go ahead: {self.what}: {self.reason}"
