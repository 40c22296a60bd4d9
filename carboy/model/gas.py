"""CO2 from carbonate: solubility, gas volume, and the charge balance of a titration
with or without dissolved CO2 held at equilibrium with a gas phase.

When CO2 can leave, the dissolved CO2 is fixed instead (``[CO2(aq)] = K_H·p_CO2``) and
total carbonate becomes an unknown: the speciation solver's ``held`` option solves that
open system exactly.  :class:`TitrationModel` wraps the solver for a titration.

The same model gives the inverse of a titration curve: at a fixed pH (and ionic
strength) the charge balance, multiplied by the volume, is *linear* in the amount of
reagent, so the amount that reaches a pH is found exactly without trial solves.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.activity import debye_huckel_scale
from carboy.model.inverse_floats import amounts_on_floats
from carboy.model.metal_index import modelled_among
from carboy.model.mixture import Mixture, MixtureBatch, titration_batch
from carboy.model.solver.layout import cached_layout
from carboy.model.solver.mixing import next_ionic
from carboy.model.speciation import BatchSpeciation, speciate_batch, start_along, state_at
from carboy.model.speciation_models import coefficients_of, start_coefficients
from carboy.model.thermo import planning_constants

LN10 = math.log(10.0)
R_J_MOL_K = 8.31446261815324
"""Molar gas constant, J/(mol K): exact since the 2019 SI (N_A·k)."""
CARBONATE = "carbonate"
I_RTOL = 1e-11
MAX_I_ITER = 40
SEEN_IONIC = 24
"""Settled (pH, ionic strength) pairs an inverse keeps as starts for the next ones."""
SEEN_PH = 0.5
"""An inverse starts its ionic strength from a settled one within this many pH units."""


def metal_doses_of(keys: tuple[str, ...], catalog):
    """:meth:`MetalDoses.of <carboy.model.metal_doses.MetalDoses.of>` for a titration
    model's ``keys``; None without a modelled metal, and then the metal modules are not
    even loaded (:mod:`carboy.model.metal_index`)."""
    if not modelled_among(keys):
        return None
    from carboy.model.metal_doses import MetalDoses

    return MetalDoses.of(keys, catalog)


def henry_co2_molar_per_atm(temperature_c: float) -> float:
    """Solubility of CO2 as CO2(aq), mol/(L atm), at ``temperature_c`` (van 't Hoff form).

    K_H(T) = K_H(25 °C) · exp(B (1/T − 1/298.15)), K_H = 0.034, B = 2400 K
    (Sander 2015; MEMORY, see planning.toml).
    """
    rec = planning_constants()["henry_co2"]
    t = water.check_temperature(temperature_c) + 273.15
    t0 = float(rec["temperature_c"]) + 273.15
    return float(rec["kh_mol_l_atm"]) * math.exp(float(rec["dlnkh_dinvt_k"]) * (1 / t - 1 / t0))


def air_pco2_atm() -> float:
    """CO2 partial pressure of the air a vented batch settles with (an assumption)."""
    return float(planning_constants()["air"]["pco2_atm"])


def gas_pressure_kpa() -> float:
    return float(planning_constants()["gas"]["pressure_kpa"])


def molar_volume_l(temperature_c: float, pressure_kpa: float = 101.325) -> float:
    """Ideal-gas molar volume RT/p in L/mol (24.4654 at 25 °C, 1 atm; 24.7896 at 1 bar)."""
    if not pressure_kpa > 0:
        raise InvalidInput("pressure (kPa)", pressure_kpa, "must be above 0")
    return R_J_MOL_K * (float(temperature_c) + 273.15) / pressure_kpa


def gas_conditions(temperature_c: float) -> str:
    return (f"{temperature_c:g} °C and {gas_pressure_kpa():g} kPa (1 atm), ideal gas")


@dataclass(frozen=True, eq=False, repr=False)
class State:
    """Solved states of N points of a titration (the solver's result, plus volumes)."""

    n_reagent: np.ndarray
    volume_l: np.ndarray
    result: BatchSpeciation

    @property
    def pH(self) -> np.ndarray:  # noqa: N802
        return self.result.pH

    def carbonate_molar(self) -> np.ndarray:
        """Total carbonate left in solution at each point, mol/L."""
        return self.result.system_totals_molar[:, self.result.system_keys.index(CARBONATE)]


@dataclass(frozen=True, eq=False, repr=False)
class _Linear:
    """The volume-weighted charge balance ``a + b n`` at fixed pH and ionic strength,
    with what the ionic strength needs (per target)."""

    a: np.ndarray
    b: np.ndarray
    h: np.ndarray
    oh: np.ndarray
    sys_n0: np.ndarray
    sys_per: np.ndarray
    open_c: np.ndarray | None
    kc: int | None


class TitrationModel:
    """The sample plus ``n`` mol of a reagent of given composition, at one temperature.

    Forward states come from the speciation solver (closed, or open with CO2(aq) held);
    the inverse (the amount that reaches a pH) uses its fractions at that pH.

    Parameters
    ----------
    sample : the starting solution (needs ``volume_l``).
    composition : key -> count per mol of reagent.
    l_per_mol : litres of reagent per mol (0 for a solid).
    activity : ``"davies"`` or ``"ideal"``.
    """

    def __init__(self, sample: Mixture, composition: Mapping[str, float], l_per_mol: float,
                 *, activity: str, catalog) -> None:
        if sample.volume_l is None:
            raise InvalidInput("sample volume", None, "a plan needs the sample's volume")
        self.sample = sample
        self.composition = {k: float(v) for k, v in composition.items() if v}
        self.keys = tuple(sorted(set(sample.totals) | set(self.composition)))
        self.v0 = float(sample.volume_l)
        self.lpm = float(l_per_mol)
        self.temperature_c = sample.temperature_c
        self.activity = activity
        self.catalog = catalog
        self.n0 = np.array([sample.totals.get(k, 0.0) * self.v0 for k in self.keys])
        self.per = np.array([self.composition.get(k, 0.0) for k in self.keys])
        weak = CARBONATE in catalog.systems and catalog.systems[CARBONATE].strong_steps < \
            catalog.systems[CARBONATE].n_steps
        self.carb = self.keys.index(CARBONATE) if weak and CARBONATE in self.keys else None
        self.co2_label = catalog.systems[CARBONATE].species[0] if weak else None
        ion_z = [catalog.ions[k].charge if k in catalog.ions else None for k in self.keys]
        for j, k in enumerate(self.keys):  # an all-strong system acts as its anion
            if ion_z[j] is None and catalog.systems[k].strong_steps == catalog.systems[k].n_steps:
                ion_z[j] = catalog.systems[k].bottom_charge
        self.metals = metal_doses_of(self.keys, catalog)
        # modelled metal ions are no spectators: the inverse takes their charge from
        # their hydrolysis and solids (metal_doses)
        for j in (self.metals.cols if self.metals is not None else ()):
            ion_z[j] = None
        self.ion_cols = np.array([j for j, z in enumerate(ion_z) if z is not None], dtype=int)
        self._open: dict = {}   # CO2(aq) level -> roots of an open-system solve (starts)
        self._last_open = None   # ((CO2(aq), amounts), State): the last open solve
        #                          from the default starts (a plan asks some twice)
        self._inverse: dict = {}   # what amount_at_pH was asked -> its answer
        self._settled = (np.zeros(0), np.zeros(0))   # pHs and ionic strengths it settled
        self.ion_z = np.array([z for z in ion_z if z is not None], dtype=float)

    # ------------------------------------------------------------------ forward

    def _batch(self, n: np.ndarray, carbonate_mol=None) -> tuple[MixtureBatch, np.ndarray]:
        b, vol = titration_batch(self.sample, self.composition, n, self.lpm)
        if carbonate_mol is not None and self.carb is not None:
            tot = b.totals.copy()
            tot[:, b.keys.index(CARBONATE)] = np.maximum(
                np.broadcast_to(np.asarray(carbonate_mol, dtype=float), n.shape), 0.0) / vol
            b = MixtureBatch(b.keys, tot, b.temperature_c)
        return b, vol

    def forward(self, n_reagent, *, carbonate_mol=None, co2_molar=None, start=None,
                coefficients=None) -> State:
        """States after adding each amount ``n_reagent`` (mol).

        ``carbonate_mol`` overrides the total carbonate left (mol, per point) and
        ``co2_molar`` instead holds CO2(aq) fixed (open system); neither: closed.
        ``start``: the solver's starts (see ``speciate_batch``); an open system starts
        by default from the largest open solve at the same CO2 level so far, and with
        the Pitzer model its coefficients too, also where ``start`` is given
        (``coefficients``: such starts given, ``speciation_models.coefficients_of``).
        An open solve from the default starts asked again of the same amounts right
        after is not solved again (the plan's doses are first checked open to air,
        then refined from there).
        """
        n = np.atleast_1d(np.asarray(n_reagent, dtype=float))
        held = None
        if co2_molar is not None:
            if self.carb is None:
                raise InvalidInput("CO2 equilibrium", co2_molar, "the solution holds no carbonate")
            held = {CARBONATE: (self.co2_label, co2_molar)}
        again = None   # an open solve from the default starts: the same asked again?
        if held is not None and start is None and coefficients is None \
                and np.ndim(co2_molar) == 0:
            again = (float(co2_molar), n.tobytes())
            if self._last_open is not None and self._last_open[0] == again:
                return self._last_open[1]
        b, vol = self._batch(n, None if held else carbonate_mol)
        if held is not None:
            if start is None:
                start = self._open_start(co2_molar, n)
            if coefficients is None:
                coefficients = self._open_coefficients(co2_molar, n)
        with start_coefficients(coefficients):
            res = speciate_batch(b, activity=self.activity, catalog=self.catalog, held=held,
                                 start=start)
        if held is not None:
            self._remember_open(co2_molar, n, res)
        out = State(n, vol, res)
        if again is not None:
            self._last_open = (again, out)
        return out

    def _open_start(self, co2_molar, n: np.ndarray):
        """Starts for an open-system solve at ``co2_molar``: the roots of the largest such
        solve so far, interpolated in the amount (NaN outside its range), or None."""
        memo = self._open.get(float(co2_molar)) if np.ndim(co2_molar) == 0 else None
        if memo is None or memo[0].size < min(n.size, 16):  # too coarse to start from
            return None
        nodes, res = memo
        inside = (n >= nodes[0]) & (n <= nodes[-1])
        if not inside.any():
            return None
        x0, i0 = start_along(n, nodes, res)
        return np.where(inside, x0, np.nan), np.where(inside, i0, np.nan)

    def _open_coefficients(self, co2_molar, n: np.ndarray) -> np.ndarray | None:
        """Starts of the Pitzer coefficients for an open-system solve at ``co2_molar``
        (see :meth:`_open_start`): the largest such solve's, straight between its
        amounts (NaN outside its range); None off the Pitzer model or without one."""
        memo = self._open.get(float(co2_molar)) if np.ndim(co2_molar) == 0 else None
        if memo is None or memo[0].size < min(n.size, 16):
            return None
        nodes, res = memo
        v = coefficients_of(res)
        if v is None:
            return None
        k = np.clip(np.searchsorted(nodes, n), 1, nodes.size - 1)
        t = ((n - nodes[k - 1]) / (nodes[k] - nodes[k - 1]))[:, None]
        out = v[k - 1] + t * (v[k] - v[k - 1])
        out[(n < nodes[0]) | (n > nodes[-1])] = np.nan
        return out

    def _remember_open(self, co2_molar, n: np.ndarray, res: BatchSpeciation) -> None:
        """Keep the roots of an open-system solve of several amounts (see _open_start)."""
        if np.ndim(co2_molar) != 0 or n.size < 2:
            return
        memo = self._open.get(float(co2_molar))
        if memo is None or memo[0].size < n.size:
            if np.all(np.diff(n) > 0):
                self._open[float(co2_molar)] = (n, res)
                self._last_open = None   # its starts would now differ

    # ------------------------------------------------------------------ inverse

    def amount_at_pH(self, ph, *, carbonate_loss_mol=0.0, co2_molar=None,  # noqa: N802
                     ionic_guess: float | None = None) -> np.ndarray:
        """Reagent amount (mol) at which the batch reaches each pH in ``ph``.

        Exact: at fixed pH and ionic strength the volume-weighted charge balance is
        ``a + b n = 0``; the ionic strength is then iterated to self-consistency.
        Where metals take part their charge joins it and the root is found inside a
        bracket (:mod:`carboy.model.metal_doses`).  ``carbonate_loss_mol`` is CO2
        already lost (closed otherwise); ``co2_molar`` holds CO2(aq) fixed instead.
        NaN where no non-negative amount reaches the pH.  The ionic strength's
        fixed-point iteration takes secant steps (``mixing.next_ionic``); an inverse
        asked again of the same model is remembered (a plan asks the same pHs in
        several of its steps).
        """
        ph = np.atleast_1d(np.asarray(ph, dtype=float))
        t = ph.shape[0]
        loss = np.broadcast_to(np.asarray(carbonate_loss_mol, dtype=float), (t,))
        key = (ph.tobytes(), loss.tobytes(), None if co2_molar is None else float(co2_molar),
               ionic_guess)
        hit = self._inverse.get(key)
        if hit is None:
            if len(self._inverse) >= 64:
                self._inverse.clear()
            hit = self._inverse[key] = self._amount_at(ph, loss, co2_molar, ionic_guess)
        return hit.copy()

    def _amount_at(self, ph, loss, co2_molar, ionic_guess) -> np.ndarray:
        """:meth:`amount_at_pH` worked out."""
        t = ph.shape[0]
        ionic = np.full(t, ionic_guess if ionic_guess is not None
                        else 0.5 * float(self.n0[self.ion_cols] @ self.ion_z**2) / self.v0)
        if ionic_guess is None:
            ionic = self._seen_ionic(ph, ionic)
        t_c = water.check_temperature(self.temperature_c)
        floats = amounts_on_floats(
            self, cached_layout(self.catalog, self.keys, t_c), ph.tolist(), loss.tolist(),
            co2_molar, ionic.tolist(), a_dh=debye_huckel_scale(self.activity, t_c),
            pkw=water.pkw(t_c), i_rtol=I_RTOL, max_iter=MAX_I_ITER)
        if floats is not None:   # a few pHs: the same rounds on floats
            n, new_i, ok = (np.array(v) for v in floats)
            self._remember(ph, ok, new_i)
            return n
        n = np.full(t, np.nan)
        ok = np.zeros(t, dtype=bool)
        i_prev = r_prev = None
        for _ in range(MAX_I_ITER):
            st = state_at(self.keys, ph, ionic, temperature_c=self.temperature_c,
                          activity=self.activity, catalog=self.catalog)
            lin = self._linear(st, loss, co2_molar)
            if self.metals is None:
                with np.errstate(divide="ignore", invalid="ignore"):
                    n = -lin.a / lin.b
            else:
                n = self.metals.amounts(self, st, ionic, lin.a, lin.b,
                                        near=None if i_prev is None else n)
            ok = np.isfinite(n) & (n >= 0)
            nn = np.where(ok, n, 0.0)
            new_i = self._ionic_at(st, lin, nn, ionic)
            new_i = np.where(ok, new_i, ionic)
            r = new_i - ionic
            done = np.abs(r) <= I_RTOL * np.maximum(new_i, 1e-12)
            if self.activity == "ideal" or done.all():
                break
            nxt = np.where(done, new_i, next_ionic(ionic, r, i_prev, r_prev, new_i))
            i_prev, r_prev, ionic = ionic, r, nxt
        self._remember(ph, ok, new_i)
        return np.where(ok, n, np.nan)

    def _remember(self, ph: np.ndarray, ok: np.ndarray, ionic: np.ndarray) -> None:
        """Keep the ionic strengths the inverse settled (starts: :meth:`_seen_ionic`)."""
        if ok.any():
            self._settled = (np.r_[ph[ok], self._settled[0]][:SEEN_IONIC],
                             np.r_[ionic[ok], self._settled[1]][:SEEN_IONIC])

    def _seen_ionic(self, ph: np.ndarray, ionic: np.ndarray) -> np.ndarray:
        """Starts for the inverse's ionic strength: that of the nearest pH within
        ``SEEN_PH`` an earlier inverse of this model settled (the start only saves
        rounds: the ionic strength settles on the same test)."""
        seen_ph, seen_i = self._settled
        if seen_ph.size == 0:
            return ionic
        near = np.abs(ph[:, None] - seen_ph[None, :])
        k = near.argmin(axis=1)
        return np.where(near[np.arange(ph.size), k] <= SEEN_PH, seen_i[k], ionic)

    def _linear(self, st, loss, co2_molar) -> _Linear:
        """The coefficients of the volume-weighted charge balance ``a + b n`` at the
        targets of ``st`` (``state_at``), without the metals."""
        x = st.log_h
        cols = [self.keys.index(k) for k in st.system_keys]
        zbar = st.mean_charge                                    # (t, K)
        h = 10.0 ** x
        oh = 10.0 ** (st.log_kw_conditional - x)
        sys_n0 = np.broadcast_to(self.n0[cols], zbar.shape).copy()
        sys_per = np.broadcast_to(self.per[cols], zbar.shape).copy()
        open_c = kc = None
        if self.carb is not None:
            kc = st.system_keys.index(CARBONATE)
            if co2_molar is not None:
                # held CO2(aq): total carbonate per litre = co2 / alpha0
                open_c = float(co2_molar) / st.fractions[:, kc, 0]
                sys_n0[:, kc] = 0.0
                sys_per[:, kc] = 0.0
            else:
                sys_n0[:, kc] -= loss
        a = (h - oh) * self.v0 + self.n0[self.ion_cols] @ self.ion_z + (zbar * sys_n0).sum(1)
        b = (h - oh) * self.lpm + self.per[self.ion_cols] @ self.ion_z + (zbar * sys_per).sum(1)
        if open_c is not None:
            a = a + zbar[:, kc] * open_c * self.v0
            b = b + zbar[:, kc] * open_c * self.lpm
        return _Linear(a, b, h, oh, sys_n0, sys_per, open_c, kc)

    def _ionic_at(self, st, lin: _Linear, nn: np.ndarray, ionic) -> np.ndarray:
        """The ionic strength of the batch after ``nn`` mol at the targets' pH."""
        vol = self.v0 + nn * self.lpm
        tot = (lin.sys_n0 + nn[:, None] * lin.sys_per) / vol[:, None]
        if lin.open_c is not None:
            tot[:, lin.kc] = lin.open_c
        z2bar = (st.fractions * st.charges[None] ** 2).sum(axis=2)
        ions = (self.n0[self.ion_cols][None] + nn[:, None] * self.per[self.ion_cols][None])
        out = (0.5 * (ions @ self.ion_z**2) / vol + 0.5 * (lin.h + lin.oh)
               + 0.5 * (tot * z2bar).sum(axis=1))
        if self.metals is not None:
            out = out + 0.5 * self.metals.ionic_part(self, st, ionic, nn)
        return out

    # ------------------------------------------------------------------ carbonate

    def carbonate_total_mol(self, n) -> np.ndarray:
        """Carbonate added in total (sample + reagent), mol, before any loss."""
        if self.carb is None:
            return np.zeros_like(np.atleast_1d(n), dtype=float)
        k = self.carb
        return self.n0[k] + np.atleast_1d(np.asarray(n, dtype=float)) * self.per[k]

    def open_states(self, levels, starts=None) -> list[State]:
        """States held open at several CO2(aq) levels in one solve: ``levels`` is a list
        of (amounts (mol), CO2(aq) mol/L); one :class:`State` per pair.  ``starts``: the
        solver's starts for each level, or None (then from earlier solves, see
        :meth:`forward`)."""
        ns = [np.atleast_1d(np.asarray(a, dtype=float)) for a, _ in levels]
        co2 = np.concatenate([np.full(a.size, float(c)) for a, (_, c) in zip(ns, levels)])
        starts = [self._open_start(c, a) if (starts is None or starts[k] is None)
                  else starts[k] for k, (a, (_, c)) in enumerate(zip(ns, levels))]
        start = None
        if any(st is not None for st in starts):   # NaN: no start for that part
            start = tuple(np.concatenate([np.full(a.size, np.nan) if st is None else st[k]
                                          for a, st in zip(ns, starts)]) for k in range(2))
        coeffs = [self._open_coefficients(c, a) for a, (_, c) in zip(ns, levels)]
        width = next((v.shape[1] for v in coeffs if v is not None), None)
        v0 = None if width is None else np.concatenate(
            [np.full((a.size, width), np.nan) if v is None else v for a, v in zip(ns, coeffs)])
        whole = self.forward(np.concatenate(ns), co2_molar=co2, start=start, coefficients=v0)
        out, first = [], 0
        for a, (_, c) in zip(ns, levels):
            part = slice(first, first + a.size)
            st = State(a, whole.volume_l[part], whole.result.rows(part))
            self._remember_open(c, a, st.result)
            out.append(st)
            first += a.size
        return out

    def loss_from(self, n, state: State | None, co2_molar: float) -> np.ndarray:
        """:meth:`saturation_loss_mol` at ``n`` from the open ``state`` of the amounts
        that need it (those where the total could exceed ``co2_molar``; see
        :meth:`saturation_need`)."""
        n = np.atleast_1d(np.asarray(n, dtype=float))
        total = self.carbonate_total_mol(n)
        out = np.zeros_like(n)
        need = self.saturation_need(n, co2_molar)
        if state is not None and need.any():
            kept = state.carbonate_molar() * state.volume_l
            out[need] = np.maximum(total[need] - kept, 0.0)
        return out

    def saturation_need(self, n, co2_molar: float) -> np.ndarray:
        """Where CO2(aq) could exceed ``co2_molar`` at all: where total carbonate does."""
        n = np.atleast_1d(np.asarray(n, dtype=float))
        return self.carbonate_total_mol(n) / (self.v0 + n * self.lpm) > co2_molar

    def saturation_loss_mol(self, n, co2_molar: float) -> np.ndarray:
        """CO2 that must leave at ``n`` for CO2(aq) to fall to ``co2_molar`` (0 if below)."""
        n = np.atleast_1d(np.asarray(n, dtype=float))
        need = self.saturation_need(n, co2_molar)
        st = self.forward(n[need], co2_molar=co2_molar) if need.any() else None
        return self.loss_from(n, st, co2_molar)
