"""Metal cations in the charge balance: hydrolysis, and hydroxide or salt precipitation.

Every function here is a pure, vectorized function of ``x = log10[H+]`` (the
concentration, as in ``speciation.py``) that a charge-balance solver can call at each
trial point.  For each metal with a total concentration it gives the dissolved species
(mononuclear hydroxo complexes), whether the hydroxide or oxide is present (decided by
saturation, never assumed), the amount precipitated, the positive and negative charge
the dissolved species carry, and the hydroxide the metal has bound (what it costs in a
dose).  Calcium salts of fluoride, phosphate and sulfate are handled the same way, with
the ligand's fractions at ``x`` supplied by the caller, and so are the complexes of a
cation with a ligand state (CaSO4°, MgSO4° ..., :mod:`carboy.model.metal_complexes`).  The data (``data/metals.toml``,
each constant with its source) is read by :mod:`carboy.model.metal_data`.

Monotonicity.  At a fixed ionic strength the metal terms keep the solver's
``POS(x) = NEG(x)`` monotone: a hydrolysis ladder is an acid-base ladder (the positive
charge rises and the negative falls with x); with the solid present the free ion is
``*Ks {H+}^z`` and every species is a power of [H+] whose sign follows its charge; the
two pieces meet continuously where the solution just saturates.  A salt that precipitates
takes ``a`` cations of charge z and ``b`` ligands whose mean charge is at most their
fully deprotonated charge, so it removes at least as much positive as negative charge,
and less of it precipitates as x rises: ``POS - NEG`` still rises with x.

Derivatives.  Each state carries the derivatives of the charges and of Σ c z² with
respect to x and to A·D (the solver's Newton steps on x and the ionic strength), in
closed form: where a salt precipitates, the free cation's own derivative follows from
the mass balance by implicit differentiation, with the ligand's fractions moving as an
acid-base ladder's do (the ``alpha`` given must be the ladder's fractions at x and A·D,
as the solver's are).  Sums are weighted sums (``einsum``), never matrix products: the
solver calls this at every step and uses no BLAS.

Activity: ``ad`` is A·D(I) of the Davies equation (log10 gamma_z = -ad z²; 0 = ideal),
as in ``speciation.py``.  The constants are for 25 °C; there is no temperature
correction.

References
----------
C. F. Baes and R. E. Mesmer, The Hydrolysis of Cations, Wiley, New York (1976).
K. J. Powell et al., Pure Appl. Chem. 79, 895 (2007); 81, 2425 (2009); 85, 2249 (2013).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from carboy.errors import InvalidInput
from carboy.model.metal_complexes import complex_plan, with_complexes
from carboy.model.metal_data import (  # noqa: F401 (re-exported: the public metal API)
    PKW25,
    STATUSES,
    Complex,
    Hydroxide,
    HydroxoSpecies,
    LigandSolid,
    Metal,
    MetalData,
    charge_bounds,
    metal,
    metal_data,
    unmodelled_cations,
)
from carboy.model.metal_salts import (  # noqa: F401 (LigandAtX, LIGAND_*: re-exported)
    LIGAND_SPAN,
    LIGAND_STEPS,
    LIGAND_TOL,
    LigandAtX,
    add_ligand_terms,
    free_ligand,
    salt_plan,
    salt_si,
    salt_slopes,
    salts_at,
    solve_free_cation,
)

LN10 = math.log(10.0)
_SUMS = ("pos", "neg", "iz2", "dpos", "dneg", "diz2", "apos", "aneg", "aiz2", "oh_bound",
         "ligand_pos", "ligand_neg", "ligand_iz2")


@dataclass(frozen=True)
class MetalState:
    """The metal terms at N trial points (arrays of shape (N,), mol/L).

    ``pos`` and ``neg`` are the charge the dissolved metal species carry (add them to
    the solver's POS and NEG), ``iz2`` the species' sum of c z² (ionic strength);
    ``dpos``, ``dneg`` and ``diz2`` the x-derivatives, at fixed ionic strength, of
    ``pos + ligand_pos``, ``neg + ligand_neg`` and ``iz2 + ligand_iz2``; ``apos``,
    ``aneg`` and ``aiz2`` their derivatives with respect to A·D at fixed x.
    ``oh_bound`` is the hydroxide bound in hydroxo complexes, hydroxides and basic salts
    (mol OH- per L): what the metals cost in a dose.  ``ligand_pos``, ``ligand_neg`` and
    ``ligand_iz2`` (all <= 0) correct the ligand systems' charge and c z² for the share
    held in salts and complexes; ``ligand_removed`` is that share per system, and
    ``ligand_complexed`` the complexes' part of it (still dissolved).
    """

    pos: np.ndarray
    neg: np.ndarray
    dpos: np.ndarray
    dneg: np.ndarray
    iz2: np.ndarray
    oh_bound: np.ndarray
    ligand_pos: np.ndarray
    ligand_neg: np.ndarray
    ligand_iz2: np.ndarray
    ligand_removed: Mapping[str, np.ndarray]
    dissolved: Mapping[str, np.ndarray]
    species: Mapping[str, Mapping[str, np.ndarray]]
    precipitated: Mapping[str, np.ndarray]
    """Solid name -> mol of formula units per L (0 where undersaturated)."""
    saturation_index: Mapping[str, np.ndarray]
    """Solid name -> log10(IAP/Ks): 0 where the solid is present, < 0 where not."""
    diz2: np.ndarray | None = None
    apos: np.ndarray | None = None
    aneg: np.ndarray | None = None
    aiz2: np.ndarray | None = None
    ligand_complexed: Mapping[str, np.ndarray] = field(
        default_factory=lambda: MappingProxyType({}))


@dataclass(frozen=True)
class Sludge:
    """One precipitated solid at one point: mol per L and dry mass per L."""

    solid: str
    formula: str
    mol_per_l: float
    dry_g_per_l: float


# ----------------------------------------------------------------------------- the state


def _as_points(x, ad, log_kw):
    x = np.atleast_1d(np.asarray(x, dtype=float))
    ad = np.broadcast_to(np.asarray(ad, dtype=float), x.shape).astype(float)
    log_kw = np.broadcast_to(np.asarray(log_kw, dtype=float), x.shape).astype(float)
    if not np.all(np.isfinite(x)):
        raise InvalidInput("log10[H+]", x.tolist(), "must be finite")
    return x, ad, log_kw


def _totals(totals: Mapping[str, object], shape, data: MetalData) -> dict[str, np.ndarray]:
    unknown = [k for k in totals if k not in data.metals]
    if unknown:
        raise InvalidInput("metal", ", ".join(sorted(unknown)),
                           "no hydrolysis or solubility data; known: "
                           + ", ".join(sorted(data.metals)))
    out = {}
    for key, c in totals.items():
        arr = np.broadcast_to(np.asarray(c, dtype=float), shape).astype(float)
        if np.any(~np.isfinite(arr)) or np.any(arr < 0):
            raise InvalidInput(f"total of {key}", c, "must be a finite concentration >= 0")
        out[key] = arr
    return out


def metal_state(totals: Mapping[str, object], x, *, ad=0.0, log_kw=-PKW25,
                ligands: Mapping[str, LigandAtX] | None = None,
                precipitate: bool = True, data: MetalData | None = None,
                derivatives: bool = True) -> MetalState:
    """The metal terms of the charge balance at ``x = log10[H+]`` (mol/L).

    Parameters
    ----------
    totals : metal ion key (``"Zn+2"``) -> total concentration, mol/L (scalar or (N,)).
        A key with no data raises :class:`InvalidInput` naming it.
    x : log10 of the H+ concentration at each point, shape (N,).
    ad : A·D(I) of the Davies equation at each point (0: ideal solution).
    log_kw : log10 Kw (thermodynamic, activities) at each point (default 25 °C).
    ligands : acid-base systems that may precipitate with a cation (``"fluoride"``,
        ``"phosphate"``, ``"sulfate"``) at these points; omitted systems take no part.
    precipitate : False gives the supersaturated solution (no solid allowed).
    data : other constants than the packaged ones (tests, a user's own data).
    derivatives : accepted for compatibility; the derivatives are closed forms and
        always given (where salts precipitate, at the ligands' fractions as given).

    Returns
    -------
    MetalState, whose ``pos - neg`` (plus the ligand corrections) rises with x.
    """
    data = data or metal_data()
    x, ad, log_kw = _as_points(x, ad, log_kw)
    tot = _totals(totals, x.shape, data)
    return state_of(tot, x, ad, log_kw, dict(ligands or {}), precipitate, data)


def state_of(tot: Mapping[str, np.ndarray], x, ad, log_kw, ligands: Mapping[str, LigandAtX],
             precipitate: bool, data: MetalData, *, detail: bool = True,
             ligand_start=None):
    """:func:`metal_state` of checked arrays (the solver's entry: no validation).

    With ``detail`` False only the sums are worked out (the solver's trial points): a
    dict of the arrays named as :class:`MetalState`'s charge and derivative fields.
    ``ligand_start`` (N,), where given, is where the complexes' search on the free
    ligand starts (NaN: its own start), and gets the free ligand found (in place)."""
    acc = _Accumulator(x.shape, detail)
    cp = complex_plan(data, tuple(tot), ligands) if data.complexes else None
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        if cp is not None:
            with_complexes(acc, cp, tot, x, ad, log_kw, ligands, precipitate, data,
                           ligand_start)
        for key, c in tot.items():
            if cp is not None and key in cp.cations:
                continue
            m = data.metals[key]
            plan = salt_plan(m, data, ligands)
            if plan.dosed and precipitate:
                _with_salts(acc, m, c, x, ad, log_kw, plan, ligands)
            else:
                _hydroxide_only(acc, m, c, x, ad, precipitate)
    return acc.state() if detail else acc.sums


class _Accumulator:
    """Sums the metals' terms into one :class:`MetalState`: one (13, N) array whose rows
    are the fields named in ``_SUMS``, in that order."""

    def __init__(self, shape, detail: bool = True):
        self.rows = np.zeros((len(_SUMS),) + tuple(shape))
        self.detail = detail
        self.removed, self.dissolved, self.species = {}, {}, {}
        self.precipitated, self.si, self.complexed = {}, {}, {}

    @property
    def sums(self) -> dict:
        return dict(zip(_SUMS, self.rows, strict=True))

    def state(self) -> MetalState:
        ro = MappingProxyType
        return MetalState(**self.sums, ligand_removed=ro(self.removed),
                          dissolved=ro(self.dissolved), species=ro(self.species),
                          precipitated=ro(self.precipitated), saturation_index=ro(self.si),
                          ligand_complexed=ro(self.complexed))


def _log_ratios(m: Metal, log_h_act: np.ndarray, ad: np.ndarray) -> np.ndarray:
    """log10(c_n / c_free) of each species, shape (N, S)."""
    n, q, lb = m.arrays
    return (lb - np.multiply.outer(log_h_act, n)
            + np.multiply.outer(ad, q * q - m.charge**2))


def _log_sum(r: np.ndarray) -> np.ndarray:
    top = r.max(axis=1)
    return top + np.log10(np.exp((r - top[:, None]) * LN10).sum(axis=1))


def _log_free_saturated(m: Metal, log_h_act, ad) -> np.ndarray:
    """log10 of the free ion's concentration over the hydroxide."""
    return m.solid.log_ks + m.charge * log_h_act + ad * m.charge**2


def _species_terms(rows: np.ndarray, m: Metal, conc: np.ndarray, slope_x: np.ndarray,
                   slope_ad: np.ndarray) -> None:
    """Add the charges, c z², bound OH- (rows 0-2 and 9 of ``rows``, see ``_SUMS``) and
    their derivatives (rows 3-8) from the species concentrations (N, S) and
    d log10 c / dx, d log10 c / d(A·D) of each species (N, S): weighted sums (einsum)."""
    w4 = m.weights[0]
    got = np.einsum("ns,sw->wn", conc, w4)
    rows[0:3] += got[:3]
    rows[9] += got[3]
    rows[3:6] += np.einsum("ns,sw->wn", LN10 * conc * slope_x, w4[:, :3])
    rows[6:9] += np.einsum("ns,sw->wn", LN10 * conc * slope_ad, w4[:, :3])


def _hydroxide_only(acc: _Accumulator, m: Metal, c, x, ad, precipitate: bool) -> None:
    n = m.arrays[0]
    w = m.weights[1]                                  # d r_n / d(A·D)
    log_h_act = x - ad
    r = _log_ratios(m, log_h_act, ad)
    log_s = _log_sum(r)
    log_free_unsat = np.log10(c) - log_s
    log_free_sat = _log_free_saturated(m, log_h_act, ad)
    present = (log_free_unsat > log_free_sat) & (c > 0) & precipitate
    log_free = np.where(present, log_free_sat, log_free_unsat)
    conc = np.where(c[:, None] > 0, np.exp(LN10 * (log_free[:, None] + r)), 0.0)
    total = np.maximum(conc.sum(axis=1), np.finfo(float).tiny)
    nw = np.einsum("ns,sw->wn", conc, np.stack([n, w], axis=1)) / total
    # unsaturated: the ladder's shares move; saturated: the free ion follows *Ks {H+}^z
    slope_x = np.where(present[:, None], float(m.charge), nw[0][:, None]) - n
    slope_ad = np.where(present[:, None], w - m.charge + m.charge**2, w - nw[1][:, None])
    _species_terms(acc.rows, m, conc, slope_x, slope_ad)
    dissolved = conc.sum(axis=1)
    solid = np.where(present, c - dissolved, 0.0)
    acc.rows[9] += m.charge * solid
    if acc.detail:
        _record(acc, m, conc, dissolved, solid, log_free - log_free_sat)


def _record(acc, m: Metal, conc, dissolved, solid, si) -> None:
    acc.dissolved[m.key] = dissolved
    acc.species[m.key] = MappingProxyType({s.label: conc[:, i] for i, s in enumerate(m.species)})
    acc.precipitated[m.solid.name] = solid
    acc.si[m.solid.name] = si


# ----------------------------------------------------------------------------- salts


def _with_salts(acc, m: Metal, c, x, ad, log_kw, plan, ligands) -> None:
    n = m.arrays[0]
    w = m.weights[1]
    z = float(m.charge)
    log_h_act, log_oh_act = x - ad, log_kw - x + ad  # log10 a(OH-) = log10 Kw - log10 a(H+)
    r = _log_ratios(m, log_h_act, ad)
    log_s = _log_sum(r)
    cc = np.where(c > 0, c, 1e-300)
    at = salts_at(plan, ligands, ad, log_oh_act, np.log10(cc) - log_s)
    u = solve_free_cation(cc, log_s, at)
    log_free_sat = _log_free_saturated(m, log_h_act, ad)
    capped = (u >= log_free_sat) & (c > 0)             # the hydroxide is present
    u = np.where(c > 0, np.minimum(u, log_free_sat), -np.inf)
    conc = np.exp(LN10 * (u[:, None] + r))
    free, present = free_ligand(at.lsat0, at.k, at.total, u)
    amounts = np.where(c > 0, (at.total - free) / at.b, 0.0)       # (P, N)
    a_rows = at.k * at.b
    dissolved = conc.sum(axis=1)
    hydroxide = np.where(capped, np.maximum(c - dissolved - (a_rows * amounts).sum(axis=0),
                                            0.0), 0.0)
    tiny = np.finfo(float).tiny
    nw = np.einsum("ns,sw->wn", conc, np.stack([n, w], axis=1)) / np.maximum(dissolved, tiny)
    du_x, du_a, dp_x, dp_a = salt_slopes(z, nw[0], nw[1], dissolved, capped, at,
                                         np.where(present, free, 0.0))
    rows = acc.rows
    _species_terms(rows, m, conc, du_x[:, None] - n, du_a[:, None] + w)
    lig = np.zeros((9, x.shape[0]))
    removed = add_ligand_terms(plan, at, amounts, dp_x, dp_a, lig)
    rows[3:9] += lig[3:9]
    rows[10:13] += lig[0:3]
    rows[9] += z * hydroxide + (plan.oh[at.rows] * amounts).sum(axis=0)
    if not acc.detail:
        return
    for system, arr in removed.items():
        acc.removed[system] = acc.removed.get(system, 0.0) + arr
    _record(acc, m, conc, dissolved, hydroxide, u - log_free_sat)
    for s in plan.dosed:   # a salt left out (it cannot be present): none precipitated
        acc.precipitated[s.name] = np.zeros(x.shape)
    for s, p in zip((plan.dosed[i] for i in at.rows), amounts, strict=True):
        acc.precipitated[s.name] = p
    for s in plan.salts:
        acc.si[s.name] = salt_si(s, m, u, ligands, removed, log_oh_act, ad)


# ----------------------------------------------------------------------------- reports


def solubility(key: str, pH, *, ad=0.0, data: MetalData | None = None) -> np.ndarray:
    """Total dissolved metal (mol/L) in equilibrium with its hydroxide at each pH
    (pH = -log10 a(H+)); the solubility curve of the solid."""
    m = metal(key, data)
    ph = np.atleast_1d(np.asarray(pH, dtype=float))
    ad = np.broadcast_to(np.asarray(ad, dtype=float), ph.shape)
    log_h_act = -ph
    r = _log_ratios(m, log_h_act, ad)
    return 10.0 ** (_log_free_saturated(m, log_h_act, ad) + _log_sum(r))


def minimum_solubility(key: str, *, ad: float = 0.0, data: MetalData | None = None
                       ) -> tuple[float, float]:
    """(pH, mol/L) of the least soluble point of the metal's hydroxide.

    log10 of the solubility is a log-sum-exp of lines in pH, hence convex: the bounded
    scalar minimum is the only one.
    """
    from scipy.optimize import minimize_scalar  # slow to import; only this needs it

    res = minimize_scalar(lambda p: float(np.log10(solubility(key, p, ad=ad, data=data))[0]),
                          bounds=(0.0, 14.0), method="bounded",
                          options={"xatol": 1e-6})
    return float(res.x), float(solubility(key, res.x, ad=ad, data=data)[0])


def solid_formulas(data: MetalData | None = None) -> dict[str, tuple[str, float]]:
    """Solid name -> (formula, molar mass g/mol) of every hydroxide and salt."""
    data = data or metal_data()
    out = {m.solid.name: (m.solid.formula, m.solid.molar_mass_g_mol)
           for m in data.metals.values()}
    out.update({s.name: (s.formula, s.molar_mass_g_mol) for s in data.ligand_solids})
    return out


def sludge(state: MetalState, point: int = 0, data: MetalData | None = None
           ) -> tuple[Sludge, ...]:
    """The solids present at one point, with their dry mass (mol/L times molar mass)."""
    formulas = solid_formulas(data)
    out = []
    for name, arr in state.precipitated.items():
        mol = float(np.asarray(arr)[point])
        if mol > 0:
            formula, mass = formulas[name]
            out.append(Sludge(name, formula, mol, mol * mass))
    return tuple(out)
