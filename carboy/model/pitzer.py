"""Specific-interaction (Pitzer) activity coefficients for concentrated solutions.

The equations are those of Pitzer (1973, 1991) in the form of Harvie, Møller & Weare,
Geochim. Cosmochim. Acta 48, 723 (1984) (HMW): binary β0, β1, β2, Cφ for cation–anion
pairs, θ and ψ for mixtures, the unsymmetrical mixing terms Eθ for like-signed ions of
different charge (``etheta.py``), and λ, ζ for the neutral CO2(aq).  Parameters, with a
source and status for each, are in ``data/pitzer.toml`` (loaded by ``pitzer_data.py``).

Molal scale throughout: molalities in mol per kg of water, ionic strength
I = ½ Σ m z² in mol/kg.  A density/molarity conversion is not done here.

pH convention
-------------
Single-ion activity coefficients are not measurable; at high ionic strength the pH needs a
convention.  This module supports the **MacInnes convention**, as PHREEQC's Pitzer model
applies it by default: every ion's ln γ is shifted by z·Φ, with Φ chosen so that
γ(Cl⁻) equals the mean activity coefficient of KCl in a pure KCl solution of the same
ionic strength.  Mean activity coefficients of neutral combinations (and so every
equilibrium whose reaction is charge-balanced) are unchanged by the shift; only the
single-ion activities, and so the reported pH, depend on it.  ``scale="none"`` gives the
unscaled Pitzer values; :func:`ph_from_activity` converts an H+ activity of either kind
to pH on the MacInnes scale.

Validity and fallback
---------------------
The parameters were fitted to about 6 mol/kg; beyond ``I_MAX_MOLAL`` a point is flagged
not valid.  A species outside the parameter set (phosphate, acetate, fluoride, …) still
counts in I and in the charge sums, but its own coefficient falls back explicitly to the
Davies form (``fallback="davies"``, itself valid only to I ≈ 0.5) or to the Pitzer form
with all its specific parameters zero (``fallback="pitzer-dh"``, what PHREEQC does); the
result names those species in ``fallback`` and in ``warnings`` and flags the points where
they are present.  A neutral species outside the set gets ln γ = 0.  Nothing is frozen:
every coefficient is evaluated at the point's own ionic strength.

Interface for the solver
------------------------
``model = pitzer_model(species, temperature_c)`` once per species list and temperature
(cached), then ``model.evaluate(molality)`` each iteration with the (N, S) molalities of
the current speciation estimate: it returns ln γ of every species, the osmotic
coefficient, the water activity and the ionic strength, all vectorized over the N points.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.catalog_rules import label_charge
from carboy.model.pitzer_data import load_pitzer_data, parameter_arrays
from carboy.model.pitzer_sums import ArraySums, charge_pairs

I_MAX_MOLAL = 6.0
"""Above this ionic strength (mol/kg) the parameter set is outside its fitted range."""
DAVIES_LIMIT_MOLAL = 0.5
"""Above this ionic strength the Davies fallback is itself outside its range."""
MISSING_PAIR_MOLAL = 0.01
"""A pair without parameters is reported when both ions exceed this molality."""
HELD_TEMPERATURE_K = 5.0
"""Parameters without temperature terms are reported when |T - 25 °C| exceeds this."""
WATER_KG_PER_MOL = 0.01801528
"""Molar mass of water, kg/mol (for ln a_w = -φ Σm M_w)."""
FALLBACKS = ("davies", "pitzer-dh")
SCALES = ("macinnes", "none")
PH_SCALE = "MacInnes: gamma(Cl-) = gamma+-(KCl) at the same ionic strength"
_LN10 = math.log(10.0)
_TINY_I = 1e-100
charge_of_label = label_charge
"""Charge from a catalog label's suffix: ``Na+`` 1, ``SO4-2`` -2, ``CO2`` 0 (the
catalog's own reading, :func:`~carboy.model.catalog_rules.label_charge`)."""


def ionic_strength_molal(molality: np.ndarray, charges: Sequence[int]) -> np.ndarray:
    """I = ½ Σ m z² (mol/kg) for (N, S) molalities, shape (N,)."""
    z = np.asarray(charges, dtype=float)
    return 0.5 * (np.asarray(molality, dtype=float) * z * z).sum(axis=-1)


