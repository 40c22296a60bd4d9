"""Ion pairs for the Davies (ion-association) path: CaOH+, MgOH+, sulfate and carbonate pairs.

``data/ion_pairs.toml`` gives each pair's formation reaction as published, its log K at
25 °C, its enthalpy and, where published, an analytic log K(T).  This module validates
that file and evaluates the constants at a temperature; the solver decides how to use
them.  The pairs belong to the Davies path only: the Pitzer parameters already describe
these interactions (see ``pitzer.py``).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from types import MappingProxyType
from typing import Any

from carboy.errors import CatalogError, InvalidInput
from carboy.model import water
from carboy.model.catalog_rules import label_charge as charge_of_label
from carboy.model.datafiles import read_data_file
from carboy.model.provenance import ACTIVITY_DATA_STATUSES, check_provenance

DATA_FILE = "ion_pairs.toml"
TR_K = 298.15
"""K: 25 °C, where ``log_k25`` and ``dh_kj`` hold."""
J_PER_CAL = 4.184
R_J_MOL_K = 8.314462618


@dataclass(frozen=True, eq=False, repr=False)
class IonPair:
    """One ion pair (or hydrolysis product) with its formation constant."""

    species: str
    formed_from: Mapping[str, int]
    """Reaction left side: counts of each reactant; negative counts are products (H+)."""
    log_k25: float
    dh_kj: float | None
    analytic: tuple[float, ...] | None
    source: str
    status: str
    note: str = ""

    @property
    def charge(self) -> int:
        return charge_of_label(self.species)

    def log_k(self, temperature_c: float = 25.0) -> float:
        """log10 K of the formation reaction at ``temperature_c`` (°C, I -> 0).

        The published analytic expression where there is one, else van 't Hoff with the
        published enthalpy, else the 25 °C constant (no temperature dependence published).
        """
        t = water.check_temperature(temperature_c) + 273.15
        if self.analytic:
            a = self.analytic + (0.0,) * (5 - len(self.analytic))
            return a[0] + a[1] * t + a[2] / t + a[3] * math.log10(t) + a[4] / (t * t)
        if self.dh_kj is not None:
            return self.log_k25 - self.dh_kj * 1e3 / (R_J_MOL_K * math.log(10)) * (1 / t - 1 / TR_K)
        return self.log_k25


def _fail(entry: str, reason: str) -> CatalogError:
    return CatalogError(f"ion_pairs.toml {entry}", reason)


def _number(entry: str, value: Any) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise _fail(entry, f"{value!r} is not a finite number")
    return float(value)


def _pair(rec: Mapping[str, Any], sources: Mapping[str, str]) -> IonPair:
    name = rec.get("species", "")
    entry = f"pair {name!r}"
    formed = dict(rec.get("formed_from", {}))
    if not name or not formed or not all(isinstance(v, int) for v in formed.values()):
        raise _fail(entry, "needs a species name and integer counts in formed_from")
    balance = sum(n * charge_of_label(s) for s, n in formed.items() if s != "H2O")
    if balance != charge_of_label(name):
        raise _fail(entry, f"formed_from carries charge {balance}, the pair {charge_of_label(name)}")
    status, source = rec.get("status", ""), rec.get("source", "")
    try:
        check_provenance(entry, "", status, source, allowed=ACTIVITY_DATA_STATUSES)
    except CatalogError as exc:
        raise _fail(entry, exc.reason) from None
    if any(s not in sources for s in rec.get("seen_in", ())) or (
            status == "FOUND" and not rec.get("seen_in")):
        raise _fail(entry, "seen_in must name copies listed under [sources]")
    dh = rec.get("dh_kcal")
    analytic = rec.get("analytic")
    return IonPair(
        species=name, formed_from=MappingProxyType(formed),
        log_k25=_number(entry, rec.get("log_k")),
        dh_kj=None if dh is None else _number(entry, dh) * J_PER_CAL,
        analytic=None if analytic is None else tuple(_number(entry, a) for a in analytic),
        source=source, status=status, note=rec.get("note", ""))


def parse_ion_pairs(raw: Mapping[str, Any]) -> tuple[IonPair, ...]:
    """Validate the parsed ``ion_pairs.toml``."""
    sources = dict(raw.get("sources", {}))
    pairs = tuple(_pair(rec, sources) for rec in raw.get("pairs", ()))
    names = [p.species for p in pairs]
    if len(set(names)) != len(names):
        raise _fail("pairs", "a species is listed twice")
    return pairs


@lru_cache(maxsize=1)
def load_ion_pairs() -> tuple[IonPair, ...]:
    """The packaged ion pairs, validated (cached)."""
    return parse_ion_pairs(read_data_file(DATA_FILE))


def ion_pair(species: str) -> IonPair:
    """The packaged pair named ``species`` (e.g. ``"CaOH+"``)."""
    for p in load_ion_pairs():
        if p.species == species:
            return p
    raise InvalidInput("ion pair", species, "is not in the packaged ion-pair table")


def formation_constants(temperature_c: float = 25.0,
                        species: Sequence[str] | None = None) -> dict[str, float]:
    """log10 K of each pair's formation reaction at ``temperature_c`` (all pairs by default)."""
    chosen = load_ion_pairs() if species is None else tuple(ion_pair(s) for s in species)
    return {p.species: p.log_k(temperature_c) for p in chosen}


def pairs_with(labels) -> tuple[str, ...]:
    """The ion pairs one of whose partners is among ``labels`` (the states of a system,
    say: its mass balance counts these pairs too)."""
    wanted = set(labels)
    return tuple(p.species for p in load_ion_pairs() if wanted & set(p.formed_from))
