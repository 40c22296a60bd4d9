"""A solution's keys compiled into arrays at one temperature: the solver's :class:`Layout`.

The layout says which batch column is a weak acid–base system and which a spectator
ion, and holds, per system, the cumulative log10 beta of each protonation state at
the temperature (pKa by van 't Hoff, :func:`pka_at`), the charges, and the weights of
the per-system moments the charge balance needs (see ``charge_balance``).  A system
whose every step is strong behaves as a spectator ion of its bottom charge.  Layouts
are pure functions of (catalog, keys, temperature) and are cached.

References
----------
E. C. W. Clarke and D. N. Glew, Trans. Faraday Soc. 62, 539 (1966).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import TYPE_CHECKING

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.entities import Ion, System
from carboy.model.metal_index import modelled_among
from carboy.model.solver.constants import LN10

if TYPE_CHECKING:
    from carboy.model.solver.metal_terms import MetalLayout

R_J_MOL_K = 8.314462618  # J/(mol K), exact since the 2019 SI (CODATA)
T_REF_K = 298.15
ENTHALPY_DATA_MAX_C = 77.0
"""Upper end (350 K) of the range the ionization enthalpies were fitted over
(Goldberg, Kishore & Lennen 2002); beyond it pKa(T) is an extrapolation."""

CHUNK_BYTES = 256_000
"""The vectorized paths work through a batch in blocks whose (states, points) arrays
stay below this size: larger temporaries come from fresh pages of memory on every
allocation (each page then costs a fault), and stay out of the fastest caches."""


def pka_at(system: System, temperature_c: float) -> np.ndarray:
    """pKa of each step of ``system`` at ``temperature_c`` (I = 0).

    pK(T) = pK° - [ΔH°/R (1/T° - 1/T) + ΔCp°/R (ln(T/T°) + T°/T - 1)] / ln 10
    """
    t = water.check_temperature(temperature_c) + 273.15
    pk0 = np.asarray(system.pka25, dtype=float)
    dh = np.asarray(system.dh_kj, dtype=float) * 1000.0
    dcp = np.asarray(system.dcp_j, dtype=float)
    term = dh / R_J_MOL_K * (1.0 / T_REF_K - 1.0 / t) + dcp / R_J_MOL_K * (
        math.log(t / T_REF_K) + T_REF_K / t - 1.0
    )
    return pk0 - term / LN10


@dataclass(frozen=True, eq=False, repr=False)
class Layout:
    """Arrays describing which batch column is what, at one temperature."""

    sys_cols: np.ndarray          # (K,) batch column of each weak system
    sys_keys: tuple[str, ...]
    sys_labels: tuple[tuple[str, ...], ...]
    logk: np.ndarray              # (K, M-1) log10 Ka at I=0 (padded with 0)
    zacid: np.ndarray             # (K, M-1) charge of the acid form of each step
    z: np.ndarray                 # (K, M) charge of each state (padded 0)
    valid: np.ndarray             # (K, M) bool
    step_valid: np.ndarray        # (K, M-1) bool
    zpos: np.ndarray              # (K, M) positive part of z
    zneg: np.ndarray              # (K, M) magnitude of the negative part of z
    sys_zmin: np.ndarray          # (K,) lowest charge of each system
    sys_zmax: np.ndarray          # (K,) highest charge of each system
    ion_cols: np.ndarray          # (J,) batch column of each charge-only component
    ion_z: np.ndarray             # (J,)
    ion_labels: tuple[str, ...]
    charge_map: Mapping[str, int]
    zmax: int
    needs_shift: bool             # could 10**(log beta - j x) leave the float range?
    logbeta0: np.ndarray          # (K, M) cumulative log10 beta at I = 0, -inf where padded
    cmat: np.ndarray              # (K, M) its activity term: log beta' = log beta0 - 2 A D cmat
    # the valid states only, system after system (S states in all): "flat" arrays
    flat_lb0: np.ndarray          # (S,) log beta0
    flat_c: np.ndarray            # (S,) cmat
    flat_j: np.ndarray            # (S,) protons lost from the top state
    flat_sys: np.ndarray          # (S,) the system each state belongs to
    flat_index: np.ndarray        # (S,) position of each state in the padded (K*M) order
    sys_slices: tuple             # per system, (first, end) of its states in the flat order
    jj: np.ndarray                # (M,) 0, 1, ..., M-1: protons lost from the top state
    pad_rows: np.ndarray          # (K*M,) flat row of each padded state (S + 2: zeros)
    # the rows of the charge sums: the S states, then H+ and OH- (see charge_balance)
    row_sys: np.ndarray           # (S+2,) the system of each row (K for H+ and OH-)
    row_j: np.ndarray             # (S+2,) j, and -1 for H+, 1 for OH-
    row_c: np.ndarray             # (S+2,) cmat, and 0 for H+, -1 for OH-
    row_w: np.ndarray             # (3, S+2) z+, z-, z² of each row
    row_w_dx: np.ndarray          # (3, S+2) -ln10 times row_w (x-derivatives)
    row_w_dad: np.ndarray         # (3, S+2) -2 ln10 times row_w (A·D-derivatives)
    chunk: int                    # points per block of the vectorized paths (see CHUNK_BYTES)
    py_systems: tuple             # the same, as Python tuples, for the one-solution path
    py_ions: tuple
    py_species: tuple             # (labels, charges): H+, OH-, the ions, every state
    metals: MetalLayout | None = None   # the modelled metal ions (see metal_terms), if any

    @property
    def python_path(self) -> bool:
        """True when the plain-Python path (``single``) can take a solution: no shifted
        exponentials and no metals."""
        return not self.needs_shift and self.metals is None


def resolve(catalog, key: str) -> System | Ion:
    """The catalog's system or ion called ``key``; InvalidInput if neither."""
    if key in catalog.systems:
        return catalog.systems[key]
    if key in catalog.ions:
        return catalog.ions[key]
    raise InvalidInput("component", key, "is neither an acid–base system nor an ion "
                       "in the catalog")


