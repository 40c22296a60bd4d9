"""The statuses of waste containers and stock bottles: values, allowed moves, and words.

This is the one place they are spelled out.  The store checks and moves statuses
through it; the front ends ask it what an action needs (``takes_additions``,
``can_be_planned`` …) and which words to show.  A status is a :class:`~enum.StrEnum`,
so it equals, formats and serialises as its stored value (``"licensed-disposal"``);
:attr:`~ContainerStatus.words` is what a person reads (``"licensed disposal"``).

The database's CHECK constraints were written by the migrations with the lists of
their day (``migrations.py`` holds them literally); a new status needs a migration.

Waste containers (moves go one way; a disposal status is final):

=====================  =========================================================
``collecting``         takes additions → planned, neutralized, licensed-disposal
``planned``            a neutralization plan is recorded → neutralized, licensed-disposal
``neutralized``        treated, pH measured → disposed, licensed-disposal
``disposed``           gone, by the route local disposal rules and the safety office set
``licensed-disposal``  held (or shipped) for licensed disposal: never treated here
=====================  =========================================================

Stock bottles: ``in-use``, ``empty``, ``disposed`` (any may be set; disposal is journaled).
"""

from __future__ import annotations

from enum import StrEnum
from typing import Self

from carboy.errors import InvalidInput


class _Status(StrEnum):
    """What every kind of status has: reading one, and its words."""

    @classmethod
    def parse(cls, value: object, *, field: str = "status") -> Self:
        """The status named by ``value``; :class:`InvalidInput` naming it otherwise."""
        try:
            return cls(value)
        except ValueError:
            raise InvalidInput("status", value, "expected one of "
                               + ", ".join(s.value for s in cls), field=field) from None

    @property
    def words(self) -> str:
        """The status as a person reads it: ``licensed disposal``, never ``licensed-disposal``."""
        return self.value.replace("-", " ")


class ContainerStatus(_Status):
    """Where a waste container stands."""

    COLLECTING = "collecting"
    """Accepting additions."""
    PLANNED = "planned"
    """A neutralization plan is recorded; no more additions."""
    NEUTRALIZED = "neutralized"
    """Treated and its pH measured."""
    DISPOSED = "disposed"
    """Gone, by the route local disposal rules and the safety office set."""
    LICENSED_DISPOSAL = "licensed-disposal"
    """Held (or shipped) for licensed disposal: never treated here."""

    @property
    def state(self) -> str:
        """What follows "is" in a sentence: ``held for licensed disposal``, ``collecting``."""
        return ("held for licensed disposal" if self is ContainerStatus.LICENSED_DISPOSAL
                else self.words)

    @property
    def next(self) -> tuple[ContainerStatus, ...]:
        """The statuses a container may move on to from this one (:func:`set_status`)."""
        return _CONTAINER_MOVES[self]

    def can_move_to(self, target: ContainerStatus | str) -> bool:
        return target in self.next

    @property
    def takes_additions(self) -> bool:
        """Additions may be logged (and corrected)."""
        return self is ContainerStatus.COLLECTING

    @property
    def can_be_planned(self) -> bool:
        """A neutralization may be planned, and a plan or a measured pH recorded."""
        return self in (ContainerStatus.COLLECTING, ContainerStatus.PLANNED)

    can_record_neutralization = can_be_planned

    @property
    def can_be_disposed(self) -> bool:
        """It may be marked disposed (only once neutralized)."""
        return self.can_move_to(ContainerStatus.DISPOSED)

    @property
    def can_go_to_licensed_disposal(self) -> bool:
        return self.can_move_to(ContainerStatus.LICENSED_DISPOSAL)

    @property
    def is_licensed_disposal(self) -> bool:
        """Held for licensed disposal: never treated here."""
        return self is ContainerStatus.LICENSED_DISPOSAL

    @property
    def is_final(self) -> bool:
        """No move leads on: the container has left (or is leaving) the storeroom."""
        return not self.next

    @property
    def is_disposal(self) -> bool:
        """Moving to this status is journaled as a ``disposal``."""
        return self in (ContainerStatus.DISPOSED, ContainerStatus.LICENSED_DISPOSAL)


_CONTAINER_MOVES: dict[ContainerStatus, tuple[ContainerStatus, ...]] = {
    ContainerStatus.COLLECTING: (ContainerStatus.PLANNED, ContainerStatus.NEUTRALIZED,
                                 ContainerStatus.LICENSED_DISPOSAL),
    ContainerStatus.PLANNED: (ContainerStatus.NEUTRALIZED, ContainerStatus.LICENSED_DISPOSAL),
    ContainerStatus.NEUTRALIZED: (ContainerStatus.DISPOSED, ContainerStatus.LICENSED_DISPOSAL),
    ContainerStatus.DISPOSED: (),
    ContainerStatus.LICENSED_DISPOSAL: (),
}


class BottleStatus(_Status):
    """Whether a stock bottle is on the shelf and usable."""

    IN_USE = "in-use"
    EMPTY = "empty"
    DISPOSED = "disposed"

    @property
    def is_usable(self) -> bool:
        """Strength checks, preparations and standardizations draw only on bottles in use."""
        return self is BottleStatus.IN_USE

    @property
    def is_disposal(self) -> bool:
        """Setting this status is journaled as a ``disposal``."""
        return self is BottleStatus.DISPOSED


CONTAINER_STATUSES: tuple[str, ...] = tuple(s.value for s in ContainerStatus)
"""The stored values, in order of a container's life (for ``choices=`` and filters)."""
BOTTLE_STATUSES: tuple[str, ...] = tuple(s.value for s in BottleStatus)
JOURNAL_KINDS: tuple[str, ...] = ("receipt", "preparation", "standardization",
                                  "neutralization", "disposal", "correction", "note")
"""The kinds of journal entry (``carboy.store.journal.KINDS``)."""


def _shown(kind: type[_Status], status: str, how: str = "words") -> str:
    """``status.words`` (or another such property); an unknown value is shown as it is."""
    try:
        return getattr(kind(status), how)
    except ValueError:
        return str(status)


def container_words(status: str) -> str:
    """The words for a stored container status (``licensed disposal``)."""
    return _shown(ContainerStatus, status)


def container_state(status: str) -> str:
    """What follows "is" for a stored container status (``held for licensed disposal``)."""
    return _shown(ContainerStatus, status, "state")


def bottle_words(status: str) -> str:
    """The words for a stored bottle status (``in use``)."""
    return _shown(BottleStatus, status)
