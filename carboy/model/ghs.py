"""The GHS data of ``data/ghs.toml``: hazard statements, pictograms and concentration bands.

Records of the file and its validated loader.  What the file holds (see its head):

* ``[sources]``: citations by key; a source field reads ``"KEY"`` or ``"KEY; note"``;
* ``[pictograms]`` and ``[statements.CODE]``: pictogram names and hazard-statement texts
  (CLP Annex III), each statement with the pictogram and signal word of its categories;
* ``[[omit]]``: statements left off when another is on the label;
* ``[[compounds]]``: per compound key, tracks (hazard classes) of concentration bands in
  % w/w, or ``bands_of`` another record converted by molar mass.

Every statement, rule, record and band carries a source and a status in the one
vocabulary of :mod:`carboy.model.provenance`; the source keys are expanded before the
status wording is checked.  :func:`parse_ghs` raises
:class:`~carboy.errors.CatalogError` naming ``ghs.toml``, the entry and the field of the
first inconsistency.  Classification and label text are in :mod:`carboy.model.labels`.
"""

from __future__ import annotations

import functools
import re
from collections.abc import Mapping
from dataclasses import dataclass
from itertools import pairwise
from types import MappingProxyType

from carboy.model.catalog_files import default_catalog
from carboy.model.datafiles import Table, read_data_file

__all__ = [
    "GHS_FILE",
    "ROLES",
    "SIGNAL_RANK",
    "STATEMENT_SIGNALS",
    "TOP_PERCENT",
    "GhsBand",
    "GhsData",
    "GhsRecord",
    "GhsStatement",
    "GhsTrack",
    "OmitRule",
    "code_order",
    "ghs_data",
    "parse_ghs",
]

GHS_FILE = "ghs.toml"
SIGNAL_RANK: Mapping[str | None, int] = MappingProxyType({None: 0, "Warning": 1, "Danger": 2})
STATEMENT_SIGNALS = frozenset({"Danger", "Warning", "none", "varies"})
ROLES = frozenset({"skin-eye-irritation", "skin-sensitisation", "respiratory-sensitisation"})
TOP_PERCENT = 100.0

_CODE = re.compile(r"(EUH|H)(\d{3})")
_PICTOGRAM = re.compile(r"GHS0[1-9]")
_SOURCE_KEY = re.compile(r"[A-Z][A-Z0-9_]+")


# ----------------------------------------------------------------------------- records


@dataclass(frozen=True)
class GhsStatement:
    """A hazard statement of the data table, with what precedence needs to know."""

    code: str
    text: str
    pictogram: str | None
    """The pictogram CLP Annex I gives the categories behind this code (None: none)."""
    signal: str
    """``Danger``, ``Warning``, ``none``, or ``varies`` between categories (H272)."""
    role: str | None
    source: str
    status: str


@dataclass(frozen=True)
class GhsBand:
    """One concentration band of one hazard class: lower bound inclusive, upper exclusive."""

    from_percent: float
    to_percent: float
    classification: str
    codes: tuple[str, ...]
    signal_word: str | None
    pictograms: tuple[str, ...]
    rule: str
    source: str
    status: str

    def contains(self, mass_percent: float) -> bool:
        if self.from_percent <= mass_percent < self.to_percent:
            return True
        return self.to_percent == TOP_PERCENT and mass_percent == TOP_PERCENT

    def range_text(self) -> str:
        if self.to_percent == TOP_PERCENT:
            return f"≥ {self.from_percent:g} %"
        return f"{self.from_percent:g} % ≤ C < {self.to_percent:g} %"


@dataclass(frozen=True)
class GhsTrack:
    """The bands of one hazard class (or of classes that share their limits)."""

    hazard: str
    bands: tuple[GhsBand, ...]


@dataclass(frozen=True)
class GhsRecord:
    """Everything ``ghs.toml`` holds for one compound key."""

    key: str
    entry: str
    tracks: tuple[GhsTrack, ...]
    bands_of: str | None
    """Key of another record whose bands apply after conversion by molar mass."""
    note: str | None
    source: str
    status: str

    @property
    def lowest_percent(self) -> float | None:
        starts = [b.from_percent for t in self.tracks for b in t.bands]
        return min(starts) if starts else None


@dataclass(frozen=True)
class OmitRule:
    """When ``keep`` is on the label, ``drop`` is left off."""

    keep: str
    drop: str
    source: str
    status: str


@dataclass(frozen=True)
class GhsData:
    """The parsed and validated contents of ``ghs.toml``."""

    revision: str
    sources: Mapping[str, str]
    pictograms: Mapping[str, str]
    statements: Mapping[str, GhsStatement]
    omit: tuple[OmitRule, ...]
    compounds: Mapping[str, GhsRecord]