@dataclass(eq=False, repr=False)
class _Parts:
    """The components of a solution sorted into weak systems and spectator ions."""

    sys_cols: list
    sys_keys: list
    sys_labels: list
    pkas: list
    zs: list
    ion_cols: list
    ion_z: list
    ion_labels: list
    charge_map: dict


def _parts(catalog, keys: tuple[str, ...], temperature_c: float) -> _Parts:
    """Sort ``keys`` into weak systems (with pKa at the temperature) and spectator ions."""
    out = _Parts([], [], [], [], [], [], [], [], {"H+": 1, "OH-": -1})
    for col, key in enumerate(keys):
        comp = resolve(catalog, key)
        if isinstance(comp, Ion):
            out.ion_cols.append(col)
            out.ion_z.append(comp.charge)
            out.ion_labels.append(comp.key)
            out.charge_map[comp.key] = comp.charge
            continue
        s = comp.strong_steps
        labels = comp.species[s:]
        charges = [comp.charge_of(j) for j in range(s, comp.n_steps + 1)]
        if len(labels) == 1:  # every step strong: behaves as a spectator ion
            out.ion_cols.append(col)
            out.ion_z.append(charges[0])
            out.ion_labels.append(labels[0])
            out.charge_map[labels[0]] = charges[0]
            continue
        out.sys_cols.append(col)
        out.sys_keys.append(key)
        out.sys_labels.append(tuple(labels))
        out.pkas.append(pka_at(comp, temperature_c)[s:])
        out.zs.append(charges)
        for lab, z in zip(labels, charges):
            out.charge_map[lab] = z
    return out


