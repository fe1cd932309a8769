"""Canonical TST (tstrate.physics.tst) against things outside the code under test.

References used here (source beside each check):

- k_B and h: exact SI values (2019 redefinition, CODATA 2018), typed in this file on purpose
  so that the check does not go through scipy.constants.
- Textbook partition functions per volume (ideal-gas translation, classical rigid rotor with
  symmetry number, harmonic oscillators from the zero-point level, electronic ground-level
  degeneracy) and the Eyring expression k = (kT/h) (q_TS/V) / prod(q_R/V) exp(-E0/RT):
  H. Eyring, J. Chem. Phys. 3, 107 (1935); D. A. McQuarrie, Statistical Mechanics (1976),
  ch. 5-8 and 10 (from memory). Written out below with numpy only (moments of inertia from
  the geometry by our own inertia tensor).
- Atom + atom through a diatomic transition state equals hard-sphere collision theory,
  k = (8kT/(pi mu))^(1/2) pi r^2 exp(-E0/RT): the textbook identity of e.g. NPTEL "Theories of
  reaction rates", unit 33, eq. (33.34) (archive.nptel.ac.in, course 122101001) and
  K. J. Laidler, Chemical Kinetics, 3rd ed. (1987), sec. 4.5 (from memory). No published worked
  numerical TST example with its partition functions given could be found with the search tool;
  this identity is used instead.
- Eckart transmission: C. Eckart, Phys. Rev. 35, 1303 (1930), written out here from the
  potential V(x) = A y/(1+y) + B y/(1+y)^2 with the length fixed by the barrier curvature
  (independent of tstrate.physics.tunnelling), averaged thermally with scipy.integrate.quad.
- Thermodynamic consistency: detailed balance and the 1 bar activation quantities against
  tstrate.physics.thermo (H, S, G of each species) and the textbook standard-state form
  k = (kT/h) (c0)^(1-n) exp(-dG/RT), c0 = p0/kT, p0 = 1 bar (IUPAC Gold Book,
  "transition state theory"; standard pressure 1e5 Pa by IUPAC definition).

The data are the invented test studies in tests/data/toy and tests/data/tst (not physical).
"""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy import constants as sc
from scipy import integrate

from tstrate.errors import InputError
from tstrate.io.species import build_species
from tstrate.io.study import read_study
from tstrate.model import Channel
from tstrate.study.rates import study_rates
from tstrate.output.records import channel_rates_record
from tstrate.physics import tst, tunnelling
from tstrate.physics.thermo import thermochemistry

DATA = Path(__file__).resolve().parents[1] / "data"
TOY_STUDY = DATA / "toy" / "study.toml"
TST_STUDY = DATA / "tst" / "study.toml"

# scipy.constants is an outside reference here (the code under test goes through tstrate.units)
KB, H, C, NA = sc.k, sc.h, sc.c, sc.N_A
R = KB * NA
AMU = sc.physical_constants["atomic mass constant"][0]
P0 = 1e5  # 1 bar [Pa], IUPAC standard pressure (definition)

TEMPS = np.array([50.0, 150.0, 200.0, 298.15, 500.0, 1000.0, 3000.0])


@pytest.fixture(scope="module")
def toy():
    return read_study(TOY_STUDY)


@pytest.fixture(scope="module")
def carbonic():
    return read_study(TST_STUDY)


# ---- textbook pieces, written out independently of tstrate.physics.thermo --------------------

def principal_moments_kg_m2(species) -> np.ndarray:
    """Eigenvalues of the inertia tensor about the centre of mass [kg m^2]."""
    m = np.asarray(species.masses_amu, dtype=float) * AMU
    x = np.asarray(species.positions_A, dtype=float) * 1e-10
    x = x - (m[:, None] * x).sum(axis=0) / m.sum()
    tensor = sum(mi * (np.dot(xi, xi) * np.eye(3) - np.outer(xi, xi)) for mi, xi in zip(m, x))
    return np.linalg.eigvalsh(tensor)


def textbook_ln_q_per_volume(species, T, *, sigma: int, optical_isomers: int, g_el: int):
    """ln(q/V) [ln m^-3]: translation x rigid rotor x harmonic oscillators (from the ZPE level) x g_el.

    McQuarrie, Statistical Mechanics (1976): q_tr/V = (2 pi m k T/h^2)^(3/2); linear rotor
    8 pi^2 I k T/(sigma h^2); nonlinear rotor (pi^(1/2)/sigma) (8 pi^2 k T/h^2)^(3/2) (IA IB IC)^(1/2);
    q_vib = prod 1/(1 - exp(-h c nu/k T)) over the real modes (the imaginary one is left out).
    """
    T = np.asarray(T, dtype=float)
    mass = float(np.sum(species.masses_amu)) * AMU
    ln_q = 1.5 * np.log(2 * np.pi * mass * KB * T / H**2)
    if species.natoms > 1:
        moments = principal_moments_kg_m2(species)
        if species.linear:
            ln_q = ln_q + np.log(8 * np.pi**2 * moments.max() * KB * T / (sigma * H**2))
        else:
            ln_q = ln_q + np.log(np.sqrt(np.pi) / sigma * (8 * np.pi**2 * KB * T / H**2) ** 1.5
                                 * np.sqrt(np.prod(moments)))
    nu_hz = np.asarray(species.frequencies_cm1, dtype=float)
    nu_hz = nu_hz[nu_hz > 0] * 100.0 * C
    ln_q = ln_q - np.sum(np.log(1.0 - np.exp(-H * nu_hz[None, :] / (KB * T[:, None]))), axis=1)
    return ln_q + math.log(optical_isomers) + math.log(g_el)


def zpe_level(species) -> float:
    """E + (1/2) sum h c nu N_A over the real modes [J/mol]."""
    nu = np.asarray(species.frequencies_cm1, dtype=float)
    return species.energy_J_per_mol + 0.5 * float(np.sum(nu[nu > 0])) * 100.0 * H * C * NA


