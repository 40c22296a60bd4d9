"""Exact acid–base speciation: charge balance with mass balances, solved for log10[H+].

For a solution of acid–base systems (each a ladder of dissociation steps) and
spectator ions, the fraction of each system in each protonation state is a
function of [H+] alone; the charge balance

    f(x) = [H+] - [OH-] + sum(z c, spectators) + sum_k C_k zbar_k(x) = 0,   x = log10[H+]

is then one equation in x.  Its derivative

    df/dx = ln(10) ([H+] + [OH-] + sum_k C_k Var_k(j))

is positive everywhere, so f is strictly increasing and has exactly one root.  It
is bracketed from the totals alone (see ``_bracket``) and found by Newton steps that
fall back to bisection whenever a step leaves the bracket: the root cannot be missed.
No textbook approximation is made.

Activity follows the Davies equation, log10 gamma = -A z² (sqrt(I)/(1+sqrt(I)) - 0.3 I),
with A from the temperature (``water.debye_huckel_a``) and the ionic strength I
iterated to self-consistency; pH is -log10 a(H+).  ``activity="ideal"`` sets every
activity coefficient to 1 and pH = -log10[H+].  Temperature enters through pKw
(IAPWS R11-07) and each step's pKa by the van 't Hoff equation integrated with a
constant heat-capacity change (Clarke & Glew form).

Every entry point is vectorized: a batch of N mixtures is solved in one set of numpy
operations, not a Python loop.

References
----------
C. W. Davies, Ion Association, Butterworths, London (1962), p. 41.
E. C. W. Clarke and D. N. Glew, Trans. Faraday Soc. 62, 539 (1966).
A. V. Bandura and S. N. Lvov, J. Phys. Chem. Ref. Data 35, 15 (2006).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import lru_cache
from types import MappingProxyType

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.entities import Ion, System
from carboy.model.mixture import Mixture, MixtureBatch

LN10 = math.log(10.0)
R_J_MOL_K = 8.314462618  # J/(mol K), exact since the 2019 SI (CODATA)
T_REF_K = 298.15

DAVIES_LIMIT_MOLAR = 0.5
"""Above this ionic strength the Davies equation is outside its range."""
ENTHALPY_DATA_MAX_C = 77.0
"""Upper end (350 K) of the range the ionization enthalpies were fitted over
(Goldberg, Kishore & Lennen 2002); beyond it pKa(T) is an extrapolation."""

ACTIVITY_MODELS = ("davies", "ideal")

X_TOL = 1e-12
"""Newton/bisection stops when the log10[H+] step is below this."""
F_TOL = 1e-14
"""...or when ln(positive charge / negative charge) is below this."""
MAX_ROOT_ITER = 200
I_RTOL = 1e-10
"""Ionic strength is self-consistent when successive values agree to this (relative)."""
MAX_I_ITER = 100
COUPLED_ITER = 30
WIDEN_STEPS = 20
"""Bracket widenings (3 log units each) allowed when a state is held fixed."""
"""Steps of the fast coupled iteration before a point goes to the nested solve."""
QUADRATIC_STEP = 1e-8
"""A Newton step this small leaves an error of order its square (F is smooth)."""
COUPLED_NEAR = 1.0
"""Below this plain Newton step in x the coupled iteration takes the exact 2x2 step."""


@dataclass(frozen=True)
class Speciation:
    """The solved state of one solution.  Concentrations in mol/L.

    ``species`` holds every species (H+, OH-, spectator ions and every protonation
    state of every system); ``fractions[system][label]`` is the share of the
    system's total in each state.  ``charge_residual_molar`` is f at the root;
    ``converged`` says whether the root find and the ionic-strength iteration both
    met their tolerances.
    """

    pH: float
    h_molar: float
    oh_molar: float
    pkw: float
    species: Mapping[str, float]
    fractions: Mapping[str, Mapping[str, float]]
    activity_coefficients: Mapping[str, float]
    ionic_strength_molar: float
    temperature_c: float
    activity: str
    warnings: tuple[str, ...]
    converged: bool
    iterations: int
    charge_residual_molar: float
    mixture: Mixture | None = None

    def mean_protons_bound(self, system: str) -> float:
        """Average number of dissociable protons still bound per unit of ``system``."""
        fr = self.fractions[system]
        labels = list(fr)
        n = len(labels) - 1
        return float(sum((n - j) * fr[lab] for j, lab in enumerate(labels)))


@dataclass(frozen=True)
class BatchSpeciation:
    """The solved state of N solutions (arrays indexed by point first)."""

    pH: np.ndarray
    log_h: np.ndarray
    ionic_strength_molar: np.ndarray
    charge_residual_molar: np.ndarray
    converged: np.ndarray
    iterations: int
    species_labels: tuple[str, ...]
    species_charges: tuple[int, ...]
    species_molar: np.ndarray
    """(N, S) concentrations of ``species_labels``."""
    system_keys: tuple[str, ...]
    system_labels: tuple[tuple[str, ...], ...]
    fractions: np.ndarray
    """(N, K, M) fraction of system k in state j (padded with 0)."""
    log_gamma_by_charge: np.ndarray
    """(N, zmax+1) log10 activity coefficient for |z| = 0..zmax."""
    system_totals_molar: np.ndarray
    """(N, K) total of each system (given, or solved where a species was held)."""
    pkw: float
    temperature_c: float
    activity: str
    warnings: tuple[tuple[str, ...], ...]
    batch: MixtureBatch = field(repr=False, default=None)

    def __len__(self) -> int:
        return self.pH.shape[0]

    def point(self, n: int) -> Speciation:
        """The result for point ``n`` as a :class:`Speciation`."""
        species = {lab: float(c) for lab, c in zip(self.species_labels, self.species_molar[n])}
        fr = {
            key: MappingProxyType({lab: float(self.fractions[n, k, j]) for j, lab in enumerate(labs)})
            for k, (key, labs) in enumerate(zip(self.system_keys, self.system_labels))
        }
        lg = self.log_gamma_by_charge[n]
        gam = {lab: float(10 ** lg[abs(z)])
               for lab, z in zip(self.species_labels, self.species_charges)}
        h = 10.0 ** float(self.log_h[n])
        return Speciation(
            pH=float(self.pH[n]),
            h_molar=h,
            oh_molar=species["OH-"],
            pkw=self.pkw,
            species=MappingProxyType(species),
            fractions=MappingProxyType(fr),
            activity_coefficients=MappingProxyType(gam),
            ionic_strength_molar=float(self.ionic_strength_molar[n]),
            temperature_c=self.temperature_c,
            activity=self.activity,
            warnings=self.warnings[n],
            converged=bool(self.converged[n]),
            iterations=self.iterations,
            charge_residual_molar=float(self.charge_residual_molar[n]),
            mixture=self.batch.mixture(n) if self.batch is not None else None,
        )


# --------------------------------------------------------------------------- temperature

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


# --------------------------------------------------------------------------- compilation

@dataclass(frozen=True)
class _Layout:
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
    wmat: np.ndarray              # (K*M, K*7) block-diagonal moment weights, see _moments
    needs_shift: bool             # could 10**(log beta - j x) leave the float range?
    logbeta0: np.ndarray          # (K, M) cumulative log10 beta at I = 0, -inf where padded
    cmat: np.ndarray              # (K, M) its activity term: log beta' = log beta0 - 2 A D cmat
    flat_lb0: np.ndarray          # (S,) log beta0 of the valid states only
    flat_c: np.ndarray            # (S,)
    flat_j: np.ndarray            # (S,)
    flat_w: np.ndarray            # (S, K*_NMOM) the valid rows of wmat
    py_systems: tuple             # the same, as Python tuples, for the one-solution path
    py_ions: tuple


def _resolve(catalog, key: str) -> System | Ion:
    if key in catalog.systems:
        return catalog.systems[key]
    if key in catalog.ions:
        return catalog.ions[key]
    raise InvalidInput("component", key, "is neither an acid–base system nor an ion "
                       "in the catalog")


def _layout(catalog, keys: tuple[str, ...], temperature_c: float) -> _Layout:
    sys_cols, sys_keys, sys_labels, pkas, zs = [], [], [], [], []
    ion_cols, ion_z, ion_labels = [], [], []
    charge_map: dict[str, int] = {"H+": 1, "OH-": -1}
    for col, key in enumerate(keys):
        comp = _resolve(catalog, key)
        if isinstance(comp, Ion):
            ion_cols.append(col)
            ion_z.append(comp.charge)
            ion_labels.append(comp.key)
            charge_map[comp.key] = comp.charge
            continue
        s = comp.strong_steps
        labels = comp.species[s:]
        charges = [comp.charge_of(j) for j in range(s, comp.n_steps + 1)]
        if len(labels) == 1:  # every step strong: behaves as a spectator ion
            ion_cols.append(col)
            ion_z.append(charges[0])
            ion_labels.append(labels[0])
            charge_map[labels[0]] = charges[0]
            continue
        sys_cols.append(col)
        sys_keys.append(key)
        sys_labels.append(tuple(labels))
        pkas.append(pka_at(comp, temperature_c)[s:])
        zs.append(charges)
        for lab, z in zip(labels, charges):
            charge_map[lab] = z
    k = len(sys_keys)
    m = max((len(z) for z in zs), default=1)
    logk = np.zeros((k, m - 1))
    zacid = np.zeros((k, m - 1))
    z = np.zeros((k, m))
    valid = np.zeros((k, m), dtype=bool)
    for i in range(k):
        n = len(zs[i])
        logk[i, : n - 1] = -np.asarray(pkas[i])
        zacid[i, : n - 1] = zs[i][:-1]
        z[i, :n] = zs[i]
        valid[i, :n] = True
    zmax = max([1] + [abs(c) for c in charge_map.values()])
    jj = np.arange(m, dtype=float)
    cmat = np.concatenate([np.zeros((k, 1)), np.cumsum(np.where(valid[:, 1:], zacid - 1.0, 0.0),
                                                       axis=1)], axis=1)
    wmat = np.zeros((k * m, k * _NMOM))
    for i in range(k):
        zp, zn, z2, c = np.maximum(z[i], 0.0), np.maximum(-z[i], 0.0), z[i] ** 2, cmat[i]
        block = np.stack([np.ones(m), jj, zp, zn, jj * zp, jj * zn, z2,
                          c, c * zp, c * zn, jj * z2, c * z2], axis=1)
        wmat[i * m:(i + 1) * m, i * _NMOM:(i + 1) * _NMOM] = block * valid[i][:, None]
    lb0 = np.where(valid, np.concatenate([np.zeros((k, 1)), np.cumsum(logk, axis=1)], axis=1),
                   -np.inf)
    py_systems = tuple(
        (sys_cols[i], tuple((float(lb0[i, st]), float(cmat[i, st]), float(st),
                             float(max(zs[i][st], 0)), float(max(-zs[i][st], 0)),
                             float(zs[i][st] ** 2)) for st in range(len(zs[i]))),
         float(max(-min(zs[i]), 0)), float(max(max(zs[i]), 0)))
        for i in range(k)
    )
    return _Layout(
        sys_cols=np.asarray(sys_cols, dtype=int), sys_keys=tuple(sys_keys),
        sys_labels=tuple(sys_labels), logk=logk, zacid=zacid, z=z, valid=valid,
        step_valid=valid[:, 1:], zpos=np.maximum(z, 0.0), zneg=np.maximum(-z, 0.0),
        sys_zmin=np.array([min(c) for c in zs]), sys_zmax=np.array([max(c) for c in zs]),
        ion_cols=np.asarray(ion_cols, dtype=int), ion_z=np.asarray(ion_z, dtype=float),
        ion_labels=tuple(ion_labels), charge_map=MappingProxyType(charge_map), zmax=zmax,
        wmat=wmat, needs_shift=_needs_shift(logk, m),
        logbeta0=lb0,
        cmat=cmat,
        flat_lb0=lb0[valid], flat_c=cmat[valid], flat_j=np.broadcast_to(jj, (k, m))[valid],
        flat_w=wmat[valid.reshape(-1)],
        py_systems=py_systems, py_ions=tuple(zip(ion_cols, (float(v) for v in ion_z))),
    )


def _needs_shift(logk: np.ndarray, m: int) -> bool:
    """True when the unshifted exponentials could overflow for x in [-40, 40].

    |log10 beta| <= sum |log10 K| and |j x| <= 40 (M - 1); float64 holds 10**±300.
    """
    span = float(np.abs(logk).sum(axis=1).max(initial=0.0)) + 40.0 * (m - 1) + 60.0
    return span > 280.0


_LAYOUTS: dict = {}


def _cached_layout(catalog, keys: tuple[str, ...], temperature_c: float) -> _Layout:
    """Layouts are pure functions of (catalog, keys, temperature): reuse them."""
    k = (id(catalog), keys, temperature_c)
    hit = _LAYOUTS.get(k)
    if hit is not None and hit[0] is catalog:
        return hit[1]
    lay = _layout(catalog, keys, temperature_c)
    if len(_LAYOUTS) >= 512:
        _LAYOUTS.clear()
    _LAYOUTS[k] = (catalog, lay)
    return lay


# --------------------------------------------------------------------------- the solve
#
# The charge balance is written as POS(x) = NEG(x), with POS the positive charge
# ([H+] and every positive species) and NEG the negative charge.  POS rises and NEG
# falls with x, so F = ln POS - ln NEG is strictly increasing with the same root as f.
# Newton on F is nearly linear where one species dominates each side (a strong acid
# converges in one step), which is what makes the solve fast; the bracket keeps it safe.

def _davies_d(ionic):
    """D(I) = sqrt(I)/(1 + sqrt(I)) - 0.3 I, with I held at DAVIES_LIMIT_MOLAR above it.

    D peaks (and the coefficients bottom out) near I = 0.52 M, right at the edge of the
    equation's range; beyond it the formula climbs to absurd coefficients (10**7 at
    50 M), so above the limit the coefficients keep their value at the limit and the
    result carries the validity warning.
    """
    ionic = np.minimum(ionic, DAVIES_LIMIT_MOLAR)
    sq = np.sqrt(ionic)
    return sq / (1.0 + sq) - 0.3 * ionic


def _bracket(q, p, log_kw):
    """log10[H+] bounds with f(lo) < 0 < f(hi), from the totals alone.

    With Q the largest negative charge the solutes can carry and P the largest
    positive one, f(x) >= [H+] - [OH-] - Q and f(x) <= [H+] - [OH-] + P.  So
    [H+] = Q + 1 gives f > 0 and [H+] = Kw'/(P + 1) gives f < 0.
    """
    return log_kw - np.log10(p + 1.0) - 1e-3, np.log10(q + 1.0) + 1e-3


_NMOM = 12
_POS_NEG_Z2 = [2, 3, 6]
"""Moments per system, the columns of ``_Layout.wmat``: sums of e times
1, j, z+, z-, j z+, j z-, z², c, c z+, c z-, j z², c z² (c: the activity term of cmat)."""


@dataclass(frozen=True)
class _Amounts:
    """What fixes each system's amount: its total, or (open system) the concentration
    of one reference state held constant (CO2(aq) in equilibrium with a gas, say).

    For a held state j0 at concentration F, every state is F·e_j/e_j0, i.e. the
    system behaves as a total C = F·S/e_j0 that moves with x and A·D; its moments'
    derivatives then take j0 and c_j0 where a closed system has jbar and cbar.
    """

    c: np.ndarray                        # (N, K) totals (ignored where held)
    held: np.ndarray | None = None       # (N, K) held concentration of the reference state
    mask: np.ndarray | None = None       # (K,) True where held
    j0: np.ndarray | None = None         # (K,) reference state
    c0: np.ndarray | None = None         # (K,) cmat of the reference state
    e0_col: np.ndarray | None = None     # (K,) column of the reference state in e

    def __getitem__(self, idx) -> _Amounts:
        if self.held is None:
            return _Amounts(self.c[idx])
        return _Amounts(self.c[idx], self.held[idx], self.mask, self.j0, self.c0, self.e0_col)


def _moments(x, ad, lay: _Layout, am: _Amounts, want_alpha: bool = False,
             want_jac: bool = False):
    """Charge sums, their derivatives and the ionic-strength sum at log10[H+] = x.

    ``ad`` is A·D(I) of each point.  All per-system weighted sums come from one
    matrix product with the block-diagonal moment weights of the layout.  Returns a
    dict of arrays summed over systems (mol/L): ``pos``, ``neg`` (charge carried by
    positive and negative system species), ``dpos``, ``dneg`` (their x-derivatives),
    ``iz2`` (sum of c z²); with ``want_jac`` also ``diz2`` (its x-derivative) and
    ``apos``, ``aneg``, ``aiz2`` (derivatives with respect to A·D, for the ionic
    strength); ``ceff`` (N, K), each system's total (solved where a state is held);
    with ``want_alpha`` the fractions ``alpha`` (N, K, M).

    With alpha_j proportional to 10**(log beta0_j - 2 A D c_j - j x), d alpha_j/dx
    = -ln10 alpha_j (j - jbar) and d alpha_j/d(AD) = -2 ln10 alpha_j (c_j - cbar), so
    a weighted sum's derivatives are -ln10 cov(j, w) and -2 ln10 cov(c, w).
    """
    n = x.shape[0]
    k, m = lay.z.shape
    if lay.needs_shift:  # rare: padded layout with a per-system shift against overflow
        t = _conditional_logbeta(lay, ad) - np.arange(m, dtype=float) * x[:, None, None]
        t -= t.max(axis=2, keepdims=True)
        e = np.exp(t * LN10)
        mom = (e.reshape(n, k * m) @ lay.wmat).reshape(n, k, _NMOM)
    else:  # valid states only; 10**t stays within the float range (see _needs_shift)
        t = lay.flat_lb0 - np.multiply.outer(2.0 * ad, lay.flat_c) - np.multiply.outer(x, lay.flat_j)
        e = np.exp(t * LN10)
        mom = (e @ lay.flat_w).reshape(n, k, _NMOM)
    ssum = mom[:, :, 0].copy()
    mom /= mom[:, :, :1]
    jbar = mom[:, :, 1]
    cbar = mom[:, :, 7]
    if am.held is None:
        ceff, jref, cref = am.c, jbar, cbar
    else:
        e0 = e.reshape(n, -1)[:, am.e0_col]
        with np.errstate(divide="ignore", invalid="ignore"):
            ceff = np.where(am.mask, am.held * ssum / e0, am.c)
        jref = np.where(am.mask, am.j0, jbar)
        cref = np.where(am.mask, am.c0, cbar)
    # sums over systems: a = sum C m_w, b = sum C jref m_w, c = sum C cref m_w
    a = np.einsum("nk,nkw->wn", ceff, mom)
    b = np.einsum("nk,nkw->wn", ceff * jref, mom[:, :, _POS_NEG_Z2])
    out = {"pos": a[2], "neg": a[3], "iz2": a[6],
           "dpos": -LN10 * (a[4] - b[0]), "dneg": -LN10 * (a[5] - b[1])}
    if want_jac:
        c = np.einsum("nk,nkw->wn", ceff * cref, mom[:, :, _POS_NEG_Z2])
        out.update(diz2=-LN10 * (a[10] - b[2]), apos=-2 * LN10 * (a[8] - c[0]),
                   aneg=-2 * LN10 * (a[9] - c[1]), aiz2=-2 * LN10 * (a[11] - c[2]))
    out["ceff"] = ceff
    if want_alpha:
        if not lay.needs_shift:
            full = np.zeros((n, k * m))
            full[:, lay.valid.reshape(-1)] = e
            e = full.reshape(n, k, m)
        out["alpha"] = e / e.sum(axis=2, keepdims=True)
    return out


def _root(x0, ad, log_kw, lay, am: _Amounts, zs_pos, zs_neg, q, p):
    """Safeguarded Newton on F for every point; converged points drop out.

    Returns ``(x, done, gi)``: ``gi`` is the ionic strength of the solutes other than
    the spectator ions at each point's last evaluation (within ``X_TOL`` of ``x``).
    A point is done when its step is below ``X_TOL``, when |F| (a relative charge
    imbalance) is below ``F_TOL``, or when its bracket has shrunk below ``X_TOL``.
    """
    lo, hi = _bracket(q, p, log_kw)
    if am.held is not None:
        lo, hi = _widen(lo, hi, ad, log_kw, lay, am, zs_pos, zs_neg)
    x = np.clip(x0, lo, hi)
    done = np.zeros(x.shape, dtype=bool)
    gi = np.zeros(x.shape)
    act = np.arange(x.shape[0])
    for _ in range(MAX_ROOT_ITER):
        xa = x[act]
        mo = _moments(xa, ad[act], lay, am[act])
        psys, nsys, dpsys, dnsys, iz2 = mo["pos"], mo["neg"], mo["dpos"], mo["dneg"], mo["iz2"]
        h = np.exp(xa * LN10)
        oh = np.exp((log_kw[act] - xa) * LN10)
        pos = h + zs_pos[act] + psys
        neg = oh + zs_neg[act] + nsys
        big_f = np.log(pos / neg)
        fp = (LN10 * h + dpsys) / pos + (LN10 * oh - dnsys) / neg
        la = np.where(big_f < 0, xa, lo[act])
        ha = np.where(big_f > 0, xa, hi[act])
        xn = xa - big_f / fp
        out = ~((xn >= la) & (xn <= ha))
        xn = np.where(out, 0.5 * (la + ha), xn)
        fin = (np.abs(xn - xa) < X_TOL) | (np.abs(big_f) < F_TOL) | ((ha - la) < X_TOL)
        x[act] = np.where(big_f == 0, xa, xn)
        lo[act], hi[act] = la, ha
        done[act] = fin
        gi[act] = 0.5 * (h + oh + iz2)
        act = act[~fin]
        if act.size == 0:
            break
    return x, done, gi


def _charge_ratio(x, ad, log_kw, lay, am, zs_pos, zs_neg):
    mo = _moments(x, ad, lay, am)
    return np.log((np.exp(x * LN10) + zs_pos + mo["pos"])
                  / (np.exp((log_kw - x) * LN10) + zs_neg + mo["neg"]))


def _widen(lo, hi, ad, log_kw, lay, am, zs_pos, zs_neg):
    """With a held state the totals no longer bound the charge: widen the bracket
    until F(lo) < 0 < F(hi) (F is still increasing: every state gains charge with x)."""
    lo, hi = lo.copy(), hi.copy()
    for _ in range(WIDEN_STEPS):
        f_lo = _charge_ratio(lo, ad, log_kw, lay, am, zs_pos, zs_neg)
        f_hi = _charge_ratio(hi, ad, log_kw, lay, am, zs_pos, zs_neg)
        bad_lo, bad_hi = ~(f_lo < 0), ~(f_hi > 0)
        if not (bad_lo.any() or bad_hi.any()):
            break
        lo = np.where(bad_lo, lo - 3.0, lo)
        hi = np.where(bad_hi, hi + 3.0, hi)
    return lo, hi


def _conditional_logbeta(lay: _Layout, ad):
    """Cumulative log10 beta of each state with Davies coefficients, ``ad`` = A·D(I).

    With log10 gamma = -A D z², the step HA(z) = H+ + A(z-1) has
    log10 K' = log10 K - 2 A D (z - 1); summed over the steps below each state.
    """
    return lay.logbeta0[None] - (2.0 * ad)[:, None, None] * lay.cmat[None]


def _davies_dprime(ionic):
    """dD/dI (0 above DAVIES_LIMIT_MOLAR, where D is held)."""
    sq = np.sqrt(ionic)
    with np.errstate(divide="ignore"):
        slope = np.where(sq > 0, 0.5 / (sq * (1.0 + sq) ** 2), 0.0) - 0.3
    return np.where(ionic < DAVIES_LIMIT_MOLAR, slope, 0.0)


def _coupled(lay, am: _Amounts, zs_pos, zs_neg, ispec, q, p, pkw, a_dh):
    """Newton on the pair (x, I): the charge balance F = 0 and the ionic strength
    g(x, I) = I, with the exact 2×2 Jacobian (fast path).

    A point is accepted when its Newton step is in the quadratic regime (|dx| below
    ``QUADRATIC_STEP`` and |dI| below ``I_RTOL`` I), so the stepped state is within
    about the square of the step of the solution.  Steps are kept inside the
    bracket of x and at positive I; points that do not get there in COUPLED_ITER
    steps go to the guaranteed nested solve.  Returns ``(x, ionic, ok, iterations)``.
    """
    n = ispec.shape[0]
    x_out = np.full(n, -7.0)
    i_out = ispec + 1e-7
    ok = np.zeros(n, dtype=bool)
    # working copies of the unfinished points, compacted whenever some finish
    idx = np.arange(n)
    xa, ia = x_out.copy(), i_out.copy()
    cs, zp, zn, isp, qa, pa = am, zs_pos, zs_neg, ispec, q, p
    open_system = am.held is not None
    # where F was seen negative / positive while I stayed the same: a step leaving that
    # interval is replaced by its midpoint (plain Newton can cycle on a buffer plateau);
    # the memory is dropped whenever I moves
    seen_lo, seen_hi = np.full(n, -np.inf), np.full(n, np.inf)
    it = 0
    davies = a_dh != 0.0
    for it in range(1, COUPLED_ITER + 1):  # noqa: B007 (used after the loop)
        ad = a_dh * _davies_d(ia)
        log_kw = 2.0 * ad - pkw
        mo = _moments(xa, ad, lay, cs, want_jac=davies)
        h = np.exp(xa * LN10)
        oh = np.exp((log_kw - xa) * LN10)
        pos = h + zp + mo["pos"]
        neg = oh + zn + mo["neg"]
        big_f = np.log(pos / neg)
        f_x = (LN10 * h + mo["dpos"]) / pos + (LN10 * oh - mo["dneg"]) / neg
        g = isp + 0.5 * (h + oh + mo["iz2"])
        if davies:
            dd = a_dh * _davies_dprime(ia)            # d(AD)/dI
            f_i = (mo["apos"] / pos - (2 * LN10 * oh + mo["aneg"]) / neg) * dd
            g_x = 0.5 * (LN10 * (h - oh) + mo["diz2"])
            g_i = 0.5 * (2 * LN10 * oh + mo["aiz2"]) * dd - 1.0
            res_g = g - ia
            det = f_x * g_i - f_i * g_x
            with np.errstate(divide="ignore", invalid="ignore"):
                dx = (f_i * res_g - big_f * g_i) / det
                di = (g_x * big_f - res_g * f_x) / det
            # far from the root the coupled step can cycle: there, take the plain Newton
            # step in x at a held I; near it, the exact 2x2 step (or, if that fails,
            # the plain step with the plain update of I)
            far = np.abs(big_f / f_x) > COUPLED_NEAR
            # ...and an ionic-strength step far from the plain update g is not trusted
            bad = far | ~(np.isfinite(dx) & np.isfinite(di) & (ia + di > 0.5 * g)
                          & (ia + di < 2.0 * g))
            if bad.any():
                dx = np.where(bad, -big_f / f_x, dx)
                inew = np.where(far, ia, np.where(bad, g, ia + di))
            else:
                inew = ia + di
            i_ok = np.abs(inew - ia) <= I_RTOL * np.maximum(inew, 1e-12)
        else:
            dx = -big_f / f_x
            inew = g
            i_ok = True
        if open_system:  # the totals do not bound a held system: keep steps moderate
            xn = xa + np.clip(dx, -3.0, 3.0)
        else:
            lo, hi = _bracket(qa, pa, log_kw)
            xn = np.clip(xa + dx, lo, hi)
        held_i = (inew == ia) | (not davies)
        seen_lo = np.where(held_i, np.where(big_f < 0, np.maximum(seen_lo, xa), seen_lo), -np.inf)
        seen_hi = np.where(held_i, np.where(big_f > 0, np.minimum(seen_hi, xa), seen_hi), np.inf)
        guard = ((xn <= seen_lo) | (xn >= seen_hi)) & np.isfinite(seen_lo) & np.isfinite(seen_hi)
        if guard.any():
            xn = np.where(guard, 0.5 * (np.where(guard, seen_lo, 0.0)
                                        + np.where(guard, seen_hi, 0.0)), xn)
        # accept on the Newton step itself, and keep that step (never a clipped or
        # guarded one) as the answer
        fin = ((np.abs(big_f) < F_TOL) | (np.abs(dx) < QUADRATIC_STEP)) & i_ok
        xa, ia = np.where(fin, xa + dx, xn), inew
        if fin.any():
            done = idx[fin]
            x_out[done], i_out[done], ok[done] = xa[fin], ia[fin], True
            keep = ~fin
            if not keep.any():
                break
            idx, xa, ia = idx[keep], xa[keep], ia[keep]
            seen_lo, seen_hi = seen_lo[keep], seen_hi[keep]
            cs, zp, zn, isp, qa, pa = cs[keep], zp[keep], zn[keep], isp[keep], qa[keep], pa[keep]
    else:
        x_out[idx], i_out[idx] = xa, ia
    return x_out, i_out, ok, it


def _next_ionic(i_now, r_now, i_prev, r_prev, g):
    """Secant step on r(I) = g(I) - I, falling back to the plain fixed point g."""
    if i_prev is None:
        return g
    denom = r_now - r_prev
    with np.errstate(divide="ignore", invalid="ignore"):
        sec = i_now - r_now * (i_now - i_prev) / denom
    # accept a secant step only when it is finite, positive and no wilder than 2 plain steps
    ok = np.isfinite(sec) & (sec > 0) & (np.abs(sec - g) <= 2.0 * np.abs(r_now))
    return np.where(ok, sec, g)


def _nested(x, ionic, lay, am: _Amounts, zs_pos, zs_neg, ispec, q, p, pkw, a_dh):
    """The guaranteed solve: bracketed Newton for x at fixed ionic strength, inside a
    secant-accelerated fixed-point iteration on the ionic strength.
    Returns ``(x, ionic, converged, iterations)``."""
    n = x.shape[0]
    i_prev = r_prev = None
    i_conv = np.zeros(n, dtype=bool)
    root_ok = np.zeros(n, dtype=bool)
    outer = 0
    for outer in range(1, MAX_I_ITER + 1):  # noqa: B007 (used after the loop)
        ad = a_dh * _davies_d(ionic)
        log_kw = -pkw + 2.0 * ad
        x, root_ok, gi = _root(x, ad, log_kw, lay, am, zs_pos, zs_neg, q, p)
        if a_dh == 0.0:
            i_conv[:] = True
            break
        g = ispec + gi
        r = g - ionic
        i_conv = np.abs(r) <= I_RTOL * np.maximum(g, 1e-12)
        if i_conv.all():
            break
        nxt = _next_ionic(ionic, r, i_prev, r_prev, g)
        i_prev, r_prev = ionic, r
        ionic = np.where(i_conv, ionic, nxt)
    return x, ionic, root_ok & i_conv, outer


def speciate_batch(batch: MixtureBatch, *, activity: str = "davies", catalog=None,
                   held: Mapping[str, tuple[str, object]] | None = None) -> BatchSpeciation:
    """Solve every mixture of ``batch`` at once.

    Parameters
    ----------
    batch : mixtures sharing keys and temperature (0–100 °C); totals in mol/L.
    activity : ``"davies"`` (default) or ``"ideal"``.
    catalog : where the keys are looked up; the built-in catalog by default.
    held : open systems: ``{system key: (species label, mol/L)}`` holds that species at
        that concentration (a number or one per point) instead of fixing the system's
        total, e.g. ``{"carbonate": ("CO2", 1.4e-5)}`` for a solution in equilibrium
        with air.  The system's solved total is in ``system_totals_molar``.

    Returns
    -------
    BatchSpeciation, with ``converged`` True where the root find met ``X_TOL`` or
    ``F_TOL`` and the ionic strength agreed to ``I_RTOL`` between iterations.
    """
    if activity not in ACTIVITY_MODELS:
        raise InvalidInput("activity model", activity, f"choose one of {', '.join(ACTIVITY_MODELS)}")
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    t_c = water.check_temperature(batch.temperature_c)
    if held:
        missing = tuple(k for k in held if k not in batch.keys)
        if missing:  # a held system need not be in the batch: it gets a zero column
            batch = MixtureBatch(batch.keys + missing, np.hstack(
                [batch.totals, np.zeros((len(batch), len(missing)))]), batch.temperature_c)
    lay = _cached_layout(catalog, batch.keys, t_c)
    return _solve(batch, lay, activity, t_c, held)


def _held_amounts(lay: _Layout, c_sys: np.ndarray, held) -> _Amounts:
    """Validate ``held`` and express it as :class:`_Amounts`."""
    n, k = c_sys.shape
    if not held:
        return _Amounts(c_sys)
    conc = np.zeros((n, k))
    mask = np.zeros(k, dtype=bool)
    j0 = np.zeros(k)
    m = lay.z.shape[1]
    offsets = np.concatenate([[0], np.cumsum(lay.valid.sum(axis=1))[:-1]]) if k else np.zeros(0)
    e0_col = np.zeros(k, dtype=int)
    for key, spec in held.items():
        if key not in lay.sys_keys:
            raise InvalidInput("held system", key, "is not an acid–base system with weak steps "
                               "in this solution")
        i = lay.sys_keys.index(key)
        try:
            label, value = spec
        except (TypeError, ValueError):
            raise InvalidInput(f"held {key}", spec, "expected (species label, mol/L)") from None
        if label not in lay.sys_labels[i]:
            raise InvalidInput(f"held {key} species", label,
                               f"choose one of {', '.join(lay.sys_labels[i])}")
        v = np.broadcast_to(np.asarray(value, dtype=float), (n,))
        if not np.all(np.isfinite(v)) or np.any(v < 0):
            raise InvalidInput(f"held {label} (mol/L)", value, "must be finite and >= 0")
        jj = lay.sys_labels[i].index(label)
        conc[:, i] = v
        mask[i] = True
        j0[i] = jj
        e0_col[i] = (i * m + jj) if lay.needs_shift else int(offsets[i]) + jj
    c0 = lay.cmat[np.arange(k), j0.astype(int)] if k else np.zeros(0)
    return _Amounts(c_sys, conc, mask, j0, c0, e0_col)


def _solve(batch: MixtureBatch, lay: _Layout, activity: str, t_c: float,
           held=None) -> BatchSpeciation:
    tot = batch.totals
    c_sys = tot[:, lay.sys_cols]
    am = _held_amounts(lay, c_sys, held)
    if am.held is not None:
        c_sys = np.where(am.mask, 0.0, c_sys)  # held systems' totals do not bound the charge
        am = _Amounts(c_sys, am.held, am.mask, am.j0, am.c0, am.e0_col)
    c_ion = tot[:, lay.ion_cols]
    zs_pos = c_ion @ np.maximum(lay.ion_z, 0.0)
    zs_neg = c_ion @ np.maximum(-lay.ion_z, 0.0)
    ispec = 0.5 * (c_ion @ (lay.ion_z ** 2))
    q = zs_neg + c_sys @ np.maximum(-lay.sys_zmin, 0.0)
    p = zs_pos + c_sys @ np.maximum(lay.sys_zmax, 0.0)
    pkw = water.pkw(t_c)
    a_dh = water.debye_huckel_a(t_c) if activity == "davies" else 0.0

    fast = None
    if tot.shape[0] == 1 and not lay.needs_shift:  # one solution: the plain-Python path
        hold = {} if am.held is None else {
            int(k): (float(am.j0[k]), float(am.c0[k]), float(am.held[0, k]))
            for k in np.flatnonzero(am.mask)}
        fast = _solve_one(lay, tot[0].tolist(), pkw, a_dh, hold)
    if fast is not None:
        x, ionic = np.array([fast[0]]), np.array([fast[1]])
        ok, iterations = np.array([True]), fast[2]
    else:
        x, ionic, ok, iterations = _coupled(lay, am, zs_pos, zs_neg, ispec, q, p, pkw, a_dh)
    converged = ok.copy()
    if not ok.all():
        bad = ~ok
        xb, ib, cb, outer = _nested(x[bad], ionic[bad], lay, am[bad], zs_pos[bad],
                                    zs_neg[bad], ispec[bad], q[bad], p[bad], pkw, a_dh)
        x[bad], ionic[bad], converged[bad] = xb, ib, cb
        iterations += outer

    ad = a_dh * _davies_d(ionic)
    log_kw = -pkw + 2.0 * ad
    mo = _moments(x, ad, lay, am, want_alpha=True)
    psys, nsys, iz2, alpha = mo["pos"], mo["neg"], mo["iz2"], mo["alpha"]
    c_sys = mo["ceff"]
    h = 10.0 ** x
    oh = 10.0 ** (log_kw - x)
    residual = (h + zs_pos + psys) - (oh + zs_neg + nsys)
    # with activity, report the ionic strength the coefficients were computed with
    ionic_out = ionic if a_dh != 0.0 else ispec + 0.5 * (h + oh + iz2)
    ph = ad - x  # -log10 a(H+) = -(x + log10 gamma_H), with log10 gamma_H = -ad
    sys_conc = c_sys[:, :, None] * alpha

    labels: list[str] = ["H+", "OH-", *lay.ion_labels]
    cols: list[np.ndarray] = [h, oh, *(c_ion[:, j] for j in range(len(lay.ion_labels)))]
    for k, labs in enumerate(lay.sys_labels):
        labels.extend(labs)
        cols.extend(sys_conc[:, k, j] for j in range(len(labs)))
    merged: dict[str, np.ndarray] = {}
    for lab, col in zip(labels, cols):
        merged[lab] = merged[lab] + col if lab in merged else col
    species_labels = tuple(merged)
    species = np.stack([merged[lab] for lab in species_labels], axis=1)

    zs = np.arange(lay.zmax + 1, dtype=float)
    log_gamma = -(zs[None, :] ** 2) * ad[:, None]
    hot, ideal = t_c > ENTHALPY_DATA_MAX_C, activity == "ideal"
    code = (ionic_out > DAVIES_LIMIT_MOLAR).astype(int) + 2 * (~converged).astype(int)
    table = [_warning_texts(bool(c & 1), bool(c & 2), hot, ideal) for c in range(4)]
    warnings = tuple(table[c] for c in code.tolist())
    return BatchSpeciation(
        pH=ph, log_h=x, ionic_strength_molar=ionic_out, charge_residual_molar=residual,
        converged=converged, iterations=iterations, species_labels=species_labels,
        species_charges=tuple(lay.charge_map[lab] for lab in species_labels),
        species_molar=species, system_keys=lay.sys_keys, system_labels=lay.sys_labels,
        fractions=alpha, log_gamma_by_charge=log_gamma, pkw=pkw, temperature_c=t_c,
        activity=activity, warnings=warnings, system_totals_molar=c_sys, batch=batch,
    )


@lru_cache(maxsize=64)
def _warning_texts(high_i: bool, bad: bool, hot: bool, ideal: bool) -> tuple[str, ...]:
    out = []
    if high_i:
        model = "ideal-solution" if ideal else "Davies"
        out.append(
            f"ionic strength is above {DAVIES_LIMIT_MOLAR:g} M, outside the validity of the "
            f"{model} activity model: treat the pH as indicative only"
            + ("" if ideal else f" (activity coefficients held at their "
               f"{DAVIES_LIMIT_MOLAR:g} M values)")
        )
    if hot:
        out.append(
            f"above {ENTHALPY_DATA_MAX_C:g} °C the pKa temperature correction extrapolates "
            "beyond the range of its enthalpy data"
        )
    if bad:
        out.append("the solver did not reach its tolerance: the result is approximate")
    return tuple(out)


@dataclass(frozen=True)
class StateAt:
    """Fractions of every system at a given log10[H+] and ionic strength (no solve)."""

    system_keys: tuple[str, ...]
    system_labels: tuple[tuple[str, ...], ...]
    fractions: np.ndarray
    """(N, K, M) fraction of system k in state j."""
    charges: np.ndarray
    """(K, M) charge of each state (0 where padded)."""
    log_h: np.ndarray
    """(N,) log10 of the concentration of H+."""
    log_kw_conditional: np.ndarray
    """(N,) log10([H+][OH-]) at that ionic strength."""

    @property
    def mean_charge(self) -> np.ndarray:
        """(N, K) mean charge of each system."""
        return (self.fractions * self.charges[None]).sum(axis=2)


def state_at(keys: tuple[str, ...], ph, ionic_strength, *, temperature_c: float = 25.0,
             activity: str = "davies", catalog=None) -> StateAt:
    """The speciation's building block for inverse problems (the dose that reaches a pH).

    ``ph`` is -log10 a(H+) as the solver reports it; ``ionic_strength`` in mol/L (one
    per point, or one for all).  Same constants and activity model as the solver.
    ``log_h`` of the result is log10 of the concentration of H+.
    """
    if activity not in ACTIVITY_MODELS:
        raise InvalidInput("activity model", activity, f"choose one of {', '.join(ACTIVITY_MODELS)}")
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    t_c = water.check_temperature(temperature_c)
    lay = _cached_layout(catalog, tuple(keys), t_c)
    ph = np.atleast_1d(np.asarray(ph, dtype=float))
    ionic = np.broadcast_to(np.asarray(ionic_strength, dtype=float), ph.shape)
    a_dh = water.debye_huckel_a(t_c) if activity == "davies" else 0.0
    ad = a_dh * _davies_d(ionic)
    x = ad - ph  # pH = -(x + log10 gamma_H) with log10 gamma_H = -ad
    alpha = _moments(x, ad, lay, _Amounts(np.ones((x.shape[0], len(lay.sys_keys)))),
                     want_alpha=True)["alpha"]
    return StateAt(lay.sys_keys, lay.sys_labels, alpha, lay.z, x, 2.0 * ad - water.pkw(t_c))


def _solve_one(lay: _Layout, row, pkw: float, a_dh: float, held=None):
    """The coupled (x, I) iteration of :func:`_coupled` for one solution, in plain Python.

    numpy's per-call overhead dominates for a single solution of a few systems, so
    this path does the same arithmetic with floats, step for step: the plain Newton
    step at a held I far from the root, the exact 2x2 step near it, the bisection
    guard, and acceptance only on an unclipped Newton step below ``QUADRATIC_STEP`` at
    a self-consistent I.  ``held`` maps a system's index to (reference state, its
    concentration).  Returns ``(x, ionic, iterations)``, or ``None`` when it did not
    get there (the caller then takes the vectorized solve).  Tested against it.
    """
    exp, log, sqrt = math.exp, math.log, math.sqrt
    held = held or {}
    systems = [(row[col], states, held.get(k)) for k, (col, states, _, _)
               in enumerate(lay.py_systems) if row[col] > 0.0 or k in held]
    zs_pos = zs_neg = ispec = 0.0
    for col, z in lay.py_ions:
        c = row[col]
        if z > 0:
            zs_pos += z * c
        else:
            zs_neg -= z * c
        ispec += 0.5 * z * z * c
    q, p = zs_neg, zs_pos
    for k, (col, _, neg_cap, pos_cap) in enumerate(lay.py_systems):
        if k not in held:
            q += row[col] * neg_cap
            p += row[col] * pos_cap
    davies = a_dh != 0.0
    x, ionic = -7.0, ispec + 1e-7
    seen_lo, seen_hi = -math.inf, math.inf
    cap = DAVIES_LIMIT_MOLAR
    for it in range(1, COUPLED_ITER + 1):
        i_act = min(ionic, cap)
        sq = sqrt(i_act)
        ad = a_dh * (sq / (1.0 + sq) - 0.3 * i_act)
        tad = 2.0 * ad
        log_kw = tad - pkw
        psys = nsys = dpsys = dnsys = iz2 = diz2 = apos = aneg = aiz2 = 0.0
        for ctot, states, hold in systems:
            s0 = sj = sp = sn = sjp = sjn = sz2 = sc = scp = scn = sjz2 = scz2 = 0.0
            e0 = 0.0
            for lb0, cc, st, zp, zn, z2 in states:
                e = exp((lb0 - tad * cc - st * x) * LN10)
                if hold is not None and st == hold[0]:
                    e0 = e
                s0 += e
                sj += st * e
                sc += cc * e
                if zp:
                    sp += zp * e
                    sjp += st * zp * e
                    scp += cc * zp * e
                if zn:
                    sn += zn * e
                    sjn += st * zn * e
                    scn += cc * zn * e
                sz2 += z2 * e
                sjz2 += st * z2 * e
                scz2 += cc * z2 * e
            if hold is None:
                inv = ctot / s0
                jb, cb = sj / s0, sc / s0
            else:  # a held state: the total follows x (see _Amounts)
                inv = hold[2] / e0
                jb, cb = hold[0], hold[1]
            pk, nk, zk = sp * inv, sn * inv, sz2 * inv
            psys += pk
            nsys += nk
            iz2 += zk
            dpsys -= LN10 * (sjp * inv - jb * pk)
            dnsys -= LN10 * (sjn * inv - jb * nk)
            diz2 -= LN10 * (sjz2 * inv - jb * zk)
            apos -= 2 * LN10 * (scp * inv - cb * pk)
            aneg -= 2 * LN10 * (scn * inv - cb * nk)
            aiz2 -= 2 * LN10 * (scz2 * inv - cb * zk)
        h = exp(x * LN10)
        oh = exp((log_kw - x) * LN10)
        pos = h + zs_pos + psys
        neg = oh + zs_neg + nsys
        big_f = log(pos / neg)
        f_x = (LN10 * h + dpsys) / pos + (LN10 * oh - dnsys) / neg
        g = ispec + 0.5 * (h + oh + iz2)
        dx = -big_f / f_x
        inew = g
        if davies:
            inew = ionic if abs(dx) > COUPLED_NEAR else g
            dd = (a_dh * ((0.5 / (sq * (1.0 + sq) ** 2) if sq > 0 else 0.0) - 0.3)
                  if ionic < cap else 0.0)
            f_i = (apos / pos - (2 * LN10 * oh + aneg) / neg) * dd
            g_x = 0.5 * (LN10 * (h - oh) + diz2)
            g_i = 0.5 * (2 * LN10 * oh + aiz2) * dd - 1.0
            res_g = g - ionic
            det = f_x * g_i - f_i * g_x
            if abs(dx) <= COUPLED_NEAR and det != 0.0:
                dx2 = (f_i * res_g - big_f * g_i) / det
                di = (g_x * big_f - res_g * f_x) / det
                if (math.isfinite(dx2) and math.isfinite(di)
                        and 0.5 * g < ionic + di < 2.0 * g):
                    dx, inew = dx2, ionic + di
        if held:
            xn = min(max(x + dx, -20.0), 4.0)
        else:
            xn = min(max(x + dx, log_kw - math.log10(p + 1.0) - 1e-3),
                     math.log10(q + 1.0) + 1e-3)
        if inew == ionic or not davies:
            if big_f < 0:
                seen_lo = max(seen_lo, x)
            elif big_f > 0:
                seen_hi = min(seen_hi, x)
        else:
            seen_lo, seen_hi = -math.inf, math.inf
        if (xn <= seen_lo or xn >= seen_hi) and math.isfinite(seen_lo + seen_hi):
            xn = 0.5 * (seen_lo + seen_hi)
        if (abs(big_f) < F_TOL or abs(dx) < QUADRATIC_STEP) and (
                not davies or abs(inew - ionic) <= I_RTOL * max(inew, 1e-12)):
            return x + dx, inew, it   # the Newton step itself, never a guarded one
        x, ionic = xn, inew
    return None


def speciate(mixture: Mixture, *, activity: str = "davies", catalog=None,
             held: Mapping[str, tuple[str, float]] | None = None) -> Speciation:
    """Solve one mixture; see :func:`speciate_batch` (same arithmetic, one solution)."""
    if activity not in ACTIVITY_MODELS:
        raise InvalidInput("activity model", activity, f"choose one of {', '.join(ACTIVITY_MODELS)}")
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    t_c = water.check_temperature(mixture.temperature_c)
    keys = tuple(mixture.totals)
    row = list(mixture.totals.values())
    if held:
        batch = MixtureBatch(keys, np.array([row]).reshape(1, len(keys)), t_c)
        res = speciate_batch(batch, activity=activity, catalog=catalog, held=held).point(0)
        return Speciation(**{**res.__dict__, "mixture": mixture})
    lay = _cached_layout(catalog, keys, t_c)
    pkw = water.pkw(t_c)
    a_dh = water.debye_huckel_a(t_c) if activity == "davies" else 0.0
    fast = None if lay.needs_shift else _solve_one(lay, row, pkw, a_dh)
    if fast is None:
        batch = MixtureBatch(keys, np.array([row]).reshape(1, len(keys)), t_c)
        res = _solve(batch, lay, activity, t_c).point(0)
        return Speciation(**{**res.__dict__, "mixture": mixture})
    x, ionic, iterations = fast
    return _one_result(lay, row, x, ionic, iterations, pkw, a_dh, t_c, activity, mixture)


def _one_result(lay, row, x, ionic, iterations, pkw, a_dh, t_c, activity, mixture) -> Speciation:
    """Species, fractions and coefficients of one solved solution."""
    ad = a_dh * float(_davies_d(ionic))
    tad = 2.0 * ad
    h = 10.0 ** x
    oh = 10.0 ** (tad - pkw - x)
    species: dict[str, float] = {"H+": h, "OH-": oh}
    pos, neg = h, oh
    ionic_ideal = 0.5 * (h + oh)
    for (col, z), label in zip(lay.py_ions, lay.ion_labels):
        c = row[col]
        species[label] = species.get(label, 0.0) + c
        if z > 0:
            pos += z * c
        else:
            neg -= z * c
        ionic_ideal += 0.5 * z * z * c
    fractions = {}
    for (col, states, _, _), key, labels in zip(lay.py_systems, lay.sys_keys, lay.sys_labels):
        e = [10.0 ** (lb0 - tad * cc - st * x) for lb0, cc, st, _, _, _ in states]
        tot = sum(e)
        fr = {lab: v / tot for lab, v in zip(labels, e)}
        fractions[key] = MappingProxyType(fr)
        ctot = row[col]
        for (_, _, _, zp, zn, z2), lab in zip(states, labels):
            c = ctot * fr[lab]
            species[lab] = species.get(lab, 0.0) + c
            pos += zp * c
            neg += zn * c
            ionic_ideal += 0.5 * z2 * c
    coeff = {lab: 10.0 ** (-ad * lay.charge_map[lab] ** 2) for lab in species}
    if a_dh == 0.0:
        ionic = ionic_ideal
    warnings = _warning_texts(ionic > DAVIES_LIMIT_MOLAR, False, t_c > ENTHALPY_DATA_MAX_C,
                              activity == "ideal")
    return Speciation(
        pH=ad - x, h_molar=h, oh_molar=oh, pkw=pkw, species=MappingProxyType(species),
        fractions=MappingProxyType(fractions), activity_coefficients=MappingProxyType(coeff),
        ionic_strength_molar=ionic, temperature_c=t_c, activity=activity, warnings=warnings,
        converged=True, iterations=iterations, charge_residual_molar=pos - neg, mixture=mixture,
    )
