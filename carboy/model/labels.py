"""Bottle-label text for solutions the storeroom prepares, with GHS hazard statements.

When carboy prepares a solution (1 M HCl from 37 % HCl, 0.1 M NaOH from pellets) it
prints the label text for the new bottle: name, concentration, date prepared, preparer,
expiry, lot or source, and the GHS hazard statements, signal word and pictograms that
apply *at that concentration*.  A dilute solution is often classified lower than the
concentrate, so the packaged data (``data/ghs.toml``) holds concentration bands in % w/w:
the harmonised entries of CLP Annex VI with their specific concentration limits where
they exist, the generic limits of CLP Annex I where they do not, and H290 as suppliers
commonly give it.  Every band carries its source and status.

Rules applied (each cited in ``ghs.toml``)
------------------------------------------
* Each hazard class (a *track*) contributes at most one band; a band's lower bound is
  inclusive, its upper bound exclusive, and 100 % belongs to the top band.
* The signal word is the most severe of the applicable bands ("Danger" beats
  "Warning"; CLP Article 20(3): where "Danger" appears, "Warning" does not).
* Hazard statements made redundant by another are left off (``[[omit]]``: H318 when
  H314 is assigned, UN GHS Rev. 9 Annex 3; the lesser category of one hazard class).
* Pictogram precedence, CLP Article 26(1): with GHS06, GHS07 does not appear (b); with
  GHS05, GHS07 does not appear for skin or eye irritation (c); with GHS08 for
  respiratory sensitisation, GHS07 does not appear for skin sensitisation or skin and
  eye irritation (d).  The optional pictograms of (a) and (e) are kept.
* A compound with no record in ``ghs.toml`` falls back to its catalog hazard tags: the
  tag ``corrosive`` gives a conservative Danger / GHS05 / H314 "as supplied" note.

The label never replaces the supplier's safety data sheet, and its last line says so.
"""

from __future__ import annotations

import datetime as _dt
import functools
import math
import re
import textwrap
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from itertools import pairwise
from types import MappingProxyType
from typing import Any

from carboy.errors import CatalogError, InvalidInput
from carboy.model.catalog import Catalog, default_catalog
from carboy.model.entities import Compound

__all__ = [
    "LABEL_WIDTH",
    "NOT_CLASSIFIED_TEXT",
    "NO_DATA_TEXT",
    "SDS_LINE",
    "GhsBand",
    "GhsData",
    "GhsRecord",
    "GhsStatement",
    "GhsTrack",
    "HazardStatement",
    "Label",
    "ghs_data",
    "hazard_statements",
    "make_label",
    "parse_ghs",
    "pictogram_precedence",
    "wrap_label_text",
]

LABEL_WIDTH = 40
"""Characters per label line; bottle labels are small.  A single longer word keeps its line."""

CONTINUATION_INDENT = "  "
NOT_CLASSIFIED_TEXT = "Not classified at this concentration by the bands carboy holds."
SDS_LINE = "Check the supplier's safety data sheet."
FALLBACK_NOTE = "(as supplied; check the SDS)"
NO_DATA_TEXT = "carboy holds no GHS bands for this compound."

SIGNAL_RANK: Mapping[str | None, int] = MappingProxyType({None: 0, "Warning": 1, "Danger": 2})
BAND_STATUSES = frozenset({"FOUND", "FOUND*", "MEMORY", "DERIVED", "COMMON-PRACTICE", "NONE"})
STATEMENT_SIGNALS = frozenset({"Danger", "Warning", "none", "varies"})
ROLES = frozenset({"skin-eye-irritation", "skin-sensitisation", "respiratory-sensitisation"})
TOP_PERCENT = 100.0

_DATA_PACKAGE = "carboy.model.data"
_GHS_FILE = "ghs.toml"
_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")
_CODE = re.compile(r"(EUH|H)(\d{3})")
_PICTOGRAM = re.compile(r"GHS0[1-9]")