# ---- Eckart transmission written out from the potential (Eckart 1930) --------------------------

def eckart_log_p(E, imag_cm1, V1, V2) -> float:
    """ln P(E) for energies per molecule [J] above the reactant asymptote; -inf where closed.

    V(x) = A y/(1+y) + B y/(1+y)^2, y = exp(2 pi x/L), A = V1 - V2, B = (V1^1/2 + V2^1/2)^2.
    L is fixed by the curvature at the top, -V''(x*) = mu omega^2 (any mass mu: the
    combination C = h^2/(8 mu L^2) does not depend on it). Eckart's result:
    P = [cosh 2pi(a+b) - cosh 2pi(a-b)] / [cosh 2pi(a+b) + cosh 2pi d],
    a = (E/C)^1/2 / 2, b = ((E-A)/C)^1/2 / 2, d = ((B-C)/C)^1/2 / 2 (cos when B < C).
    """
    A = V1 - V2
    B = (math.sqrt(V1) + math.sqrt(V2)) ** 2
    if E <= 0.0 or E <= A:
        return -math.inf
    y = (A + B) / (B - A)                                    # dV/dy = 0
    vyy = -2 * A / (1 + y) ** 3 + B * (2 * y - 4) / (1 + y) ** 4
    mu = AMU
    omega = 2 * math.pi * C * imag_cm1 * 100.0
    # d2V/dx2 = (2 pi/L)^2 y^2 d2V/dy2 at the top
    L = 2 * math.pi * y * math.sqrt(-vyy / (mu * omega**2))
    c_e = H**2 / (8 * mu * L**2)
    ta = math.pi * math.sqrt(E / c_e)                        # 2 pi a
    tb = math.pi * math.sqrt((E - A) / c_e)                  # 2 pi b

    def log_sinh(x):
        return x + math.log(-math.expm1(-2 * x)) - math.log(2.0)

    def log_cosh(x):
        return abs(x) + math.log1p(math.exp(-2 * abs(x))) - math.log(2.0)

    # cosh(u) - cosh(v) = 2 sinh((u+v)/2) sinh((u-v)/2)
    log_num = math.log(2.0) + log_sinh(ta) + log_sinh(tb)
    u = ta + tb
    if B >= c_e:
        log_den = float(np.logaddexp(log_cosh(u), log_cosh(math.pi * math.sqrt((B - c_e) / c_e))))
    else:
        yw = math.pi * math.sqrt((c_e - B) / c_e)
        # cosh u + cos y = 2 sinh^2(u/2) + 2 cos^2(y/2)
        log_den = (math.log(2 * math.sinh(u / 2) ** 2 + 2 * math.cos(yw / 2) ** 2)
                   if u < 600 else log_cosh(u))
    return min(log_num - log_den, 0.0)


def eckart_kappa_quad(T, imag_cm1, V1_J_per_mol, V2_J_per_mol, floor_J_per_mol=0.0) -> float:
    """kappa = exp(V1/kT)/kT * int_{E0}^inf P(E) exp(-E/kT) dE by scipy quad (per molecule)."""
    V1, V2 = V1_J_per_mol / NA, V2_J_per_mol / NA
    kT = KB * T
    E0 = max(floor_J_per_mol / NA, 0.0, V1 - V2)
    top = max(V1, E0) + 60 * kT

    def g(E):
        return eckart_log_p(E, imag_cm1, V1, V2) - (E - V1) / kT - math.log(kT)

    grid = np.linspace(E0, top, 2001)[1:]
    gv = np.array([g(e) for e in grid])
    gmax, e_peak = gv.max(), grid[np.argmax(gv)]
    cuts = sorted({E0, e_peak, min(max(V1, E0), top), top})
    total = sum(integrate.quad(lambda e: math.exp(g(e) - gmax), a, b, epsabs=0.0, epsrel=1e-12,
                               limit=500)[0] for a, b in zip(cuts[:-1], cuts[1:]) if b > a)
    return math.exp(gmax) * total


def _with_tunnelling(ch: Channel, model: str, **changes) -> Channel:
    return dataclasses.replace(ch, tunnelling=model, **changes)


def _reverse(ch: Channel, model: str = "none") -> Channel:
    """The same transition state crossed from the products' side (no complex on that side)."""
    return Channel(name=ch.name + "_reverse", reactants=ch.products, transition_state=ch.transition_state,
                   products=ch.reactants, tunnelling=model)


# ---- k_B T / h -----------------------------------------------------------------------------------

def test_eyring_factor_against_exact_si_constants():
    k_exact = 1.380649e-23    # J/K, exact (SI 2019, CODATA 2018)
    h_exact = 6.62607015e-34  # J s, exact (SI 2019, CODATA 2018)
    expected = k_exact * 298.15 / h_exact
    got = float(np.exp(tst.ln_eyring_factor(298.15)))
    # both constants are exact, so only floating-point rounding separates the two
    assert got == pytest.approx(expected, rel=1e-13)
    # 6.2124e12 s^-1 quoted to 5 figures: half a unit in the last place is 8e-6 relative
    assert got == pytest.approx(6.2124e12, rel=8e-6)


# ---- independent recomputation of the toy bimolecular channel ----------------------------------

