"""Energy-grained master equation: detailed balance, the strong-collider and low-pressure limits
against closed forms outside the solver, and exactness against a dense eigen-solver and a stiff
time integration (scipy)."""

import math

import numpy as np
import pytest
from scipy.constants import h, k as kB

from tstrate.physics import master_equation as me
from tstrate.physics.collisions import collision_efficiency, energy_dependence_factor
from tstrate.physics.falloff import low_pressure_limit, strong_collision_falloff, thermal_distribution
from tstrate.physics.rrkm import rrkm_rate
from tstrate.physics.states import CM1_J_PER_MOL
from tstrate.units import R

# Invented wavenumbers (cm-1) of a 6-atom molecule and its TS (the demo's carbonic-acid shape, not
# multiples of the grain, see the numerical notes), barrier 15000 cm-1
H2CO3_CM1 = [3641, 3633, 1831, 1452, 1383, 1179, 1013, 791, 667, 583, 551, 221]
TS_CM1 = [3702, 2603, 1897, 1402, 1151, 943, 802, 649, 561, 479, 301]
E0 = 15000 * CM1_J_PER_MOL
ALPHA = 200 * CM1_J_PER_MOL          # <Delta E>down [J/mol]


@pytest.fixture(scope="module")
def rate():
    return rrkm_rate(H2CO3_CM1, TS_CM1, E0, grain_cm1=40.0, energy_above_barrier_J_per_mol=12000 * CM1_J_PER_MOL,
                     refine_grain=False)


def single(rate, omega, kernel="exponential", alpha=ALPHA, smoothing=0):
    well = me.Well("A", rate.reactant.counts, omega, alpha, kernel=kernel, smoothing_grains=smoothing)
    return me.MasterEquation(rate.grain_J_per_mol, (well,), (me.Reaction("A->P", "A", None, rate.rate_per_s),))


def test_collision_matrix_detailed_balance_and_normalisation(rate):
    for t in (200.0, 1000.0):
        cm = me.collision_matrix(rate.reactant.counts, rate.grain_J_per_mol, t, ALPHA)
        p, f = cm.matrix, cm.distribution
        np.testing.assert_allclose(p.sum(axis=0), 1.0, rtol=0, atol=1e-12)       # exact normalisation
        flux = p * f[None, :]                                                    # P(i<-j) f_j
        assert np.max(np.abs(flux - flux.T)) <= 1e-10 * flux.max()               # detailed balance 1e-10
        assert np.all(p >= -1e-12)
        # the equilibrium distribution is stationary under collisions
        np.testing.assert_allclose(p @ f, f, rtol=1e-10, atol=1e-300)


def test_sparse_low_grains_remedy(rate):
    """The plain kernel over-fills columns of sparse low grains (sums > 1); the smoothed-density
    acceptance keeps every column at one. Effect on k printed: about 1 % (numerical notes)."""
    plain = me.collision_matrix(rate.reactant.counts, rate.grain_J_per_mol, 300.0, ALPHA, smoothing_grains=1)
    fixed = me.collision_matrix(rate.reactant.counts, rate.grain_J_per_mol, 300.0, ALPHA)
    assert plain.max_column_sum > 1.0
    assert fixed.max_column_sum <= 1.0 + 1e-12
    k_plain = me.rate_coefficients(single(rate, 1e6, smoothing=1), 300.0).product_per_s[0, 0]
    k_fixed = me.rate_coefficients(single(rate, 1e6), 300.0).product_per_s[0, 0]
    print(f"sparse-grain remedy moves k by {k_fixed / k_plain - 1:+.2%} (max column sum {plain.max_column_sum:.3f})")
    assert abs(k_fixed / k_plain - 1) < 0.1


@pytest.mark.parametrize("t", [200.0, 300.0])
@pytest.mark.parametrize("omega", [1e2, 1e6, 1e10, 1e14])
def test_strong_collider_limit_reproduces_closed_form(rate, t, omega):
    """With P(E<-E') = f(E) the master equation's rate is the strong-collision sum
    sum_E f k omega/(omega + k) (Troe 1977; Gilbert and Smith 1990) to well within 1 %."""
    k_me = me.rate_coefficients(single(rate, omega, "strong"), t)
    k_sc = strong_collision_falloff(rate, [t], [1.0], collision_rate_m3_s=omega).rate_per_s[0, 0]
    assert k_me.product_per_s[0, 0] == pytest.approx(k_sc, rel=1e-2)
    assert k_me.eigenvalues_per_s[0] == pytest.approx(k_sc, rel=1e-2)


