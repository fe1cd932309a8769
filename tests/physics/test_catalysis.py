"""Tests for tstrate.physics.catalysis (bare versus catalysed routes).

Data: tests/data/water_dimer (real water and water-dimer data, sources in the files) and
tests/data/catalysis (a toy carbonic-acid study with INVENTED numbers, see its README).
Saturation vapour pressures are tested in tests/physics/test_humidity.py and not repeated here.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest
from scipy import constants as sc
from scipy.optimize import brentq

from tstrate.errors import InputError
from tstrate.io.species import read_species
from tstrate.io.study import read_study
from tstrate.model import Channel
from tstrate.study.routes import study_comparisons
from tstrate.physics.catalysis import (AssistedRoute, CatalystAbundance, Comparison, classify_route,
                                       compare_routes, complex_equilibrium,
                                       faster_temperature_ranges, k_unimolecular_from_complex,
                                       )
from tstrate.physics.humidity import Abundance, dimer_number_density_m3
from tstrate.physics.thermo import thermochemistry, zero_point_energy_J_per_mol
from tstrate.physics.tst import channel_rates
from tstrate.units import P_STANDARD, R

DATA = Path(__file__).resolve().parents[1] / "data"
WD = DATA / "water_dimer"
STUDY = DATA / "catalysis" / "study.toml"

CAL = sc.calorie  # thermochemical calorie, 4.184 J


@pytest.fixture(scope="module")
def study():
    return read_study(STUDY)


def _comparison(assisted, abundances, *, dimer=None, temps=None):
    routes = tuple(AssistedRoute(*a) for a in assisted)
    return Comparison(name="test", reference="bare", assisted=routes, substrate="H2CO3",
                      catalyst="H2O", abundances=tuple(abundances), catalyst_dimer=dimer,
                      temperature_K=temps)


def _per_cm3(*values):
    return [CatalystAbundance(Abundance.from_number_density_cm3(v)) for v in values]


# ---------------------------------------------------------------------------------------------
# Water-dimer equilibrium against measurement
# ---------------------------------------------------------------------------------------------
# L. A. Curtiss, D. J. Frurip and M. Blander, J. Chem. Phys. 71, 2703 (1979), thermal
# conductivity of water vapour at 358-386 K: Delta H = -3.59 kcal/mol and Delta S = -18.59
# cal/(mol K) for 2 H2O <=> (H2O)2 (abstract, found with the search tool). Their standard state is
# 1 atm (from memory), so Kp = exp(-dH/RT + dS/R) in atm^-1; their stated uncertainties are
# +-0.5 kcal/mol in dH and +-1.3 cal/(mol K) in dS (from memory).
CFB_DH_J = -3.59e3 * CAL
CFB_DS_J_K = -18.59 * CAL
CFB_DH_UNCERTAINTY_J = 0.5e3 * CAL

# Measured D0 of the water dimer, 13.220 +- 0.096 kJ/mol (1105 cm-1): B. Ruscic, J. Phys. Chem. A
# 117, 11940 (2013), Active Thermochemical Tables (abstract, found with the search tool); agrees
# with the experiment of B. E. Rocher-Casterline et al., J. Chem. Phys. 134, 211101 (2011).
ATCT_D0_J_PER_MOL = 13.220e3

# Tolerance "within the spread of the literature": a rigid-rotor harmonic-oscillator partition
# function of the dimer's six floppy intermolecular modes is known to be rough; anharmonic and
# large-amplitude treatments change Kp by factors of 2-3 near 300-400 K (C. Munoz-Caro and A. Nino,
# J. Phys. Chem. A 101, 4128 (1997); G. K. Schenter, S. M. Kathmann and B. C. Garrett, J. Phys.
# Chem. A 106, 1557 (2002), both found with the search tool). With D0 fixed to its measured value
# we therefore require agreement with Curtiss et al. within a factor of 3. With the pure harmonic
# energy (De from CCSD(T)/CBS minus the harmonic ZPE) the harmonic ZPE overestimates the ZPE loss
# by a further ~1.1 kJ/mol, a factor exp(1.1e3 / (R 373 K)) = 1.4: factor 3 x 1.4 = 4.2.
CFB_TEMPERATURES_K = [358.0, 373.0, 386.0]


def _water():
    return read_species(WD / "h2o.toml"), read_species(WD / "dimer.toml", name="H2O_dimer")


def _dimer_with_measured_d0(w, d):
    """The dimer with its electronic energy set so that E0(dimer) - 2 E0(H2O) = -D0(ATcT)."""
    dzpe = zero_point_energy_J_per_mol(d) - 2 * zero_point_energy_J_per_mol(w)
    return d.with_changes(energy_J_per_mol=-ATCT_D0_J_PER_MOL - dzpe)


def _kp_cfb_per_atm(T):
    return np.exp(-CFB_DH_J / (R * T) + CFB_DS_J_K / R)


def _kp_per_atm(eq):
    # Kp in bar^-1 -> atm^-1: p_D / p_W^2 with pressures in atm is larger by atm / bar
    return np.exp(eq.ln_Kp) * sc.atm / P_STANDARD


@pytest.mark.parametrize("T", CFB_TEMPERATURES_K, ids=[f"CFB1979-{t:g}K" for t in CFB_TEMPERATURES_K])
def test_water_dimer_kp_against_curtiss_1979_with_measured_d0(T):
    w, d = _water()
    d = _dimer_with_measured_d0(w, d)
    eq = complex_equilibrium(["H2O", "H2O"], "H2O_dimer", {"H2O": w, "H2O_dimer": d}, [T])
    ratio = _kp_per_atm(eq)[0] / _kp_cfb_per_atm(T)
    assert 1 / 3 < ratio < 3, ratio
    assert eq.delta_n == -1
    assert eq.delta_E0_J_per_mol == pytest.approx(-ATCT_D0_J_PER_MOL, rel=1e-12)


@pytest.mark.parametrize("T", CFB_TEMPERATURES_K, ids=[f"CFB1979-harmonic-{t:g}K" for t in CFB_TEMPERATURES_K])
def test_water_dimer_kp_against_curtiss_1979_pure_harmonic(T):
    w, d = _water()
    eq = complex_equilibrium(["H2O", "H2O"], "H2O_dimer", {"H2O": w, "H2O_dimer": d}, [T])
    ratio = _kp_per_atm(eq)[0] / _kp_cfb_per_atm(T)
    assert 1 / 4.2 < ratio < 4.2, ratio


def test_water_dimer_enthalpy_against_curtiss_1979():
    """van 't Hoff enthalpy over CFB's range, within their stated +-0.5 kcal/mol (from memory)."""
    w, d = _water()
    d = _dimer_with_measured_d0(w, d)
    T = np.array([358.0, 386.0])
    eq = complex_equilibrium(["H2O", "H2O"], "H2O_dimer", {"H2O": w, "H2O_dimer": d}, T)
    # Kp in atm^-1 and bar^-1 differ by a constant factor: the slope is the same
    dh = -R * (eq.ln_Kp[1] - eq.ln_Kp[0]) / (1 / T[1] - 1 / T[0])
    assert abs(dh - CFB_DH_J) < CFB_DH_UNCERTAINTY_J, dh / 1e3


def test_complex_kp_equals_gibbs_energy_route(study):
    """ln Kp from partition functions per volume = -Delta G(1 bar)/RT from thermochemistry()."""
    T = np.array([150.0, 220.0, 300.0])
    sp = study.species
    eq = complex_equilibrium(["H2CO3", "H2O"], "H2CO3_H2O", sp, T)
    g = {n: thermochemistry(sp[n], T).gibbs_J_per_mol for n in ("H2CO3", "H2O", "H2CO3_H2O")}
    dg = g["H2CO3_H2O"] - g["H2CO3"] - g["H2O"]
    np.testing.assert_allclose(eq.ln_Kp, -dg / (R * T), rtol=1e-10)
    np.testing.assert_allclose(eq.delta_G_standard_J_per_mol, dg, rtol=1e-10)
    # Kc in m^3 and Kp in bar^-1: Kc = Kp k_B T / p0 for one molecule lost
    np.testing.assert_allclose(np.exp(eq.ln_Kc), np.exp(eq.ln_Kp) * sc.k * T / P_STANDARD, rtol=1e-12)


# ---------------------------------------------------------------------------------------------
# Algebraic identities in the high-pressure limit
# ---------------------------------------------------------------------------------------------

@pytest.mark.parametrize("name", ["one_water", "two_water", "via_dimer"])
@pytest.mark.parametrize("tunnelling", ["channel's own", "none"])
def test_complex_times_unimolecular_equals_direct_rate(study, name, tunnelling):
    """K_C k_uni(C -> TS) = k(reactants -> TS): the complex's partition function cancels."""
    ch = study.channel(name)
    if tunnelling == "none":
        ch = dataclasses.replace(ch, tunnelling="none")
    T = np.array([150.0, 200.0, 250.0, 300.0])
    cr = channel_rates(ch, study.species, T)
    eq = complex_equilibrium(ch.reactants, ch.complex, study.species, T)
    k_uni = k_unimolecular_from_complex(cr, ch, study.species, T)
    np.testing.assert_allclose(np.exp(eq.ln_Kc) * k_uni, cr.k, rtol=1e-10)


