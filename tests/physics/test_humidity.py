"""Tests for tstrate.physics.humidity (saturation pressure, abundance conversions, dimer)."""

from __future__ import annotations

import logging

import numpy as np
import pytest
from scipy import constants as sc

from tstrate.errors import InputError
from tstrate.physics import humidity as hum
from tstrate.physics.humidity import (
    Abundance,
    dimer_number_density_m3,
    mixing_ratio_from_number_density,
    number_density_from_mixing_ratio,
    number_density_from_partial_pressure,
    number_density_from_relative_humidity,
    partial_pressure_from_number_density,
    per_cm3_to_per_m3,
    per_m3_to_per_cm3,
    relative_humidity_from_number_density,
    saturation_pressure_ice_Pa,
    saturation_pressure_liquid_Pa,
    saturation_pressure_Pa,
)

# Murphy and Koop (2005), Q. J. R. Meteorol. Soc. 131, 1539, Table C1 "Values recommended for
# checking computer codes" (p in Pa). The numbers were read from two independent public code
# repositories that quote that table (found with the search tool); they agree with each other.
# The table gives 4-5 significant figures, so rounding alone allows a relative error up to
# 0.5/6106 = 8.2e-5 (the worst case, 6.106e-6 Pa): tolerance 1e-4.
MK05_TABLE_C1_RTOL = 1e-4
MK05_ICE = [(150.0, 6.106e-6), (180.0, 0.0053975), (210.0, 0.70202), (240.0, 27.272),
            (273.16, 611.657)]
MK05_LIQUID = [(150.0, 1.562e-5), (180.0, 0.011239), (210.0, 1.2335), (240.0, 37.667),
               (273.16, 611.657), (300.0, 3536.8)]


@pytest.mark.parametrize("T, p_ref", MK05_ICE, ids=[f"MK05-TableC1-ice-{t:g}K" for t, _ in MK05_ICE])
def test_ice_matches_murphy_koop_table_c1(T, p_ref):
    assert saturation_pressure_ice_Pa(T) == pytest.approx(p_ref, rel=MK05_TABLE_C1_RTOL)
    assert saturation_pressure_Pa(T, "ice") == pytest.approx(p_ref, rel=MK05_TABLE_C1_RTOL)


@pytest.mark.parametrize("T, p_ref", MK05_LIQUID,
                         ids=[f"MK05-TableC1-liquid-{t:g}K" for t, _ in MK05_LIQUID])
def test_liquid_matches_murphy_koop_table_c1(T, p_ref):
    assert saturation_pressure_liquid_Pa(T) == pytest.approx(p_ref, rel=MK05_TABLE_C1_RTOL)
    assert saturation_pressure_Pa(T) == pytest.approx(p_ref, rel=MK05_TABLE_C1_RTOL)


def test_triple_point_iapws():
    # Triple point of water 273.16 K, 611.657 Pa (Guildner, Johnson and Jones 1976; adopted by
    # IAPWS). Both parametrisations are built to pass through it; Murphy and Koop quote 611.657
    # for both at 273.16 K, so 5e-6 relative (the last printed digit, 0.001 Pa) is the tolerance.
    assert saturation_pressure_ice_Pa(273.16) == pytest.approx(611.657, rel=5e-6)
    assert saturation_pressure_liquid_Pa(273.16) == pytest.approx(611.657, rel=5e-6)


def test_supercooled_liquid_above_ice():
    # Below the triple point liquid water is metastable, so its vapour pressure exceeds ice's.
    T = np.linspace(130.0, 270.0, 15)
    assert np.all(saturation_pressure_liquid_Pa(T) > saturation_pressure_ice_Pa(T))


def test_vectorised_matches_scalar():
    T = np.array([150.0, 200.0, 250.0])
    p = saturation_pressure_ice_Pa(T)
    assert isinstance(p, np.ndarray) and p.shape == (3,)
    assert np.allclose(p, [saturation_pressure_ice_Pa(float(t)) for t in T], rtol=1e-14)
    assert isinstance(saturation_pressure_ice_Pa(200.0), float)


@pytest.mark.parametrize("func, T", [(saturation_pressure_ice_Pa, 100.0),
                                     (saturation_pressure_liquid_Pa, 120.0),
                                     (saturation_pressure_liquid_Pa, 340.0)])
def test_warns_outside_validity(func, T, caplog):
    with caplog.at_level(logging.WARNING, logger=hum.__name__):
        value = func(T)
    assert value > 0.0
    assert "outside the validity range" in caplog.text


