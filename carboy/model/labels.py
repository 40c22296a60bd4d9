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
The GHS data and its validated loader are in :mod:`carboy.model.ghs` (re-exported here).
"""

from __future__ import annotations

import datetime as _dt
import math
import re
import textwrap
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

from carboy.errors import InvalidInput
from carboy.model.catalog import Catalog, default_catalog
from carboy.model.entities import Compound
from carboy.model.ghs import (
    SIGNAL_RANK,
    TOP_PERCENT,
    GhsBand,
    GhsData,
    GhsRecord,
    GhsStatement,
    GhsTrack,
    code_order,
    ghs_data,
    parse_ghs,
)

__all__ = [
    "LABEL_WIDTH",
    "NOT_CLASSIFIED_TEXT",
    "NO_DATA_TEXT",
    "SDS_LINE",
    "SIGNAL_RANK",
    "TOP_PERCENT",
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

_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")


# ----------------------------------------------------------------------------- records


@dataclass(frozen=True)
class HazardStatement:
    """One hazard statement as it goes on the label."""

    code: str
    text: str


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
    return tuple(sorted((c for c in present if c not in dropped), key=code_order))


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


def _squeezed(what: str, value: object) -> str:
    """Non-empty text with its runs of white space folded to single spaces."""
    if not isinstance(value, str) or not value.strip():
        raise InvalidInput(what, value, "must not be empty")
    return " ".join(value.split())


def _check_dates(prepared_on: object, expires_on: object) -> None:
    prepared = _check_date("preparation date", prepared_on)
    if expires_on is not None:
        expires = _check_date("expiry date", expires_on)
        if expires < prepared:
            raise InvalidInput(
                "expiry date", expires_on, f"is before the preparation date {prepared_on}",
                field="expires")


def _hazard_lines(result: _Result) -> list[str]:
    """Signal word and pictograms, statements, notes and the closing SDS line (unwrapped)."""
    lines = []
    head = " ".join(p for p in (result.signal_word.upper() if result.signal_word else None,
                                " ".join(result.pictograms)) if p)
    if head:
        lines.append(head)
    lines += [f"{statement.code} {statement.text}" for statement in result.statements]
    if result.fallback and result.classified:
        lines.append(FALLBACK_NOTE)
    if not result.classified:
        lines.append(NO_DATA_TEXT if result.fallback else NOT_CLASSIFIED_TEXT)
    if result.note:
        lines.append(result.note)
    lines.append(SDS_LINE)
    return lines


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
    conc, preparer = _squeezed("concentration text", conc_text), _squeezed("preparer", prepared_by)
    _check_dates(prepared_on, expires_on)
    lot_text = _optional_text("lot", lot)
    origin = _optional_text("source text", source_text)
    result = _evaluate(found.key, percent, cat, found)
    title = f"{_display_name(found)} {conc}"
    conc_line = f"Concentration {conc}"
    if percent is not None:
        conc_line += f" ({percent:.3g} % w/w)"
    lines = [title, conc_line, f"Prepared {prepared_on} by {preparer}",
             f"Expires {expires_on}" if expires_on else "Expiry: none set"]
    origin_parts = [p for p in (f"Lot {lot_text}" if lot_text else None,
                                ("from " if lot_text else "From ") + origin if origin else None)
                    if p]
    if origin_parts:
        lines.append("; ".join(origin_parts))
    lines += _hazard_lines(result)
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
        lines=tuple(w for line in lines for w in wrap_label_text(line)),
    )
