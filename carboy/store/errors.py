"""Errors raised by the storeroom database.

Each is a narrow subclass of :class:`carboy.errors.CarboyError` with the fields a
caller needs; the message is built in ``__str__`` and names the offending value.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from carboy.errors import CarboyError, Refused
from carboy.store.statuses import container_state


@dataclass
class StoreError(CarboyError):
    """Base of the errors raised by ``carboy.store``."""

    def __str__(self) -> str:  # pragma: no cover - subclasses override
        return self.__class__.__name__


@dataclass
class DatabaseUnusable(StoreError):
    """The file is damaged, not SQLite, or not a carboy database; carboy will not write it."""

    path: str
    reason: str

    def __str__(self) -> str:
        return f"cannot use database {self.path!r}: {self.reason}"


@dataclass
class NotFound(StoreError, LookupError):
    """No record of this kind has this key."""

    kind: str
    key: object

    def __str__(self) -> str:
        return f"no {self.kind} {self.key!r}"


@dataclass
class AlreadyExists(StoreError, Refused):
    """A record with this key exists already."""

    kind: str
    key: object

    def __str__(self) -> str:
        return f"{self.kind} {self.key!r} exists already"


@dataclass
class ContainerClosed(StoreError, Refused):
    """A waste container no longer accepts additions or this change of status."""

    label: str
    status: str
    """The stored status (``licensed-disposal``); the message says it in words."""
    action: str = "add to it"

    def __str__(self) -> str:
        return (f"waste container {self.label!r} is {container_state(self.status)}: "
                f"cannot {self.action}")


@dataclass
class OverCapacity(StoreError, Refused):
    """An addition would take a waste container past its capacity."""

    label: str
    capacity_l: float
    would_be_l: float

    def __str__(self) -> str:
        return (
            f"waste container {self.label!r} holds at most {self.capacity_l:g} L; "
            f"this addition would bring it to {self.would_be_l:g} L"
        )


@dataclass
class HeadspaceRefused(OverCapacity):
    """An addition would fill a waste container past its fill limit (the headspace the
    storeroom's rules keep free); the message names the free volume left."""

    limit_percent: float = 90.0
    volume_l: float = 0.0
    """What the container holds now."""

    @property
    def limit_l(self) -> float:
        return self.capacity_l * self.limit_percent / 100.0

    @property
    def free_l(self) -> float:
        return max(self.limit_l - self.volume_l, 0.0)

    def __str__(self) -> str:
        return (f"waste container {self.label!r} may be filled to {self.limit_percent:g} % "
                f"({self.limit_l:.4g} L of {self.capacity_l:g} L): {self.free_l:.4g} L free "
                f"below that; this would bring it to {self.would_be_l:.4g} L")


@dataclass
class DisposalRefused(StoreError, Refused):
    """A waste container may not be marked disposed, or treated here, by the rules."""

    label: str
    reason: str
    action: str = "mark it disposed"

    def __str__(self) -> str:
        return f"waste container {self.label!r}: cannot {self.action}: {self.reason}"


@dataclass
class Busy(StoreError):
    """The database stayed locked by other users through every retry."""

    path: str
    attempts: int
    detail: str = ""

    def __str__(self) -> str:
        msg = (f"database {self.path!r} is busy (other users are writing); "
               f"gave up after {self.attempts} attempts, try again")
        return msg + (f": {self.detail}" if self.detail else "")


@dataclass
class JournalImmutable(StoreError, Refused):
    """Journal entries are never changed or removed; record a correction instead."""

    entry_id: object = None

    def __str__(self) -> str:
        return ("journal entries cannot be changed or deleted; "
                "record a correction that points at the entry instead")


@dataclass
class CsvRowError(StoreError):
    """One or more rows of a CSV file are unusable; nothing was imported."""

    path: str
    problems: list[tuple[int, str]] = field(default_factory=list)

    def __str__(self) -> str:
        # row 0: the file as a whole (not found, not UTF-8), which has no row to name
        shown = "; ".join(f"row {n}: {msg}" if n > 0 else msg for n, msg in self.problems[:10])
        more = len(self.problems) - 10
        tail = f"; and {more} more" if more > 0 else ""
        return f"{self.path}: nothing imported: {shown}{tail}"
