"""Water: pKw(T) and density against published tables (source beside each value)."""

from __future__ import annotations

import pytest

from carboy.errors import TemperatureOutOfRange
from carboy.model import water


def test_iapws_r11_07_check_value():
    # IAPWS R11-07 (2007), Table 3 "for computer-program verification":
    # T = 300 K, rho = 1.0 g/cm3 -> pKw = 13.906565 (quoted in shared/reference-data.md, FOUND)
    assert water.pkw_iapws(300.0, 1.0) == pytest.approx(13.906565, abs=5e-7)


# CRC Handbook online table 5-20 "Ionization constant of water" (Bandura–Lvov equation),
# 0.1 MPa up to 75 °C and saturation pressure at 100 °C (FOUND, shared/reference-data.md §2a).
CRC_5_20 = [(0.0, 14.946), (25.0, 13.995), (50.0, 13.264), (75.0, 12.696), (100.0, 12.252)]


@pytest.mark.parametrize("t_c, expected", CRC_5_20)
def test_pkw_against_crc_table_5_20(t_c, expected):
    # ±0.002: the table's rounding plus our density correlation (reference-data §2a note)
    assert water.pkw(t_c) == pytest.approx(expected, abs=0.002)


# CRC p. 8-79 (Marshall & Franck 1981, the older IAPWS formulation), FOUND.  A different
# equation: the two formulations differ by up to 0.015 between 60 and 80 °C (measured here
# against R11-07, which itself matches CRC 5-20 above), so the tolerance is 0.02.
MARSHALL_FRANCK = [(0, 14.938), (10, 14.528), (20, 14.163), (30, 13.836), (40, 13.542),
                   (60, 13.034), (80, 12.613)]


@pytest.mark.parametrize("t_c, expected", MARSHALL_FRANCK)
def test_pkw_against_marshall_franck(t_c, expected):
    assert water.pkw(t_c) == pytest.approx(expected, abs=0.02)


# IAPWS-95 densities at 0.1 MPa, from memory (shared/reference-data.md §2a, DERIVED check)
DENSITY_MEMORY = [(0.0, 0.999843), (25.0, 0.997047), (50.0, 0.988032), (75.0, 0.974860),
                  (100.0, 0.958350)]


@pytest.mark.parametrize("t_c, rho", DENSITY_MEMORY)
def test_kell_density_against_iapws95_memory_values(t_c, rho):
    assert water.density_g_cm3(t_c) == pytest.approx(rho, abs=5e-5)


def test_debye_huckel_a_at_25c():
    # A = 0.509–0.511 at 25 °C (Robinson & Stokes 1970 and others; from memory,
    # shared/reference-data.md §5)
    assert 0.508 <= water.debye_huckel_a(25.0) <= 0.512


def test_debye_huckel_a_rises_with_temperature():
    values = [water.debye_huckel_a(t) for t in (0, 25, 50, 75, 100)]
    assert values == sorted(values)


def test_specific_heat_at_25c():
    # IAPWS-95, 4.1813 J/(g K) at 25 °C, 0.1 MPa (from memory; reference-data §6c)
    assert water.specific_heat_j_gk(25.0) == pytest.approx(4.1813, abs=1e-3)


@pytest.mark.parametrize("t_c", [-0.1, 100.1, float("nan"), float("inf")])
def test_temperature_outside_range_is_an_error(t_c):
    with pytest.raises(TemperatureOutOfRange) as info:
        water.pkw(t_c)
    assert str(t_c) in str(info.value)