def test_pseudo_first_order_is_complex_constant_times_unimolecular_times_abundance(study):
    T = np.array([160.0, 200.0, 260.0])
    comp = _comparison([("one_water", 1), ("two_water", 2)], _per_cm3(3e14, 1e16))
    res = compare_routes(comp, study.species, study.channels, T)
    n = np.array([3e14, 1e16])[:, None] * 1e6  # m^-3
    one, two = res.route("one_water"), res.route("two_water")
    expected1 = np.exp(one.complex_equilibrium.ln_Kc) * one.k_unimolecular_from_complex_per_s * n
    expected2 = np.exp(two.complex_equilibrium.ln_Kc) * two.k_unimolecular_from_complex_per_s * n**2
    np.testing.assert_allclose(one.pseudo_first_order_per_s, expected1, rtol=1e-10)
    np.testing.assert_allclose(two.pseudo_first_order_per_s, expected2, rtol=1e-10)
    np.testing.assert_allclose(res.bare.pseudo_first_order_per_s,
                               np.broadcast_to(res.bare.rates.k, (2, 3)), rtol=1e-14)


def test_ratios_scale_linearly_and_quadratically_with_abundance(study):
    T = np.array([150.0, 225.0, 300.0])
    comp = _comparison([("one_water", 1), ("two_water", 2), ("via_dimer", 2, True)],
                       _per_cm3(1e14, 1e15), dimer="H2O_dimer")
    res = compare_routes(comp, study.species, study.channels, T)
    np.testing.assert_allclose(res.route("one_water").ratio_to_bare[1] / res.route("one_water").ratio_to_bare[0],
                               10.0, rtol=1e-12)
    for name in ("two_water", "via_dimer"):
        r = res.route(name)
        np.testing.assert_allclose(r.ratio_to_bare[1] / r.ratio_to_bare[0], 100.0, rtol=1e-12)