def test_toy_bimolecular_rate_from_textbook_partition_functions(toy):
    """O2 + H2O -> TS2 (toy exchange), Wigner tunnelling, recomputed from the formulas above."""
    sp = toy.species
    ch = toy.channel("exchange")
    cr = tst.channel_rates(ch, sp, TEMPS)
    # symmetry: O2 D_inf_h sigma = 2; H2O C2v sigma = 2; TS2 has no symmetry element (C1):
    # sigma = 1 and two mirror-image forms. Electronic: O2 and TS2 triplets, H2O singlet.
    ln_q_ts = textbook_ln_q_per_volume(sp["TS2"], TEMPS, sigma=1, optical_isomers=2, g_el=3)
    ln_q_o2 = textbook_ln_q_per_volume(sp["O2"], TEMPS, sigma=2, optical_isomers=1, g_el=3)
    ln_q_w = textbook_ln_q_per_volume(sp["H2O"], TEMPS, sigma=2, optical_isomers=1, g_el=1)
    e0 = zpe_level(sp["TS2"]) - zpe_level(sp["O2"]) - zpe_level(sp["H2O"])
    k_classical = KB * TEMPS / H * np.exp(ln_q_ts - ln_q_o2 - ln_q_w - e0 / (R * TEMPS))
    # Wigner (1932): kappa = 1 + (h c nu / k T)^2 / 24
    u = H * C * 1200.0 * 100.0 / (KB * TEMPS)
    k = k_classical * (1.0 + u**2 / 24.0)
    # 1e-8: the same formulas in a different order; only rounding (~1e-13) separates them
    np.testing.assert_allclose(cr.k_classical, k_classical, rtol=1e-8)
    np.testing.assert_allclose(cr.k, k, rtol=1e-8)
    assert cr.barrier_zpe_J_per_mol == pytest.approx(e0, rel=1e-12)
    assert cr.order == 2 and cr.reverse_order == 2
    # reaction-path degeneracy implied: sigma_O2 sigma_H2O n_TS / sigma_TS = 2 * 2 * 2 / 1
    assert cr.symmetry_degeneracy == pytest.approx(8.0)
    assert cr.degeneracy == pytest.approx(8.0)


def test_toy_unimolecular_rate_from_textbook_partition_functions(toy):
    """H2O -> TS (toy inversion), tunnelling left out (k_classical)."""
    sp = toy.species
    cr = tst.channel_rates(toy.channel("inversion"), sp, TEMPS)
    # both C2v (sigma = 2), singlets
    ln_q_ts = textbook_ln_q_per_volume(sp["TS"], TEMPS, sigma=2, optical_isomers=1, g_el=1)
    ln_q_r = textbook_ln_q_per_volume(sp["H2O"], TEMPS, sigma=2, optical_isomers=1, g_el=1)
    e0 = zpe_level(sp["TS"]) - zpe_level(sp["H2O"])
    expected = KB * TEMPS / H * np.exp(ln_q_ts - ln_q_r - e0 / (R * TEMPS))
    np.testing.assert_allclose(cr.k_classical, expected, rtol=1e-8)


def test_atom_plus_atom_equals_hard_sphere_collision_theory():
    """NPTEL course 122101001, unit 33, eq. (33.34) / Laidler (1987): k = (8kT/(pi mu))^1/2 pi r^2 exp(-E0/RT) g_TS/(g_A g_B)."""
    r_A = 1.9
    e_ts = 25e3  # [J/mol], invented
    species = {
        "N": build_species("N", ["N"], [[0, 0, 0]], multiplicity=4, frequencies_cm1=[],
                           energy_J_per_mol=0.0),
        "O": build_species("O", ["O"], [[0, 0, 0]], multiplicity=3, frequencies_cm1=[],
                           energy_J_per_mol=0.0),
        "NO_ts": build_species("NO_ts", ["N", "O"], [[0, 0, 0], [0, 0, r_A]], multiplicity=2,
                               kind="transition_state", frequencies_cm1=[-600.0],
                               energy_J_per_mol=e_ts),
        "NO": build_species("NO", ["N", "O"], [[0, 0, 0], [0, 0, 1.15]], multiplicity=2,
                            frequencies_cm1=[1904.0], energy_J_per_mol=-600e3),
    }
    ch = Channel("association", reactants=("N", "O"), transition_state="NO_ts", products=("NO",))
    cr = tst.channel_rates(ch, species, TEMPS)
    m_n = species["N"].mass_kg
    m_o = species["O"].mass_kg
    mu = m_n * m_o / (m_n + m_o)
    sigma_cross = math.pi * (r_A * 1e-10) ** 2
    expected = (np.sqrt(8 * KB * TEMPS / (math.pi * mu)) * sigma_cross * np.exp(-e_ts / (R * TEMPS))
                * 2 / (4 * 3))
    # an exact identity: only rounding separates the two
    np.testing.assert_allclose(cr.k, expected, rtol=1e-10)


# ---- detailed balance and equilibrium constants -----------------------------------------------

@pytest.mark.parametrize("name", ["bare", "back", "water", "two_waters"])
def test_equilibrium_constant_from_gibbs_energies(carbonic, name):
    """Kc against the 1 bar Gibbs energies of tstrate.physics.thermo: Kp = exp(-dG0/RT), Kc = Kp (p0/kT)^dn."""
    ch = carbonic.channel(name)
    sp = carbonic.species
    cr = tst.channel_rates(_with_tunnelling(ch, "none"), sp, TEMPS)
    g = {n: thermochemistry(sp[n], TEMPS).gibbs_J_per_mol for n in set(ch.reactants + ch.products)}
    d_g = sum(g[n] for n in ch.products) - sum(g[n] for n in ch.reactants)
    dn = len(ch.products) - len(ch.reactants)
    ln_kp = -d_g / (R * TEMPS)
    np.testing.assert_allclose(cr.ln_kp, ln_kp, rtol=0, atol=1e-8)  # ln K up to ~1e3: 1e-8 absolute
    np.testing.assert_allclose(cr.ln_kc, ln_kp + dn * np.log(P0 / (KB * TEMPS)), rtol=0, atol=1e-8)


@pytest.mark.parametrize("name, reverse_order", [("bare", 2), ("back", 1), ("water", 3)],
                         ids=["unimolecular", "bimolecular-to-unimolecular", "bimolecular-to-termolecular"])
