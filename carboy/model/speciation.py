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

X_TOL = 1e-13
"""Newton/bisection stops when the log10[H+] step is below this."""
MAX_ROOT_ITER = 200
I_RTOL = 1e-10
"""Ionic strength is self-consistent when successive values agree to this (relative)."""
MAX_I_ITER = 100


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
    ion_cols: np.ndarray          # (J,) batch column of each charge-only component
    ion_z: np.ndarray             # (J,)
    ion_labels: tuple[str, ...]
    charge_map: Mapping[str, int]
    zmax: int


def _resolve(catalog, key: str) -> System | Ion:
    if key in catalog.systems:
        return catalog.systems[key]
    if key in catalog.ions:
        return catalog.ions[key]
    raise InvalidInput("component", key, "is neither an acid–base system nor an ion "
                       "in the catalog")


def _layout(catalog, keys: tuple[str, ...], temperature_c: float) -> _Layout:
    sys_cols, sys_keys, sys_labels, pkas, zacids, zs = [], [], [], [], [], []
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
        zacids.append(charges[:-1])
        zs.append(charges)
        for lab, z in zip(labels, charges):
            charge_map[lab] = z
    k = len(sys_keys)
    m = max((len(z) for z in zs), default=1)
    logk = np.zeros((k, max(m - 1, 0)))
    zacid = np.zeros((k, max(m - 1, 0)))
    z = np.zeros((k, m))
    valid = np.zeros((k, m), dtype=bool)
    for i in range(k):
        n = len(zs[i])
        logk[i, : n - 1] = -np.asarray(pkas[i])
        zacid[i, : n - 1] = zacids[i]
        z[i, :n] = zs[i]
        valid[i, :n] = True
    zmax = max([1] + [abs(c) for c in charge_map.values()])
    return _Layout(
        np.asarray(sys_cols, dtype=int), tuple(sys_keys), tuple(sys_labels), logk, zacid, z,
        valid, valid[:, 1:], np.asarray(ion_cols, dtype=int), np.asarray(ion_z, dtype=float),
        tuple(ion_labels), MappingProxyType(charge_map), zmax,
    )


# --------------------------------------------------------------------------- the solve

def _davies_d(ionic_strength: np.ndarray) -> np.ndarray:
    sq = np.sqrt(ionic_strength)
    return sq / (1.0 + sq) - 0.3 * ionic_strength


def _bracket(c_sys, lay: _Layout, zspec, log_kw):
    """log10[H+] bounds with f(lo) < 0 < f(hi), from the totals alone.

    With Q the largest negative charge the solutes can carry and P the largest
    positive one, f(x) >= [H+] - [OH-] - Q and f(x) <= [H+] - [OH-] + P.  So
    [H+] = Q + 1 gives f > 0 and [H+] = Kw'/(P + 1) gives f < 0.
    """
    zmin = np.where(lay.valid, lay.z, np.inf).min(axis=1) if lay.z.size else np.zeros(0)
    zmax = np.where(lay.valid, lay.z, -np.inf).max(axis=1) if lay.z.size else np.zeros(0)
    q = np.maximum(-zspec, 0.0) + c_sys @ np.maximum(-zmin, 0.0)
    p = np.maximum(zspec, 0.0) + c_sys @ np.maximum(zmax, 0.0)
    hi = np.log10(q + 1.0) + 1e-3
    lo = log_kw - np.log10(p + 1.0) - 1e-3
    return lo, hi


def _state(x, logbeta, lay: _Layout, c_sys):
    """Fractions and their moments at log10[H+] = x.  Shapes: x (N,), logbeta (N,K,M)."""
    m = lay.z.shape[1]
    j = np.arange(m, dtype=float)
    t = logbeta - j[None, None, :] * x[:, None, None]
    t = np.where(lay.valid[None], t, -np.inf)
    tmax = t.max(axis=2, keepdims=True)
    e = np.exp((t - tmax) * LN10)
    alpha = e / e.sum(axis=2, keepdims=True)
    zbar = (alpha * lay.z[None]).sum(axis=2)
    jbar = (alpha * j).sum(axis=2)
    var = np.maximum((alpha * j * j).sum(axis=2) - jbar * jbar, 0.0)
    return alpha, (c_sys * zbar).sum(axis=1), (c_sys * var).sum(axis=1)