# ----------------------------------------------------------------------------- records


@dataclass(frozen=True)
class HazardStatement:
    """One hazard statement as it goes on the label."""

    code: str
    text: str


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


@dataclass(frozen=True)
class Label:
    """Label text for one prepared bottle."""

    title: str
    compound_key: str
    conc_text: str
    mass_percent: float | None
    prepared_on: str
    prepared_by: str
    expires_on: str | None
    lot: str | None
    source_text: str | None
    signal_word: str | None
    pictograms: tuple[str, ...]
    statements: tuple[HazardStatement, ...]
    basis: str
    lines: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        """Plain JSON-ready data (tuples become lists)."""
        return {
            "title": self.title,
            "compound_key": self.compound_key,
            "conc_text": self.conc_text,
            "mass_percent": self.mass_percent,
            "prepared_on": self.prepared_on,
            "prepared_by": self.prepared_by,
            "expires_on": self.expires_on,
            "lot": self.lot,
            "source_text": self.source_text,
            "signal_word": self.signal_word,
            "pictograms": list(self.pictograms),
            "statements": [{"code": s.code, "text": s.text} for s in self.statements],
            "basis": self.basis,
            "lines": list(self.lines),
        }


# ----------------------------------------------------------------------------- loading


def _fail(entry: str, reason: str) -> CatalogError:
    return CatalogError(f"ghs.toml: {entry}", reason)


def _text(entry: str, record: Mapping[str, Any], field: str, *, required: bool = True) -> str:
    value = record.get(field)
    if value is None and not required:
        return ""
    if not isinstance(value, str) or not value.strip():
        raise _fail(entry, f"field {field!r} must be a non-empty string, got {value!r}")
    return value.strip()


def _resolve_source(entry: str, raw: str, sources: Mapping[str, str]) -> str:
    """Expand a leading source key ("KEY" or "KEY; note") into its full citation."""
    head, sep, rest = raw.partition(";")
    key = head.strip()
    if key in sources:
        return sources[key] + (f"; {rest.strip()}" if sep and rest.strip() else "")
    if re.fullmatch(r"[A-Z][A-Z0-9_]+", key):
        raise _fail(entry, f"source key {key!r} is not in [sources]")
    return raw


def _check_status(entry: str, status: object, source: str) -> str:
    if status not in BAND_STATUSES:
        raise _fail(entry, f"status {status!r} is not one of {sorted(BAND_STATUSES)}")
    if status == "MEMORY" and "from memory" not in source:
        raise _fail(entry, "status is MEMORY but the source does not say 'from memory'")
    if status == "COMMON-PRACTICE" and "common practice" not in source:
        raise _fail(
            entry, "status is COMMON-PRACTICE but the source does not say 'common practice'"
        )
    return str(status)


def _number(entry: str, what: str, value: object) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise _fail(entry, f"{what} {value!r} is not a finite number")
    return float(value)


def _code_order(code: str) -> tuple[int, int]:
    match = _CODE.fullmatch(code)
    if match is None:  # pragma: no cover - codes are validated on load
        return (2, 0)
    return (1 if match.group(1) == "EUH" else 0, int(match.group(2)))


def _parse_statements(
    raw: Mapping[str, Any], sources: Mapping[str, str], pictograms: Mapping[str, str]
) -> dict[str, GhsStatement]:
    out: dict[str, GhsStatement] = {}
    for code, rec in raw.items():
        entry = f"statement {code}"
        if _CODE.fullmatch(code) is None:
            raise _fail(entry, "a code is H followed by three digits, or EUH and three digits")
        if not isinstance(rec, Mapping):
            raise _fail(entry, "must be a table")
        pictogram = rec.get("pictogram", "")
        if pictogram and pictogram not in pictograms:
            raise _fail(entry, f"pictogram {pictogram!r} is not in [pictograms]")
        signal = rec.get("signal")
        if signal not in STATEMENT_SIGNALS:
            raise _fail(entry, f"signal {signal!r} is not one of {sorted(STATEMENT_SIGNALS)}")
        role = rec.get("role")
        if role is not None and role not in ROLES:
            raise _fail(entry, f"role {role!r} is not one of {sorted(ROLES)}")
        source = _resolve_source(entry, _text(entry, rec, "source"), sources)
        out[code] = GhsStatement(
            code=code,
            text=_text(entry, rec, "text"),
            pictogram=pictogram or None,
            signal=signal,
            role=role,
            source=source,
            status=_check_status(entry, rec.get("status"), source),
        )
    return out


