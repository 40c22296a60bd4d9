"""From mol/L to mol/kg: the water in a litre of a mixture.

The specific-interaction model works in molalities (mol per kg of water); carboy's
mixtures are in mol/L.  ``m_i = c_i / W`` with ``W`` the kilograms of water in one litre
of the solution, found one of two ways (the result says which):

* **a density table**: when the mixture is, in its proportions, exactly one compound
  that has a density table in the catalog (HCl, H2SO4, HNO3, H3PO4, acetic acid, NaOH,
  KOH, NH3 solutions), its molality comes from that table
  (:func:`carboy.model.solutions.strength_of`, 20 °C tables);
* **an estimate** otherwise: ``W = ρ_w(T) (1 - Σ c_i V_i / 1000)``, the litre less the
  volume the solutes take, with V_i their partial molar volumes at infinite dilution
  (``pitzer.toml [[molar_volumes]]``, conventional scale V(H+) = 0; the H+ or OH- that
  balances the components' charge counted too; an ion not listed takes a default).
  Real apparent molar volumes grow with concentration (NaCl: about 17 cm³/mol at
  infinite dilution, 21 near 5 mol/kg), so at several mol/L the estimate can put the
  molality a few per cent high; the result's warnings say the estimate was used.

A solve that holds a system open (CO2(aq) at a gas's level) does not know that system's
total until it is solved: :class:`OpenWater` gives the estimate's W from what the open
systems hold, and the Pitzer rounds settle it with the coefficients.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from operator import mul
from types import MappingProxyType

import numpy as np

from carboy.errors import CarboyError, CatalogError
from carboy.model import water
from carboy.model.datafiles import read_data_file
from carboy.model.entities import Ion
from carboy.model.provenance import check_provenance
from carboy.model.solver.layout import resolve

DATA_FILE = "pitzer.toml"
ESTIMATE_NOTE = ("molality (mol/kg) estimated from the solutes' partial molar volumes "
                 "(no density table for this mixture)")


@dataclass(frozen=True, eq=False, repr=False)
class MolarVolumes:
    """Partial molar volumes at infinite dilution (cm³/mol) by species label."""

    by_label: Mapping[str, float]
    default: float


@lru_cache(maxsize=1)
def molar_volumes() -> MolarVolumes:
    """The packaged volumes, each checked for its source and status (cached)."""
    raw = read_data_file(DATA_FILE)
    out = {}
    for rec in raw.get("molar_volumes", ()):
        label = rec.get("label")
        check_provenance(f"pitzer.toml molar volume {label!r}", "", rec.get("status"),
                         rec.get("source"))
        value = rec.get("value")
        if not isinstance(label, str) or not isinstance(value, int | float) or label in out:
            raise CatalogError(f"pitzer.toml molar volume {label!r}",
                               "needs a unique label and a number")
        out[label] = float(value)
    default = raw.get("molar_volume_default", {})
    check_provenance("pitzer.toml molar_volume_default", "", default.get("status"),
                     default.get("source"))
    return MolarVolumes(MappingProxyType(out), float(default.get("value", 20.0)))


def _key_volume(comp, volumes: MolarVolumes) -> tuple[float, int]:
    """(V cm³/mol, charge) of one component: an ion by its label; a system by its most
    deprotonated species that has a volume (the protons it gives count 0), charged as
    that species."""
    if isinstance(comp, Ion):
        return volumes.by_label.get(comp.key, volumes.default), comp.charge
    for j in range(comp.n_steps, -1, -1):
        if comp.species[j] in volumes.by_label:
            return volumes.by_label[comp.species[j]], comp.charge_of(j)
    return volumes.default, comp.charge_of(comp.n_steps)


@lru_cache(maxsize=256)
def _layout_of(catalog, keys: tuple[str, ...]):
    """Per key (V, charge), and each compound with a density table whose composition
    the keys could be, with its count of each key and the keys it lacks."""
    vols = molar_volumes()
    per = [_key_volume(resolve(catalog, k), vols) for k in keys]
    tabled = []
    for comp in catalog.compounds.values():
        if comp.density is not None and set(comp.composition) <= set(keys):
            counts = tuple(comp.composition.get(k, 0) for k in keys)
            if any(n > 0 for n in counts):
                tabled.append((comp, counts, tuple(i for i, n in enumerate(counts) if n <= 0)))
    return (np.array([v for v, _ in per]), np.array([z for _, z in per], dtype=float),
            tuple(tabled), vols.by_label.get("OH-", vols.default))


NO_WATER_PERCENT = 99.9
"""A pure compound (100 % w/w, no water) is taken at this mass percent for its water per
litre: the estimate from partial molar volumes gave 96 % H2SO4's neighbour at 100 % some
0.74 kg of water a litre."""


def _from_table(catalog, row: list, tabled) -> float | None:
    """kg of water per litre from a density table, when the row (a list) is one such
    compound (``tabled``: (compound, its count of each key, the keys it lacks))."""
    from carboy.model.solutions import strength_of  # solutions imports the catalog

    for comp, counts, others in tabled:
        if any(map(row.__getitem__, others)):
            continue
        c = [v / n for v, n in zip(row, counts) if n > 0]
        if c[0] <= 0 or any(abs(ci - c[0]) > 1e-9 * abs(c[0]) for ci in c):
            continue
        try:
            s = strength_of(comp, conc_molar=float(c[0]), catalog=catalog)
        except CarboyError:
            return None
        if s.molal is None and s.mass_percent is not None and s.mass_percent >= 100.0:
            # the compound itself, no water: taken as the last trace of it (a molality
            # past any activity model's reach), not as the estimate's litre of water
            w = NO_WATER_PERCENT
            return float(c[0]) * comp.molar_mass_g_mol * (100.0 - w) / (1000.0 * w)
        if s.molal is None or s.molal <= 0:
            return None
        return float(c[0]) / s.molal
    return None


def water_kg_per_litre(catalog, keys: tuple[str, ...], totals, temperature_c: float
                       ) -> tuple[np.ndarray, tuple[str, ...]]:
    """``(W, notes)``: kg of water in one litre of each mixture (totals (N, K) in mol/L
    of ``keys``), and the notes the result should carry (empty where every W came from a
    density table)."""
    totals = np.atleast_2d(np.asarray(totals, dtype=float))
    w, estimated = _water(catalog, keys, totals, temperature_c)
    return w, ((ESTIMATE_NOTE,) if estimated.any() and totals.any() else ())


def _estimate(vol, net, v_oh: float, rho: float):
    """W (kg/L) from the solutes' volume (cm³ in a litre) and their net charge (mol/L;
    +: balanced by OH-, whose volume counts too), on arrays."""
    return rho * np.maximum(1.0 - (vol + np.maximum(net, 0.0) * v_oh) / 1000.0, 0.05)


def _water(catalog, keys: tuple[str, ...], totals: np.ndarray, temperature_c: float):
    """(W (N,), estimated (N,) bool: not from a density table)."""
    vol, charge, tabled, v_oh = _layout_of(catalog, tuple(keys))
    w = _estimate(np.einsum("nk,k->n", totals, vol), np.einsum("nk,k->n", totals, charge),
                  v_oh, water.density_g_cm3(temperature_c))
    estimated = np.ones(w.shape, dtype=bool)
    same: dict[tuple, list[int]] = {}   # one compound's solutions: its own table, each
    for n in _one_compound(totals, tabled).tolist():   # different row once (a curve: its start)
        same.setdefault(tuple(totals[n].tolist()), []).append(n)
    for row, at in same.items():   # (not np.unique: its first call costs some 10 ms)
        got = _from_table(catalog, list(row), tabled)
        if got is not None:
            w[at], estimated[at] = got, False
    return w, estimated


def _one_compound(totals: np.ndarray, tabled) -> np.ndarray:
    """The rows of ``totals`` that could be one tabled compound's solution (its keys in
    its proportions, no other key), as :func:`_from_table` checks one row: first by
    which keys a row holds (one integer a row), then the proportions of those few."""
    if not tabled or totals.shape[1] > 62:
        return np.zeros(0, dtype=np.intp)
    held = np.einsum("nk,k->n", (totals != 0.0).astype(np.int64),
                     np.left_shift(1, np.arange(totals.shape[1], dtype=np.int64)))
    hit = np.zeros(totals.shape[0], dtype=bool)
    for _, counts, _ in tabled:
        rows = np.flatnonzero(held == sum(1 << k for k, n in enumerate(counts) if n > 0))
        if rows.size:
            cnt = np.asarray(counts, dtype=float)
            per = totals[np.ix_(rows, cnt > 0)] / cnt[cnt > 0]
            first = per[:, :1]
            hit[rows] |= (first[:, 0] > 0) & np.all(np.abs(per - first) <= 1e-9 * first,
                                                     axis=1)
    return np.flatnonzero(hit)


@dataclass(frozen=True, eq=False, repr=False)
class OpenWater:
    """The water per litre of a batch whose open systems' totals follow the solve (CO2
    held at a level): :func:`water_kg_per_litre` of each point with those systems at
    what the solution holds, ``c`` (N, H) mol/L, the other totals as given.  A point
    whose water came from a density table keeps it (``table``, NaN where estimated)."""

    vol: np.ndarray       # (N,) cm³ the other solutes take in a litre
    net: np.ndarray       # (N,) their charge, mol/L (+: balanced by OH-)
    v: np.ndarray         # (H,) cm³/mol of each open system
    z: np.ndarray         # (H,) its charge
    v_oh: float
    rho: float
    table: np.ndarray     # (N,)

    def at(self, c: np.ndarray, idx) -> np.ndarray:
        """W (kg/L) of the points ``idx`` holding ``c`` (len(idx), H) mol/L."""
        w = _estimate(self.vol[idx] + np.einsum("nh,h->n", c, self.v),
                      self.net[idx] + np.einsum("nh,h->n", c, self.z), self.v_oh, self.rho)
        fixed = self.table[idx]
        return np.where(np.isnan(fixed), w, fixed)

    def one(self, i: int):
        """:meth:`at` of point ``i`` on floats: a function of its list of mol/L, or None
        where its water came from a density table."""
        if not math.isnan(self.table[i]):
            return None
        vol0, net0, rho, v_oh = float(self.vol[i]), float(self.net[i]), self.rho, self.v_oh
        vs, zs = self.v.tolist(), self.z.tolist()

        def water(c: list) -> float:
            return _estimate_one(vol0 + sum(map(mul, c, vs)), net0 + sum(map(mul, c, zs)),
                                 v_oh, rho)

        return water


def open_water(catalog, keys: tuple[str, ...], totals, temperature_c: float,
               cols: tuple[int, ...]) -> tuple[np.ndarray, tuple[str, ...], OpenWater]:
    """:func:`water_kg_per_litre` of ``totals`` (the open systems' columns ``cols`` as
    added: each point's start) and the :class:`OpenWater` that follows what the open
    systems hold."""
    totals = np.atleast_2d(np.asarray(totals, dtype=float))
    w, estimated = _water(catalog, keys, totals, temperature_c)
    vol, charge, _, v_oh = _layout_of(catalog, tuple(keys))
    rest = totals.copy()
    rest[:, list(cols)] = 0.0
    held = OpenWater(np.einsum("nk,k->n", rest, vol), np.einsum("nk,k->n", rest, charge),
                     vol[list(cols)], charge[list(cols)], float(v_oh),
                     water.density_g_cm3(temperature_c), np.where(estimated, np.nan, w))
    return w, ((ESTIMATE_NOTE,) if estimated.any() and totals.any() else ()), held


def water_kg_one(catalog, keys: tuple[str, ...], row, temperature_c: float
                 ) -> tuple[float, tuple[str, ...]]:
    """:func:`water_kg_per_litre` of one mixture (``row`` its totals, mol/L, a list), in
    floats: the one-solution paths call it once per solve."""
    vol, charge, tabled, v_oh = _float_layout(catalog, tuple(keys))
    w = _estimate_one(sum(map(mul, row, vol)), sum(map(mul, row, charge)), v_oh,
                      water.density_g_cm3(temperature_c))
    if tabled:
        got = _from_table(catalog, row, tabled)
        if got is not None:
            return got, ()
    return w, ((ESTIMATE_NOTE,) if any(row) else ())


def _estimate_one(vol: float, net: float, v_oh: float, rho: float) -> float:
    """:func:`_estimate` on floats (the one-solution paths)."""
    return rho * max(1.0 - (vol + max(net, 0.0) * v_oh) / 1000.0, 0.05)


@lru_cache(maxsize=256)
def _float_layout(catalog, keys: tuple[str, ...]):
    """:func:`_layout_of` with lists of floats."""
    vol, charge, tabled, v_oh = _layout_of(catalog, keys)
    return vol.tolist(), charge.tolist(), tabled, float(v_oh)


def molar_from_molal(catalog, keys: tuple[str, ...], molal, temperature_c: float,
                     *, iterations: int = 60) -> np.ndarray:
    """The mol/L totals whose molalities (by :func:`water_kg_per_litre`) are ``molal``
    (N, K): the inverse, by fixed-point iteration (W changes slowly with the totals)."""
    molal = np.atleast_2d(np.asarray(molal, dtype=float))
    w = np.full(molal.shape[0], water.density_g_cm3(temperature_c))
    for _ in range(iterations):
        new, _ = water_kg_per_litre(catalog, keys, molal * w[:, None], temperature_c)
        if np.allclose(new, w, rtol=1e-13, atol=0.0):
            break
        w = new
    return molal * w[:, None]
