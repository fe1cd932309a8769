"""One-dimensional hindered rotors: limits, the Pitzer-Gwinn approximation, ethane and methanol entropies.

Sources of the check values (each also named at its test):
- free-rotor limit: the quantum levels B m^2 of a free 1-D rotor summed by brute force, and the classical
  free rotor q = (8 pi^3 I k T)^(1/2) / (sigma h) (McQuarrie, Statistical Mechanics, 1976);
- harmonic limit: the harmonic oscillator of wavenumber sqrt(V''(0)/I) / (2 pi c), q = 1/(1 - e^-x)
  from its ground level (any statistical-mechanics text);
- classical limit: the classical hindered rotor of a cosine potential,
  q = q_free exp(-V0/2kT) I0(V0/2kT) (Pitzer and Gwinn, J. Chem. Phys. 10, 428 (1942), their classical
  partition function), with scipy's Bessel function I0;
- the Pitzer-Gwinn approximation q = q_HO(quantum) q_classical / q_HO(classical), the formula on which
  their tables rest (Pitzer and Gwinn 1942). The tables themselves were not available to transcribe;
  the test checks the formula instead, within 2 % in q for 1/Q_f up to 0.3 (common practice treats the
  approximation as good to 1-2 % there; at 1/Q_f = 0.5 it is 4 % off the exact levels, so that
  range is left out);
- ethane and methanol: S(298.15 K, 1 bar) from the NIST CCCBDB "experimental data" pages (Gurvich's
  tables): ethane 229.16 +- 0.10 J/(mol K), torsional barrier V3 = 1024 cm-1; methanol 239.87 J/(mol K),
  V3 = 373.08 cm-1, V6 = -0.80 cm-1 (CCCBDB citing Herbst et al. 1984); vibrational fundamentals
  from the same pages (Shimanouchi's tables), used as harmonic wavenumbers, the torsion left out.
  Geometries: ethane r(CC) 1.522, r(CH) 1.094 Angstrom, angle HCC 111.2 degrees; methanol r(CO) 1.4246,
  r(OH) 0.9451, r(CH) 1.0936 Angstrom, COH 108.53, HCO 109.0 degrees (microwave structures, from
  memory; the entropies change by under 0.05 J/(mol K) for 0.01 Angstrom).
- methanol's internal-rotation constant F = 27.6 cm-1 (Lees and Baker, J. Chem. Phys. 48, 5299 (1968);
  from memory), against Pitzer's reduced moment from the geometry, within 3 %.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import N_A, R, c as c_light, h, k as kB, physical_constants
from scipy.special import i0e

from tstrate.physics import torsions
from tstrate.physics.rotors import (HinderedRotorModel, TorsionPotential, fit_potential,
                                    torsional_levels_J_per_mol)
from tstrate.physics.thermo import harmonic_oscillators, rotational, translational
from tstrate.physics.vibrations import default_masses_amu
from tstrate.geometry import principal_moments

AMU = physical_constants["atomic mass constant"][0]
CM1 = h * c_light * 100.0 * N_A  # J/mol per cm-1


def cosine_rotor(v0_cm1, sigma, moment_amu_A2):
    return HinderedRotorModel(moment_amu_A2, sigma, TorsionPotential.from_barriers(
        [0.0] * (sigma - 1) + [v0_cm1 * CM1]))


def b_cm1(moment_amu_A2):
    return h / (8 * math.pi**2 * c_light * moment_amu_A2 * AMU * 1e-20) / 100.0


# ---- limits ---------------------------------------------------------------------

@pytest.mark.parametrize("sigma", [1, 3])
def test_free_rotor_limit_quantum_and_classical(sigma):
    moment = 1.2
    model = cosine_rotor(1e-6, sigma, moment)
    T = np.array([20.0, 100.0, 298.15, 1000.0])
    ln_q, u, s, cv = model.thermo_parts(T)
    b = b_cm1(moment) * CM1
    m = np.arange(-400, 401)
    # brute-force sum over free-rotor levels B m^2, divided by sigma
    q_brute = np.array([np.exp(-b * m**2 / (R * t)).sum() / sigma for t in T])
    np.testing.assert_allclose(ln_q, np.log(q_brute), rtol=0, atol=1e-8)
    # classical free rotor (McQuarrie 1976) where k T >> B
    q_class = np.sqrt(8 * math.pi**3 * moment * AMU * 1e-20 * kB * T) / (sigma * h)
    hot = T >= 298.15
    np.testing.assert_allclose(ln_q[hot], np.log(q_class[hot]), atol=2e-3)
    np.testing.assert_allclose(u[hot], 0.5, atol=2e-3)
    np.testing.assert_allclose(cv[hot], 0.5, atol=2e-3)


def test_harmonic_limit():
    """V0 -> infinity: the levels of each well are those of the harmonic oscillator of
    wavenumber sigma sqrt(V0 / (2 I)) (from V = V0/2 (1 - cos sigma phi)); the sigma wells and the
    division by sigma cancel."""
    moment, sigma, v0 = 1.5, 3, 4.0e5  # cm-1
    model = cosine_rotor(v0, sigma, moment)
    nu = model.harmonic_wavenumber_cm1()
    b = b_cm1(moment)
    assert nu == pytest.approx(sigma * math.sqrt(v0 * b), rel=1e-10)  # hbar omega = sigma sqrt(V0 B)
    T = np.array([100.0, 298.15, 600.0])
    ln_q, u, s, cv = model.thermo_parts(T)
    ho = [a[:, 0] for a in harmonic_oscillators([nu], T)]
    # anharmonicity of the cosine well: relative shifts of order h nu / V0 ~ 1e-2 at most
    np.testing.assert_allclose(ln_q, ho[0], rtol=2e-2, atol=1e-4)
    np.testing.assert_allclose(s, ho[2], rtol=2e-2, atol=1e-4)
    np.testing.assert_allclose(cv, ho[3], rtol=2e-2, atol=1e-3)
    zpe = model.zpe_J_per_mol / CM1
    assert zpe == pytest.approx(0.5 * nu, rel=5e-3)


def classical_cosine_ln_q(v0_cm1, sigma, moment, T):
    """Pitzer and Gwinn 1942, classical: q_free exp(-V0/2kT) I0(V0/2kT), from the potential minimum."""
    y = v0_cm1 * CM1 / (2 * R * T)
    q_free = np.sqrt(8 * math.pi**3 * moment * AMU * 1e-20 * kB * T) / (sigma * h)
    return np.log(q_free) + np.log(i0e(y))  # i0e(y) = exp(-y) I0(y)


def test_classical_limit_at_high_temperature():
    moment, sigma, v0 = 3.0, 3, 1000.0
    model = cosine_rotor(v0, sigma, moment)
    T = np.array([3000.0, 6000.0])
    ln_q = model.thermo_parts(T)[0] - model.zpe_J_per_mol / (R * T)  # from the minimum
    nu = model.harmonic_wavenumber_cm1()
    # leading quantum correction is -(h nu / kT)^2 / 24 (Wigner-Kirkwood), below 2e-3 here
    np.testing.assert_allclose(ln_q, classical_cosine_ln_q(v0, sigma, moment, T), atol=2e-3)
    assert np.all((nu * CM1 / (R * T)) ** 2 / 24 < 2e-3)


@pytest.mark.parametrize("v0_over_rt", [0.5, 2.0, 5.0, 10.0])
@pytest.mark.parametrize("inv_qf", [0.1, 0.2, 0.3])
def test_pitzer_gwinn_approximation(v0_over_rt, inv_qf):
    """Exact q against q_HO(quantum) q_classical / q_HO(classical) (Pitzer and Gwinn 1942), over
    the ranges of their tables (V/RT and 1/Q_f, Q_f the classical free-rotor q)."""
    sigma, T = 3, 300.0
    q_free = 1.0 / inv_qf
    moment = (q_free * sigma * h) ** 2 / (8 * math.pi**3 * kB * T) / (AMU * 1e-20)
    v0 = v0_over_rt * R * T / CM1
    model = cosine_rotor(v0, sigma, moment)
    exact = model.thermo_parts(np.array([T]))[0][0] - model.zpe_J_per_mol / (R * T)
    nu = model.harmonic_wavenumber_cm1()
    x = nu * CM1 / (R * T)
    ln_ho_quantum = -0.5 * x - math.log(-math.expm1(-x))  # from the minimum
    ln_ho_classical = -math.log(x)
    pg = ln_ho_quantum + classical_cosine_ln_q(v0, sigma, moment, np.array([T]))[0] - ln_ho_classical
    assert exact == pytest.approx(pg, abs=0.02)


def test_levels_converge_with_basis():
    pot = TorsionPotential.from_barriers([0, 0, 1024 * CM1])
    b = b_cm1(1.55) * CM1
    small = torsional_levels_J_per_mol(pot, b, 5000 * CM1, basis_m=40)
    large = torsional_levels_J_per_mol(pot, b, 5000 * CM1, basis_m=120)
    auto = torsional_levels_J_per_mol(pot, b, 5000 * CM1)
    np.testing.assert_allclose(auto, large[:auto.size], rtol=0, atol=1e-6)
    np.testing.assert_allclose(small, large[:small.size], rtol=0, atol=1e-3)


def test_fit_recovers_series_and_reports_error():
    rng = np.random.default_rng(4)
    true = TorsionPotential([1000.0, -3000.0, 500.0], [200.0, 0.0, -100.0])
    phi = np.deg2rad(np.arange(0, 360, 15.0))
    fit = fit_potential(phi, true(phi) + 123.0, harmonics=3)
    np.testing.assert_allclose(fit.potential.cos_J_per_mol, true.cos_J_per_mol, atol=1e-8)
    np.testing.assert_allclose(fit.potential.sin_J_per_mol, true.sin_J_per_mol, atol=1e-8)
    assert fit.rms_J_per_mol < 1e-8
    noisy = fit_potential(phi, true(phi) + rng.normal(0, 50.0, phi.size), harmonics=3)
    assert 20 < noisy.rms_J_per_mol < 80 and noisy.max_abs_J_per_mol >= noisy.rms_J_per_mol
    # a threefold rotor over one period only
    three = TorsionPotential.from_barriers([0, 0, 12000.0])
    part = np.deg2rad(np.arange(0, 120, 10.0))
    f3 = fit_potential(part, three(part), symmetry_number=3)
    assert f3.harmonics_used[0] == 3 and f3.potential.barrier_J_per_mol == pytest.approx(12000.0, rel=1e-6)
    with pytest.raises(ValueError, match="harmonics"):
        fit_potential(phi[:4], true(phi[:4]), harmonics=3)


# ---- molecules ------------------------------------------------------------------

def _place(origin, axis_from, r, polar_deg, azimuth_deg, ref):
    """A point at distance r from ``origin``, at ``polar_deg`` from the direction origin->axis_from
    reversed... built in a local frame: z along (origin - axis_from), x towards ``ref``."""
    z = origin - axis_from
    z = z / np.linalg.norm(z)
    x = ref - np.dot(ref, z) * z
    x = x / np.linalg.norm(x)
    y = np.cross(z, x)
    th, az = math.radians(polar_deg), math.radians(azimuth_deg)
    return origin + r * (math.cos(th) * z + math.sin(th) * (math.cos(az) * x + math.sin(az) * y))


def ethane():
    c1, c2 = np.zeros(3), np.array([0, 0, 1.522])
    ref = np.array([1.0, 0, 0])
    hs1 = [_place(c1, c2, 1.094, 180 - 111.2, a, ref) for a in (0, 120, 240)]
    hs2 = [_place(c2, c1, 1.094, 180 - 111.2, a, ref) for a in (60, 180, 300)]
    return ["C", "C"] + ["H"] * 6, np.array([c1, c2] + hs1 + hs2)


def methanol():
    c, o = np.zeros(3), np.array([0, 0, 1.4246])
    ref = np.array([1.0, 0, 0])
    ho = _place(o, c, 0.9451, 180 - 108.53, 0, ref)
    hs = [_place(c, o, 1.0936, 180 - 109.0, a, ref) for a in (180, 60, 300)]
    return ["C", "O", "H", "H", "H", "H"], np.array([c, o, ho] + hs)


def entropy_J_per_mol_K(symbols, x, sigma_ext, freqs_cm1, model, T=298.15):
    t = np.array([T])
    m = default_masses_amu(symbols)
    s = translational(m.sum() * AMU, t)[2] + rotational(principal_moments(x, m), sigma_ext, False, t)[2]
    s = s + harmonic_oscillators(freqs_cm1, t)[2].sum(axis=1) + model.thermo_parts(t)[2]
    return float(s[0] * R)


def test_ethane_entropy_with_threefold_rotor():
    """S(298.15 K, 1 bar) = 229.16 +- 0.10 J/(mol K) (Gurvich, via NIST CCCBDB), within 0.5."""
    symbols, x = ethane()
    m = default_masses_amu(symbols)
    [tor] = torsions.find_torsions(symbols, x, m)
    assert tor.symmetry_number == 3 and len(tor.top) == 4
    moment = torsions.reduced_moment_amu_A2(x, m, tor.frame_atom, tor.top_atom, tor.top)
    # Pitzer's closed form for two equal tops on a common axis through the centre of mass: A/2
    a_top = torsions.top_moment_amu_A2(x, m, tor.frame_atom, tor.top_atom, tor.top)
    assert moment == pytest.approx(a_top / 2, rel=1e-10)
    model = HinderedRotorModel(moment, 3, TorsionPotential.from_barriers([0, 0, 1024 * CM1]))
    # Shimanouchi fundamentals (CCCBDB), degenerate E modes twice, the 289 cm-1 torsion left out
    freqs = [2954, 1388, 995, 2896, 1379] + [2969, 1468, 1190, 2985, 1469, 822] * 2
    s = entropy_J_per_mol_K(symbols, x, 6, freqs, model)
    assert s == pytest.approx(229.16, abs=0.5)
    # the torsion's fundamental from the levels: 0 -> 1 of one well, near the observed 289 cm-1
    lv = model.levels_J_per_mol(800 * CM1) / CM1
    assert lv[3] == pytest.approx(289, rel=0.06)


def test_methanol_entropy_and_reduced_moment():
    """S(298.15 K, 1 bar) = 239.87 J/(mol K) (Gurvich, via NIST CCCBDB), within 1."""
    symbols, x = methanol()
    m = default_masses_amu(symbols)
    [tor] = torsions.find_torsions(symbols, x, m)
    # the OH top is onefold, its methyl frame threefold: the rotation's symmetry number is 3
    assert tor.symmetry_number == 3 and sorted(symbols[i] for i in tor.top) == ["H", "O"]
    moment = torsions.reduced_moment_amu_A2(x, m, tor.frame_atom, tor.top_atom, tor.top)
    assert b_cm1(moment) == pytest.approx(27.6, rel=0.03)  # F of Lees and Baker 1968 (from memory)
    # the potential in the rotor's own frame: the OH top turns, threefold through the methyl group
    model = HinderedRotorModel(moment, 3, TorsionPotential.from_barriers([0, 0, 373.08 * CM1, 0, 0, -0.80 * CM1]))
    freqs = [3681, 3000, 2844, 1477, 1455, 1345, 1060, 1033, 2960, 1477, 1165]
    s = entropy_J_per_mol_K(symbols, x, 1, freqs, model)
    assert s == pytest.approx(239.87, abs=1.0)


def test_rotate_top_keeps_bonds_and_finds_h2co3_torsions():
    symbols = ["C", "O", "O", "O", "H", "H"]
    x = np.array([[0.0, 0.0, 0.0], [0.0, 1.21, 0.0], [1.15, -0.65, 0.0], [-1.15, -0.65, 0.0],
                  [1.95, -0.10, 0.0], [-1.95, -0.10, 0.0]])
    m = default_masses_amu(symbols)
    tors = torsions.find_torsions(symbols, x, m)
    assert {(t.frame_atom, t.top_atom) for t in tors} == {(0, 2), (0, 3)}
    t = tors[0]
    y = torsions.rotate_top(x, t.frame_atom, t.top_atom, t.top, 1.0)
    d0 = np.linalg.norm(x[:, None] - x[None], axis=2)
    d1 = np.linalg.norm(y[:, None] - y[None], axis=2)
    assert np.allclose(d0[np.ix_(t.top, t.top)], d1[np.ix_(t.top, t.top)])
    assert np.allclose(d0[t.frame_atom, t.top_atom], d1[t.frame_atom, t.top_atom])
    with pytest.raises(ValueError, match="not bonded"):
        torsions.top_atoms(6, torsions.covalent_bonds(symbols, x), 4, 5)


def test_free_and_hindered_rotors_answer_the_same_protocol():
    """tstrate.physics.modes.DegreeOfFreedom: a states.Rotor (free) against the free-rotor formula of
    thermo.internal_free_rotor (McQuarrie 1976), and a hindered rotor of vanishing barrier against both."""
    from tstrate.physics.modes import DegreeOfFreedom
    from tstrate.physics.states import Rotor
    from tstrate.physics.thermo import internal_free_rotor

    moment, sigma = 2.0, 3
    T = np.array([200.0, 300.0, 1000.0])
    classical = Rotor.from_moment_of_inertia(moment, sigma)
    quantum = Rotor.from_moment_of_inertia(moment, sigma, quantum=True)
    hindered = cosine_rotor(1e-6, sigma, moment)
    for dof in (classical, quantum, hindered):
        assert isinstance(dof, DegreeOfFreedom)
    ref = internal_free_rotor(moment * AMU * 1e-20, sigma, T)
    for got, want in zip(classical.thermo_parts(T), ref):
        np.testing.assert_allclose(got, want, rtol=1e-12)
    for got, want in zip(quantum.thermo_parts(T), hindered.thermo_parts(T)):
        np.testing.assert_allclose(got, want, rtol=0, atol=1e-8)
    assert classical.zpe_J_per_mol == 0.0 and abs(hindered.zpe_J_per_mol) < 1e-3