def test_detailed_balance_against_reverse_channel(carbonic, name, reverse_order):
    ch = _with_tunnelling(carbonic.channel(name), "none")
    sp = carbonic.species
    fwd = tst.channel_rates(ch, sp, TEMPS)
    rev = tst.channel_rates(_reverse(ch), sp, TEMPS)
    assert rev.order == reverse_order == fwd.reverse_order
    # same transition state, same partition functions: only rounding, 1e-10 as asked
    np.testing.assert_allclose(fwd.k / rev.k, np.exp(fwd.ln_kc), rtol=1e-10)
    np.testing.assert_allclose(fwd.k_reverse, rev.k, rtol=1e-10)
    np.testing.assert_allclose(rev.ln_kc, -fwd.ln_kc, rtol=0, atol=1e-9)


def test_detailed_balance_with_eckart_tunnelling(carbonic):
    """Eckart kappa is the same in both directions (same P(E), same floor): bare vs back."""
    sp = carbonic.species
    T = np.array([150.0, 200.0, 298.15, 1000.0])
    fwd = tst.channel_rates(carbonic.channel("bare"), sp, T)
    rev = tst.channel_rates(carbonic.channel("back"), sp, T)
    assert fwd.eckart_V1_J_per_mol == pytest.approx(rev.eckart_V2_J_per_mol, rel=1e-12)
    # two separate quadratures of the same integral (documented to ~1e-10): 1e-8
    np.testing.assert_allclose(fwd.kappa, rev.kappa, rtol=1e-8)
    np.testing.assert_allclose(fwd.k_reverse, rev.k, rtol=1e-8)


# ---- activation quantities -----------------------------------------------------------------------

@pytest.mark.parametrize("name, order", [("bare", 1), ("back", 2), ("water", 2), ("two_waters", 3)])
def test_activation_quantities(carbonic, name, order):
    ch = carbonic.channel(name)
    sp = carbonic.species
    cr = tst.channel_rates(ch, sp, TEMPS)
    assert cr.order == order
    c0 = P0 / (KB * TEMPS)  # 1 bar standard concentration [m^-3]
    # textbook form: k = (kT/h) c0^(1-n) exp(-dG/RT)
    np.testing.assert_allclose(cr.k_classical,
                               KB * TEMPS / H * c0 ** (1 - order) * np.exp(-cr.delta_G_J_per_mol / (R * TEMPS)),
                               rtol=1e-10)
    np.testing.assert_allclose(cr.delta_G_J_per_mol,
                               cr.delta_H_J_per_mol - TEMPS * cr.delta_S_J_per_mol_K, rtol=1e-12, atol=1e-6)
    # against each species' own 1 bar H, S, G (the TS without its imaginary mode)
    th = {n: thermochemistry(sp[n], TEMPS) for n in set(ch.reactants) | {ch.transition_state}}
    ts = th[ch.transition_state]
    d_g = ts.gibbs_J_per_mol - sum(th[n].gibbs_J_per_mol for n in ch.reactants)
    d_h = ts.enthalpy_J_per_mol - sum(th[n].enthalpy_J_per_mol for n in ch.reactants)
    d_s = ts.entropy_J_per_mol_K - sum(th[n].entropy_J_per_mol_K for n in ch.reactants)
    # energies of 1e4-1e6 J/mol from sums of terms: 1e-6 J/mol absolute is rounding level
    np.testing.assert_allclose(cr.delta_G_J_per_mol, d_g, rtol=1e-11, atol=1e-6)
    np.testing.assert_allclose(cr.delta_H_J_per_mol, d_h, rtol=1e-11, atol=1e-6)
    np.testing.assert_allclose(cr.delta_S_J_per_mol_K, d_s, rtol=1e-10, atol=1e-8)


# ---- units -------------------------------------------------------------------------------------

def test_record_units(carbonic):
    sp = carbonic.species
    T = np.array([200.0, 300.0])
    cm3 = 1e6           # cm^3 per m^3 (definition)
    litre = 1e3         # L per m^3 (definition)
    n_a = 6.02214076e23  # mol^-1, exact (SI 2019)
    water = tst.channel_rates(carbonic.channel("water"), sp, T)
    rec = channel_rates_record(water)
    assert rec["rate_constant_unit"] == "cm3 molecule-1 s-1"
    np.testing.assert_allclose(rec["rate_constant"], water.k * cm3, rtol=1e-14)
    # the reverse of "water" is termolecular (CO2 + 2 H2O)
    assert rec["reverse_rate_constant_unit"] == "cm6 molecule-2 s-1"
    np.testing.assert_allclose(rec["reverse_rate_constant"], water.k_reverse * cm3**2, rtol=1e-14)
    # Kc of H2CO3 + H2O <=> CO2 + 2 H2O in molecule cm^-3 (dn = +1)
    assert rec["Kc_unit"] == "(molecule cm-3)^1"
    np.testing.assert_allclose(rec["Kc"], np.exp(water.ln_kc) / cm3, rtol=1e-12)

    rec = channel_rates_record(water, {2: "L mol-1 s-1"})
    assert rec["rate_constant_unit"] == "L mol-1 s-1"
    np.testing.assert_allclose(rec["rate_constant"], water.k * litre * n_a, rtol=1e-12)
    rec = channel_rates_record(water, {2: "m3 mol-1 s-1"})
    assert rec["rate_constant_unit"] == "m3 mol-1 s-1"
    np.testing.assert_allclose(rec["rate_constant"], water.k * n_a, rtol=1e-12)

    bare = tst.channel_rates(carbonic.channel("bare"), sp, T)
    rec = channel_rates_record(bare, {2: "L mol-1 s-1"})
    assert rec["rate_constant_unit"] == "s-1"
    np.testing.assert_allclose(rec["rate_constant"], bare.k, rtol=1e-15)
    assert rec["reverse_rate_constant_unit"] == "L mol-1 s-1"  # the study's unit applies to the reverse too
    np.testing.assert_allclose(rec["reverse_rate_constant"], bare.k_reverse * litre * n_a, rtol=1e-12)

    two = tst.channel_rates(carbonic.channel("two_waters"), sp, T)
    rec = channel_rates_record(two)
    assert rec["rate_constant_unit"] == "cm6 molecule-2 s-1"
    np.testing.assert_allclose(rec["rate_constant"], two.k * cm3**2, rtol=1e-14)
    # four products: the reverse is fourth order (regression: this raised KeyError)
    assert rec["reverse_rate_constant_unit"] == "cm9 molecule-3 s-1"
    np.testing.assert_allclose(rec["reverse_rate_constant"], two.k_reverse * cm3**3, rtol=1e-14)