def _solve_x(x0, logbeta, log_kw, lay, c_sys, zspec):
    """Safeguarded Newton for the root of the charge balance; returns x, f, iterations."""
    lo, hi = _bracket(c_sys, lay, zspec, log_kw)
    x = np.clip(x0, lo, hi)
    done = np.zeros(x.shape, dtype=bool)
    it = 0
    f = np.zeros_like(x)
    for it in range(1, MAX_ROOT_ITER + 1):  # noqa: B007 (used after the loop)
        _, qsys, vsys = _state(x, logbeta, lay, c_sys)
        h = np.exp(x * LN10)
        oh = np.exp((log_kw - x) * LN10)
        f = h - oh + zspec + qsys
        fp = LN10 * (h + oh + vsys)
        lo = np.where(f < 0, x, lo)
        hi = np.where(f > 0, x, hi)
        step = f / fp
        xn = x - step
        out = ~((xn > lo) & (xn < hi))
        xn = np.where(out, 0.5 * (lo + hi), xn)
        moved = np.abs(xn - x)
        done = (moved < X_TOL) | (f == 0) | ((hi - lo) < X_TOL)
        x = np.where(f == 0, x, xn)
        if done.all():
            break
    return x, f, it, done


def speciate_batch(batch: MixtureBatch, *, activity: str = "davies", catalog=None) -> BatchSpeciation:
    """Solve every mixture of ``batch`` at once.

    Parameters
    ----------
    batch : mixtures sharing keys and temperature (0–100 °C); totals in mol/L.
    activity : ``"davies"`` (default) or ``"ideal"``.
    catalog : where the keys are looked up; the built-in catalog by default.

    Returns
    -------
    BatchSpeciation, with ``converged`` True where the log10[H+] step fell below
    ``X_TOL`` and the ionic strength agreed to ``I_RTOL`` between iterations.
    """
    if activity not in ACTIVITY_MODELS:
        raise InvalidInput("activity model", activity, f"choose one of {', '.join(ACTIVITY_MODELS)}")
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    t_c = water.check_temperature(batch.temperature_c)
    lay = _layout(catalog, batch.keys, t_c)
    return _solve(batch, lay, activity, t_c)


