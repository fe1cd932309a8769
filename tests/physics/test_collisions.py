"""Collision integrals, Lennard-Jones collision rates and collision efficiencies."""

import math

import numpy as np
import pytest
from scipy.constants import k as kB
from scipy.optimize import brentq

from tstrate.errors import InputError
from tstrate.physics.collisions import (BATH_GASES, bath_gas, collision_efficiency, collision_rate_m3_s,
                                        combine_lennard_jones, energy_dependence_factor, omega22_neufeld,
                                        omega22_troe, pair_collision_rate_m3_s)
from tstrate.physics.states import CM1_J_PER_MOL, count_states
from tstrate.units import R

# Omega(2,2)* of the LJ 12-6 potential: Bird, Stewart and Lightfoot, Transport Phenomena (2nd ed.),
# Table E.2, interpolated from Monchick and Mason, J. Chem. Phys. 35, 1676 (1961)
# (the Hirschfelder-Curtiss-Bird 1954 integrals recomputed); values checked with the search tool.
BSL_OMEGA22 = {0.30: 2.840, 0.50: 2.284, 1.00: 1.593, 2.50: 1.0933, 3.0: 1.0388, 5.0: 0.9268,
               10.0: 0.8244, 20.0: 0.7436, 50.0: 0.6510, 100.0: 0.5887}


@pytest.mark.parametrize("t_star", list(BSL_OMEGA22), ids=[f"BSL-E.2-T*={t}" for t in BSL_OMEGA22])
def test_neufeld_omega22_against_table(t_star):
    # NJA 1972 fit: a few tenths of a per cent over 0.3 <= T* <= 100; table rounded to 3-4 digits.
    assert omega22_neufeld(t_star) == pytest.approx(BSL_OMEGA22[t_star], rel=5e-3)


@pytest.mark.parametrize("t_star", [2.5, 3.0, 5.0, 10.0, 20.0, 50.0, 100.0])
def test_troe_omega22_against_table(t_star):
    # Troe's two-parameter form is meant for T* > ~3 and is good to a few per cent there.
    assert omega22_troe(t_star) == pytest.approx(BSL_OMEGA22[t_star], rel=0.03)


@pytest.mark.parametrize("name, cantera_name", [("N2", "N2"), ("O2", "O2"), ("CO2", "CO2"), ("Ar", "AR"),
                                                ("H2O", "H2O")])
def test_bath_gas_parameters_match_cantera_gri30(name, cantera_name):
    ct = pytest.importorskip("cantera")
    sp = ct.Solution("gri30.yaml").species(cantera_name)
    lj = bath_gas(name)
    assert lj.sigma_A == pytest.approx(sp.transport.diameter * 1e10, rel=1e-9)
    assert lj.epsilon_K == pytest.approx(sp.transport.well_depth / ct.boltzmann, rel=1e-9)


def test_every_bath_gas_has_a_source_and_a_mass():
    for lj in BATH_GASES.values():
        assert lj.source
        assert lj.molecular_mass_amu() > 3.9
    assert bath_gas("n2").molecular_mass_amu() == pytest.approx(28.014, abs=2e-3)   # ASE masses
    with pytest.raises(InputError, match="unknown bath gas 'Xe'"):
        bath_gas("Xe")


@pytest.mark.parametrize("t", [200.0, 300.0, 1000.0])
def test_z_lj_against_cantera_viscosity_of_n2(t):
    # Chapman-Enskog: eta = (5/16) sqrt(pi m kT) / (pi sigma^2 Omega22) and, for a like pair
    # (mu = m/2), Z_LJ = pi sigma^2 sqrt(8kT/(pi mu)) Omega22, hence Z_LJ = 5 kT / (4 eta).
    # Cantera evaluates eta from the same LJ parameters with its own Monchick-Mason table fit;
    # the two collision-integral routes agree to ~0.1 %, allow 0.5 %.
    ct = pytest.importorskip("cantera")
    gas = ct.Solution("gri30.yaml")
    gas.TPX = t, 101325.0, "N2:1"
    z_ref = 5 * kB * t / (4 * gas.viscosity)
    assert pair_collision_rate_m3_s(t, bath_gas("N2"), "N2") == pytest.approx(z_ref, rel=5e-3)


