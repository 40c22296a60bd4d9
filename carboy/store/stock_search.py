"""Finding bottles: the search box's text as conditions on the stock list.

What a search finds (the promise both front ends make, and what the tests check):

* Every word typed must be found.  A word is split into its parts, the runs of letters
  and digits (``FW-23-004`` is ``fw``, ``23``, ``004``), as the search index splits the
  stored text; each part must begin a word of the bottle's compound key, compound name,
  location or lot, in any order, case and accents aside.
* A part also finds a bottle when it begins a word of any name the catalog gives the
  bottle's compound (name, aliases and formulas, user compounds included): ``sulph``
  finds sulfuric acid (alias ``sulphuric acid``), ``caustic soda`` and ``lye`` find
  sodium hydroxide, ``oil of vit`` finds sulfuric acid.
* A word ``#ID`` (``#`` and digits) is the bottle with that id; several are any of them.
* Text with no letters or digits (``"``, ``*``, ``-``) searches for nothing: the whole
  list.  Nothing typed is ever read as query syntax: each part is quoted.

How it stays fast at a million bottles: the index (migration 0005) holds prefix indexes
for one to ten characters, so a part of up to ten characters is one posting list read
in id order, and a page stops after its rows; a longer part merges the lists of the
words it begins first (about 30 ns for each bottle with such a word: a few milliseconds
for a word in one bottle of ten, at a million bottles).  Counting stops at
:data:`COUNT_BOUND` (:func:`count_upto`), and the lists read a first page and its count
in one pass (:func:`carboy.store.bottles.listing`); the whole list's count is kept by
the database (``stock_bottle_counts``).
"""

from __future__ import annotations

import bisect
import re
import threading
import unicodedata
from dataclasses import dataclass

from carboy.model.catalog_core import Catalog

COUNT_BOUND = 10_000
"""A search's count stops here: the lists say "more than 10,000" beyond it (counting a
million matches would take a tenth of a second for a figure nobody pages through)."""

_ID_WORD = re.compile(r"#(\d{1,18})")


@dataclass(frozen=True)
class Search:
    """A search as conditions: an FTS5 query (``None``: no word to match) and bottle ids."""

    match: str | None = None
    ids: tuple[int, ...] = ()

    @property
    def anything(self) -> bool:
        """Whether the search narrows the list at all."""
        return self.match is not None or bool(self.ids)


@dataclass(frozen=True)
class Count:
    """How many bottles a list holds: ``n`` exactly, or (``exact`` False) more than ``n``."""

    n: int
    exact: bool = True


def _in_word(ch: str) -> bool:
    # the index's unicode61 tokenizer: letters, numbers, marks and private use make
    # words; everything else separates them
    return ch.isalnum() or unicodedata.category(ch)[0] == "M" or unicodedata.category(ch) == "Co"


def parts(text: str) -> list[str]:
    """The parts of a text as the index splits it: runs of word characters, as typed
    (the index folds case and accents itself)."""
    found, current = [], []
    for ch in text:
        if _in_word(ch):
            current.append(ch)
        elif current:
            found.append("".join(current))
            current = []
    if current:
        found.append("".join(current))
    return found


def fold(text: str) -> str:
    """Case and Latin accents aside, for comparing a typed part with the catalog's names."""
    decomposed = unicodedata.normalize("NFKD", text)
    return "".join(ch for ch in decomposed if not unicodedata.combining(ch)).lower()


class _Names:
    """Every word of every name of a catalog's compounds, sorted, for prefix lookup."""

    def __init__(self, catalog: Catalog) -> None:
        pairs: set[tuple[str, str]] = set()
        self.key_parts: dict[str, tuple[str, ...]] = {}
        for key, compound in catalog.compounds.items():
            self.key_parts[key] = tuple(parts(key))
            for name in (compound.name, *compound.aliases, *catalog.formulas_of(key)):
                pairs.update((fold(word), key) for word in parts(name))
        ordered = sorted(pairs)
        self.words = [w for w, _ in ordered]
        self.keys = [k for _, k in ordered]

    def compounds_for(self, part: str) -> list[str]:
        """Keys of compounds with a name word beginning ``part`` whose key does not
        (a key word is in the index already)."""
        part = fold(part)
        if not part:
            return []
        found: dict[str, None] = {}
        at = bisect.bisect_left(self.words, part)
        while at < len(self.words) and self.words[at].startswith(part):
            key = self.keys[at]
            if not any(fold(p).startswith(part) for p in self.key_parts[key]):
                found[key] = None
            at += 1
        return list(found)


_NAMES: dict[int, tuple[Catalog, _Names]] = {}
_NAMES_KEPT = 8
"""Catalogs whose name words are kept (the packaged one, and a few with user compounds)."""


_NAMES_LOCK = threading.Lock()  # the app's workers search from several threads


def _names(catalog: Catalog) -> _Names:
    with _NAMES_LOCK:
        kept = _NAMES.get(id(catalog))
        if kept is not None and kept[0] is catalog:
            return kept[1]
        names = _Names(catalog)
        if len(_NAMES) >= _NAMES_KEPT:
            _NAMES.pop(next(iter(_NAMES)))
        _NAMES[id(catalog)] = (catalog, names)
        return names


TEXT_COLUMNS = "{compound_key compound_name location lot}"
"""The index's columns a typed word is looked for in (its fifth, ``status``, is only
filtered on, so typing "in" does not find every bottle in use)."""


def _quoted(part: str) -> str:
    return '"' + part.replace('"', '""') + '"'


def status_condition(status: str) -> str:
    """The FTS5 condition "the bottle has this status" (the status is a column of the
    index: a search within a status is one index read)."""
    return "status : (" + " AND ".join(_quoted(p) for p in parts(status)) + ")"


def _condition(part: str, names: _Names | None) -> str:
    """One part as an FTS5 condition: its prefix, or a compound it names."""
    options = [f"{TEXT_COLUMNS} : {_quoted(part)}*"]
    for key in names.compounds_for(part) if names else ():
        key_parts = names.key_parts[key]
        if key_parts:
            inner = " AND ".join(_quoted(p) for p in key_parts)
            options.append(f"compound_key : ({inner})")
    return options[0] if len(options) == 1 else "(" + " OR ".join(options) + ")"


def fts_query(search: str | None, catalog: Catalog | None = None) -> str | None:
    """The words of a search (``#ID`` words aside) as a safe FTS5 query, every part
    required; with ``catalog``, a part also matches the compounds whose names it begins.
    ``None`` when there is no part to match."""
    if not search:
        return None
    names = _names(catalog) if catalog is not None else None
    found = [p for word in search.split() if not _ID_WORD.fullmatch(word)
             for p in parts(word)]
    if not found:
        return None
    return " AND ".join(_condition(p, names) for p in dict.fromkeys(found))


def parse(search: str | None, catalog: Catalog | None = None) -> Search:
    """A search box's text as :class:`Search` conditions (see the module notes)."""
    if not search:
        return Search()
    ids = tuple(dict.fromkeys(int(m.group(1)) for word in search.split()
                              if (m := _ID_WORD.fullmatch(word))))
    return Search(fts_query(search, catalog), ids)