def _parse_band(
    entry: str,
    rec: Mapping[str, Any],
    data: Mapping[str, Any],
    statements: Mapping[str, GhsStatement],
) -> GhsBand:
    sources = data["sources"]
    lo = _number(entry, "from_percent", rec.get("from_percent"))
    hi = _number(entry, "to_percent", rec.get("to_percent"))
    if not 0.0 <= lo < hi <= TOP_PERCENT:
        raise _fail(
            entry, f"band {lo:g}-{hi:g} % must satisfy 0 <= from_percent < to_percent <= 100"
        )
    codes = rec.get("codes")
    if not isinstance(codes, list) or not codes or len(set(codes)) != len(codes):
        raise _fail(entry, f"codes {codes!r} must be a non-empty list without repeats")
    for code in codes:
        if code not in statements:
            raise _fail(entry, f"code {code!r} has no text in [statements]")
    signal = rec.get("signal")
    if signal not in ("Danger", "Warning", None):
        raise _fail(entry, f"signal {signal!r} must be 'Danger', 'Warning' or absent")
    fixed = [statements[c].signal for c in codes if statements[c].signal != "varies"]
    required = max(
        (s if s != "none" else None for s in fixed), key=SIGNAL_RANK.__getitem__, default=None
    )
    varies = any(statements[c].signal == "varies" for c in codes)
    if varies:
        if signal is None or SIGNAL_RANK[signal] < SIGNAL_RANK[required]:
            raise _fail(entry, f"signal {signal!r} is too weak for codes {codes}")
    elif signal != required:
        raise _fail(
            entry, f"signal {signal!r} does not match codes {codes} (expected {required!r})"
        )
    pictograms = rec.get("pictograms")
    if not isinstance(pictograms, list):
        raise _fail(entry, f"pictograms {pictograms!r} must be a list")
    expected = {statements[c].pictogram for c in codes} - {None}
    if set(pictograms) != expected or len(pictograms) != len(set(pictograms)):
        raise _fail(
            entry,
            f"pictograms {pictograms} do not match codes {codes} (expected {sorted(expected)})",
        )
    source = _resolve_source(entry, _text(entry, rec, "source"), sources)
    return GhsBand(
        from_percent=lo,
        to_percent=hi,
        classification=_text(entry, rec, "classification"),
        codes=tuple(sorted(codes, key=_code_order)),
        signal_word=signal,
        pictograms=tuple(sorted(pictograms)),
        rule=_text(entry, rec, "rule"),
        source=source,
        status=_check_status(entry, rec.get("status"), source),
    )


def _parse_track(
    key: str,
    rec: Mapping[str, Any],
    data: Mapping[str, Any],
    statements: Mapping[str, GhsStatement],
) -> GhsTrack:
    hazard = _text(key, rec, "hazard")
    entry = f"{key} / {hazard}"
    raw_bands = rec.get("bands")
    if not isinstance(raw_bands, list) or not raw_bands:
        raise _fail(entry, "a track needs at least one band")
    bands = tuple(_parse_band(entry, b, data, statements) for b in raw_bands)
    for earlier, later in pairwise(bands):
        if later.from_percent < earlier.to_percent:
            raise _fail(
                entry,
                f"bands must ascend without overlap: {earlier.range_text()} is followed by "
                f"{later.range_text()}",
            )
    return GhsTrack(hazard=hazard, bands=bands)