def code_order(code: str) -> tuple[int, int]:
    """Sort key of hazard codes: H codes by number, then EUH codes."""
    match = _CODE.fullmatch(code)
    if match is None:  # pragma: no cover - codes are validated on load
        return (2, 0)
    return (1 if match.group(1) == "EUH" else 0, int(match.group(2)))


# ----------------------------------------------------------------------------- loading


class _Sources:
    """The ``[sources]`` table: expands ``"KEY"`` / ``"KEY; note"`` into full citations."""

    def __init__(self, table: Table) -> None:
        if not table.data:
            raise table.fail(None, "the file needs a table of sources")
        self.table = MappingProxyType({str(k): table.text(k).strip() for k in table.data})

    def resolver(self, rec: Table):
        def resolve(raw: str) -> str:
            raw = raw.strip()
            head, sep, rest = raw.partition(";")
            key = head.strip()
            if key in self.table:
                return self.table[key] + (f"; {rest.strip()}" if sep and rest.strip() else "")
            if _SOURCE_KEY.fullmatch(key):
                raise rec.fail("source", f"key {key!r} is not in [sources]")
            return raw

        return resolve


def _parse_statement(code: str, rec: Table, sources: _Sources,
                     pictograms: Mapping[str, str]) -> GhsStatement:
    if _CODE.fullmatch(code) is None:
        raise rec.fail(None, "a code is H followed by three digits, or EUH and three digits")
    pictogram = rec.raw("pictogram", "")
    if pictogram and pictogram not in pictograms:
        raise rec.fail("pictogram", f"{pictogram!r} is not in [pictograms]")
    signal = rec.raw("signal", None)
    if signal not in STATEMENT_SIGNALS:
        raise rec.fail("signal", f"{signal!r} is not one of {sorted(STATEMENT_SIGNALS)}")
    role = rec.raw("role", None)
    if role is not None and role not in ROLES:
        raise rec.fail("role", f"{role!r} is not one of {sorted(ROLES)}")
    prov = rec.provenance(resolve=sources.resolver(rec))
    return GhsStatement(code=code, text=rec.text("text").strip(), pictogram=pictogram or None,
                        signal=signal, role=role, source=prov.source, status=prov.status)


def _band_signal(band: Table, codes: list[str],
                 statements: Mapping[str, GhsStatement]) -> str | None:
    """The band's signal word, checked against the fixed signal words of its codes."""
    signal = band.raw("signal", None)
    if signal not in ("Danger", "Warning", None):
        raise band.fail("signal", f"{signal!r} must be 'Danger', 'Warning' or absent")
    fixed = [statements[c].signal for c in codes if statements[c].signal != "varies"]
    required = max(
        (s if s != "none" else None for s in fixed), key=SIGNAL_RANK.__getitem__, default=None
    )
    if any(statements[c].signal == "varies" for c in codes):
        if signal is None or SIGNAL_RANK[signal] < SIGNAL_RANK[required]:
            raise band.fail("signal", f"{signal!r} is too weak for codes {codes}")
    elif signal != required:
        raise band.fail(
            "signal", f"{signal!r} does not match codes {codes} (expected {required!r})"
        )
    return signal


def _parse_band(band: Table, sources: _Sources,
                statements: Mapping[str, GhsStatement]) -> GhsBand:
    lo, hi = band.number("from_percent"), band.number("to_percent")
    if not 0.0 <= lo < hi <= TOP_PERCENT:
        raise band.fail(
            None, f"band {lo:g}-{hi:g} % must satisfy 0 <= from_percent < to_percent <= 100"
        )
    codes = band.raw("codes")
    if not isinstance(codes, list) or not codes or len(set(codes)) != len(codes):
        raise band.fail("codes", f"{codes!r} must be a non-empty list without repeats")
    for code in codes:
        if code not in statements:
            raise band.fail("codes", f"code {code!r} has no text in [statements]")
    signal = _band_signal(band, codes, statements)
    pictograms = band.raw("pictograms")
    if not isinstance(pictograms, list):
        raise band.fail("pictograms", f"{pictograms!r} must be a list")
    expected = {statements[c].pictogram for c in codes} - {None}
    if set(pictograms) != expected or len(pictograms) != len(set(pictograms)):
        raise band.fail(
            "pictograms",
            f"{pictograms} do not match codes {codes} (expected {sorted(expected)})",
        )
    prov = band.provenance(resolve=sources.resolver(band))
    return GhsBand(
        from_percent=lo,
        to_percent=hi,
        classification=band.text("classification").strip(),
        codes=tuple(sorted(codes, key=code_order)),
        signal_word=signal,
        pictograms=tuple(sorted(pictograms)),
        rule=band.text("rule").strip(),
        source=prov.source,
        status=prov.status,
    )


