"""One status vocabulary for every value carboy ships, and the one check of it.

Every number, text and rule in the packaged data files (``carboy/model/data/*.toml``)
carries a ``source`` (where it comes from, in words) and a ``status`` (how sure carboy is
that the value is the one that source gives).  Every file uses the same words:

=============  ========================================================================
FOUND          the value (number, text or rule) was seen in the source named
RECONSTRUCTED  seen in the source named, but in a reproduction whose layout had to be
               rebuilt (a flattened table), so which row or column the number belongs
               to is inferred; the source says "reconstructed"
MEMORY         from memory of the source named, not checked against a copy; the source
               says "from memory"
DERIVED        computed from cited values by arithmetic, stoichiometry or a cited rule
PRACTICE       a fact or habit of the trade with no (binding) published source, or a
               threshold carboy chose from it; the source says "common practice"
ASSUMPTION     a modelling assumption or default carboy states (a convention, not a
               measured value); the source says "assumed" or "assumption"
NONE           no published value used: the effect is neglected (the value is 0); the
               source says "no published value"
USER           given by a user with their own source (user compounds only, never in a
               packaged file)
=============  ========================================================================

The wording rule makes a source honest on its own: a value read without its status still
says that it is from memory, common practice, an assumption or a reconstruction.
:func:`check_provenance` is the only place the vocabulary and the wording are checked;
every loader calls it (through :meth:`carboy.model.datafiles.Table.provenance` or
directly).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

from carboy.errors import CatalogError

__all__ = [
    "ACTIVITY_DATA_STATUSES",
    "PACKAGED_STATUSES",
    "REQUIRED_WORDING",
    "STATUSES",
    "STATUS_MEANINGS",
    "Provenance",
    "check_provenance",
]

STATUS_MEANINGS: Mapping[str, str] = MappingProxyType({
    "FOUND": "the value was seen in the source named",
    "RECONSTRUCTED": "seen in the source named, through a reproduction whose layout had to "
                     "be rebuilt: its row or column is inferred",
    "MEMORY": "from memory of the source named, not checked against a copy",
    "DERIVED": "computed from cited values by arithmetic, stoichiometry or a cited rule",
    "PRACTICE": "a fact or habit of the trade with no (binding) published source",
    "ASSUMPTION": "a modelling assumption or default that carboy states",
    "NONE": "no published value used: the effect is neglected (value 0)",
    "USER": "given by a user, with the user's source",
})
"""Every status word and what it means."""

STATUSES = frozenset(STATUS_MEANINGS)
"""The one status vocabulary (packaged data and user entries)."""

PACKAGED_STATUSES = STATUSES - {"USER"}
"""Statuses a packaged data file may use (USER is for user-defined entries only)."""

ACTIVITY_DATA_STATUSES = frozenset({"FOUND", "MEMORY", "DERIVED", "NONE"})
"""Statuses the activity models' parameter files may use (``pitzer.toml``,
``ion_pairs.toml``): a value seen, remembered or derived, or none (neglected)."""

REQUIRED_WORDING: Mapping[str, tuple[str, ...]] = MappingProxyType({
    "MEMORY": ("from memory",),
    "PRACTICE": ("common practice",),
    "RECONSTRUCTED": ("reconstructed",),
    "ASSUMPTION": ("assumed", "assumption"),
    "NONE": ("no published value",),
})
"""Status -> words its source must contain (any one of them, case ignored)."""


@dataclass(frozen=True, eq=False)
class Provenance:
    """Where one value comes from: a status of :data:`STATUSES` and the source in words."""

    status: str
    source: str

    def cited(self) -> str:
        """``source [STATUS]``, as notes and results quote it."""
        return f"{self.source} [{self.status}]"


def check_provenance(
    entry: str,
    what: str,
    status: object,
    source: object,
    *,
    allowed: frozenset[str] = PACKAGED_STATUSES,
) -> Provenance:
    """Check one status and source; return them as a :class:`Provenance`.

    Parameters
    ----------
    entry
        The entry the value belongs to, as the error should name it
        (``"densities.toml: H2SO4"``).
    what
        The value within the entry (``"density row 20 %"``, ``"step 2 pka"``); empty when
        the status and source are the entry's own.
    status, source
        As read from the file (anything; they are checked here).
    allowed
        The statuses accepted (default: every status but USER).

    Raises
    ------
    CatalogError
        If the status is not in ``allowed``, the source is empty or not text, or the
        source lacks the wording :data:`REQUIRED_WORDING` asks for that status.
    """
    lead = f"{what} " if what else ""
    if status not in allowed:
        raise CatalogError(entry, f"{lead}status {status!r} is not one of {sorted(allowed)}")
    if not isinstance(source, str) or not source.strip():
        raise CatalogError(entry, f"{what} has no source" if what else "the source is empty")
    wording = REQUIRED_WORDING.get(str(status), ())
    folded = source.casefold()
    if wording and not any(word in folded for word in wording):
        says = " or ".join(repr(word) for word in wording)
        subject = what or "the status"
        raise CatalogError(entry, f"{subject} is {status} but its source does not say {says}")
    return Provenance(str(status), source)