def test_no_warning_inside_validity(caplog):
    with caplog.at_level(logging.WARNING, logger=hum.__name__):
        saturation_pressure_ice_Pa(200.0)
        saturation_pressure_liquid_Pa(200.0)
    assert caplog.text == ""


@pytest.mark.parametrize("T", [0.0, -10.0, np.nan, [200.0, -1.0]])
def test_bad_temperature_raises(T):
    with pytest.raises(InputError, match="temperatures must be"):
        saturation_pressure_ice_Pa(T)


def test_unknown_phase_raises():
    with pytest.raises(InputError, match="unknown phase 'water'"):
        saturation_pressure_Pa(250.0, "water")


# ---------------------------------------------------------------- conversions

def test_partial_pressure_gives_loschmidt_constant():
    # CODATA Loschmidt constant n0 at 273.15 K and 101.325 kPa (scipy.constants), an ideal-gas
    # number density computed outside this project; same CODATA set, so 1e-9 relative.
    n0 = sc.physical_constants["Loschmidt constant (273.15 K, 101.325 kPa)"][0]
    assert number_density_from_partial_pressure(101325.0, 273.15) == pytest.approx(n0, rel=1e-9)
    assert number_density_from_mixing_ratio(1.0, 101325.0, 273.15) == pytest.approx(n0, rel=1e-9)
    assert Abundance.from_partial_pressure_Pa(101325.0).number_density_cm3(273.15) == \
        pytest.approx(n0 * 1e-6, rel=1e-9)


def test_cm3_helpers():
    assert per_cm3_to_per_m3(2.5e19) == pytest.approx(2.5e25, rel=1e-15)
    assert per_m3_to_per_cm3(2.5e25) == pytest.approx(2.5e19, rel=1e-15)
    assert np.allclose(per_cm3_to_per_m3(np.array([1.0, 2.0])), [1e6, 2e6])


def test_worked_example_relative_humidity_over_ice():
    # 100 % RH over ice at 210 K: p = 0.70202 Pa (Murphy and Koop 2005, Table C1), so
    # n = p / (k_B T) = 2.4213e20 m^-3 (hand arithmetic with scipy's k_B); tolerance as table.
    expected = 0.70202 / (sc.k * 210.0)
    n = number_density_from_relative_humidity(100.0, 210.0, phase="ice")
    assert n == pytest.approx(expected, rel=MK05_TABLE_C1_RTOL)
    assert n == pytest.approx(2.4213e20, rel=1e-4)


@pytest.mark.parametrize("phase", ["liquid", "ice"])
def test_relative_humidity_round_trip(phase):
    T = np.array([160.0, 200.0, 240.0, 270.0])
    rh = np.array([1.0, 35.0, 80.0, 100.0])
    n = number_density_from_relative_humidity(rh, T, phase=phase)
    assert np.allclose(relative_humidity_from_number_density(n, T, phase=phase), rh, rtol=1e-12)


def test_relative_humidity_ice_vs_liquid_ratio():
    # Same water density, RH over ice / RH over liquid = p_liq / p_ice (> 1 below 273.16 K).
    T = 220.0
    n = 1e20
    ratio = relative_humidity_from_number_density(n, T, "ice") / \
        relative_humidity_from_number_density(n, T, "liquid")
    assert ratio == pytest.approx(saturation_pressure_liquid_Pa(T) / saturation_pressure_ice_Pa(T),
                                  rel=1e-12)
    assert ratio > 1.0


def test_mixing_ratio_round_trip():
    T = np.array([150.0, 200.0, 250.0])
    p = np.array([500.0, 5e3, 5e4])
    n = number_density_from_mixing_ratio(5e-6, p, T)
    assert np.allclose(mixing_ratio_from_number_density(n, p, T), 5e-6, rtol=1e-12)
    assert np.allclose(partial_pressure_from_number_density(n, T), 5e-6 * p, rtol=1e-12)


def test_supersaturation_warns_but_is_allowed(caplog):
    with caplog.at_level(logging.WARNING, logger=hum.__name__):
        n = number_density_from_relative_humidity(150.0, 200.0, phase="ice")
    assert "supersaturated" in caplog.text
    assert n == pytest.approx(1.5 * number_density_from_relative_humidity(100.0, 200.0, "ice"),
                              rel=1e-12)