def parse_ghs(data: Mapping[str, Any]) -> GhsData:
    """Validate the contents of ``ghs.toml`` (as read by tomllib) and build :class:`GhsData`.

    Raises
    ------
    CatalogError
        Naming the first inconsistent entry: unknown source key, status without the
        matching wording, a code without text, pictograms or signal word that do not
        match the codes, or bands that do not ascend without overlapping.
    """
    raw_sources = data.get("sources")
    if not isinstance(raw_sources, Mapping) or not raw_sources:
        raise _fail("[sources]", "the file needs a table of sources")
    sources = {str(k): _text(f"source {k}", raw_sources, k) for k in raw_sources}
    raw_pictograms = data.get("pictograms")
    if not isinstance(raw_pictograms, Mapping):
        raise _fail("[pictograms]", "the file needs a table of pictogram names")
    for code in raw_pictograms:
        if _PICTOGRAM.fullmatch(code) is None:
            raise _fail("[pictograms]", f"{code!r} is not a pictogram code GHS01..GHS09")
    pictograms = {k: _text(f"pictogram {k}", raw_pictograms, k) for k in raw_pictograms}
    statements = _parse_statements(data.get("statements", {}), sources, pictograms)
    omit = []
    for rec in data.get("omit", []):
        entry = f"omit {rec.get('keep')!r} -> {rec.get('drop')!r}"
        for field in ("keep", "drop"):
            if rec.get(field) not in statements:
                raise _fail(entry, f"{field} {rec.get(field)!r} has no text in [statements]")
        source = _resolve_source(entry, _text(entry, rec, "source"), sources)
        omit.append(
            OmitRule(
                rec["keep"], rec["drop"], source, _check_status(entry, rec.get("status"), source)
            )
        )
    context = {"sources": sources}
    compounds: dict[str, GhsRecord] = {}
    for rec in data.get("compounds", []):
        key = _text("compound", rec, "key")
        if key in compounds:
            raise _fail(key, "compound key is defined twice")
        source = _resolve_source(key, _text(key, rec, "source"), sources)
        tracks = tuple(_parse_track(key, t, context, statements) for t in rec.get("tracks", []))
        bands_of = rec.get("bands_of")
        if bands_of is not None and tracks:
            raise _fail(key, "a record with bands_of holds no bands of its own")
        compounds[key] = GhsRecord(
            key=key,
            entry=_text(key, rec, "entry"),
            tracks=tracks,
            bands_of=bands_of,
            note=rec.get("note"),
            source=source,
            status=_check_status(key, rec.get("status"), source),
        )
    for rec in compounds.values():
        if rec.bands_of is not None:
            target = compounds.get(rec.bands_of)
            if target is None or target.bands_of is not None:
                raise _fail(rec.key, f"bands_of {rec.bands_of!r} must name a record with bands")
    return GhsData(
        revision=_text("revision", data, "revision"),
        sources=MappingProxyType(sources),
        pictograms=MappingProxyType(pictograms),
        statements=MappingProxyType(statements),
        omit=tuple(omit),
        compounds=MappingProxyType(compounds),
    )


@functools.lru_cache(maxsize=1)
def ghs_data() -> GhsData:
    """The packaged ``ghs.toml``, read and validated once per process."""
    from carboy.model.catalog import read_data_file

    return parse_ghs(read_data_file(_GHS_FILE))


# ----------------------------------------------------------------------------- rules