def _strong_collider_eigenvalue(rate, t, omega):
    """Exact slowest eigenvalue of the strong-collider master equation, independent of any matrix:
    it solves kappa = sum f k/(omega + k - kappa) / sum f/(omega + k - kappa) (fixed point)."""
    f = thermal_distribution(rate.reactant, [t])[0]
    k = rate.rate_per_s
    kappa = 0.0
    for _ in range(200):
        d = omega + k - kappa
        new = float((f * k / d).sum() / (f / d).sum())
        if new == kappa:
            break
        kappa = new
    return kappa


@pytest.mark.parametrize("omega", [1e-2, 1e3, 1e9])
def test_precise_eigenvalue_at_low_temperature_and_pressure(rate, omega):
    """At 200 K the thermal rate sits 20+ orders below the collision frequency: the non-subtracting
    solver keeps it to 1e-10 against the exact strong-collider secular equation, where double-
    precision eigh loses it (numerical notes)."""
    t = 200.0
    exact = _strong_collider_eigenvalue(rate, t, omega)
    k_me = me.rate_coefficients(single(rate, omega, "strong"), t).eigenvalues_per_s[0]
    assert k_me == pytest.approx(exact, rel=1e-10)


def test_high_pressure_limit_is_canonical_tst(rate):
    """k_inf of the master equation against canonical TST from harmonic partition functions in
    closed form, (kT/h) prod q_TS / prod q_R exp(-E0/RT), within 1 %. The closed form uses the
    wavenumbers as the grain model holds them (each rounded to whole grains, see
    :mod:`tstrate.physics.states`), so what is tested is the master equation and the grain sum."""
    t = 600.0
    k_me = me.rate_coefficients(single(rate, 1e18), t).product_per_s[0, 0]
    grain_cm1 = rate.reactant.grain_cm1
    x = lambda nu: h * 100 * 2.99792458e8 * grain_cm1 * np.round(np.asarray(nu) / grain_cm1) / (kB * t)
    lnq = lambda nus: float(-np.sum(np.log1p(-np.exp(-x(nus)))))
    k_tst = kB * t / h * math.exp(lnq(TS_CM1) - lnq(H2CO3_CM1) - rate.barrier_J_per_mol / (R * t))
    assert k_me == pytest.approx(k_tst, rel=1e-2)


@pytest.mark.parametrize("t", [250.0, 400.0])
def test_low_pressure_limit_against_troe_beta_c(rate, t):
    """k0 of the exponential-down master equation against Troe's weak-collision efficiency:
    k0 = beta_c k0_strong, beta_c/(1 - beta_c^1/2) = -<dE>/(F_E kT) (Troe, J. Chem. Phys. 66, 4745
    (1977)), within 20 %."""
    omega = 1e-3                                          # far below falloff: k = k0 [M]
    k_me = me.rate_coefficients(single(rate, omega), t).product_per_s[0, 0] / omega
    k0_strong = low_pressure_limit(rate, [t], 1.0)[0]
    fe = max(1.0, float(energy_dependence_factor(rate.energies_J_per_mol, rate.reactant.density_per_J_per_mol,
                                                 rate.barrier_J_per_mol, [t])[0]))
    beta = float(collision_efficiency(ALPHA, t, kind="down", energy_factor=fe))
    assert k_me == pytest.approx(beta * k0_strong, rel=0.2)


def test_energy_dependent_delta_e(rate):
    """<Delta E>down per grain: a constant array equals the scalar, and a larger <Delta E>down
    makes collisions more efficient at low pressure."""
    n = rate.reactant.n_grains
    k_scalar = me.rate_coefficients(single(rate, 1e3), 300.0).product_per_s[0, 0]
    k_array = me.rate_coefficients(single(rate, 1e3, alpha=np.full(n, ALPHA)), 300.0).product_per_s[0, 0]
    assert k_array == pytest.approx(k_scalar, rel=1e-12)
    rising = ALPHA * (1 + rate.energies_J_per_mol / E0)
    assert me.rate_coefficients(single(rate, 1e3, alpha=rising), 300.0).product_per_s[0, 0] > 1.2 * k_scalar