def test_dimer_route_agrees_with_termolecular_route_through_same_saddle_point(study):
    """S + (H2O)2 -> TS2 with [dimer] = K_d [H2O]^2 gives exactly k3 [H2O]^2 through the same TS
    (detailed balance of the partition functions; both channels use the Wigner factor, which
    depends only on T and the imaginary frequency)."""
    T = np.linspace(150.0, 300.0, 7)
    comp = _comparison([("two_water", 2), ("via_dimer", 2, True)], _per_cm3(1e15), dimer="H2O_dimer")
    res = compare_routes(comp, study.species, study.channels, T)
    np.testing.assert_allclose(res.route("via_dimer").pseudo_first_order_per_s,
                               res.route("two_water").pseudo_first_order_per_s, rtol=1e-10)
    # dimer density against the humidity module's independent formula n_d = Kp n^2 k_B T / p0
    kp = np.exp(res.dimer_equilibrium.ln_Kp)
    np.testing.assert_allclose(res.dimer_m3[0], dimer_number_density_m3(kp, 1e21, T), rtol=1e-12)


def test_free_substrate_fraction_counts_each_complex_once(study):
    T = np.array([150.0, 200.0])
    comp = _comparison([("one_water", 1), ("two_water", 2), ("via_dimer", 2, True)],
                       _per_cm3(5e12), dimer="H2O_dimer")
    res = compare_routes(comp, study.species, study.channels, T)
    c1 = res.route("one_water").complex_per_free_substrate
    c2 = res.route("two_water").complex_per_free_substrate
    np.testing.assert_allclose(res.route("via_dimer").complex_per_free_substrate, c2, rtol=1e-10)
    np.testing.assert_allclose(res.free_substrate_fraction, 1 / (1 + c1 + c2), rtol=1e-12)