def pictogram_precedence(codes: Iterable[str], data: GhsData | None = None) -> tuple[str, ...]:
    """The pictograms for ``codes`` after the precedence rules of CLP Article 26(1).

    (b) with GHS06, GHS07 does not appear; (c) with GHS05, GHS07 does not appear for
    skin or eye irritation; (d) with GHS08 for respiratory sensitisation, GHS07 does not
    appear for skin sensitisation or skin and eye irritation.  GHS07 stays whenever some
    other code (H302, H335 ...) still needs it.  Returned in code order.
    """
    table = (data or ghs_data()).statements
    records = [table[c] for c in codes]
    pictograms = {r.pictogram for r in records if r.pictogram}
    if "GHS07" in pictograms:
        needing = [r for r in records if r.pictogram == "GHS07"]
        if "GHS06" in pictograms:
            needing = []
        if "GHS05" in pictograms:
            needing = [r for r in needing if r.role != "skin-eye-irritation"]
        if any(r.role == "respiratory-sensitisation" for r in records):
            needing = [
                r for r in needing if r.role not in ("skin-eye-irritation", "skin-sensitisation")
            ]
        if not needing:
            pictograms.discard("GHS07")
    return tuple(sorted(pictograms))


def _apply_omit(codes: Sequence[str], data: GhsData) -> tuple[str, ...]:
    present = set(codes)
    dropped = {rule.drop for rule in data.omit if rule.keep in present}
    return tuple(sorted((c for c in present if c not in dropped), key=_code_order))


@dataclass(frozen=True)
class _Result:
    signal_word: str | None
    pictograms: tuple[str, ...]
    statements: tuple[HazardStatement, ...]
    basis: str
    fallback: bool
    classified: bool
    note: str | None


def _check_mass_percent(mass_percent: object) -> float | None:
    if mass_percent is None:
        return None
    if isinstance(mass_percent, bool) or not isinstance(mass_percent, (int, float)):
        raise InvalidInput("mass percent", mass_percent, "must be a number (% w/w) or None")
    value = float(mass_percent)
    if not math.isfinite(value) or not 0.0 <= value <= TOP_PERCENT:
        raise InvalidInput("mass percent", mass_percent, "must be a finite % w/w between 0 and 100")
    return value


def _fallback(compound: Compound, data: GhsData) -> _Result:
    if "corrosive" in compound.hazards:
        statement = data.statements["H314"]
        return _Result(
            signal_word="Danger",
            pictograms=("GHS05",),
            statements=(HazardStatement("H314", statement.text),),
            basis=(
                f"no GHS bands in carboy for {compound.key}; the catalog hazard tag 'corrosive' "
                "gives a conservative Danger / GHS05 / H314 as supplied; check the SDS"
            ),
            fallback=True,
            classified=True,
            note=None,
        )
    tags = ", ".join(sorted(compound.hazards)) or "none"
    return _Result(
        signal_word=None,
        pictograms=(),
        statements=(),
        basis=(
            f"no GHS bands in carboy for {compound.key} (catalog hazard tags: {tags}); "
            "no hazard statements given; check the SDS"
        ),
        fallback=True,
        classified=False,
        note=None,
    )


