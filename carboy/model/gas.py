"""CO2 from carbonate: solubility, gas volume, and the charge balance of a titration
with or without dissolved CO2 held at equilibrium with a gas phase.

The speciation solver treats every solution as closed.  When CO2 can leave, the
dissolved CO2 is fixed instead (``[CO2(aq)] = K_H·p_CO2``) and total carbonate becomes
an unknown.  :class:`TitrationModel` solves that open system exactly: with [CO2(aq)]
fixed, [HCO3-] and [CO3 2-] follow from [H+] alone, so the charge balance is again one
monotone equation in log10[H+] (its derivative stays positive), solved by Newton steps
inside a bracket, with the Davies ionic strength iterated to self-consistency exactly as
the speciation solver does.

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
from carboy.model.mixture import Mixture
from carboy.model.speciation import pka_at
from carboy.model.thermo import planning_constants

LN10 = math.log(10.0)
R_J_MOL_K = 8.31446261815324
"""Molar gas constant, J/(mol K): exact since the 2019 SI (N_A·k)."""
CARBONATE = "carbonate"
X_TOL = 1e-13
MAX_ITER = 200
I_RTOL = 1e-11
MAX_I_ITER = 40


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


@dataclass(frozen=True)
class State:
    """Solved states of N points of a titration.  Concentrations mol/L, amounts mol."""

    n_reagent: np.ndarray
    volume_l: np.ndarray
    x: np.ndarray                  # log10 [H+]
    pH: np.ndarray
    ionic_strength_molar: np.ndarray
    species_molar: np.ndarray      # (N, K, M) concentration of each state of each system
    oh_molar: np.ndarray
    charge_residual_molar: np.ndarray

    def carbonate_molar(self, k: int) -> np.ndarray:
        return self.species_molar[:, k, :].sum(axis=1)


class TitrationModel:
    """The sample plus ``n`` mol of a reagent of given composition, at one temperature.

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
        keys = tuple(sorted(set(sample.totals) | {k for k, v in composition.items() if v}))
        self.keys = keys
        self.v0 = float(sample.volume_l)
        self.lpm = float(l_per_mol)
        self.temperature_c = sample.temperature_c
        t = sample.temperature_c
        n0 = np.array([sample.totals.get(k, 0.0) * self.v0 for k in keys])
        per = np.array([float(composition.get(k, 0.0)) for k in keys])
        ion_cols, ion_z, sys_cols, systems, pkas = [], [], [], [], []
        for col, key in enumerate(keys):
            if key in catalog.ions:
                ion_cols.append(col)
                ion_z.append(catalog.ions[key].charge)
                continue
            s = catalog.systems[key]
            if s.strong_steps == s.n_steps:
                ion_cols.append(col)
                ion_z.append(s.bottom_charge)
                continue
            sys_cols.append(col)
            systems.append(s)
            pkas.append(pka_at(s, t)[s.strong_steps:])
        self.systems = tuple(systems)
        self.sys_keys = tuple(s.key for s in systems)
        k = len(systems)
        m = max([s.n_steps - s.strong_steps + 1 for s in systems], default=1)
        self.logk = np.zeros((k, max(m - 1, 0)))
        self.zacid = np.zeros((k, max(m - 1, 0)))
        self.z = np.zeros((k, m))
        self.valid = np.zeros((k, m), dtype=bool)
        for i, s in enumerate(systems):
            n_st = s.n_steps - s.strong_steps + 1
            charges = [s.charge_of(j) for j in range(s.strong_steps, s.n_steps + 1)]
            self.logk[i, : n_st - 1] = -np.asarray(pkas[i])
            self.zacid[i, : n_st - 1] = charges[:-1]
            self.z[i, :n_st] = charges
            self.valid[i, :n_st] = True
        self.step_valid = self.valid[:, 1:]
        self.sys_n0 = n0[sys_cols]
        self.sys_per = per[sys_cols]
        iz = np.asarray(ion_z, dtype=float)
        self.q0 = float(n0[ion_cols] @ iz) if ion_cols else 0.0
        self.q_per = float(per[ion_cols] @ iz) if ion_cols else 0.0
        self.i0 = 0.5 * float(n0[ion_cols] @ iz**2) if ion_cols else 0.0
        self.i_per = 0.5 * float(per[ion_cols] @ iz**2) if ion_cols else 0.0
        self.carb = self.sys_keys.index(CARBONATE) if CARBONATE in self.sys_keys else None
        self.pkw = water.pkw(t)
        self.a_dh = water.debye_huckel_a(t) if activity == "davies" else 0.0
        self.activity = activity

    # ------------------------------------------------------------------ internals

    def _conditional(self, ionic):
        sq = np.sqrt(ionic)
        ad = self.a_dh * (sq / (1.0 + sq) - 0.3 * ionic)
        log_kw = -self.pkw + 2.0 * ad
        logk_c = self.logk[None] - 2.0 * ad[:, None, None] * (self.zacid[None] - 1.0)
        logk_c = np.where(self.step_valid[None], logk_c, 0.0)
        n = ionic.shape[0]
        logbeta = np.concatenate([np.zeros((n, self.z.shape[0], 1)),
                                  np.cumsum(logk_c, axis=2)], axis=2)
        return ad, log_kw, logbeta

    def _alpha(self, x, logbeta):
        j = np.arange(self.z.shape[1], dtype=float)
        t = logbeta - j[None, None, :] * x[:, None, None]
        t = np.where(self.valid[None], t, -np.inf)
        t = t - t.max(axis=2, keepdims=True)
        e = np.exp(t * LN10)
        return e / e.sum(axis=2, keepdims=True)

    def _capped(self, x, logbeta, co2):
        """Carbonate species concentrations with [CO2(aq)] = co2: (N, M)."""
        k = self.carb
        j = np.arange(self.z.shape[1], dtype=float)
        c = co2[:, None] * np.exp((logbeta[:, k, :] - j[None, :] * x[:, None]) * LN10)
        return np.where(self.valid[k][None], c, 0.0)

    def _amounts(self, n, carbonate_mol):
        sys_n = self.sys_n0[None, :] + n[:, None] * self.sys_per[None, :]
        if carbonate_mol is not None and self.carb is not None:
            sys_n[:, self.carb] = carbonate_mol
        return sys_n

    # ------------------------------------------------------------------ forward

    def forward(self, n_reagent, *, carbonate_mol=None, co2_molar=None) -> State:
        """States after adding each amount ``n_reagent`` (mol).

        ``carbonate_mol`` overrides the total carbonate left (mol, per point) and
        ``co2_molar`` instead holds CO2(aq) fixed (open system); neither: closed.
        """
        n = np.atleast_1d(np.asarray(n_reagent, dtype=float))
        npts = n.shape[0]
        vol = self.v0 + n * self.lpm
        sys_c = self._amounts(n, None if co2_molar is not None else carbonate_mol) / vol[:, None]
        cap = None
        if co2_molar is not None:
            if self.carb is None:
                raise InvalidInput("CO2 equilibrium", co2_molar, "the solution holds no carbonate")
            sys_c[:, self.carb] = 0.0
            cap = np.broadcast_to(np.asarray(co2_molar, dtype=float), (npts,)).copy()
        qion = (self.q0 + n * self.q_per) / vol
        iion = (self.i0 + n * self.i_per) / vol
        z2 = self.z**2
        ionic = iion.copy()
        x = np.full(npts, -7.0)
        for _ in range(MAX_I_ITER):
            ad, log_kw, logbeta = self._conditional(ionic)
            x = self._root(x, logbeta, log_kw, sys_c, qion, cap)
            alpha = self._alpha(x, logbeta)
            conc = sys_c[:, :, None] * alpha
            if cap is not None:
                conc[:, self.carb, :] = self._capped(x, logbeta, cap)
            h = np.exp(x * LN10)
            oh = np.exp((log_kw - x) * LN10)
            new_i = iion + 0.5 * (h + oh) + 0.5 * (conc * z2[None]).sum(axis=(1, 2))
            done = np.abs(new_i - ionic) <= I_RTOL * np.maximum(new_i, 1e-12)
            ionic = new_i
            if self.a_dh == 0.0 or done.all():
                break
        ad, log_kw, logbeta = self._conditional(ionic)
        alpha = self._alpha(x, logbeta)
        conc = sys_c[:, :, None] * alpha
        if cap is not None:
            conc[:, self.carb, :] = self._capped(x, logbeta, cap)
        h = np.exp(x * LN10)
        oh = np.exp((log_kw - x) * LN10)
        resid = h - oh + qion + (conc * self.z[None]).sum(axis=(1, 2))
        return State(n, vol, x, -x + ad, ionic, conc, oh, resid)

    def _root(self, x, logbeta, log_kw, sys_c, qion, cap):
        lo = np.full_like(x, -18.0)
        hi = np.full_like(x, 3.0)
        x = np.clip(x, lo, hi)
        j = np.arange(self.z.shape[1], dtype=float)
        for _ in range(MAX_ITER):
            alpha = self._alpha(x, logbeta)
            zbar = (alpha * self.z[None]).sum(axis=2)
            jbar = (alpha * j).sum(axis=2)
            var = np.maximum((alpha * j * j).sum(axis=2) - jbar * jbar, 0.0)
            h = np.exp(x * LN10)
            oh = np.exp((log_kw - x) * LN10)
            f = h - oh + qion + (sys_c * zbar).sum(axis=1)
            fp = LN10 * (h + oh + (sys_c * var).sum(axis=1))
            if cap is not None:
                c = self._capped(x, logbeta, cap)
                zc = self.z[self.carb][None, :]
                f = f + (c * zc).sum(axis=1)
                fp = fp - LN10 * (c * zc * j[None, :]).sum(axis=1)
            lo = np.where(f < 0, x, lo)
            hi = np.where(f > 0, x, hi)
            xn = x - f / fp
            out = ~((xn > lo) & (xn < hi))
            xn = np.where(out, 0.5 * (lo + hi), xn)
            done = (np.abs(xn - x) < X_TOL) | (f == 0) | ((hi - lo) < X_TOL)
            x = np.where(f == 0, x, xn)
            if done.all():
                break
        return x

    # ------------------------------------------------------------------ inverse

    def amount_at_pH(self, ph, *, carbonate_loss_mol=0.0, co2_molar=None,  # noqa: N802
                     ionic_guess: float | None = None) -> np.ndarray:
        """Reagent amount (mol) at which the batch reaches each pH in ``ph``.

        Exact: at fixed pH and ionic strength the volume-weighted charge balance is
        ``a + b n = 0``; the ionic strength is then iterated to self-consistency.
        ``carbonate_loss_mol`` is CO2 already lost (closed otherwise); ``co2_molar``
        holds CO2(aq) fixed instead.  NaN where no non-negative amount reaches the pH.
        """
        ph = np.atleast_1d(np.asarray(ph, dtype=float))
        t = ph.shape[0]
        loss = np.broadcast_to(np.asarray(carbonate_loss_mol, dtype=float), (t,))
        z2 = self.z**2
        ionic = np.full(t, ionic_guess if ionic_guess is not None else self.i0 / self.v0)
        cap = None if co2_molar is None else np.full(t, float(co2_molar))
        n = np.full(t, np.nan)
        for _ in range(MAX_I_ITER):
            ad, log_kw, logbeta = self._conditional(ionic)
            x = -ph + ad
            alpha = self._alpha(x, logbeta)
            zbar = (alpha * self.z[None]).sum(axis=2)
            h = np.exp(x * LN10)
            oh = np.exp((log_kw - x) * LN10)
            free = h - oh
            n0, per = self.sys_n0.copy(), self.sys_per.copy()
            a = free * self.v0 + self.q0 + zbar @ n0 if zbar.size else free * self.v0 + self.q0
            b = free * self.lpm + self.q_per + (zbar @ per if zbar.size else 0.0)
            if self.carb is not None:
                k = self.carb
                if cap is not None:
                    c = self._capped(x, logbeta, cap)
                    zc = (c * self.z[k][None, :]).sum(axis=1)
                    a = a - zbar[:, k] * n0[k] + zc * self.v0
                    b = b - zbar[:, k] * per[k] + zc * self.lpm
                else:
                    a = a - zbar[:, k] * loss
            with np.errstate(divide="ignore", invalid="ignore"):
                n = -a / b
            ok = np.isfinite(n) & (n >= 0)
            nn = np.where(ok, n, 0.0)
            vol = self.v0 + nn * self.lpm
            sys_amt = self._amounts(nn, None)
            if self.carb is not None and cap is None:
                sys_amt[:, self.carb] -= loss
            conc = sys_amt[:, :, None] / vol[:, None, None] * alpha
            if cap is not None:
                conc[:, self.carb, :] = self._capped(x, logbeta, cap)
            new_i = ((self.i0 + nn * self.i_per) / vol + 0.5 * (h + oh)
                     + 0.5 * (conc * z2[None]).sum(axis=(1, 2)))
            new_i = np.where(ok, new_i, ionic)
            done = np.abs(new_i - ionic) <= I_RTOL * np.maximum(new_i, 1e-12)
            ionic = new_i
            if self.a_dh == 0.0 or done.all():
                break
        return np.where(np.isfinite(n) & (n >= 0), n, np.nan)

    # ------------------------------------------------------------------ carbonate

    def carbonate_total_mol(self, n) -> np.ndarray:
        """Carbonate added in total (sample + reagent), mol, before any loss."""
        if self.carb is None:
            return np.zeros_like(np.atleast_1d(n), dtype=float)
        k = self.carb
        return self.sys_n0[k] + np.atleast_1d(n) * self.sys_per[k]

    def saturation_loss_mol(self, n, co2_molar: float) -> np.ndarray:
        """CO2 that must leave at ``n`` for CO2(aq) to fall to ``co2_molar`` (0 if below)."""
        n = np.atleast_1d(np.asarray(n, dtype=float))
        total = self.carbonate_total_mol(n)
        out = np.zeros_like(n)
        # CO2(aq) can exceed saturation only where total carbonate does
        need = total / (self.v0 + n * self.lpm) > co2_molar
        if need.any():
            st = self.forward(n[need], co2_molar=co2_molar)
            kept = st.carbonate_molar(self.carb) * st.volume_l
            out[need] = np.maximum(total[need] - kept, 0.0)
        return out
