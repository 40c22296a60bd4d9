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
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.etheta import etheta
from carboy.model.etheta import rows_times as _mm
from carboy.model.pitzer_data import load_pitzer_data, parameter_arrays

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
_CHARGE_SUFFIX = re.compile(r"([+-])(\d*)$")


def charge_of_label(label: str) -> int:
    """Charge from a catalog label's suffix: ``Na+`` 1, ``SO4-2`` -2, ``CO2`` 0."""
    m = _CHARGE_SUFFIX.search(label)
    if not m:
        return 0
    return (1 if m.group(1) == "+" else -1) * int(m.group(2) or 1)


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


def _g(x: np.ndarray) -> np.ndarray:
    """g(x) = 2[1 - (1 + x) e^-x] / x², with its series near 0."""
    xs = np.where(x < 1e-3, 1.0, x)
    direct = 2.0 * (1.0 - (1.0 + xs) * np.exp(-xs)) / (xs * xs)
    return np.where(x < 1e-3, 1.0 - 2.0 * x / 3.0 + x * x / 4.0, direct)


def _gp(x: np.ndarray) -> np.ndarray:
    """g'(x) = -2[1 - (1 + x + x²/2) e^-x] / x², with its series near 0."""
    xs = np.where(x < 1e-3, 1.0, x)
    direct = -2.0 * (1.0 - (1.0 + xs + 0.5 * xs * xs) * np.exp(-xs)) / (xs * xs)
    return np.where(x < 1e-3, -(x / 3.0 - x * x / 4.0), direct)


def _binary_terms(p) -> list[tuple[float | None, np.ndarray]]:
    """β0 and the β1, β2 matrices grouped by α: [(α or None for β0, matrix (nc, na))]."""
    terms: list[tuple[float | None, np.ndarray]] = [(None, p.b0)]
    for beta, alpha in ((p.b1, p.alpha1), (p.b2, p.alpha2)):
        for a in np.unique(alpha):
            terms.append((float(a), np.where(alpha == a, beta, 0.0)))
    return [(a, mat) for a, mat in terms if np.any(mat)]


def _charge_pairs(zs: np.ndarray) -> list[tuple[int, int, np.ndarray]]:
    """Charge classes (a < b) among like-signed ions, with their symmetric pair masks."""
    out = []
    for a in np.unique(zs):
        for b in np.unique(zs):
            if a < b:
                sel = np.outer(zs == a, zs == b)
                out.append((int(a), int(b), (sel | sel.T).astype(float)))
    return out