def _evaluate(
    compound_key: str,
    mass_percent: object,
    catalog: Catalog | None,
    compound: Compound | None = None,
) -> _Result:
    percent = _check_mass_percent(mass_percent)
    data = ghs_data()
    record = data.compounds.get(compound_key)
    if record is None:
        if compound is None or compound.key != compound_key:
            compound = (catalog or default_catalog()).compound(compound_key)
        record = data.compounds.get(compound.key)
        if record is None:
            return _fallback(compound, data)
    where = (
        f"{record.key} at {percent:g} % w/w" if percent is not None else f"{record.key} as supplied"
    )
    bands_record = record
    evaluated = percent
    if record.bands_of is not None:
        bands_record = data.compounds[record.bands_of]
        if percent is not None:
            cat = catalog or default_catalog()
            ratio = (
                cat.compounds[bands_record.key].molar_mass_g_mol
                / cat.compounds[record.key].molar_mass_g_mol
            )
            evaluated = min(TOP_PERCENT, percent * ratio)
            where += f" (= {evaluated:.4g} % {bands_record.key} by molar mass)"
        else:
            where += f" (bands of {bands_record.key})"
    applicable: list[GhsBand] = []
    for track in bands_record.tracks:
        if evaluated is None:
            applicable.append(track.bands[-1])
        else:
            applicable.extend(b for b in track.bands if b.contains(evaluated))
    if not applicable:
        lowest = bands_record.lowest_percent
        if lowest is None:
            reason = f"{record.entry}; {record.source}"
        else:
            reason = f"the lowest band starts at {lowest:g} %"
        return _Result(
            None,
            (),
            (),
            f"{where}: {NOT_CLASSIFIED_TEXT[:-1].lower()} ({reason})",
            fallback=False,
            classified=False,
            note=record.note,
        )
    codes = _apply_omit([c for band in applicable for c in band.codes], data)
    signal = max((b.signal_word for b in applicable), key=SIGNAL_RANK.__getitem__)
    parts = "; ".join(f"{b.rule}: {b.classification} at {b.range_text()}" for b in applicable)
    prefix = "top band of each hazard class, " if evaluated is None else ""
    return _Result(
        signal_word=signal,
        pictograms=pictogram_precedence(codes, data),
        statements=tuple(HazardStatement(c, data.statements[c].text) for c in codes),
        basis=f"{where}: {prefix}{parts}",
        fallback=False,
        classified=True,
        note=record.note,
    )


def hazard_statements(
    compound_key: str, mass_percent: float | None, *, catalog: Catalog | None = None
) -> tuple[str | None, tuple[str, ...], tuple[HazardStatement, ...], str]:
    """Signal word, pictograms, hazard statements and basis for ``compound_key``.

    Parameters
    ----------
    compound_key
        A catalog key (``"HCl"``); names and formulas the catalog resolves also work.
    mass_percent
        Concentration in % w/w of the compound, 0-100; ``None`` means "as supplied":
        the top band of every hazard class (the most severe).
    catalog
        For user compounds and molar masses; the packaged catalog by default.

    Returns
    -------
    (signal word or None, pictogram codes, statements, basis)
        ``basis`` names the bands and rules that decided it, or says why nothing does.

    Raises
    ------
    InvalidInput
        If ``mass_percent`` is not a finite number between 0 and 100.
    UnknownCompound
        If the key is neither in ``ghs.toml`` nor in the catalog.
    """
    result = _evaluate(compound_key, mass_percent, catalog)
    return result.signal_word, result.pictograms, result.statements, result.basis


# ----------------------------------------------------------------------------- label text


def wrap_label_text(text: str, width: int = LABEL_WIDTH) -> tuple[str, ...]:
    """Wrap ``text`` to ``width``; continuation lines are indented; long words stay whole."""
    lines = textwrap.wrap(
        " ".join(text.split()),
        width=width,
        subsequent_indent=CONTINUATION_INDENT,
        break_long_words=False,
        break_on_hyphens=False,
    )
    return tuple(lines) or ("",)


def _check_date(what: str, value: object) -> _dt.date:
    if not isinstance(value, str) or _ISO_DATE.fullmatch(value) is None:
        raise InvalidInput(what, value, "must be an ISO date YYYY-MM-DD")
    try:
        return _dt.date.fromisoformat(value)
    except ValueError:
        raise InvalidInput(what, value, "is not a calendar date (YYYY-MM-DD)") from None


def _optional_text(what: str, value: object) -> str | None:
    if value is None:
        return None
    if not isinstance(value, str):
        raise InvalidInput(what, value, "must be text or None")
    return " ".join(value.split()) or None


def _display_name(compound: Compound) -> str:
    name = compound.name.strip()
    return name[:1].upper() + name[1:]