@pytest.mark.parametrize("call, match", [
    (lambda: number_density_from_relative_humidity(-1.0, 200.0), "relative humidity must not be negative"),
    (lambda: number_density_from_partial_pressure(-3.0, 200.0), "partial pressure must not be negative"),
    (lambda: number_density_from_mixing_ratio(-1e-6, 1e4, 200.0), "mixing ratio must not be negative"),
    (lambda: number_density_from_mixing_ratio(2.0, 1e4, 200.0), "must not exceed 1 mol/mol"),
    (lambda: number_density_from_partial_pressure(10.0, 0.0), "temperatures must be positive"),
    (lambda: relative_humidity_from_number_density(-5.0, 200.0), "number density must not be negative"),
    (lambda: mixing_ratio_from_number_density(1e20, 0.0, 200.0), "total pressure must be positive"),
])
def test_conversion_errors(call, match):
    with pytest.raises(InputError, match=match):
        call()


# ------------------------------------------------------------------- Abundance

def test_abundance_kinds_vectorised():
    T = np.array([180.0, 220.0, 260.0])
    p_tot = 2e4
    cases = [
        (Abundance.from_number_density_cm3(1e14), np.full(3, 1e20)),
        (Abundance.from_number_density_m3(3e20), np.full(3, 3e20)),
        (Abundance.from_partial_pressure_Pa(0.5), number_density_from_partial_pressure(0.5, T)),
        (Abundance.from_mixing_ratio(1e-5), number_density_from_mixing_ratio(1e-5, p_tot, T)),
        (Abundance.from_relative_humidity(40.0, "ice"),
         number_density_from_relative_humidity(40.0, T, "ice")),
    ]
    for abundance, expected in cases:
        n = abundance.number_density_m3(T, total_pressure_Pa=p_tot)
        assert isinstance(n, np.ndarray) and n.shape == T.shape
        assert np.allclose(n, expected, rtol=1e-12), abundance
    assert isinstance(Abundance.from_partial_pressure_Pa(0.5).number_density_m3(200.0), float)


def test_abundance_is_frozen():
    a = Abundance.from_relative_humidity(50.0)
    with pytest.raises(AttributeError):
        a.value = 20.0  # type: ignore[misc]


@pytest.mark.parametrize("make, match", [
    (lambda: Abundance("ppm", 1.0), "unknown abundance kind 'ppm'"),
    (lambda: Abundance.from_relative_humidity(-5.0), "relative humidity must not be negative"),
    (lambda: Abundance.from_number_density_cm3(-1e12), "abundance must not be negative"),
    (lambda: Abundance.from_partial_pressure_Pa(float("nan")), "abundance must be finite"),
    (lambda: Abundance.from_mixing_ratio(1.5), "must not exceed 1 mol/mol"),
    (lambda: Abundance("relative_humidity_percent", 30.0, species="CO2"), "water only"),
    (lambda: Abundance.from_relative_humidity(30.0, phase="vapour"), "unknown phase"),
    (lambda: Abundance("partial_pressure_Pa", "lots"), "must be a number"),
    (lambda: Abundance.from_mixing_ratio(1e-6).number_density_m3(200.0), "needs the total pressure"),
])
def test_abundance_errors(make, match):
    with pytest.raises(InputError, match=match):
        make()


# ----------------------------------------------------------------------- dimer

def test_dimer_worked_example():
    # Kp = 0.05 bar^-1 (illustrative), p(H2O) = 1000 Pa = 0.01 bar at 250 K:
    # p(dimer) = Kp p^2 = 0.05 * 0.01^2 bar = 5e-6 bar = 0.5 Pa; n = 0.5 Pa / (k_B 250 K).
    n_monomer = 1000.0 / (sc.k * 250.0)
    n_dimer = dimer_number_density_m3(0.05, n_monomer, 250.0)
    assert n_dimer == pytest.approx(0.5 / (sc.k * 250.0), rel=1e-12)


def test_dimer_vectorised_and_quadratic():
    T = np.array([200.0, 250.0, 300.0])
    Kp = np.array([0.5, 0.1, 0.04])
    n1 = dimer_number_density_m3(Kp, 1e21, T)
    n2 = dimer_number_density_m3(Kp, 2e21, T)
    assert n1.shape == (3,)
    assert np.allclose(n2 / n1, 4.0, rtol=1e-12)
    assert np.allclose(n1, [dimer_number_density_m3(k, 1e21, t) for k, t in zip(Kp, T)],
                       rtol=1e-14)


@pytest.mark.parametrize("args, match", [
    ((-0.1, 1e21, 250.0), "equilibrium constant Kp must not be negative"),
    ((0.1, -1e21, 250.0), "monomer number density must not be negative"),
    ((0.1, 1e21, 0.0), "temperatures must be positive"),
])
def test_dimer_errors(args, match):
    with pytest.raises(InputError, match=match):
        dimer_number_density_m3(*args)