def python_systems(sys_cols: list, zs: list, lb0: np.ndarray, cmat: np.ndarray) -> tuple:
    """Per system: (column, per state (log beta0, c, j, z+, z-, z²), -zmin+, zmax+, fast).

    ``fast`` serves the closed forms of the one-solution path (``single``) where every
    state has the same sign of charge: (sign, top charge, per state after the first
    (ln10 log beta0, ln10 c, ln10 j, j, j², j³, j⁴)); None for a system with states of
    both signs."""
    out = []
    for i, z in enumerate(zs):
        states = tuple((float(lb0[i][st]), float(cmat[i][st]), float(st), float(max(z[st], 0)),
                        float(max(-z[st], 0)), float(z[st] ** 2)) for st in range(len(z)))
        fast = None
        if min(z) >= 0 or max(z) <= 0:
            fast = (1.0 if min(z) >= 0 else -1.0, float(z[0]), tuple(
                (LN10 * lb, LN10 * c, LN10 * j, j, j * j, j ** 3, j ** 4)
                for lb, c, j, _, _, _ in states[1:]))
        out.append((sys_cols[i], states, float(max(-min(z), 0)), float(max(max(z), 0)), fast))
    return tuple(out)


def _split_metals(pt: _Parts) -> tuple[list[int], tuple[str, ...]]:
    """Take the modelled metal ions out of the spectators of ``pt`` (in place): their
    batch columns and keys."""
    cation = any(z > 0 for z in pt.ion_z)
    found = modelled_among(pt.ion_labels) if cation else ()
    cols = [pt.ion_cols[pt.ion_labels.index(k)] for k in found]
    keep = [i for i, lab in enumerate(pt.ion_labels) if lab not in found]
    pt.ion_cols = [pt.ion_cols[i] for i in keep]
    pt.ion_z = [pt.ion_z[i] for i in keep]
    pt.ion_labels = [pt.ion_labels[i] for i in keep]
    return cols, found