def _parse_track(key: str, rec: Table, sources: _Sources,
                 statements: Mapping[str, GhsStatement]) -> GhsTrack:
    hazard = rec.text("hazard").strip()
    entry = f"{key} / {hazard}"
    raw_bands = rec.tables("bands", name=lambda i, _d: f"{entry} / band {i + 1}")
    if not raw_bands:
        raise Table(rec.file, entry, rec.data).fail("bands", "must hold at least one band")
    bands = tuple(_parse_band(b, sources, statements) for b in raw_bands)
    for earlier, later in pairwise(bands):
        if later.from_percent < earlier.to_percent:
            raise Table(rec.file, entry, rec.data).fail(
                "bands",
                f"must ascend without overlap: {earlier.range_text()} is followed by "
                f"{later.range_text()}",
            )
    return GhsTrack(hazard=hazard, bands=bands)


def _parse_record(rec: Table, sources: _Sources,
                  statements: Mapping[str, GhsStatement]) -> GhsRecord:
    key = rec.text("key").strip()
    prov = rec.provenance(resolve=sources.resolver(rec))
    tracks = tuple(
        _parse_track(key, t, sources, statements)
        for t in rec.tables("tracks", name=lambda i, _d: f"{key} / track {i + 1}")
    )
    bands_of = rec.text("bands_of", None)
    if bands_of is not None and tracks:
        raise rec.fail("bands_of", "a record with bands_of holds no bands of its own")
    return GhsRecord(key=key, entry=rec.text("entry").strip(), tracks=tracks, bands_of=bands_of,
                     note=rec.text("note", None), source=prov.source, status=prov.status)


def _parse_omit(doc: Table, sources: _Sources,
                statements: Mapping[str, GhsStatement]) -> tuple[OmitRule, ...]:
    rules = []
    for rec in doc.tables("omit", name=lambda _i, d: f"omit {d.get('keep')!r} -> {d.get('drop')!r}"):
        for field in ("keep", "drop"):
            if rec.raw(field) not in statements:
                raise rec.fail(field, f"{rec.raw(field)!r} has no text in [statements]")
        prov = rec.provenance(resolve=sources.resolver(rec))
        rules.append(OmitRule(rec.raw("keep"), rec.raw("drop"), prov.source, prov.status))
    return tuple(rules)


def _parse_compounds(doc: Table, sources: _Sources,
                     statements: Mapping[str, GhsStatement]) -> dict[str, GhsRecord]:
    known = default_catalog().compounds
    compounds: dict[str, GhsRecord] = {}
    for rec in doc.tables("compounds"):
        record = _parse_record(rec, sources, statements)
        if record.key not in known:
            raise rec.fail("key", f"{record.key!r} is not a compound of compounds.toml")
        if record.key in compounds:
            raise rec.fail("key", "compound key is defined twice")
        compounds[record.key] = record
    for record in compounds.values():
        if record.bands_of is not None:
            target = compounds.get(record.bands_of)
            if target is None or target.bands_of is not None:
                raise Table(doc.file, record.key, {}).fail(
                    "bands_of", f"{record.bands_of!r} must name a record with bands"
                )
    return compounds


def _parse_pictograms(doc: Table, sources: _Sources) -> dict[str, str]:
    table = doc.table("pictograms", "[pictograms]")
    for code in table.data:
        if _PICTOGRAM.fullmatch(code) is None:
            raise table.fail(None, f"{code!r} is not a pictogram code GHS01..GHS09")
    names = doc.table("pictogram_names", "[pictogram_names]")
    names.provenance(resolve=sources.resolver(names))
    return {k: table.text(k).strip() for k in table.data}


def parse_ghs(data: Mapping[str, object]) -> GhsData:
    """Validate the contents of ``ghs.toml`` (as read by tomllib) and build :class:`GhsData`.

    Raises
    ------
    CatalogError
        Naming ``ghs.toml``, the entry and the field of the first inconsistency: unknown
        source key, status without the matching wording, a code without text, pictograms
        or signal word that do not match the codes, or bands that do not ascend without
        overlapping.
    """
    doc = Table(GHS_FILE, "(top level)", data)
    sources = _Sources(doc.table("sources", "[sources]"))
    pictograms = _parse_pictograms(doc, sources)
    statements = {
        code: _parse_statement(code, rec, sources, pictograms)
        for code, rec in doc.keyed("statements")
    }
    omit = _parse_omit(doc, sources, statements)
    precedence = doc.table("precedence", "[precedence]")
    precedence.provenance(resolve=sources.resolver(precedence))
    compounds = _parse_compounds(doc, sources, statements)
    return GhsData(
        revision=doc.text("revision").strip(),
        sources=sources.table,
        pictograms=MappingProxyType(pictograms),
        statements=MappingProxyType(statements),
        omit=omit,
        compounds=MappingProxyType(compounds),
    )


@functools.lru_cache(maxsize=1)
def ghs_data() -> GhsData:
    """The packaged ``ghs.toml``, read and validated once per process."""
    return parse_ghs(read_data_file(GHS_FILE))