def ph_from_activity(activity_h, phimac=0.0) -> np.ndarray:
    """pH on the MacInnes scale from an H+ activity.

    ``activity_h`` computed with ``scale="macinnes"`` is already on that scale: leave
    ``phimac`` at 0.  One computed with ``scale="none"`` is converted with the result's
    ``phimac``: a_H(MacInnes) = a_H · exp(Φ).
    """
    a = np.asarray(activity_h, dtype=float)
    return -(np.log(a) + np.asarray(phimac, dtype=float)) / _LN10


@dataclass(frozen=True, eq=False, repr=False)
class PitzerResult:
    """Activity of every species at N points (arrays lead with the point axis)."""

    species: tuple[str, ...]
    ln_gamma: np.ndarray
    """(N, S) natural log of the molal activity coefficient, on ``ph_scale``."""
    osmotic: np.ndarray
    """(N,) osmotic coefficient φ."""
    water_activity: np.ndarray
    """(N,) a_w = exp(-φ Σm M_w)."""
    ionic_strength_molal: np.ndarray
    """(N,) I in mol/kg."""
    phimac: np.ndarray
    """(N,) the MacInnes shift Φ = ln γ(Cl⁻) - ln γ±(KCl, m = I) of the unscaled model."""
    valid: np.ndarray
    """(N,) False beyond ``I_MAX_MOLAL`` or where a fallback species is present."""
    fallback: tuple[str, ...]
    """Species whose coefficient uses the fallback form."""
    warnings: tuple[str, ...]
    ph_scale: str

    def index(self, label: str) -> int:
        try:
            return self.species.index(label)
        except ValueError:
            raise InvalidInput("species", label, "is not in this result") from None

    def ln_gamma_of(self, label: str) -> np.ndarray:
        return self.ln_gamma[:, self.index(label)]

    def gamma(self, label: str) -> np.ndarray:
        return np.exp(self.ln_gamma_of(label))

    def mean_ln_gamma(self, cation: str, anion: str) -> np.ndarray:
        """ln γ± of the neutral salt of ``cation`` and ``anion`` (scale-independent)."""
        zc, za = charge_of_label(cation), -charge_of_label(anion)
        if zc <= 0 or za <= 0:
            raise InvalidInput("salt", f"{cation} {anion}", "needs a cation and an anion")
        nu_c, nu_a = za, zc  # stoichiometry of the neutral salt (up to a common factor)
        return (nu_c * self.ln_gamma_of(cation) + nu_a * self.ln_gamma_of(anion)) / (nu_c + nu_a)


