"""The planning constants of ``data/planning.toml``, validated before anything uses them.

The file holds the heat of water formation and of CO2 degassing, CO2 solubility, the
air and pressure assumptions, heats of solution and dilution tables per compound,
solubility products, the reagents fed as a slurry, the planner's thresholds, stages and
end-point rules, the boiling and safe temperatures, the solubility of salts against
temperature and the heat-capacity parameters of solutes.  :func:`load_planning` checks every section (fields present and of
the right kind, tables that rise, compound keys that name catalog compounds, slurry
solids that name a solubility product, and every status and source through the one
provenance check) and returns the parsed file unchanged, so that
:func:`carboy.model.thermo.planning_constants` serves the same mapping as before.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from carboy.model.catalog_files import default_catalog
from carboy.model.datafiles import Table, read_data_file

__all__ = ["PLANNING_FILE", "load_planning", "validate_planning"]

PLANNING_FILE = "planning.toml"

_THRESHOLDS = ("rise_warn_k", "rise_danger_k", "final_danger_c", "steep_ph_per_percent",
               "ionic_strength_notice_molar", "concentrated_molar")
_EQUIVALENCE = ("min_pka_gap", "strong_like_pka", "visible_within_pkw_margin")


def _constants(doc: Table) -> None:
    """The single-value sections: heats, CO2 solubility, air and gas assumptions."""
    for name in ("water_formation", "co2_degassing"):
        rec = doc.table(name, f"[{name}]")
        rec.number("dh_kj")
        rec.provenance()
    henry = doc.table("henry_co2", "[henry_co2]")
    henry.number("kh_mol_l_atm", positive=True)
    henry.number("temperature_c")
    henry.number("dlnkh_dinvt_k")
    henry.provenance()
    air = doc.table("air", "[air]")
    air.number("pco2_atm", positive=True)
    air.provenance()
    gas = doc.table("gas", "[gas]")
    gas.number("pressure_kpa", positive=True)
    gas.provenance()


def _check_compound_keys(doc: Table, section: str) -> tuple[tuple[str, Table], ...]:
    known = default_catalog().compounds
    entries = doc.keyed(section, name=lambda k: f"[{section}.{k}]")
    for key, rec in entries:
        if key not in known:
            raise rec.fail(None, f"{key!r} is not a compound of compounds.toml")
    return entries


def _dilution_table(rec: Table) -> None:
    basis = rec.raw("basis")
    if basis == "n_water":
        n = rec.numbers("n", ascending=True, low=0.0)
        heats = rec.numbers("dh_kj")
        rec.number("dh_inf_kj", None)
    elif basis == "molality":
        n = rec.numbers("m", ascending=True, low=0.0)
        heats = rec.numbers("released_kj")
        rec.number("pure_released_kj", None)
    else:
        raise rec.fail("basis", f"{basis!r} must be 'n_water' or 'molality'")
    if len(heats) != len(n):
        raise rec.fail(None, f"{len(heats)} heats given for {len(n)} rows")
    rec.provenance()
    if rec.has("understated"):
        gap = rec.table("understated")
        low = gap.number("from_percent", low=0.0, high=100.0)
        if not low < gap.number("to_percent", low=0.0, high=100.0):
            raise gap.fail("to_percent", "must lie above from_percent")
        gap.text("note")
        gap.provenance()


def _heats(doc: Table) -> None:
    for _key, rec in _check_compound_keys(doc, "heat_of_solution"):
        rec.number("dh_kj")
        rec.provenance()
    for _key, rec in _check_compound_keys(doc, "dilution"):
        _dilution_table(rec)


def _solubility(doc: Table) -> None:
    solids = set()
    for rec in doc.tables("ksp", name=lambda i, d: f"[[ksp]] {d.get('solid', i + 1)}"):
        solids.add(rec.text("solid"))
        ions = rec.table("ions")
        if not ions.data:
            raise ions.fail(None, "a solid needs at least one ion")
        for label in ions.data:
            ions.integer(label, low=1)
        rec.number("log10_ksp")
        rec.text("note", "")
        rec.provenance()
    slurry = doc.table("slurry", "[slurry]")
    known = default_catalog().compounds
    for key in slurry.data:
        if key not in known:
            raise slurry.fail(key, "not a compound of compounds.toml")
        if slurry.text(key) not in solids:
            raise slurry.fail(key, f"{slurry.text(key)!r} is not a [[ksp]] solid")


def _rules(doc: Table) -> None:
    thresholds = doc.table("thresholds", "[thresholds]")
    for name in _THRESHOLDS:
        thresholds.number(name, positive=True)
    thresholds.provenance()
    stages = doc.table("stages", "[stages]")
    fractions = stages.numbers("cumulative_fractions", ascending=True, positive=True, high=1.0)
    if fractions[-1] != 1.0:
        raise stages.fail("cumulative_fractions", "must end at 1.0 (the whole dose)")
    stages.provenance()
    equivalence = doc.table("equivalence", "[equivalence]")
    for name in _EQUIVALENCE:
        equivalence.number(name, positive=True)
    equivalence.provenance()


def _boiling(doc: Table) -> None:
    boiling = doc.table("boiling", "[boiling]")
    boil = boiling.number("boil_c", low=50.0, high=150.0)
    if not boiling.number("safe_c", low=15.0) < boil:
        raise boiling.fail("safe_c", "must lie below boil_c")
    boiling.provenance()


def _salt_solubility(doc: Table) -> None:
    catalog = default_catalog()
    for rec in doc.tables("solubility", name=lambda i, d: f"[[solubility]] {d.get('salt', i + 1)}"):
        rec.text("salt")
        rec.text("solid")
        ions = rec.table("ions")
        if not ions.data:
            raise ions.fail(None, "a salt needs its ions")
        for key in ions.data:
            if key not in catalog.ions and key not in catalog.systems:
                raise ions.fail(key, "not an ion or system of systems.toml")
            ions.integer(key, low=1)
        temps = rec.numbers("temperature_c", ascending=True, low=-20.0, high=150.0)
        kinds = [k for k in ("mass_percent", "molality") if rec.has(k)]
        if len(kinds) != 1:
            raise rec.fail(None, "give exactly one of mass_percent and molality")
        values = rec.numbers(kinds[0], positive=True, high=100.0 if kinds[0] == "mass_percent"
                             else None)
        if len(values) != len(temps):
            raise rec.fail(kinds[0], f"{len(values)} values for {len(temps)} temperatures")
        rec.provenance()


def _heat_capacity(doc: Table) -> None:
    for rec in doc.tables("heat_capacity",
                          name=lambda i, d: f"[[heat_capacity]] {d.get('solute', i + 1)}"):
        rec.text("solute")
        if rec.has("neutral") == (rec.has("cation") or rec.has("anion")):
            raise rec.fail(None, "give either neutral, or cation and anion")
        for field in ("neutral",) if rec.has("neutral") else ("cation", "anion"):
            rec.text(field)
        if len(rec.numbers("a")) != 6:
            raise rec.fail("a", "needs the six parameters a1 to a6")
        t = rec.numbers("temperature_c")
        if len(t) != 2 or t[1] < t[0]:
            raise rec.fail("temperature_c", "must be [lowest, highest]")
        rec.number("max_mass_fraction", low=0.0, high=1.0, positive=True)
        rec.provenance()


def validate_planning(data: Mapping[str, Any]) -> Mapping[str, Any]:
    """Check the contents of ``planning.toml`` (as read by tomllib); return them unchanged.

    Raises
    ------
    CatalogError
        Naming ``planning.toml``, the section or entry, and the field of the first problem.
    """
    doc = Table(PLANNING_FILE, "(top level)", data)
    _constants(doc)
    _heats(doc)
    _solubility(doc)
    _rules(doc)
    _boiling(doc)
    _salt_solubility(doc)
    _heat_capacity(doc)
    return data


def load_planning() -> Mapping[str, Any]:
    """The packaged ``planning.toml``, read and validated (uncached; see thermo)."""
    return validate_planning(read_data_file(PLANNING_FILE))
