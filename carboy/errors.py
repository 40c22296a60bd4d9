"""The one exception family of carboy.

``model`` and ``store`` raise these; only ``tui`` turns them into a message on
screen or an exit status.  Every error names the value that was wrong.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import ClassVar


class CarboyError(Exception):
    """Base class of every error carboy raises on purpose."""


@dataclass
class InvalidInput(CarboyError, ValueError):
    """A value given by the user or a caller is not acceptable."""

    what: str
    value: object
    reason: str
    field: str = ""
    """The form field or command-line option the value came from ("" when none): screens
    put the message beside that field without reading the text."""

    def __str__(self) -> str:
        return f"{self.what} {self.value!r}: {self.reason}"


@dataclass
class MissingInput(InvalidInput):
    """A required value was not given; ``reason`` says what is needed, with an example."""

    def __str__(self) -> str:
        return f"{self.what}: {self.reason}"


@dataclass
class UnknownCompound(CarboyError, KeyError):
    """A compound name or formula is not in the catalog."""

    name: str
    suggestions: tuple[str, ...] = field(default_factory=tuple)

    def __str__(self) -> str:
        msg = f"unknown compound {self.name!r}"
        if self.suggestions:
            msg += "; closest matches: " + ", ".join(self.suggestions)
        return msg


@dataclass
class CatalogError(CarboyError, ValueError):
    """A catalog entry (built-in or user-defined) is inconsistent."""

    entry: str
    reason: str

    def __str__(self) -> str:
        return f"catalog entry {self.entry!r}: {self.reason}"


@dataclass
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


@dataclass
class NoConvergence(CarboyError, RuntimeError):
    """An iterative solve did not meet its tolerance."""

    what: str
    iterations: int
    detail: str = ""

    def __str__(self) -> str:
        msg = f"{self.what} did not converge after {self.iterations} iterations"
        return msg + (f": {self.detail}" if self.detail else "")


@dataclass
class Refused(CarboyError):
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


@dataclass
class NeedsConfirmation(Refused):
    """Not done until a person confirms it with a reason, which the journal keeps (a
    lesser mismatch, such as a base into an acid-waste container)."""

    overridable: ClassVar[bool] = True

    def __str__(self) -> str:
        return f"needs a reason to go ahead: {self.what}: {self.reason}"
