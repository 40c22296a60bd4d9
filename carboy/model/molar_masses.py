"""The molar masses of the formulas the packaged data files name, shipped as computed.

carboy computes every molar mass from its formula with molmass (IUPAC atomic weights).
Loading molmass and reading the catalog's formulas with it take about 10 ms of every
command's cold start, for the same numbers each time.  So beside the parsed mirrors
(:mod:`carboy.model.data_mirror`) carboy ships ``data/parsed/molar_masses.json``:
molmass's mass of every formula :func:`packaged_formulas` lists, written by
``python -m carboy.model.molar_masses`` (after the mirrors: it reads the data files).
:func:`~carboy.model.catalog_rules.molar_mass_of` takes a formula's mass from it and
asks molmass for any other formula (a user's compound, an edited data file), as before.  A test checks that the file holds exactly
molmass's masses of exactly those formulas, so it is written again whenever a data file
or molmass changes them.
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterable, Mapping
from functools import lru_cache

from carboy.model.data_mirror import MIRROR_FOLDER, package_file

__all__ = ["MASSES_FILE", "packaged_formulas", "shipped_masses", "table_text"]

MASSES_FILE = "molar_masses.json"
DATA_PACKAGE = "carboy.model.data"
_CHARGE = re.compile(r"[+-]\d*$")


@lru_cache(maxsize=1)
def shipped_masses() -> Mapping[str, float]:
    """Formula -> molar mass (g/mol) as shipped; empty when the file is missing or
    unreadable (every mass then comes from molmass)."""
    try:
        with open(package_file(DATA_PACKAGE, MIRROR_FOLDER, MASSES_FILE),
                  encoding="utf-8") as fh:
            found = json.loads(fh.read())
    except (OSError, ValueError):
        return {}
    masses = found.get("masses") if isinstance(found, dict) else None
    return masses if isinstance(masses, dict) else {}


def _records(data: Mapping, field: str) -> Iterable[Mapping]:
    return (r for r in data.get(field, ()) if isinstance(r, Mapping))


def packaged_formulas() -> frozenset[str]:
    """Every formula the packaged data files make carboy weigh: the compounds', the
    metals' solids and elements, the heat-capacity solutes and solubility salts, the
    primary standards', and every species label (water's, the systems', the ion pairs',
    the metals' hydroxo complexes) and ion key less its charge (a solution's solutes are
    weighed by their labels)."""
    from carboy.model.datafiles import read_data_file  # the writer's and the test's

    compounds, metals = read_data_file("compounds.toml"), read_data_file("metals.toml")
    planning, systems = read_data_file("planning.toml"), read_data_file("systems.toml")
    out = {r["formula"] for r in _records(compounds, "compounds")}
    for metal in _records(metals, "metals"):
        out.add(metal["solid"]["formula"])
        out.add(re.match(r"[A-Z][a-z]?", metal["key"]).group(0))
    out.update(r["formula"] for r in _records(metals, "ligand_solids"))
    out.update(r["solute"] for r in _records(planning, "heat_capacity"))
    out.update(r["salt"] for r in _records(planning, "solubility"))
    out.update(r["formula"] for r in _records(read_data_file("standards.toml"), "standards"))
    labels = ["H+", "OH-", *(r["key"] for r in _records(systems, "ions"))]
    for system in _records(systems, "systems"):
        labels += system["species"]
    labels += [r["species"] for r in _records(read_data_file("ion_pairs.toml"), "pairs")]
    for metal in _records(metals, "metals"):
        labels += [r["label"] for r in _records(metal, "species")]
    out.update(_CHARGE.sub("", label) for label in labels)
    return frozenset(f for f in out if isinstance(f, str) and f.strip())


def table_text() -> str:
    """The JSON of ``molar_masses.json``: molmass's mass of each packaged formula it
    reads (one it cannot read is left to fail where it is asked for, as before)."""
    import molmass

    masses = {}
    for formula in sorted(packaged_formulas()):
        try:
            masses[formula] = float(molmass.Formula(formula).mass)
        except Exception:  # noqa: BLE001 - molmass raises FormulaError and, on odd input, others
            continue
    source = (f"molmass {molmass.__version__} (IUPAC atomic weights), from each formula; "
              "written by python -m carboy.model.molar_masses")
    return json.dumps({"source": source, "masses": masses}, ensure_ascii=False, indent=0)


def _write() -> None:  # python -m carboy.model.molar_masses
    from pathlib import Path

    target = Path(__file__).with_name("data") / MIRROR_FOLDER / MASSES_FILE
    target.write_text(table_text() + "\n", encoding="utf-8")
    print(f"wrote {target}")


if __name__ == "__main__":
    _write()