class PitzerModel:
    """The Pitzer equations set up for one species list at one temperature."""

    def __init__(self, species: Sequence[str], temperature_c: float = 25.0, *,
                 fallback: str = "davies", scale: str = "macinnes",
                 charges: Mapping[str, int] | None = None):
        if fallback not in FALLBACKS:
            raise InvalidInput("fallback", fallback, f"must be one of {', '.join(FALLBACKS)}")
        if scale not in SCALES:
            raise InvalidInput("scale", scale, f"must be one of {', '.join(SCALES)}")
        species = tuple(species)
        if len(set(species)) != len(species) or not species:
            raise InvalidInput("species", species, "must be a non-empty list without repeats")
        self.temperature_c = water.check_temperature(temperature_c)
        self.species, self.fallback_form, self.scale = species, fallback, scale
        data = load_pitzer_data()
        given = dict(charges or {})
        z = [data.charges.get(s, given.get(s, charge_of_label(s))) for s in species]
        self.fallback = tuple(s for s in species if s not in data.charges)
        # Cl- is carried (at zero molality if absent) for the MacInnes shift.
        ref_c, ref_a = data.reference_electrolyte
        self._all = species + ((ref_a,) if ref_a not in species else ())
        self._z = np.array(z + ([data.charges[ref_a]] if ref_a not in species else []), float)
        self._ref = self._all.index(ref_a)
        tk = self.temperature_c + 273.15
        self._p = p = parameter_arrays(data, self._all, self._z.astype(int), tk)
        self._pairs_c = charge_pairs(self._z[p.cat])
        self._pairs_a = charge_pairs(-self._z[p.ani])
        self._z2, self._az = self._z * self._z, np.abs(self._z)
        self._b = data.b
        self._aphi = water.debye_huckel_a(self.temperature_c) * _LN10 / 3.0
        self._a_davies = water.debye_huckel_a(self.temperature_c)
        kcl = [data.lookup(k, ref_c, ref_a) for k in ("beta0", "beta1", "cphi")]
        self._kcl = tuple(p.at(tk) if p else 0.0 for p in kcl)
        self._fallback_mask = np.array([s in self.fallback for s in self._all])
        zf = self._z[self._fallback_mask]
        self._davies_z2 = -_LN10 * self._a_davies * zf * zf
        self._array = ArraySums(self)
        self._static_warnings = self._describe_static()

    def _describe_static(self) -> list[str]:
        out = []
        if self.fallback:
            form = ("the Davies equation" if self.fallback_form == "davies"
                    else "the Pitzer form with no specific parameters")
            out.append(f"no specific-interaction parameters for {', '.join(self.fallback)}: "
                       f"their activity coefficients use {form} (fallback)")
        if abs(self.temperature_c - 25.0) > HELD_TEMPERATURE_K and self._p.held_at_25:
            out.append(f"at {self.temperature_c:g} °C, {len(self._p.held_at_25)} parameters "
                       "have no published temperature terms and are held at their 25 °C "
                       f"values: {', '.join(self._p.held_at_25)}")
        return out

    # ------------------------------------------------------------------ evaluation

    def _check(self, molality) -> np.ndarray:
        m = np.asarray(molality, dtype=float)
        if m.ndim == 1:
            m = m[None, :]
        if m.ndim != 2 or m.shape[1] != len(self.species):
            raise InvalidInput("molality", m.shape,
                               f"must be (points, {len(self.species)}) for {self.species}")
        if not np.all(np.isfinite(m)) or np.any(m < 0):
            bad = m[~(np.isfinite(m) & (m >= 0))][0]
            raise InvalidInput("molality", float(bad), "must be finite and not negative")
        if len(self._all) > len(self.species):
            m = np.concatenate([m, np.zeros((m.shape[0], 1))], axis=1)
        return m

    def evaluate(self, molality) -> PitzerResult:
        """ln γ, φ, a_w and I at every point of the (N, S) ``molality`` array (mol/kg)."""
        m = self._check(molality)
        ln_gamma, osmotic, aw, ionic, phimac = self._coefficients(m)
        fallback_here = self.fallback_here(m)
        valid = (ionic <= I_MAX_MOLAL) & ~fallback_here
        return PitzerResult(
            species=self.species, ln_gamma=ln_gamma, osmotic=osmotic, water_activity=aw,
            ionic_strength_molal=ionic, phimac=phimac, valid=valid,
            fallback=self.fallback, warnings=self._warnings(m, ionic, fallback_here),
            ph_scale=PH_SCALE if self.scale == "macinnes" else "unscaled Pitzer")

    def fallback_here(self, m: np.ndarray) -> np.ndarray:
        """(N,) where a species whose coefficient takes the fallback form is present in
        the rows of ``m`` (the model's species in mol/kg, first; more columns ignored)."""
        n_user = len(self.species)
        return (m[:, :n_user][:, self._fallback_mask[:n_user]] > 0).any(axis=1)

    def coefficients(self, molality: np.ndarray):
        """(ln γ (N, S), φ, a_w, I) of checked molalities (finite, >= 0, shaped (N, S)):
        :meth:`evaluate`'s numbers without its checks and warnings, for a solver's
        rounds."""
        m = molality
        if len(self._all) > len(self.species):
            m = np.concatenate([m, np.zeros((m.shape[0], 1))], axis=1)
        return self._coefficients(m)[:4]

    def _coefficients(self, m: np.ndarray):
        ionic = 0.5 * np.einsum("ns,s->n", m, self._z2)
        big_z = np.einsum("ns,s->n", m, self._az)
        total = m.sum(axis=1)
        i_safe = np.maximum(ionic, _TINY_I)
        root = np.sqrt(i_safe)
        ln_gamma, osm, f_dh, g2, gp2 = self._array.sums(m, i_safe, root, big_z, self._aphi,
                                                        self._b)
        b0, b1, cphi = self._kcl   # ln γ±(KCl) of pure KCl at m = I (same Debye–Hückel)
        kcl = f_dh + ionic * (2.0 * b0 + b1 * (2.0 * g2 + gp2)) + 1.5 * cphi * ionic**2
        phimac = ln_gamma[:, self._ref] - kcl
        if self.fallback and self.fallback_form == "davies":
            dav = root / (1.0 + root) - 0.3 * ionic
            ln_gamma[:, self._fallback_mask] = np.multiply.outer(dav, self._davies_z2)
        if self.scale == "macinnes":
            ln_gamma += np.multiply.outer(phimac, self._z)
        osmotic = np.where(total > 0, 1.0 + 2.0 * osm / np.where(total > 0, total, 1.0), 1.0)
        aw = np.exp(-osmotic * total * WATER_KG_PER_MOL)
        return ln_gamma[:, :len(self.species)], osmotic, aw, ionic, phimac

    def _warnings(self, m, ionic, fallback_here) -> tuple[str, ...]:
        out = list(self._static_warnings)
        n = len(ionic)
        high = ionic > I_MAX_MOLAL
        if high.any():
            out.append(f"ionic strength above {I_MAX_MOLAL:g} mol/kg at {int(high.sum())} of "
                       f"{n} points (max {ionic.max():.3g}): outside the range the "
                       "specific-interaction parameters were fitted to")
        dav_out = fallback_here & (ionic > DAVIES_LIMIT_MOLAL)
        if self.fallback_form == "davies" and dav_out.any():
            out.append(_davies_beyond(f", at {int(dav_out.sum())} of {n} points"))
        for i, j in self._p.missing:
            both = (m[:, i] > MISSING_PAIR_MOLAL) & (m[:, j] > MISSING_PAIR_MOLAL)
            if both.any():
                out.append(f"no parameters for the pair {self._all[i]} {self._all[j]} "
                           f"(both above {MISSING_PAIR_MOLAL:g} mol/kg at {int(both.sum())} "
                           "points): taken as zero")
        return tuple(out)

    def point_warnings(self, m, ionic, fallback_here=None) -> list[tuple[str, ...]]:
        """Each point's own warnings (the rows of ``m``, all the model's species in
        mol/kg, as :meth:`_warnings` takes them): the static ones and those of its
        conditions that hold at that point, without the batch's counts, so that a
        state's warnings do not depend on the batch it was solved in; the ionic strength
        beyond the fitted range is left to the caller.  One tuple per point.
        ``fallback_here``: :meth:`fallback_here` of ``m``, where the caller has it."""
        m = np.atleast_2d(np.asarray(m, dtype=float))
        if m.shape[1] < len(self._all):
            m = np.concatenate([m, np.zeros((m.shape[0], len(self._all) - m.shape[1]))],
                               axis=1)
        if fallback_here is None:
            fallback_here = self.fallback_here(m)
        flags = [np.asarray(fallback_here) & (np.asarray(ionic) > DAVIES_LIMIT_MOLAL)
                 if self.fallback_form == "davies" else np.zeros(m.shape[0], dtype=bool)]
        texts = [_davies_beyond()]
        for i, j in self._p.missing:
            flags.append((m[:, i] > MISSING_PAIR_MOLAL) & (m[:, j] > MISSING_PAIR_MOLAL))
            texts.append(f"no parameters for the pair {self._all[i]} {self._all[j]} (both "
                         f"above {MISSING_PAIR_MOLAL:g} mol/kg): taken as zero")
        static = tuple(self._static_warnings)
        rows = np.stack(flags, axis=1)
        kinds, back = np.unique(rows, axis=0, return_inverse=True)
        each = [static + tuple(t for t, f in zip(texts, k.tolist()) if f) for k in kinds]
        return [each[b] for b in np.ravel(back).tolist()]


def _davies_beyond(where: str = "") -> str:
    """The warning that the Davies fallback is used beyond its own range (``where``: at
    how many of a batch's points)."""
    return (f"the Davies fallback is used above {DAVIES_LIMIT_MOLAL:g} mol/kg, outside its "
            f"own range{where}")


@lru_cache(maxsize=64)
def _cached(species, temperature_c, fallback, scale, charges) -> PitzerModel:
    return PitzerModel(species, temperature_c, fallback=fallback, scale=scale,
                       charges=dict(charges))


def pitzer_model(species: Sequence[str], temperature_c: float = 25.0, *,
                 fallback: str = "davies", scale: str = "macinnes",
                 charges: Mapping[str, int] | None = None) -> PitzerModel:
    """The model for ``species`` at ``temperature_c`` (°C), built once and cached."""
    frozen = tuple(sorted((charges or {}).items()))
    return _cached(tuple(species), float(temperature_c), fallback, scale, frozen)


def activity_coefficients(molality, species: Sequence[str], temperature_c: float = 25.0,
                          **options) -> PitzerResult:
    """One-call form: ``pitzer_model(species, temperature_c, **options).evaluate(molality)``."""
    return pitzer_model(species, temperature_c, **options).evaluate(molality)