# ---------------------------------------------------------------- several wells: exactness
def three_well_model(omega=1e9, grain=1000.0, n=90):
    """Three wells (A deepest, B at 10 kJ/mol, C at 20 kJ/mol), A<->B, B<->C and A<->C (well-skipping),
    products from A and C; invented state counts and step-like k(E) [J/mol, s^-1]."""
    e = np.arange(n) * grain
    def counts(shift):
        c = np.zeros(n)
        i0 = int(round(shift / grain))
        c[i0:] = (1.0 + np.arange(n - i0)) ** 3.5
        return c
    wells = tuple(me.Well(name, counts(shift), omega, 4000.0) for name, shift in
                  (("A", 0.0), ("B", 10000.0), ("C", 20000.0)))
    def step(threshold, a):
        return np.where(e >= threshold, a * (1 - threshold / np.maximum(e, 1.0)) ** 3, 0.0)
    reactions = (me.Reaction("A->B", "A", "B", step(45000.0, 5e9)),
                 me.Reaction("B->C", "B", "C", step(48000.0, 3e9)),
                 me.Reaction("A->C", "A", "C", step(52000.0, 1e9)),
                 me.Reaction("A->P1", "A", None, step(58000.0, 2e10)),
                 me.Reaction("C->P2", "C", None, step(55000.0, 1e10)))
    return me.MasterEquation(grain, wells, reactions)


def test_three_wells_precise_against_dense_and_detailed_balance():
    system = three_well_model()
    t = 500.0
    rm = me.rate_matrix(system, t)
    flux = rm.offdiag * rm.equilibrium[None, :]
    assert np.max(np.abs(flux - flux.T)) <= 1e-10 * flux.max()          # isomerisations obey it too
    dense = me.rate_coefficients(system, t, method="dense")
    precise = me.rate_coefficients(system, t, method="precise")
    np.testing.assert_allclose(precise.eigenvalues_per_s, dense.eigenvalues_per_s, rtol=1e-6)
    np.testing.assert_allclose(precise.well_per_s, dense.well_per_s, rtol=1e-6, atol=1e-6 * np.abs(dense.well_per_s).max())
    np.testing.assert_allclose(precise.product_per_s, dense.product_per_s, rtol=1e-6,
                               atol=1e-6 * np.abs(dense.product_per_s).max())
    assert precise.separation > me.MIN_SEPARATION
    # conservation: each well's total loss equals its flux to other wells plus products
    k = precise.well_per_s
    np.testing.assert_allclose(-k.sum(axis=0), precise.product_per_s.sum(axis=0), rtol=1e-6)
    # detailed balance of the phenomenological isomerisation coefficients: exact only without
    # reactive loss (Miller and Klippenstein 2006); here the losses perturb it at the 1e-3 level
    x_eq = np.array([rm.equilibrium[rm.well_of == i].sum() for i in range(3)])
    np.testing.assert_allclose(k[0, 1] * x_eq[1], k[1, 0] * x_eq[0], rtol=1e-3)


def test_populations_against_stiff_time_integration():
    """Populations from the eigen-decomposition against scipy's BDF integrator, to 1e-6; and the
    phenomenological K reproduces the well populations' derivative after relaxation."""
    from scipy.integrate import solve_ivp

    system = three_well_model()
    rm = me.rate_matrix(system, 500.0)
    m = rm.dense()
    # initial: molecules of A energised at 62 kJ/mol (a chemically activated start)
    n0 = np.zeros(system.n_grains)
    n0[62] = 1.0
    v0 = me.initial_vector(system, rm, "A", n0)
    times = np.array([1e-10, 1e-9, 1e-8, 1e-7, 1e-6])
    pops = me.populations(rm, v0, times)
    sol = solve_ivp(lambda _, y: m @ y, (0, times[-1]), v0, method="BDF", t_eval=times, rtol=1e-12,
                    atol=1e-15, jac=lambda *_: m)
    np.testing.assert_allclose(pops.states, sol.y.T, rtol=0, atol=1e-6)
    # products: what left the states went to products
    np.testing.assert_allclose(pops.products.sum(axis=1) + pops.states.sum(axis=1), 1.0, atol=1e-9)
    # after relaxation, dx/dt = K x for the well populations (Bartis-Widom)
    coeff = me.rate_coefficients(system, 500.0)
    late = pops.states[-1]
    dxdt = np.array([(m @ late)[rm.well_of == i].sum() for i in range(3)])
    np.testing.assert_allclose(coeff.well_per_s @ pops.well_populations[-1], dxdt, rtol=1e-6,
                               atol=1e-6 * np.abs(dxdt).max())
    # yields: every molecule ends in P1 or P2, and the solver's yields match the integration's end
    y = me.reaction_yields(rm, v0)
    assert y.sum() == pytest.approx(1.0, abs=1e-10)
    prompt, stabilised = me.prompt_yields(system, rm, v0)
    assert prompt.sum() + stabilised.sum() == pytest.approx(1.0, abs=1e-6)