# ---------------------------------------------------------------------------------------------
# Crossover abundance and temperature ranges
# ---------------------------------------------------------------------------------------------

def test_ratio_is_one_at_crossover_abundance(study):
    T = np.linspace(150.0, 300.0, 6)
    comp = _comparison([("one_water", 1), ("two_water", 2), ("via_dimer", 2, True)],
                       _per_cm3(1e15), dimer="H2O_dimer")
    res = compare_routes(comp, study.species, study.channels, T)
    for r in res.assisted:
        np.testing.assert_allclose(r.pseudo_first_order_at(r.crossover_catalyst_m3), res.bare.rates.k,
                                   rtol=1e-10)


def test_crossover_in_relative_humidity_round_trips(study):
    T = np.array([250.0, 275.0, 300.0])
    comp = _comparison([("two_water", 2)], [CatalystAbundance(Abundance.from_relative_humidity(50.0))])
    res = compare_routes(comp, study.species, study.channels, T)
    r = res.route("two_water")
    rh = res.crossover_in_given_unit(r)
    back = [CatalystAbundance(Abundance.from_relative_humidity(x)).number_density_m3([t])[0]
            for x, t in zip(rh, T)]
    np.testing.assert_allclose(back, r.crossover_catalyst_m3, rtol=1e-12)


def test_temperature_range_crossing_against_root_finder(study):
    """Grid crossing refined in 1/T against brentq on the continuous ln ratio.

    Tolerance 0.1 K: linear interpolation in 1/T over a 10 K step; the remaining curvature of
    ln(ratio) in 1/T (ln T terms of the partition functions, the Wigner factor) moves the zero by
    a few hundredths of a kelvin here.
    """
    comp = _comparison([("two_water", 2)], _per_cm3(2e10))
    T = np.arange(150.0, 221.0, 10.0)
    res = compare_routes(comp, study.species, study.channels, T)
    (rng,) = res.route("two_water").faster_ranges[0]

    def ln_ratio(t):
        return compare_routes(comp, study.species, study.channels, [t]).route("two_water").ln_ratio_to_bare[0, 0]

    root = brentq(ln_ratio, 150.0, 220.0, xtol=1e-9)
    assert rng.low_K == 150.0 and rng.low_at_grid_edge
    assert not rng.high_at_grid_edge
    assert abs(rng.high_K - root) < 0.1


def test_faster_ranges_exact_for_log_ratio_linear_in_inverse_temperature():
    # ln ratio = 12 - 3000/T: zero at 250 K; positive above it
    T = np.array([300.0, 150.0, 200.0, 275.0, 225.0, 325.0])  # unsorted on purpose
    (rng,) = faster_temperature_ranges(T, 12 - 3000 / T)
    assert rng.low_K == pytest.approx(250.0, rel=1e-12)
    assert rng.high_K == 325.0 and rng.high_at_grid_edge and not rng.low_at_grid_edge
    # two separate windows
    y = np.array([1.0, -1.0, -1.0, 2.0, 2.0, -2.0])
    Tg = np.array([100.0, 110.0, 120.0, 130.0, 140.0, 150.0])
    r1, r2 = faster_temperature_ranges(Tg, y)
    assert r1.low_K == 100.0 and r1.low_at_grid_edge
    assert 100.0 < r1.high_K < 110.0
    assert 120.0 < r2.low_K < 130.0 and 140.0 < r2.high_K < 150.0
    assert faster_temperature_ranges(Tg, -np.ones(6)) == ()
    (whole,) = faster_temperature_ranges(Tg, np.ones(6))
    assert (whole.low_K, whole.high_K, whole.low_at_grid_edge, whole.high_at_grid_edge) == (100.0, 150.0, True, True)


