"""Whether a bottle's strength is still known: its strength status and its strength check.

Strength status (plain text, see :func:`strength_status`), first match wins:

``expired``    the expiry date has passed;
``off-label``  the last measured strength differs from the label strength by more
               than :data:`OFF_LABEL_TOLERANCE` (2 %, relative);
``overdue``    the bottle has a re-standardization interval and its last
               measurement is older than that (or it was never measured);
``current``    otherwise.

The strength check (:func:`check_row`) says, for one bottle, what is known of its
strength and what is due, with a reason a person reads for each flag.  Nothing here
touches the database.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from carboy.store.bottle_fields import Bottle
from carboy.store.readers import date_of, format_strength

OFF_LABEL_TOLERANCE = 0.02
"""Relative difference between current and label strength beyond which a bottle is off-label."""
STRENGTH_STATUSES = ("current", "overdue", "expired", "off-label")
EXPIRES_SOON_DAYS = 30
"""A bottle expiring within this many days is listed as a notice (common practice)."""
CHECK_FLAGS = ("expired", "off-label", "overdue", "never-standardized", "expires-soon")
"""The flags of the strength check, most serious first."""


def strength_status(*, label_strength: float, current_strength: float | None,
                    measured_at: str | None, restandardize_days: int | None,
                    expires_on: str | None, today: date) -> str:
    """``expired``, ``off-label``, ``overdue`` or ``current`` (see the module docstring)."""
    expiry = date_of(expires_on)
    if expiry is not None and expiry < today:
        return "expired"
    if current_strength is not None and label_strength > 0:
        if abs(current_strength - label_strength) / label_strength > OFF_LABEL_TOLERANCE:
            return "off-label"
    if restandardize_days:
        measured = date_of(measured_at)
        if measured is None or (today - measured).days > restandardize_days:
            return "overdue"
    return "current"


@dataclass(frozen=True)
class CheckRow:
    """One bottle in the strength check: what is known of its strength and what is due."""

    bottle: Bottle
    deviation_percent: float | None
    """Current against label strength, % (signed); None if never measured."""
    days_since: int | None
    """Days since the last measurement; None if never measured."""
    due_on: str | None
    """When the next standardization is due (ISO date); None if no interval applies."""
    days_to_expiry: int | None
    flags: tuple[str, ...]
    reasons: tuple[str, ...]

    def to_dict(self) -> dict:
        b = self.bottle
        return {
            "bottle_id": b.id, "compound": b.compound_key, "name": b.compound_name,
            "location": b.location, "lot": b.lot, "unit": b.strength_unit,
            "label_strength": b.label_strength, "current_strength": b.current_strength,
            "deviation_percent": self.deviation_percent,
            "measured_on": (b.measured_at or "")[:10] or None, "days_since": self.days_since,
            "recheck_days": b.recheck_days, "due_on": self.due_on,
            "expires_on": b.expires_on, "days_to_expiry": self.days_to_expiry,
            "status": b.strength_status, "flags": list(self.flags),
            "reasons": list(self.reasons),
        }

    @property
    def rank(self) -> tuple[int, int]:
        """Most serious flag first, then bottle id."""
        first = min((CHECK_FLAGS.index(f) for f in self.flags), default=len(CHECK_FLAGS))
        return first, self.bottle.id


def check_row(bottle: Bottle, today: date) -> CheckRow:
    """The strength check of one bottle as of ``today``."""
    unit = bottle.strength_unit
    flags: list[str] = []
    reasons: list[str] = []
    expiry = date_of(bottle.expires_on)
    to_expiry = (expiry - today).days if expiry else None
    if to_expiry is not None and to_expiry < 0:
        flags.append("expired")
        reasons.append(f"expired on {bottle.expires_on} ({-to_expiry} days ago)")
    deviation = None
    if bottle.current_strength is not None:
        deviation = (bottle.current_strength - bottle.label_strength) / bottle.label_strength * 100
        if abs(deviation) > OFF_LABEL_TOLERANCE * 100:
            flags.append("off-label")
            reasons.append(
                f"measured {format_strength(bottle.current_strength, unit)} against the label's "
                f"{format_strength(bottle.label_strength, unit)} ({deviation:+.1f} %, more than "
                f"±{OFF_LABEL_TOLERANCE * 100:g} %): relabel it or use the measured strength")
    measured = date_of(bottle.measured_at)
    since = (today - measured).days if measured else None
    due = None
    if bottle.recheck_days:
        if measured is None:
            flags.append("never-standardized")
            reasons.append(f"never standardized (re-check every {bottle.recheck_days} days)")
        else:
            due_date = date.fromordinal(measured.toordinal() + bottle.recheck_days)
            due = due_date.isoformat()
            if since > bottle.recheck_days:
                flags.append("overdue")
                reasons.append(f"last standardized {since} days ago, on {measured.isoformat()} "
                               f"(re-check every {bottle.recheck_days} days): overdue since "
                               f"{due}")
    if to_expiry is not None and 0 <= to_expiry <= EXPIRES_SOON_DAYS:
        flags.append("expires-soon")
        reasons.append(f"expires on {bottle.expires_on}, in {to_expiry} days")
    return CheckRow(bottle, deviation, since, due, to_expiry, tuple(flags), tuple(reasons))