def test_chemical_activation_distribution_peaks_above_threshold(rate):
    d = me.chemical_activation_distribution(rate.reactant.counts, rate.rate_per_s, rate.grain_J_per_mol, 300.0)
    assert d.sum() == pytest.approx(1.0)
    assert np.all(d[: rate.barrier_index] == 0.0)
    assert rate.energies_J_per_mol[np.argmax(d)] >= E0


# ---------------------------------------------------------------- energised molecules
def test_energised_yield_strong_collider_is_stern_volmer(rate):
    """Excited far above the thermal range, with strong collisions every collision stabilises, so the
    fraction reacting is Stern-Volmer, k(E)/(k(E) + omega) (Stern and Volmer 1919), within 1e-6 of the
    thermal-distribution average of it."""
    t = 200.0
    excitation = E0 + 3000 * CM1_J_PER_MOL
    omega = np.array([1e6, 1e9, 1e12])
    y = me.energised_yield(rate.reactant.counts, rate.rate_per_s, rate.grain_J_per_mol, t, excitation, omega,
                           stabilised_below_J_per_mol=E0 - 4000 * CM1_J_PER_MOL, boundary=rate.barrier_index)
    # reference: the initial distribution's average of k/(k + omega)
    n0 = y.initial / y.initial.sum()
    k = rate.rate_per_s[: n0.size]
    ref = np.array([(n0 * k / (k + om)).sum() for om in omega])
    np.testing.assert_allclose(y.reacted, ref, rtol=1e-6)
    np.testing.assert_allclose(y.reacted + y.stabilised, 1.0, atol=1e-12)


def test_energised_yield_weak_collisions_and_tunnelling_below_threshold():
    """Weak collisions let more react than one strong collision would (several collisions are needed to
    deactivate); a molecule energised below the barrier reacts only through k(E) below E0 (tunnelling)."""
    from tstrate.physics.tunnelling import eckart_transmission

    v1 = E0
    v2 = E0 + 5000 * CM1_J_PER_MOL
    tun = rrkm_rate(H2CO3_CM1, TS_CM1, E0, grain_cm1=40.0, energy_above_barrier_J_per_mol=12000 * CM1_J_PER_MOL,
                    refine_grain=False, transmission=lambda e: eckart_transmission(np.asarray(e) + v1, 1800.0, v1, v2))
    cls = rrkm_rate(H2CO3_CM1, TS_CM1, E0, grain_cm1=40.0, energy_above_barrier_J_per_mol=12000 * CM1_J_PER_MOL,
                    refine_grain=False)
    t, omega = 200.0, np.array([1e5, 1e8])
    below = E0 - 300 * CM1_J_PER_MOL
    kw = dict(stabilised_below_J_per_mol=E0 - 5000 * CM1_J_PER_MOL, boundary=cls.barrier_index)
    y_cls = me.energised_yield(cls.reactant.counts, cls.rate_per_s, cls.grain_J_per_mol, t, below, omega, ALPHA, **kw)
    y_tun = me.energised_yield(tun.reactant.counts, tun.rate_per_s, tun.grain_J_per_mol, t, below, omega, ALPHA, **kw)
    assert np.all(y_tun.reacted > 3 * y_cls.reacted)           # without tunnelling only the thermal tail reacts
    above = E0 + 2000 * CM1_J_PER_MOL
    weak = me.energised_yield(cls.reactant.counts, cls.rate_per_s, cls.grain_J_per_mol, t, above, omega, ALPHA, **kw)
    strong = me.energised_yield(cls.reactant.counts, cls.rate_per_s, cls.grain_J_per_mol, t, above, omega, None, **kw)
    assert np.all(weak.reacted > strong.reacted)
    assert np.all(np.diff(weak.reacted) < 0)                   # quenched as pressure rises