def compile_layout(catalog, keys: tuple[str, ...], temperature_c: float, *,
                   metals: bool = True) -> Layout:
    """The :class:`Layout` of a solution with columns ``keys`` at ``temperature_c``;
    ``metals`` False keeps the modelled metal ions among the spectators (the
    specific-interaction path, which treats dissolved calcium and magnesium as ions)."""
    pt = _parts(catalog, keys, temperature_c)
    metal_cols, metals_found = _split_metals(pt) if metals else ([], ())
    metals = None
    if metals_found:  # the metal modules load only for a modelled metal (metal_index)
        from carboy.model.solver.metal_terms import compile_metals

        metals = compile_metals(catalog, metal_cols, metals_found, tuple(pt.sys_keys),
                                _slices_of(pt.zs))
    if metals is not None:
        pt.charge_map.update(zip(metals.labels, metals.charges))
    zs = pt.zs
    k = len(pt.sys_keys)
    m = max((len(z) for z in zs), default=1)
    logk = np.zeros((k, m - 1))
    zacid = np.zeros((k, m - 1))
    z = np.zeros((k, m))
    valid = np.zeros((k, m), dtype=bool)
    for i in range(k):
        n = len(zs[i])
        logk[i, : n - 1] = -np.asarray(pt.pkas[i])
        zacid[i, : n - 1] = zs[i][:-1]
        z[i, :n] = zs[i]
        valid[i, :n] = True
    zmax = max([1] + [abs(c) for c in pt.charge_map.values()])
    jj = np.arange(m, dtype=float)
    cmat = np.concatenate([np.zeros((k, 1)), np.cumsum(np.where(valid[:, 1:], zacid - 1.0, 0.0),
                                                       axis=1)], axis=1)
    lb0 = np.where(valid, np.concatenate([np.zeros((k, 1)), np.cumsum(logk, axis=1)], axis=1),
                   -np.inf)
    return Layout(
        sys_cols=np.asarray(pt.sys_cols, dtype=int), sys_keys=tuple(pt.sys_keys),
        sys_labels=tuple(pt.sys_labels), logk=logk, zacid=zacid, z=z, valid=valid,
        step_valid=valid[:, 1:], zpos=np.maximum(z, 0.0), zneg=np.maximum(-z, 0.0),
        sys_zmin=np.array([min(c) for c in zs]), sys_zmax=np.array([max(c) for c in zs]),
        ion_cols=np.asarray(pt.ion_cols, dtype=int), ion_z=np.asarray(pt.ion_z, dtype=float),
        ion_labels=tuple(pt.ion_labels), charge_map=MappingProxyType(pt.charge_map), zmax=zmax,
        needs_shift=_needs_shift(logk, m), logbeta0=lb0, cmat=cmat,
        flat_lb0=lb0[valid], flat_c=cmat[valid], flat_j=np.broadcast_to(jj, (k, m))[valid],
        flat_sys=np.broadcast_to(np.arange(k)[:, None], (k, m))[valid],
        flat_index=np.flatnonzero(valid.reshape(-1)), sys_slices=_slices(valid),
        jj=jj, pad_rows=_pad_rows(valid), **_rows(z, valid, cmat), chunk=max(64, CHUNK_BYTES // (8 * (int(valid.sum()) + 1))),
        py_systems=python_systems(pt.sys_cols, zs, lb0, cmat),
        py_ions=tuple(zip(pt.ion_cols, (float(v) for v in pt.ion_z))),
        py_species=_species(pt), metals=metals,
    )


def _slices_of(zs: list) -> tuple:
    """(first, end) of each system's states in the flat order, from their charges."""
    ends = np.cumsum([len(z) for z in zs]).tolist()
    return tuple((e - len(z), e) for e, z in zip(ends, zs))


def _species(pt: _Parts) -> tuple:
    """(labels, charges) of H+, OH-, the spectator ions and every state, in that order
    (a label may repeat: Na+ from two salts)."""
    labels = ("H+", "OH-", *pt.ion_labels, *(lab for labs in pt.sys_labels for lab in labs))
    return labels, tuple(pt.charge_map[lab] for lab in labels)


def _rows(z: np.ndarray, valid: np.ndarray, cmat: np.ndarray) -> dict:
    """The rows of the charge sums: every valid state, then H+ and OH-."""
    k, m = z.shape
    zs = np.r_[z[valid], 1.0, -1.0]
    w = np.stack([np.maximum(zs, 0.0), np.maximum(-zs, 0.0), zs ** 2])
    return {"row_sys": np.r_[np.broadcast_to(np.arange(k)[:, None], (k, m))[valid], k, k],
            "row_j": np.r_[np.broadcast_to(np.arange(m, dtype=float), (k, m))[valid], -1.0, 1.0],
            "row_c": np.r_[cmat[valid], 0.0, -1.0], "row_w": w, "row_w_dx": -LN10 * w,
            "row_w_dad": -2.0 * LN10 * w}


def _pad_rows(valid: np.ndarray) -> np.ndarray:
    """For each padded (K*M) state, its row in the flat order, or S + 2 (the zero row
    after H+ and OH-, see ``charge_balance.state_weights``)."""
    flat = valid.reshape(-1)
    rows = np.full(flat.shape[0], int(flat.sum()) + 2, dtype=np.intp)
    rows[flat] = np.arange(int(flat.sum()))
    return rows


def _slices(valid: np.ndarray) -> tuple:
    """(first, end) of each system's states in the flat order of the valid states."""
    ends = np.cumsum(valid.sum(axis=1))
    return tuple((int(e - n), int(e)) for e, n in zip(ends, valid.sum(axis=1)))


def _needs_shift(logk: np.ndarray, m: int) -> bool:
    """True when the unshifted exponentials could overflow for x in [-40, 40].

    |log10 beta| <= sum |log10 K| and |j x| <= 40 (M - 1); float64 holds 10**±300.
    """
    span = float(np.abs(logk).sum(axis=1).max(initial=0.0)) + 40.0 * (m - 1) + 60.0
    return span > 280.0


_LAYOUTS: dict = {}


def cached_layout(catalog, keys: tuple[str, ...], temperature_c: float, *,
                  metals: bool = True) -> Layout:
    """:func:`compile_layout`, reused: layouts are pure functions of their arguments."""
    k = (id(catalog), keys, temperature_c, metals)
    hit = _LAYOUTS.get(k)
    if hit is not None and hit[0] is catalog:
        return hit[1]
    lay = compile_layout(catalog, keys, temperature_c, metals=metals)
    if len(_LAYOUTS) >= 512:
        _LAYOUTS.clear()
    _LAYOUTS[k] = (catalog, lay)
    return lay
