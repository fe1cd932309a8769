"""Sampling, summaries and the sample-vectorised pieces of tstrate.physics.uncertainty, against
independent references: scipy's normal distribution, the deterministic tunnelling and
thermochemistry functions evaluated one sample at a time, and the evaluation form of JPL
Publication 19-5."""

from __future__ import annotations

import numpy as np
import pytest

from tstrate.model.uncertainty import method_default
from tstrate.physics import tunnelling as tun
from tstrate.physics import uncertainty as pu
from tstrate.physics.thermo import LowModes, harmonic_oscillators


@pytest.mark.parametrize("method", ["sobol", "latin-hypercube"])
def test_samples_are_standard_normal_and_reproducible(method):
    z = pu.standard_normal_samples(1000, 4, seed=11, method=method)
    assert z.shape == (1000, 4)
    assert np.array_equal(z, pu.standard_normal_samples(1000, 4, seed=11, method=method))
    assert not np.array_equal(z, pu.standard_normal_samples(1000, 4, seed=12, method=method))
    # quasi-random points: moments far closer to N(0, 1) than 1/sqrt(n) = 0.03
    assert np.all(np.abs(z.mean(axis=0)) < 0.01)
    assert np.all(np.abs(z.std(axis=0) - 1.0) < 0.01)
    # the median and the 84 % point of N(0, 1) (scipy.stats.norm.ppf(0.84) = 0.9945)
    assert np.all(np.abs(np.percentile(z, 84, axis=0) - 0.9945) < 0.02)


def test_bad_sampling_arguments_name_themselves():
    with pytest.raises(ValueError, match="n:"):
        pu.standard_normal_samples(1, 2)
    with pytest.raises(ValueError, match="method:"):
        pu.standard_normal_samples(8, 2, method="grid")


def test_uncertainty_factor_of_a_log_normal_is_exp_sigma():
    z = pu.standard_normal_samples(4096, 1, seed=3)[:, 0]
    ln_x = 0.7 * z + 5.0
    assert pu.uncertainty_factor(ln_x) == pytest.approx(np.exp(0.7), rel=0.01)
    p = pu.percentiles(np.exp(ln_x))
    assert p[2] == pytest.approx(np.exp(5.0), rel=0.01)


def test_jpl_19_5_pair_from_the_factor_at_two_temperatures():
    """OH + CH4 -> CH3 + H2O, JPL Publication 19-5 table 1: f(298 K) = 1.1, g = 100 K (values from
    memory, not looked up). The stated f at 298 K and 200 K, f(200) = 1.1 exp(100 |1/200 - 1/298|),
    give back the pair."""
    f298, g = 1.1, 100.0
    t = np.array([200.0, 298.0])
    f = np.array([1.1 * np.exp(100.0 * abs(1 / 200.0 - 1 / 298.0)), 1.1])
    assert f[0] == pytest.approx(1.2966, abs=1e-4)
    got = pu.fit_evaluation_pair(t, f)
    assert got[0] == pytest.approx(f298, rel=1e-12)
    assert got[1] == pytest.approx(g, rel=1e-9)
    assert got[2] < 1e-12
    # on both sides of 298 K the form is symmetric in 1/T
    T = np.array([200.0, 250.0, 298.0, 350.0])
    f_all = pu.evaluation_factor(T, f298, g)
    assert pu.fit_evaluation_pair(T, f_all)[:2] == pytest.approx((f298, g), rel=1e-9)


def test_eckart_rows_equal_the_deterministic_function():
    rng = np.random.default_rng(5)
    T = np.array([150.0, 200.0, 250.0, 300.0, 1000.0])
    S = 40
    nu = rng.uniform(200.0, 2500.0, S)
    v1 = rng.uniform(2e3, 2e5, S)
    v2 = rng.uniform(2e3, 2e5, S)
    floor = rng.uniform(0.0, 4e4, S)
    got = pu.log_kappa_samples("eckart", T, nu, v1, v2, floor, chunk_rows=37)
    ref = np.array([tun.eckart_log(T, nu[i], v1[i], v2[i], max(floor[i], max(0.0, v1[i] - v2[i])))
                    for i in range(S)])
    # two quadratures (per-row windows here, a shared grid in eckart_log), each tuned to 1e-8
    # against adaptive quadrature (tests/physics/test_tunnelling.py): kappa agrees to 2e-8
    assert np.max(np.abs(got - ref)) <= 2e-8
    # a refused barrier gives a NaN row, the others are unaffected
    v2[3] = -1.0
    got = pu.log_kappa_samples("eckart", T, nu, v1, v2, floor)
    assert np.all(np.isnan(got[3])) and np.all(np.isfinite(np.delete(got, 3, axis=0)))


@pytest.mark.parametrize("model", ["wigner", "skodje-truhlar"])
def test_other_models_equal_the_deterministic_function(model):
    T = np.array([200.0, 300.0])
    nu, v1, v2 = np.array([800.0, 1500.0]), np.array([5e4, 9e4]), np.array([6e4, 2e4])
    got = pu.log_kappa_samples(model, T, nu, v1, v2, None)
    for i in range(2):
        assert got[i] == pytest.approx(tun.log_kappa(model, T, nu[i], v1[i], v2[i], max(0.0, v1[i] - v2[i])),
                                       rel=1e-12)


@pytest.mark.parametrize("low_modes", [LowModes(), LowModes("frequency-floor", 100.0),
                                       LowModes("rotor-entropy-blend", 100.0)], ids=lambda m: m.method)
def test_scaled_vibrational_partition_function_against_thermo(low_modes):
    from tstrate.physics.thermo import _vibrational_parts

    freqs = np.array([60.0, 95.0, 410.0, 1650.0, 3700.0])
    T = np.array([150.0, 220.0, 300.0])
    scale = np.array([0.9, 1.0, 1.07])
    got = pu.vibrational_ln_q_scaled(freqs, T, scale, low_modes)
    for i, s in enumerate(scale):
        assert got[i] == pytest.approx(_vibrational_parts(freqs * s, T, low_modes)[0], rel=1e-13)
    # harmonic: ln q = -sum ln(1 - exp(-h c nu / kT)) (thermo.harmonic_oscillators itself)
    if low_modes.method == "harmonic":
        assert got[1] == pytest.approx(harmonic_oscillators(freqs, T)[0].sum(axis=1), rel=1e-13)


@pytest.mark.parametrize("method, label", [
    ("GFN2-xTB", "semi-empirical / tight binding"),
    ("B3LYP-D3BJ/def2-SVP", "hybrid DFT"),
    ("CCSD(T)/cc-pVTZ//B3LYP-D3BJ/def2-SVP", "coupled cluster, large basis"),
    ("wB97X-D3BJ/def2-TZVP", "hybrid DFT"),
])
def test_method_defaults_follow_the_method_string(method, label):
    assert method_default(method).label == label
    assert method_default("") is None and method_default("my own potential") is None
