"""Stock bottles: what is on the shelves, how strong it is, and whether that is still known.

A bottle has a compound (catalog or user-defined), a label strength (molarity ``M``
or mass percentage ``%w/w``), optionally a current strength with when and how it was
last measured, an amount left with its unit (``L`` for solutions and liquids, ``g``
for solids), a container size, location, lot, received / opened / expiry dates, a
status (:class:`~carboy.store.statuses.BottleStatus`: ``in-use``, ``empty``,
``disposed``) and notes.

This module is the one door to them; each idea lives in its own module:

``readers``        reading strengths, amounts and dates as typed (over model.quantities)
``bottle_fields``  the :class:`Bottle` record, its text fields and their validation
``strength``       strength status (expired, off-label, overdue, current) and the check
                   of one bottle; re-check intervals come from :mod:`carboy.store.rules`
``bottles``        adding, standardizing, status, the paged and searched list, the check
``stock_search``   what a search finds (words as prefixes, the catalog's names, ``#ID``)
``strength_check`` the strength check of every bottle in use, in one read
``preparations``   drawing from a bottle and adding the one made, in one transaction
"""

from __future__ import annotations

from carboy.store.bottle_fields import FIELDS, Bottle, to_fields, validate
from carboy.store.bottles import (
    PAGE_SIZE,
    Page,
    add,
    all_bottles,
    count,
    count_upto,
    effective_recheck,
    get,
    insert_in,
    listing,
    page,
    record_standardization,
    set_status,
)
from carboy.store.preparations import (
    PREVIOUS,
    PreparationStep,
    Prepared,
    prepare,
    prepare_series,
    record_preparation,
)
from carboy.store.readers import (
    MAX_MASS_G,
    MAX_MOLARITY,
    MAX_VOLUME_L,
    format_amount,
    format_number,
    format_strength,
    parse_amount,
    parse_date,
    parse_strength,
)
from carboy.store.stock_search import COUNT_BOUND, Count, fts_query
from carboy.store.strength import (
    CHECK_FLAGS,
    EXPIRES_SOON_DAYS,
    OFF_LABEL_TOLERANCE,
    STRENGTH_STATUSES,
    CheckRow,
    check_row,
    strength_status,
)
from carboy.store.strength_check import check

__all__ = [
    "CHECK_FLAGS", "COUNT_BOUND", "Count", "EXPIRES_SOON_DAYS", "FIELDS", "MAX_MASS_G", "MAX_MOLARITY", "MAX_VOLUME_L",
    "OFF_LABEL_TOLERANCE", "PAGE_SIZE", "PREVIOUS", "STRENGTH_STATUSES", "Bottle", "CheckRow",
    "Page", "PreparationStep", "Prepared", "add", "all_bottles", "check", "check_row", "count", "count_upto",
    "effective_recheck", "format_amount", "format_number", "format_strength", "fts_query",
    "get", "insert_in", "listing", "page", "parse_amount", "parse_date", "parse_strength", "prepare",
    "prepare_series", "record_preparation", "record_standardization", "set_status",
    "strength_status", "to_fields", "validate",
]