def test_termolecular_study_units():
    study = read_study(DATA / "tst" / "reverse_water.toml")
    assert study.conditions.rate_units == {2: "L mol-1 s-1", 3: "cm6 molecule-2 s-1"}
    (cr,) = study_rates(study)
    assert cr.order == 3 and cr.reverse_order == 2
    rec = channel_rates_record(cr, study.conditions.rate_units)
    assert rec["rate_constant_unit"] == "cm6 molecule-2 s-1"
    np.testing.assert_allclose(rec["rate_constant"], cr.k * 1e12, rtol=1e-14)  # (1e6 cm^3/m^3)^2
    assert rec["reverse_rate_constant_unit"] == "L mol-1 s-1"
    np.testing.assert_allclose(rec["reverse_rate_constant"], cr.k_reverse * 1e3 * 6.02214076e23, rtol=1e-12)


# ---- symmetry numbers and the degeneracy override ------------------------------------------------

def _k(ch, species, T=TEMPS):
    return tst.channel_rates(ch, species, T).k


@pytest.mark.parametrize("name, reactant", [("bare", "H2CO3"), ("water", "H2O"), ("water", "H2CO3"),
                                            ("two_waters", "H2O")])
def test_doubling_a_reactant_symmetry_number_doubles_k(carbonic, name, reactant):
    ch = carbonic.channel(name)
    sp = carbonic.species
    base = _k(ch, sp)
    changed = dict(sp)
    changed[reactant] = dataclasses.replace(sp[reactant], symmetry_number=2 * sp[reactant].symmetry_number)
    # a reactant that appears twice (two_waters: H2O twice) enters squared
    power = ch.reactants.count(reactant)
    np.testing.assert_allclose(_k(ch, changed), base * 2.0**power, rtol=1e-10)


def test_transition_state_symmetry_and_optical_isomers(carbonic):
    ch = carbonic.channel("water")
    sp = carbonic.species
    base = _k(ch, sp)
    ts = sp["TS_w"]
    sym2 = dict(sp, TS_w=dataclasses.replace(ts, symmetry_number=2))
    np.testing.assert_allclose(_k(ch, sym2), base / 2.0, rtol=1e-10)
    achiral = dict(sp, TS_w=dataclasses.replace(ts, optical_isomers=1))
    np.testing.assert_allclose(_k(ch, achiral), base / 2.0, rtol=1e-10)
    # sigma(H2CO3) sigma(H2O) n(TS) / sigma(TS) = 2 * 2 * 2 / 1
    assert tst.symmetry_degeneracy([sp["H2CO3"], sp["H2O"]], ts) == pytest.approx(8.0)


def test_degeneracy_override_sets_the_factor(carbonic):
    ch = carbonic.channel("water")
    sp = carbonic.species
    default = tst.channel_rates(ch, sp, TEMPS)
    assert default.degeneracy == pytest.approx(default.symmetry_degeneracy) == pytest.approx(8.0)
    over = tst.channel_rates(dataclasses.replace(ch, degeneracy=3.0), sp, TEMPS)
    assert over.degeneracy == 3.0
    np.testing.assert_allclose(over.k, default.k * 3.0 / 8.0, rtol=1e-12)
    # with the override, the reactants' symmetry numbers no longer change k
    doubled = dict(sp, H2O=dataclasses.replace(sp["H2O"], symmetry_number=4))
    over2 = tst.channel_rates(dataclasses.replace(ch, degeneracy=3.0), doubled, TEMPS)
    np.testing.assert_allclose(over2.k, over.k, rtol=1e-12)
    # the equilibrium constant is thermodynamics: not touched by the override
    np.testing.assert_allclose(over.ln_kc, default.ln_kc, rtol=0, atol=1e-12)


# ---- channels through a pre-reactive complex -------------------------------------------------

def test_complex_cancels_without_tunnelling(carbonic):
    ch = _with_tunnelling(carbonic.channel("water"), "none")
    assert ch.complex == "H2CO3_H2O"
    sp = carbonic.species
    with_cx = tst.channel_rates(ch, sp, TEMPS)
    without = tst.channel_rates(dataclasses.replace(ch, complex=None), sp, TEMPS)
    np.testing.assert_allclose(with_cx.k, without.k, rtol=1e-14)
    # and it is the direct expression from the separated reactants (textbook pieces)
    ln_q_ts = textbook_ln_q_per_volume(sp["TS_w"], TEMPS, sigma=1, optical_isomers=2, g_el=1)
    ln_q_a = textbook_ln_q_per_volume(sp["H2CO3"], TEMPS, sigma=2, optical_isomers=1, g_el=1)
    ln_q_b = textbook_ln_q_per_volume(sp["H2O"], TEMPS, sigma=2, optical_isomers=1, g_el=1)
    e0 = zpe_level(sp["TS_w"]) - zpe_level(sp["H2CO3"]) - zpe_level(sp["H2O"])
    direct = KB * TEMPS / H * np.exp(ln_q_ts - ln_q_a - ln_q_b - e0 / (R * TEMPS))
    np.testing.assert_allclose(with_cx.k, direct, rtol=1e-8)
    assert with_cx.barrier_from_complex_zpe_J_per_mol == pytest.approx(
        zpe_level(sp["TS_w"]) - zpe_level(sp["H2CO3_H2O"]), rel=1e-12)
    assert without.barrier_from_complex_zpe_J_per_mol is None


