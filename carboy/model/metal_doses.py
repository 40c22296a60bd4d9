"""The dose that reaches a pH when metals take part: the inverse of a titration with metals.

Without metals the volume-weighted charge balance at a fixed pH (and ionic strength) is
linear in the amount n of reagent, ``a + b n = 0`` (see
:meth:`carboy.model.gas.TitrationModel.amount_at_pH`).  The metals add their net charge
times the volume, ``V(n) · M(n)``, where M comes from :func:`carboy.model.metals.state_of`
at the metals' and ligands' totals after adding n: with the hydroxide absent a metal's
charge is a fixed share of its total, with it present the dissolved metal is fixed per
litre, so ``H(n) = a + b n + V M`` is piecewise linear in n (and smooth between, where a
salt or a complex takes a ligand), and monotone for a reagent that moves the pH the right way.  Its
root is bracketed from 0 by doubling and found by the Illinois form of regula falsi
(exact in one step on a straight piece).  The hydroxide the metals take is thereby in
the dose: HCl 0.1 M + ZnCl2 0.05 M to pH 9 takes 0.200 mol NaOH per litre, not 0.100.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from carboy.model import water
from carboy.model.activity import davies_d, debye_huckel_scale
from carboy.model.metal_data import metal_data
from carboy.model.metal_index import modelled_keys
from carboy.model.metals import LigandAtX, state_of

BRACKET_DOUBLINGS = 80
"""Doublings of the trial amount allowed while looking for the far end of the bracket."""
ROOT_STEPS = 100
"""Regula falsi steps allowed inside the bracket."""
ROOT_RTOL = 1e-13
"""The root is settled when the bracket or the step is this small (relative)."""


NEAR_SPAN = 1e-6
"""A root expected close by is bracketed first within this (relative) of itself."""


class _Twice(NamedTuple):
    """The parts of a ``state_at`` result :meth:`MetalDoses.state` reads, each target
    twice over (two trial amounts per target in one evaluation)."""

    system_keys: tuple
    fractions: np.ndarray
    log_h: np.ndarray


@dataclass(frozen=True)
class _Link:
    """A ligand system of the model (its column, its index in ``state_at``, its strong
    steps and every state's charge)."""

    key: str
    col: int
    strong: int
    charges: tuple[int, ...]


@dataclass(frozen=True)
class MetalDoses:
    """The modelled metals of a titration model and the ligand systems they may take."""

    keys: tuple[str, ...]
    cols: np.ndarray
    z: np.ndarray
    links: tuple[_Link, ...]

    @classmethod
    def of(cls, keys: tuple[str, ...], catalog) -> MetalDoses | None:
        """The metals among ``keys`` (catalog ion keys with data), or None."""
        if not any(k in catalog.ions and catalog.ions[k].charge > 0 for k in keys):
            return None
        known = modelled_keys()
        if not any(k in known for k in keys):
            return None
        data = metal_data()
        found = tuple(k for k in keys if k in data.metals)
        if not found:
            return None
        systems = ({s.ligand_system for s in data.ligand_solids if s.cation in found}
                   | {c.ligand_system for c in data.complexes if c.cation in found})
        links = []
        for key in sorted(systems & set(keys)):
            s = catalog.systems[key]
            if s.strong_steps < s.n_steps:
                links.append(_Link(key, keys.index(key), s.strong_steps,
                                   tuple(s.charge_of(j) for j in range(s.n_steps + 1))))
        return cls(found, np.array([keys.index(k) for k in found], dtype=int),
                   np.array([data.metals[k].charge for k in found], dtype=float),
                   tuple(links))

    def state(self, model, st, ionic, n: np.ndarray):
        """The metals' sums after adding ``n`` (mol, one per target) at the targets' pH
        (``st`` from ``state_at``) and ionic strengths; and the volumes (L)."""
        vol = model.v0 + n * model.lpm
        tot = {k: (model.n0[c] + model.per[c] * n) / vol for k, c in zip(self.keys, self.cols)}
        ligands = {}
        for lk in self.links:
            k = st.system_keys.index(lk.key)
            alpha = np.zeros((n.shape[0], len(lk.charges)))
            alpha[:, lk.strong:] = st.fractions[:, k, :len(lk.charges) - lk.strong]
            total = (model.n0[lk.col] + model.per[lk.col] * n) / vol
            ligands[lk.key] = LigandAtX(total, alpha, lk.charges)
        ad = (debye_huckel_scale(model.activity, model.temperature_c)
              * davies_d(np.asarray(ionic, dtype=float)))
        ad = np.broadcast_to(ad, n.shape).astype(float)
        log_kw = np.full(n.shape, -water.pkw(model.temperature_c))
        return state_of(tot, st.log_h, ad, log_kw, ligands, True, metal_data(),
                        detail=False), vol

    def _balance(self, model, st, ionic, a, b, n):
        """H(n) = a + b n + V·(the metals' net charge)."""
        got, vol = self.state(model, st, ionic, n)
        net = got["pos"] + got["ligand_pos"] - got["neg"] - got["ligand_neg"]
        return a + b * n + vol * net

    def _balance_pair(self, model, st, ionic, a, b, n1, n2):
        """H at two amounts per target (``n1``, ``n2``), in one evaluation of the metals
        (whose cost is mostly per call, not per point)."""
        both = _Twice(st.system_keys, np.concatenate([st.fractions, st.fractions]),
                      np.r_[st.log_h, st.log_h])
        h = self._balance(model, both, np.r_[ionic, ionic], np.r_[a, a], np.r_[b, b],
                          np.r_[n1, n2])
        return h[:n1.shape[0]], h[n1.shape[0]:]

    def amounts(self, model, st, ionic, a, b, near=None) -> np.ndarray:
        """The amount (mol) that zeroes H at each target; NaN where none >= 0 does.
        ``near`` (one per target, or None): a root expected close by (the last one of
        an iteration on the ionic strength), bracketed first within ``NEAR_SPAN`` of
        itself; where any target's is not, the search starts from 0 for every one."""
        if near is not None and np.all(np.isfinite(near) & (near > 0)):
            lo, hi = near * (1.0 - NEAR_SPAN), near * (1.0 + NEAR_SPAN)
            h_lo, h_hi = self._balance_pair(model, st, ionic, a, b, lo, hi)
            if np.all(np.sign(h_lo) != np.sign(h_hi)):
                return self._falsi(model, st, ionic, a, b, lo, h_lo, hi, h_hi)
        t = a.shape[0]
        zero = np.zeros(t)
        spectators = ((model.n0[self.cols] * self.z).sum(), (model.per[self.cols] * self.z).sum())
        with np.errstate(divide="ignore", invalid="ignore"):
            guess = -(a + spectators[0]) / (b + spectators[1])
        far = np.where(np.isfinite(guess) & (guess > 0), guess, 1e-9 * max(model.v0, 1e-9))
        h0, h_far = self._balance_pair(model, st, ionic, a, b, zero, far)
        for _ in range(BRACKET_DOUBLINGS):
            same = (np.sign(h_far) == np.sign(h0)) & (h0 != 0)
            if not same.any():
                break
            far = np.where(same, 2.0 * far, far)
            h_far = np.where(same, self._balance(model, st, ionic, a, b, far), h_far)
        found = (np.sign(h_far) != np.sign(h0)) | (h0 == 0)
        return np.where(found, self._falsi(model, st, ionic, a, b, zero, h0, far, h_far),
                        np.nan)

    def _falsi(self, model, st, ionic, a, b, lo, h_lo, hi, h_hi) -> np.ndarray:
        """The root inside [lo, hi] (H of opposite signs there), Illinois regula falsi."""
        lo, hi, h_lo, h_hi = lo.copy(), hi.copy(), h_lo.copy(), h_hi.copy()
        n = np.where(h_lo == 0, lo, hi)
        side = np.zeros(lo.shape)
        for _ in range(ROOT_STEPS):
            with np.errstate(divide="ignore", invalid="ignore"):
                new = hi - h_hi * (hi - lo) / (h_hi - h_lo)
            new = np.where(np.isfinite(new) & (new >= lo) & (new <= hi), new, 0.5 * (lo + hi))
            settled = ((np.abs(new - n) <= ROOT_RTOL * np.maximum(np.abs(new), 1e-300))
                       | (hi - lo <= ROOT_RTOL * np.maximum(hi, 1e-300)) | (h_lo == 0))
            n = np.where(h_lo == 0, lo, new)
            if settled.all():
                break
            h_new = self._balance(model, st, ionic, a, b, n)
            left = np.sign(h_new) == np.sign(h_lo)
            # Illinois: halve the value kept at the end that stays twice running
            h_hi = np.where(left & (side == 1), 0.5 * h_hi, h_hi)
            h_lo = np.where(~left & (side == -1), 0.5 * h_lo, h_lo)
            lo, h_lo = np.where(left, n, lo), np.where(left, h_new, h_lo)
            hi, h_hi = np.where(left, hi, n), np.where(left, h_hi, h_new)
            side = np.where(left, 1, -1)
        return n

    def ionic_part(self, model, st, ionic, n: np.ndarray) -> np.ndarray:
        """Σ c z² of the metals (and less what salts hold) after adding ``n``, mol/L."""
        got, _ = self.state(model, st, ionic, n)
        return got["iz2"] + got["ligand_iz2"]