@dataclass(frozen=True)
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
        self._terms = _binary_terms(p)
        self._pairs_c = _charge_pairs(self._z[p.cat])
        self._pairs_a = _charge_pairs(-self._z[p.ani])
        nc, na = len(p.cat), len(p.ani)
        self._has_psi = bool(p.psi_c.any() or p.psi_a.any())
        self._psi_c_ca = p.psi_c.reshape(nc, nc * na).T                    # m_c' m_a -> cation
        self._psi_a_ca = p.psi_a.transpose(0, 2, 1).reshape(na, nc * na).T  # m_c m_a' -> anion
        self._psi_a_aa = p.psi_a.reshape(na * na, nc)                       # m_a m_a' -> cation
        self._psi_c_cc = p.psi_c.reshape(nc * nc, na)                       # m_c m_c' -> anion
        self._b = data.b
        self._aphi = water.debye_huckel_a(self.temperature_c) * _LN10 / 3.0
        self._a_davies = water.debye_huckel_a(self.temperature_c)
        kcl = [data.lookup(k, ref_c, ref_a) for k in ("beta0", "beta1", "cphi")]
        self._kcl = tuple(p.at(tk) if p else 0.0 for p in kcl)
        self._fallback_mask = np.array([s in self.fallback for s in self._all])
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
        n_user = len(self.species)
        present = m[:, :n_user][:, self._fallback_mask[:n_user]] > 0
        fallback_here = present.any(axis=1)
        valid = (ionic <= I_MAX_MOLAL) & ~fallback_here
        return PitzerResult(
            species=self.species, ln_gamma=ln_gamma, osmotic=osmotic, water_activity=aw,
            ionic_strength_molal=ionic, phimac=phimac, valid=valid,
            fallback=self.fallback, warnings=self._warnings(m, ionic, fallback_here),
            ph_scale=PH_SCALE if self.scale == "macinnes" else "unscaled Pitzer")

    def coefficients(self, molality: np.ndarray):
        """(ln γ (N, S), φ, a_w, I) of checked molalities (finite, >= 0, shaped (N, S)):
        :meth:`evaluate`'s numbers without its checks and warnings, for a solver's
        rounds."""
        m = molality
        if len(self._all) > len(self.species):
            m = np.concatenate([m, np.zeros((m.shape[0], 1))], axis=1)
        return self._coefficients(m)[:4]

    def _coefficients(self, m: np.ndarray):
        p, z = self._p, self._z
        ionic = 0.5 * (m * z * z).sum(axis=1)
        big_z = (m * np.abs(z)).sum(axis=1)
        total = m.sum(axis=1)
        i_safe = np.maximum(ionic, _TINY_I)
        root = np.sqrt(i_safe)
        mc, ma, mn = m[:, p.cat], m[:, p.ani], m[:, p.neu]
        ln_g, osm, f_dh = self._sums(mc, ma, mn, i_safe, root, big_z)
        ln_gamma = np.zeros_like(m)
        ln_gamma[:, p.cat], ln_gamma[:, p.ani], ln_gamma[:, p.neu] = ln_g
        phimac = ln_gamma[:, self._ref] - self._ln_gamma_kcl(f_dh, ionic, root)
        if self.fallback and self.fallback_form == "davies":
            zf = z[self._fallback_mask]
            dav = root / (1.0 + root) - 0.3 * ionic
            ln_gamma[:, self._fallback_mask] = -_LN10 * self._a_davies * np.outer(dav, zf * zf)
        if self.scale == "macinnes":
            ln_gamma = ln_gamma + np.outer(phimac, z)
        osmotic = np.where(total > 0, 1.0 + 2.0 * osm / np.where(total > 0, total, 1.0), 1.0)
        aw = np.exp(-osmotic * total * WATER_KG_PER_MOL)
        return ln_gamma[:, :len(self.species)], osmotic, aw, ionic, phimac

    def _ln_gamma_kcl(self, f_dh, ionic, root) -> np.ndarray:
        """ln γ±(KCl) of a pure KCl solution of molality ``ionic`` (same Debye–Hückel term)."""
        b0, b1, cphi = self._kcl
        x = 2.0 * root
        return f_dh + ionic * (2.0 * b0 + b1 * (2.0 * _g(x) + _gp(x))) + 1.5 * cphi * ionic**2

    def _like(self, mx, theta, pairs, ionic, eth):
        """Like-signed mixing: Σ_j m_j 2Φ_ij (N, k), Σ_i<j m m Φ'_ij and Σ_i<j m m Φ^φ_ij."""
        t = _mm(mx, theta)
        lin, fprime, osm = 2.0 * t, np.zeros_like(ionic), 0.5 * (mx * t).sum(axis=1)
        for za, zb, mask in pairs:
            e, ep = eth[(za, zb)]
            u = _mm(mx, mask)
            half = 0.5 * (mx * u).sum(axis=1)
            lin = lin + 2.0 * e[:, None] * u
            fprime = fprime + ep * half
            osm = osm + (e + ionic * ep) * half
        return lin, fprime, osm

    def _binary(self, mc, ma, ionic, root, big_z):
        """Cation–anion sums: Σ_a m_a(2B + ZC) per cation and per anion, Σ m m B', the
        osmotic Σ m m (B^φ + ZC) and Σ m m C."""
        acc_c, acc_a = np.zeros_like(mc), np.zeros_like(ma)
        fprime, osm = np.zeros_like(ionic), np.zeros_like(ionic)
        for alpha, mat in self._terms:
            q = _mm(ma, mat.T)
            r = _mm(mc, mat)
            both = (mc * q).sum(axis=1)
            if alpha is None:
                f_gamma, f_phi = 1.0, 1.0
            else:
                x = alpha * root
                f_gamma, f_phi = _g(x), np.exp(-x)
                fprime = fprime + _gp(x) / ionic * both
                f_gamma = f_gamma[:, None]
            acc_c = acc_c + 2.0 * f_gamma * q
            acc_a = acc_a + 2.0 * f_gamma * r
            osm = osm + f_phi * both
        qc = _mm(ma, self._p.c.T)
        rc = _mm(mc, self._p.c)
        csum = (mc * qc).sum(axis=1)
        acc_c = acc_c + big_z[:, None] * qc
        acc_a = acc_a + big_z[:, None] * rc
        return acc_c, acc_a, fprime, osm + big_z * csum, csum

    def _sums(self, mc, ma, mn, ionic, root, big_z):
        """The HMW sums: ln γ of cations, anions, neutrals; the osmotic sum; f^γ."""
        p, b, aphi = self._p, self._b, self._aphi
        f_dh = -aphi * (root / (1.0 + b * root) + 2.0 / b * np.log1p(b * root))
        osm = -aphi * ionic * root / (1.0 + b * root)
        acc_c, acc_a, bprime, osm_b, csum = self._binary(mc, ma, ionic, root, big_z)
        eth = etheta([(a, b) for a, b, _ in self._pairs_c + self._pairs_a], ionic, aphi)
        mix_c, fp_c, osm_c = self._like(mc, p.theta_c, self._pairs_c, ionic, eth)
        mix_a, fp_a, osm_a = self._like(ma, p.theta_a, self._pairs_a, ionic, eth)
        big_f = f_dh + bprime + fp_c + fp_a
        zc, za = self._z[p.cat], -self._z[p.ani]
        ln_c = np.outer(big_f, zc * zc) + acc_c + mix_c + np.outer(csum, zc)
        ln_a = np.outer(big_f, za * za) + acc_a + mix_a + np.outer(csum, za)
        osm = osm + osm_b + osm_c + osm_a
        n = len(ionic)
        if self._has_psi:
            pca = (mc[:, :, None] * ma[:, None, :]).reshape(n, -1)
            psi_c, psi_a = _mm(pca, self._psi_c_ca), _mm(pca, self._psi_a_ca)
            paa = (ma[:, :, None] * ma[:, None, :]).reshape(n, -1)
            pcc = (mc[:, :, None] * mc[:, None, :]).reshape(n, -1)
            ln_c = ln_c + psi_c + 0.5 * (_mm(paa, self._psi_a_aa))
            ln_a = ln_a + psi_a + 0.5 * (_mm(pcc, self._psi_c_cc))
            osm = osm + 0.5 * (mc * psi_c).sum(axis=1) + 0.5 * (ma * psi_a).sum(axis=1)
        ln_n = np.zeros_like(mn)
        if mn.shape[1]:
            lam_c, lam_a, lam_n = _mm(mn, p.lam_c), _mm(mn, p.lam_a), _mm(mn, p.lam_n)
            zeta_c = np.einsum("nk,na,kca->nc", mn, ma, p.zeta)
            zeta_a = np.einsum("nk,nc,kca->na", mn, mc, p.zeta)
            zeta_n = np.einsum("nc,na,kca->nk", mc, ma, p.zeta)
            ln_c = ln_c + 2.0 * lam_c + zeta_c
            ln_a = ln_a + 2.0 * lam_a + zeta_a
            ln_n = 2.0 * (_mm(mc, p.lam_c.T) + _mm(ma, p.lam_a.T) + lam_n) + zeta_n
            osm = (osm + (mc * lam_c).sum(axis=1) + (ma * lam_a).sum(axis=1)
                   + 0.5 * (mn * lam_n).sum(axis=1) + (mn * zeta_n).sum(axis=1))
        return (ln_c, ln_a, ln_n), osm, f_dh

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
            out.append(f"the Davies fallback is used above {DAVIES_LIMIT_MOLAL:g} mol/kg, "
                       f"outside its own range, at {int(dav_out.sum())} of {n} points")
        for i, j in self._p.missing:
            both = (m[:, i] > MISSING_PAIR_MOLAL) & (m[:, j] > MISSING_PAIR_MOLAL)
            if both.any():
                out.append(f"no parameters for the pair {self._all[i]} {self._all[j]} "
                           f"(both above {MISSING_PAIR_MOLAL:g} mol/kg at {int(both.sum())} "
                           "points): taken as zero")
        return tuple(out)


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