def test_z_lj_magnitude_and_combining_rules():
    sigma, eps = combine_lennard_jones(3.0, 100.0, 4.0, 400.0)
    assert (sigma, eps) == (3.5, 200.0)
    # hard-sphere check: Omega -> the value of the integral, so Z / Omega is pi s^2 <v>
    z = collision_rate_m3_s(300.0, 3.5, 200.0, 20.0)
    mean_speed = math.sqrt(8 * kB * 300.0 / (math.pi * 20.0 * 1.66053906660e-27))  # amu, CODATA 2018
    assert z / omega22_neufeld(300.0 / 200.0) == pytest.approx(math.pi * (3.5e-10) ** 2 * mean_speed, rel=1e-8)
    with pytest.raises(InputError, match="unknown collision-integral"):
        collision_rate_m3_s(300.0, 3.5, 200.0, 20.0, omega="exact")


@pytest.mark.parametrize("de_cm1, t, fe", [(-50.0, 300.0, 1.0), (-200.0, 250.0, 1.15), (-1000.0, 1000.0, 1.3)])
def test_collision_efficiency_solves_troes_relation(de_cm1, t, fe):
    de = de_cm1 * CM1_J_PER_MOL
    beta = collision_efficiency(de, t, energy_factor=fe)
    # independent numerical root of beta/(1 - sqrt(beta)) = -<dE>/(F_E R T)
    q = -de / (fe * R * t)
    ref = brentq(lambda b: b / (1 - math.sqrt(b)) - q, 1e-15, 1 - 1e-15, xtol=1e-15)
    assert beta == pytest.approx(ref, rel=1e-10)
    assert 0 < beta < 1


def test_collision_efficiency_from_down_steps():
    t, fe, down = 300.0, 1.1, 300.0 * CM1_J_PER_MOL
    # -<dE> = <dE>down^2 / (<dE>down + F_E RT) (Troe 1977)
    de_all = -(down**2) / (down + fe * R * t)
    assert collision_efficiency(down, t, kind="down", energy_factor=fe) == pytest.approx(
        collision_efficiency(de_all, t, energy_factor=fe))
    # large steps: strong collisions
    assert collision_efficiency(1e7, t, kind="down") > 0.99
    with pytest.raises(InputError, match="must be negative"):
        collision_efficiency(5.0, t)
    with pytest.raises(InputError, match="must be positive"):
        collision_efficiency(-5.0, t, kind="down")
    with pytest.raises(InputError, match="kind must be"):
        collision_efficiency(-5.0, t, kind="up")


@pytest.mark.parametrize("t", [200.0, 300.0, 1000.0])
def test_energy_dependence_factor_against_troes_approximation(t):
    # Troe 1977 (J. Chem. Phys. 66, 4758), from memory:
    # F_E ~ sum_{v=0}^{s-1} (s-1)!/(s-1-v)! [kT/(E0 + a E_z)]^v with the Whitten-Rabinovitch a(E0);
    # an approximation (a few per cent); allow 3 %.
    freqs = [3640, 3630, 1830, 1450, 1380, 1180, 1010, 790, 670, 580, 550, 220]   # demo H2CO3 set
    e0 = 15000 * CM1_J_PER_MOL
    sc = count_states(freqs, 60000 * CM1_J_PER_MOL, grain_cm1=10.0)
    fe = energy_dependence_factor(sc.energies_J_per_mol, sc.density_per_J_per_mol, e0, t)[0]
    s = len(freqs)
    e_z = 0.5 * sum(freqs) * CM1_J_PER_MOL
    beta = (s - 1) / s * np.mean(np.square(freqs)) / np.mean(freqs) ** 2
    a = 1 - beta * 10 ** (-1.0506 * (e0 / e_z) ** 0.25)
    x = R * t / (e0 + a * e_z)
    approx = sum(math.factorial(s - 1) / math.factorial(s - 1 - v) * x**v for v in range(s))
    assert fe == pytest.approx(approx, rel=0.03)
    assert fe > 1