# ---------------------------------------------------------------------------------------------
# Barrier table and energy profile
# ---------------------------------------------------------------------------------------------

def test_activation_gibbs_energy_splits_into_complex_and_unimolecular_step(study):
    """dG‡(reactants, 1 bar) = dG°(complex formation, 1 bar) + dG‡(complex -> TS) for a route
    through a complex (follows from k = K_C k_uni without tunnelling)."""
    T = np.array([150.0, 200.0, 300.0])
    comp = _comparison([("one_water", 1), ("two_water", 2)], _per_cm3(1e15))
    res = compare_routes(comp, study.species, study.channels, T)
    for row, r in zip(res.barriers[1:], res.assisted):
        np.testing.assert_allclose(
            row.delta_G_activation_J_per_mol,
            r.complex_equilibrium.delta_G_standard_J_per_mol + row.delta_G_activation_from_complex_J_per_mol,
            rtol=1e-9)
        assert row.zpe_from_complex_J_per_mol == pytest.approx(
            row.zpe_from_reactants_J_per_mol - row.complex_binding_zpe_J_per_mol, rel=1e-12)
    assert res.barriers[0].classical_from_reactants_J_per_mol == pytest.approx(190e3)  # toy input
    assert res.barriers[1].classical_from_complex_J_per_mol == pytest.approx(110e3)  # 70 - (-40)


def test_energy_profile_levels(study):
    comp = _comparison([("one_water", 1), ("two_water", 2), ("via_dimer", 2, True)], _per_cm3(1e15),
                       dimer="H2O_dimer")
    res = compare_routes(comp, study.species, study.channels, [200.0])
    bare, one, two, dimer = res.profiles
    assert [lv.role for lv in bare.levels] == ["reactants", "ts", "products"]
    assert [lv.role for lv in one.levels] == ["reactants", "complex", "ts", "products"]
    # one zero for all routes: H2CO3 + 2 H2O at infinity; the dimer route starts at the dimer's D0
    assert dimer.levels[0].energy_J_per_mol == pytest.approx(res.dimer_equilibrium.delta_E0_J_per_mol, rel=1e-12)
    assert [lv.energy_J_per_mol for lv in dimer.levels[1:]] == pytest.approx(
        [lv.energy_J_per_mol for lv in two.levels[1:]], rel=1e-12)
    for prof, row in zip(res.profiles[:3], res.barriers[:3]):
        assert prof.levels[0].energy_J_per_mol == pytest.approx(0.0, abs=1e-6)
        ts = next(lv for lv in prof.levels if lv.role == "ts")
        assert ts.energy_J_per_mol == pytest.approx(row.zpe_from_reactants_J_per_mol, rel=1e-12)
        # products = bare products + the catalysts: the same level on every route
        assert prof.levels[-1].energy_J_per_mol == pytest.approx(bare.levels[-1].energy_J_per_mol, abs=1e-6)


def test_study_comparisons_use_own_or_study_temperatures(study):
    results = study_comparisons(study)
    assert [r.comparison.name for r in results] == ["dry upper atmosphere", "humid lower atmosphere"]
    np.testing.assert_array_equal(results[0].temperature_K, np.arange(150.0, 221.0, 10.0))
    np.testing.assert_array_equal(results[1].temperature_K, study.conditions.temperature_K)
    # 5 ppmv at 0.01 bar and 150 K: n = x p / (k_B T)
    np.testing.assert_allclose(results[0].catalyst_m3[1, 0], 5e-6 * 1e3 / (sc.k * 150.0), rtol=1e-12)


# ---------------------------------------------------------------------------------------------
# Mistakes
# ---------------------------------------------------------------------------------------------