def make_label(
    compound: Compound | str,
    *,
    conc_text: str,
    mass_percent: float | None,
    prepared_on: str,
    prepared_by: str,
    expires_on: str | None = None,
    lot: str | None = None,
    source_text: str | None = None,
    catalog: Catalog | None = None,
) -> Label:
    """Label text for a bottle of ``compound`` prepared at ``conc_text``.

    Parameters
    ----------
    compound
        A catalog compound, or a key, formula or name the catalog resolves.
    conc_text
        The concentration as it should read on the label (``"1.000 M"``).
    mass_percent
        The same concentration in % w/w, which chooses the GHS bands; ``None`` labels
        the solution as the compound is supplied (top bands; conservative).
    prepared_on, expires_on
        ISO dates ``YYYY-MM-DD``; the expiry may not precede the preparation.
    prepared_by
        Who prepared it (not empty).
    lot, source_text
        Optional lot number and where the solution came from (``"HCl 37 %, lot A12"``).

    Raises
    ------
    InvalidInput
        Naming the value: a mass percent outside 0-100 or not finite, an empty preparer
        or concentration, a date that is not ISO YYYY-MM-DD, an expiry before the
        preparation date.
    """
    cat = catalog or default_catalog()
    found = compound if isinstance(compound, Compound) else cat.compound(compound)
    percent = _check_mass_percent(mass_percent)
    if not isinstance(conc_text, str) or not conc_text.strip():
        raise InvalidInput("concentration text", conc_text, "must not be empty")
    conc = " ".join(conc_text.split())
    if not isinstance(prepared_by, str) or not prepared_by.strip():
        raise InvalidInput("preparer", prepared_by, "must not be empty")
    preparer = " ".join(prepared_by.split())
    prepared = _check_date("preparation date", prepared_on)
    if expires_on is not None:
        expires = _check_date("expiry date", expires_on)
        if expires < prepared:
            raise InvalidInput(
                "expiry date", expires_on, f"is before the preparation date {prepared_on}"
            )
    lot_text = _optional_text("lot", lot)
    origin = _optional_text("source text", source_text)
    result = _evaluate(found.key, percent, cat, found)

    title = f"{_display_name(found)} {conc}"
    lines: list[str] = []
    lines += wrap_label_text(title)
    conc_line = f"Concentration {conc}"
    if percent is not None:
        conc_line += f" ({percent:.3g} % w/w)"
    lines += wrap_label_text(conc_line)
    lines += wrap_label_text(f"Prepared {prepared_on} by {preparer}")
    lines += wrap_label_text(f"Expires {expires_on}" if expires_on else "Expiry: none set")
    origin_parts = [
        p
        for p in (
            f"Lot {lot_text}" if lot_text else None,
            ("from " if lot_text else "From ") + origin if origin else None,
        )
        if p
    ]
    if origin_parts:
        lines += wrap_label_text("; ".join(origin_parts))
    hazard_head = " ".join(
        p
        for p in (
            result.signal_word.upper() if result.signal_word else None,
            " ".join(result.pictograms),
        )
        if p
    )
    if hazard_head:
        lines += wrap_label_text(hazard_head)
    for statement in result.statements:
        lines += wrap_label_text(f"{statement.code} {statement.text}")
    if result.fallback and result.classified:
        lines += wrap_label_text(FALLBACK_NOTE)
    if not result.classified:
        lines += wrap_label_text(NO_DATA_TEXT if result.fallback else NOT_CLASSIFIED_TEXT)
    if result.note:
        lines += wrap_label_text(result.note)
    lines += wrap_label_text(SDS_LINE)
    return Label(
        title=title,
        compound_key=found.key,
        conc_text=conc,
        mass_percent=percent,
        prepared_on=prepared_on,
        prepared_by=preparer,
        expires_on=expires_on,
        lot=lot_text,
        source_text=origin,
        signal_word=result.signal_word,
        pictograms=result.pictograms,
        statements=result.statements,
        basis=result.basis,
        lines=tuple(lines),
    )