def _solve(batch: MixtureBatch, lay: _Layout, activity: str, t_c: float) -> BatchSpeciation:
    tot = batch.totals
    n = tot.shape[0]
    c_sys = tot[:, lay.sys_cols] if lay.sys_cols.size else np.zeros((n, 0))
    c_ion = tot[:, lay.ion_cols] if lay.ion_cols.size else np.zeros((n, 0))
    zspec = c_ion @ lay.ion_z
    ispec = 0.5 * (c_ion @ (lay.ion_z ** 2))
    pkw = water.pkw(t_c)
    a_dh = water.debye_huckel_a(t_c) if activity == "davies" else 0.0
    z2 = lay.z ** 2

    ionic = ispec.copy()
    x = np.full(n, -7.0)
    i_conv = np.zeros(n, dtype=bool)
    root_ok = np.zeros(n, dtype=bool)
    f = np.zeros(n)
    outer = 0
    for outer in range(1, MAX_I_ITER + 1):  # noqa: B007 (used after the loop)
        ad = a_dh * _davies_d(ionic)                       # (N,)
        log_kw = -pkw + 2.0 * ad                           # conditional Kw
        logk_c = lay.logk[None] - 2.0 * ad[:, None, None] * (lay.zacid[None] - 1.0)
        logk_c = np.where(lay.step_valid[None], logk_c, 0.0)
        logbeta = np.concatenate(
            [np.zeros((n, lay.z.shape[0], 1)), np.cumsum(logk_c, axis=2)], axis=2
        ) if lay.z.shape[0] else np.zeros((n, 0, 1))
        x, f, _, root_ok = _solve_x(x, logbeta, log_kw, lay, c_sys, zspec)
        alpha, _, _ = _state(x, logbeta, lay, c_sys)
        h = 10.0 ** x
        oh = 10.0 ** (log_kw - x)
        new_i = ispec + 0.5 * (h + oh) + 0.5 * (c_sys[:, :, None] * alpha * z2[None]).sum(axis=(1, 2))
        i_conv = np.abs(new_i - ionic) <= I_RTOL * np.maximum(new_i, 1e-12)
        ionic = new_i
        if a_dh == 0.0 or i_conv.all():
            i_conv[:] = True
            break

    ad = a_dh * _davies_d(ionic)
    log_gh = -ad                                           # log10 gamma(H+)
    ph = -(x + log_gh)
    log_kw = -pkw + 2.0 * ad
    oh = 10.0 ** (log_kw - x)
    sys_conc = c_sys[:, :, None] * alpha                   # (N,K,M)

    labels: list[str] = ["H+", "OH-"]
    cols: list[np.ndarray] = [10.0 ** x, oh]
    for j, lab in enumerate(lay.ion_labels):
        labels.append(lab)
        cols.append(c_ion[:, j])
    for k, labs in enumerate(lay.sys_labels):
        for j, lab in enumerate(labs):
            labels.append(lab)
            cols.append(sys_conc[:, k, j])
    merged: dict[str, np.ndarray] = {}
    for lab, col in zip(labels, cols):
        merged[lab] = merged[lab] + col if lab in merged else col
    species_labels = tuple(merged)
    species = np.stack([merged[lab] for lab in species_labels], axis=1)

    zs = np.arange(lay.zmax + 1, dtype=float)
    log_gamma = -(zs[None, :] ** 2) * ad[:, None]

    converged = root_ok & i_conv
    warnings = tuple(_warnings(ionic[i], converged[i], t_c, activity) for i in range(n))
    return BatchSpeciation(
        pH=ph, log_h=x, ionic_strength_molar=ionic, charge_residual_molar=f,
        converged=converged, iterations=outer, species_labels=species_labels,
        species_charges=tuple(lay.charge_map[lab] for lab in species_labels), species_molar=species, system_keys=lay.sys_keys, system_labels=lay.sys_labels,
        fractions=alpha, log_gamma_by_charge=log_gamma, pkw=pkw, temperature_c=t_c,
        activity=activity, warnings=warnings, batch=batch,
    )


@lru_cache(maxsize=64)
def _warning_texts(high_i: bool, bad: bool, hot: bool, ideal: bool) -> tuple[str, ...]:
    out = []
    if high_i:
        model = "ideal-solution" if ideal else "Davies"
        out.append(
            f"ionic strength is above {DAVIES_LIMIT_MOLAR:g} M, outside the validity of the "
            f"{model} activity model: treat the pH as indicative only"
        )
    if hot:
        out.append(
            f"above {ENTHALPY_DATA_MAX_C:g} °C the pKa temperature correction extrapolates "
            "beyond the range of its enthalpy data"
        )
    if bad:
        out.append("the solver did not reach its tolerance: the result is approximate")
    return tuple(out)


def _warnings(ionic: float, converged: bool, t_c: float, activity: str) -> tuple[str, ...]:
    return _warning_texts(bool(ionic > DAVIES_LIMIT_MOLAR), not bool(converged),
                          t_c > ENTHALPY_DATA_MAX_C, activity == "ideal")


def speciate(mixture: Mixture, *, activity: str = "davies", catalog=None) -> Speciation:
    """Solve one mixture; see :func:`speciate_batch`."""
    batch = MixtureBatch(tuple(mixture.totals), np.array([list(mixture.totals.values())]).reshape(
        1, len(mixture.totals)), mixture.temperature_c)
    res = speciate_batch(batch, activity=activity, catalog=catalog).point(0)
    return Speciation(**{**res.__dict__, "mixture": mixture})