def test_classify_route_errors():
    ch = Channel("x", ("H2CO3", "CO2"), "TS", ("CO2", "CO2"))
    with pytest.raises(InputError, match=r"reactants H2CO3 \+ CO2, expected H2CO3 \+ H2O"):
        classify_route(ch, "H2CO3", "H2O")
    with pytest.raises(InputError, match="must contain the substrate 'H2CO3' once"):
        classify_route(Channel("y", ("H2O", "H2O"), "TS", ("H2O", "H2O")), "H2CO3", "H2O")
    r = classify_route(Channel("z", ("H2O_dimer", "H2CO3"), "TS", ("CO2",)), "H2CO3", "H2O", "H2O_dimer")
    assert (r.kind, r.catalyst_count, r.via_dimer) == ("dimer", 2, True)


def test_compare_routes_errors(study):
    comp = _comparison([("one_water", 1)], _per_cm3(1e15))
    with pytest.raises(InputError, match="has no temperatures"):
        compare_routes(comp, study.species, study.channels)
    with pytest.raises(InputError, match="unknown channel 'nope'"):
        compare_routes(_comparison([("nope", 1)], _per_cm3(1e15)), study.species, study.channels, [200.0])
    bad = dataclasses.replace(comp, reference="one_water")
    with pytest.raises(InputError, match="bare route must be the unimolecular reaction"):
        compare_routes(bad, study.species, study.channels, [200.0])
    with pytest.raises(InputError, match="temperatures must be positive"):
        compare_routes(comp, study.species, study.channels, [-5.0])
    no_dimer = _comparison([("via_dimer", 2, True)], _per_cm3(1e15))
    with pytest.raises(InputError, match="names no catalyst_dimer"):
        compare_routes(no_dimer, study.species, study.channels, [200.0])
    with pytest.raises(InputError, match="mixing ratio needs the total pressure"):
        CatalystAbundance(Abundance.from_mixing_ratio(5e-6))


def test_zero_abundance_gives_no_assisted_loss(study):
    res = compare_routes(_comparison([("one_water", 1)], _per_cm3(0.0)), study.species,
                         study.channels, [200.0, 250.0])
    r = res.route("one_water")
    assert np.all(r.pseudo_first_order_per_s == 0.0)
    assert r.faster_ranges == ((),)
    assert np.all(np.isfinite(r.crossover_catalyst_m3))



# ---- plausibility: water above saturation ----------------------------------------------------

def _ln_p_ice_murphy_koop(T):
    """ln p_ice [Pa], Murphy and Koop, Q. J. R. Meteorol. Soc. 131, 1539 (2005), eq. 7, written out here."""
    return 9.550426 - 5723.265 / T + 3.53068 * np.log(T) - 0.00728332 * T


def test_water_above_saturation_over_ice_is_said(study):
    from tstrate.physics.catalysis import supersaturation_warnings

    T = np.array([150.0, 180.0, 200.0, 230.0])
    x, p_total = 2e-6, 1000.0                       # 2 ppmv at 10 hPa (the demo's cold, dry scenario)
    comp = _comparison([("one_water", 1)], [CatalystAbundance(Abundance.from_mixing_ratio(x), p_total)],
                       temps=tuple(T))
    res = compare_routes(comp, study.species, study.channels)
    (w,) = res.warnings
    ratio = x * p_total / np.exp(_ln_p_ice_murphy_koop(T))     # partial pressure over p_ice
    assert ratio[0] > 300 and ratio[-1] < 1                      # supersaturated when cold only
    assert f"up to {ratio[0]:.3g} times" in w and "over ice at 150 K" in w
    assert f"at {int(np.sum(ratio > 1.01))} of 4 temperatures" in w
    # the same water at 50 % relative humidity over ice is never above saturation
    rh = _comparison([("one_water", 1)], [CatalystAbundance(Abundance.from_relative_humidity(50.0, "ice"))],
                     temps=tuple(T))
    assert compare_routes(rh, study.species, study.channels).warnings == ()
    n = np.array([[2e-6 * 1000.0 / (1.380649e-23 * t) for t in T]])
    assert supersaturation_warnings(comp, n, T) == res.warnings