@pytest.mark.parametrize("floor", ["reactants", "complex"])
def test_complex_eckart_barriers_and_floor(carbonic, floor):
    """tst.py docstring: V1 from the complex, V2 from the products; floor at the separated
    reactants (default) or at the complex."""
    sp = carbonic.species
    ch = dataclasses.replace(carbonic.channel("water"), tunnelling="eckart", tunnelling_floor=floor)
    T = np.array([150.0, 200.0, 298.15, 1000.0])
    cr = tst.channel_rates(ch, sp, T)
    e_c = zpe_level(sp["H2CO3_H2O"])
    e_ts = zpe_level(sp["TS_w"])
    e_r = zpe_level(sp["H2CO3"]) + zpe_level(sp["H2O"])
    e_p = zpe_level(sp["CO2"]) + 2 * zpe_level(sp["H2O"])
    v1, v2 = e_ts - e_c, e_ts - e_p
    expected_floor = e_r - e_c if floor == "reactants" else 0.0
    assert cr.eckart_V1_J_per_mol == pytest.approx(v1, rel=1e-12)
    assert cr.eckart_V2_J_per_mol == pytest.approx(v2, rel=1e-12)
    assert cr.energy_floor_J_per_mol == pytest.approx(expected_floor, abs=1e-6)
    assert 0 < e_r - e_c < v1  # the data do what the test needs: complex below reactants below TS
    # independent Eckart thermal average by quad; 1e-6 is far above both quadratures' errors
    # (they agree to ~1e-12 in practice) and far below the effect of a wrong floor (factors)
    expected = [eckart_kappa_quad(t, 1300.0, v1, v2, expected_floor) for t in T]
    np.testing.assert_allclose(cr.kappa, expected, rtol=1e-6)
    # k = kappa x the classical k of the separated reactants (the complex cancels there)
    classical = tst.channel_rates(_with_tunnelling(ch, "none"), sp, T).k
    np.testing.assert_allclose(cr.k, cr.kappa * classical, rtol=1e-12)
    np.testing.assert_allclose(cr.k_classical, classical, rtol=1e-12)


@pytest.mark.parametrize("model", ["eckart", "skodje-truhlar"])
def test_submerged_transition_state_keeps_its_over_barrier_flux(carbonic, model):
    """tst.py docstring: a TS below the separated reactants keeps its over-the-barrier flux (the
    floor sits at the barrier top). Reference: the transmission-weighted flux over the top is at
    least half the classical one for both models (P = 1/2 at the top of an Eckart or a parabolic
    barrier, rising above it), and never more than it (no tunnelling is counted)."""
    sp = dict(carbonic.species)
    ch = _with_tunnelling(carbonic.channel("water"), model)
    e_r = zpe_level(sp["H2CO3"]) + zpe_level(sp["H2O"])
    ts = sp["TS_w"]
    sp["TS_w"] = dataclasses.replace(ts, energy_J_per_mol=ts.energy_J_per_mol
                                     - (zpe_level(ts) - e_r) - 5 * 1e3)   # 5 kJ/mol below reactants
    T = np.array([100.0, 150.0, 250.0, 1000.0])
    cr = tst.channel_rates(ch, sp, T)
    assert cr.barrier_zpe_J_per_mol == pytest.approx(-5e3, abs=1e-6)
    assert cr.energy_floor_J_per_mol == pytest.approx(cr.eckart_V1_J_per_mol, rel=1e-12)
    assert np.all(cr.kappa > 0.5) and np.all(cr.kappa <= 1.0)
    assert np.all(np.isfinite(cr.k)) and np.all(cr.k > 0)


def test_complex_floor_choice_orders_kappa(carbonic):
    sp = carbonic.species
    base = dataclasses.replace(carbonic.channel("water"), tunnelling="eckart")
    T = np.array([150.0, 250.0, 400.0])
    from_reactants = tst.channel_rates(base, sp, T).kappa
    from_complex = tst.channel_rates(dataclasses.replace(base, tunnelling_floor="complex"), sp, T).kappa
    # a lower floor adds energies to the integral: more tunnelling
    assert np.all(from_complex > from_reactants)


def _with_product_complex(carbonic, drop_kJ=30.0):
    """The water channel with an invented product complex CO2.2H2O (the atoms of the complex
    H2CO3_H2O, which balance CO2 + 2 H2O) lying ``drop_kJ`` below the separated products."""
    sp = dict(carbonic.species)
    e_p = sum(sp[n].energy_J_per_mol for n in ("CO2", "H2O", "H2O"))
    sp["CO2_2H2O"] = dataclasses.replace(sp["H2CO3_H2O"], name="CO2_2H2O",
                                         energy_J_per_mol=e_p - drop_kJ * 1e3)
    ch = dataclasses.replace(carbonic.channel("water"), tunnelling="eckart", product_complex="CO2_2H2O")
    return ch, sp


def test_product_complex_sets_the_reverse_tunnelling_barrier(carbonic):
    """tst.py docstring: with a product complex, V2 = E0_TS - E0_P*; the rate is the classical
    rate of the separated reactants times kappa, and equilibrium constants stay with the products."""
    ch, sp = _with_product_complex(carbonic)
    T = np.array([150.0, 200.0, 298.15])
    cr = tst.channel_rates(ch, sp, T)
    plain = tst.channel_rates(dataclasses.replace(ch, product_complex=None), sp, T)
    v1 = zpe_level(sp["TS_w"]) - zpe_level(sp["H2CO3_H2O"])
    v2 = zpe_level(sp["TS_w"]) - zpe_level(sp["CO2_2H2O"])
    assert cr.product_complex == "CO2_2H2O" and plain.product_complex is None
    assert cr.eckart_V2_J_per_mol == pytest.approx(v2, rel=1e-12)
    assert cr.eckart_V2_J_per_mol - plain.eckart_V2_J_per_mol == pytest.approx(
        zpe_level(sp["CO2"]) + 2 * zpe_level(sp["H2O"]) - zpe_level(sp["CO2_2H2O"]), rel=1e-9)
    floor = cr.energy_floor_J_per_mol
    # independent Eckart thermal average by quad (see test_complex_eckart_barriers_and_floor)
    np.testing.assert_allclose(cr.kappa, [eckart_kappa_quad(t, 1300.0, v1, v2, floor) for t in T], rtol=1e-6)
    assert np.all(cr.kappa != plain.kappa)
    np.testing.assert_allclose(cr.k_classical, plain.k_classical, rtol=1e-14)
    np.testing.assert_allclose(cr.ln_kc, plain.ln_kc, rtol=1e-14)
    np.testing.assert_allclose(cr.k / cr.k_reverse, np.exp(cr.ln_kc), rtol=1e-12)
    rec = channel_rates_record(cr)
    assert rec["tunnelling_product_complex"] == "CO2_2H2O"
    assert rec["tunnelling_reverse_barrier_kJ_per_mol"] == pytest.approx(v2 / 1e3, rel=1e-12)


def test_product_complex_above_the_transition_state_is_named(carbonic):
    ch, sp = _with_product_complex(carbonic, drop_kJ=-200.0)
    with pytest.raises(InputError, match=r"reverse ZPE-corrected barrier .* product complex 'CO2_2H2O'"):
        tst.channel_rates(ch, sp, [300.0])


@pytest.mark.parametrize("model", ["eckart", "skodje-truhlar"])
@pytest.mark.parametrize("floor", ["reactants", "complex"])
def test_kappa_with_the_other_floor_is_reported(carbonic, model, floor):
    """For a channel through a complex the tunnelling factor with the other floor choice is the
    one the channel would get with that choice; the effect on k is the ratio of the two."""
    sp = carbonic.species
    ch = dataclasses.replace(carbonic.channel("water"), tunnelling=model, tunnelling_floor=floor)
    other = "complex" if floor == "reactants" else "reactants"
    T = np.array([150.0, 250.0, 400.0])
    cr = tst.channel_rates(ch, sp, T)
    flipped = tst.channel_rates(dataclasses.replace(ch, tunnelling_floor=other), sp, T)
    assert cr.tunnelling_floor == floor
    np.testing.assert_allclose(cr.kappa_other_floor, flipped.kappa, rtol=1e-14)
    np.testing.assert_allclose(flipped.kappa_other_floor, cr.kappa, rtol=1e-14)
    assert cr.other_energy_floor_J_per_mol == flipped.energy_floor_J_per_mol
    # the floor at the complex counts more energies: more tunnelling
    low, high = (cr.kappa, cr.kappa_other_floor) if floor == "reactants" else (cr.kappa_other_floor, cr.kappa)
    assert np.all(high > low)
    rec = channel_rates_record(cr)
    assert rec["tunnelling_floor"] == floor and rec["other_tunnelling_floor"] == other
    np.testing.assert_allclose(rec["kappa_other_floor"], flipped.kappa, rtol=1e-14)
    assert rec["other_tunnelling_energy_floor_kJ_per_mol"] == pytest.approx(
        flipped.energy_floor_J_per_mol / 1e3, abs=1e-12)


@pytest.mark.parametrize("name, model", [("bare", "eckart"), ("water", "wigner"), ("water", "none")])
def test_no_other_floor_without_complex_or_floor(carbonic, name, model):
    cr = tst.channel_rates(_with_tunnelling(carbonic.channel(name), model), carbonic.species, [250.0])
    assert cr.kappa_other_floor is None and cr.other_energy_floor_J_per_mol is None
    rec = channel_rates_record(cr)
    assert rec["kappa_other_floor"] is None and rec["other_tunnelling_floor"] is None
    assert rec["tunnelling_floor"] == (None if name == "bare" else "reactants")


def test_eckart_without_complex_uses_the_separated_reactants(carbonic):
    sp = carbonic.species
    T = np.array([200.0, 298.15])
    cr = tst.channel_rates(carbonic.channel("bare"), sp, T)
    v1 = zpe_level(sp["TS_bare"]) - zpe_level(sp["H2CO3"])
    v2 = zpe_level(sp["TS_bare"]) - zpe_level(sp["CO2"]) - zpe_level(sp["H2O"])
    assert cr.eckart_V1_J_per_mol == pytest.approx(v1, rel=1e-12)
    assert cr.eckart_V2_J_per_mol == pytest.approx(v2, rel=1e-12)
    assert cr.energy_floor_J_per_mol == 0.0
    np.testing.assert_allclose(cr.kappa, [eckart_kappa_quad(t, 1650.0, v1, v2) for t in T], rtol=1e-6)


# ---- property tests ------------------------------------------------------------------------------

def _modified_channel(toy, channel_name: str, barrier_J_per_mol: float, imag_cm1: float, model: str):
    """Toy channel whose TS has the given ZPE-corrected barrier and imaginary wavenumber (copies; the
    toy study is not changed)."""
    ch = dataclasses.replace(toy.channel(channel_name), tunnelling=model)
    sp = dict(toy.species)
    ts = sp[ch.transition_state]
    freqs = np.concatenate([[-imag_cm1], np.asarray(ts.frequencies_cm1)[1:]])
    ts = dataclasses.replace(ts, frequencies_cm1=freqs, energy_J_per_mol=0.0)
    e0_r = sum(zpe_level(sp[n]) for n in ch.reactants)
    sp[ch.transition_state] = dataclasses.replace(ts, energy_J_per_mol=e0_r + barrier_J_per_mol - zpe_level(ts))
    return ch, sp


@settings(max_examples=80, deadline=None)
@given(barrier_kJ=st.floats(-20.0, 200.0),
       imag_cm1=st.floats(50.0, 4000.0),
       temps=st.lists(st.floats(50.0, 3000.0), min_size=1, max_size=6),
       model=st.sampled_from(["none", "wigner", "eckart"]),
       channel=st.sampled_from(["inversion", "exchange"]))
def test_rates_finite_and_positive(toy, barrier_kJ, imag_cm1, temps, model, channel):
    # barriers within rounding of zero (|E0| ~ 1e-10 J/mol out of ~1e5) could land on either side
    assume(model != "eckart" or abs(barrier_kJ) > 1e-6)
    ch, sp = _modified_channel(toy, channel, barrier_kJ * 1e3, imag_cm1, model)
    T = np.array(temps)
    if model == "eckart" and barrier_kJ <= 0:
        # products = reactants in the toy channels, so V1 = V2 = the barrier
        with pytest.raises(InputError, match="forward ZPE-corrected barrier"):
            tst.channel_rates(ch, sp, T)
        return
    cr = tst.channel_rates(ch, sp, T)
    assert cr.barrier_zpe_J_per_mol == pytest.approx(barrier_kJ * 1e3, abs=1e-6)
    for arr in (cr.k, cr.k_classical, cr.kappa, cr.k_reverse):
        assert np.all(np.isfinite(arr)) and np.all(arr > 0), (arr, T)
    if model == "wigner":
        assert np.all(cr.kappa >= 1.0)
    if model == "none":
        assert np.all(cr.kappa == 1.0)
    np.testing.assert_allclose(cr.k, cr.k_classical * cr.kappa, rtol=1e-12)
    # the toy channels lead back to their reactants: K = 1 and k_reverse = k
    np.testing.assert_allclose(cr.k_reverse, cr.k, rtol=1e-12)


# ---- bad input at the API ------------------------------------------------------------------------

def test_transition_state_needs_exactly_one_imaginary_frequency(carbonic):
    sp = carbonic.species
    ch = carbonic.channel("bare")
    ts = sp["TS_bare"]
    # refused when the record is built (not first when rates are computed), naming file and key
    with pytest.raises(InputError, match="exactly one imaginary frequency, found 0") as exc:
        dataclasses.replace(ts, frequencies_cm1=np.abs(ts.frequencies_cm1))
    assert "ts_bare.toml" in str(exc.value) and "frequencies_cm1" in str(exc.value)
    f = np.array(ts.frequencies_cm1, dtype=float)
    f[1] = -f[1]
    with pytest.raises(InputError, match="exactly one imaginary frequency, found 2"):
        dataclasses.replace(ts, frequencies_cm1=np.sort(f))
    # a minimum used as the transition state of a channel is still refused by the rate code
    not_ts = dict(sp, TS_bare=dataclasses.replace(ts, kind="minimum", frequencies_cm1=np.abs(ts.frequencies_cm1)))
    with pytest.raises(InputError, match="has 0 imaginary frequencies"):
        tst.channel_rates(ch, not_ts, [300.0])


@pytest.mark.parametrize("temps", [[0.0], [300.0, -5.0], [np.nan], [np.inf]])
def test_temperatures_must_be_positive_and_finite(carbonic, temps):
    with pytest.raises(InputError, match="temperatures must be positive"):
        tst.channel_rates(carbonic.channel("bare"), carbonic.species, temps)
    with pytest.raises(InputError, match="temperatures must be positive"):
        study_rates(carbonic, temperature_K=temps)


def test_unknown_tunnelling_model(carbonic):
    with pytest.raises(InputError, match="unknown tunnelling model 'parabolic'"):
        dataclasses.replace(carbonic.channel("bare"), tunnelling="parabolic")  # refused at construction


def test_eckart_needs_positive_barriers(carbonic):
    sp = dict(carbonic.species)
    # lift CO2 so that the products lie above the transition state: negative reverse barrier
    sp["CO2"] = dataclasses.replace(sp["CO2"], energy_J_per_mol=200e3)
    with pytest.raises(InputError, match="reverse ZPE-corrected barrier is -") as exc:
        tst.channel_rates(carbonic.channel("bare"), sp, [300.0])
    assert exc.value.field == "tunnelling"
    # wigner does not care
    tst.channel_rates(dataclasses.replace(carbonic.channel("bare"), tunnelling="wigner"), sp, [300.0])
    # the study-level call names the study file and the channel's key
    study = dataclasses.replace(carbonic, species=sp)
    with pytest.raises(InputError) as exc:
        study_rates(study)
    msg = str(exc.value)
    assert "study.toml" in msg and "[channel[0].tunnelling]" in msg and "\n" not in msg
    # exactly zero reverse barrier: Eckart needs V2 > 0 (the channel's message, not the module's)
    level = tst.zpe_level_J_per_mol
    ts_e0 = level(carbonic.species["TS_bare"])
    co2 = dataclasses.replace(carbonic.species["CO2"], energy_J_per_mol=0.0)
    e = ts_e0 - level(co2) - level(sp["H2O"])
    for _ in range(200):  # step to the float where the products' level equals the TS's exactly
        co2 = dataclasses.replace(co2, energy_J_per_mol=e)
        gap = ts_e0 - (level(co2) + level(sp["H2O"]))
        if gap == 0.0:
            break
        e = np.nextafter(e, np.inf if gap > 0 else -np.inf)
    assert gap == 0.0
    sp["CO2"] = co2
    with pytest.raises(InputError, match="eckart needs V1 > 0 and V2 > 0"):
        tst.channel_rates(carbonic.channel("bare"), sp, [300.0])


def test_species_without_energy_is_named(carbonic):
    sp = dict(carbonic.species)
    sp["H2CO3"] = dataclasses.replace(sp["H2CO3"], energy_J_per_mol=None)
    with pytest.raises(InputError, match="has no electronic energy") as exc:
        study_rates(dataclasses.replace(carbonic, species=sp))
    assert "h2co3.toml" in str(exc.value)
