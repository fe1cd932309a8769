"""The uncertainty step of a study, against outside references: the analytic spread of an Arrhenius
rate constant with a Gaussian barrier, a brute-force loop of deterministic runs over the same
samples, and finite differences of deterministic runs (the demo's GFN2-xTB stationary points)."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from tests.conftest import DEMO
from tstrate.io.study import read_study
from tstrate.model import Conditions
from tstrate.model.uncertainty import SpeciesUncertainty, UncertaintySettings
from tstrate.physics.tst import channel_rates
from tstrate.physics.uncertainty import percentiles
from tstrate.study.run import compute_study
from tstrate.study.uncertainty import (perturbed_study, sample_deviations, sampled_channel_ln_k, study_at,
                                       study_uncertainty)
from tstrate.units import R


@pytest.fixture(scope="module")
def demo():
    return read_study(DEMO / "study.toml")


def _rates_only(study, channel, T, **changes):
    ch = replace(study.channel(channel), **changes)
    return replace(study, channels=(ch,), sections={}, conditions=Conditions(temperature_K=np.asarray(T, float)))


def test_gaussian_barrier_gives_sigma_over_RT(demo):
    """Only the barrier uncertain (Gaussian, sigma = 4 kJ/mol), no tunnelling: ln k is linear in the
    barrier, so sigma(ln k) = sigma / (R T) = 2.405 at 200 K (analytic); 1000 samples within 3 %,
    and the median equals the deterministic k within the sampling error."""
    study = _rates_only(demo, "bare", [200.0, 250.0, 300.0], tunnelling="none")
    result = compute_study(study)
    settings = UncertaintySettings(samples=1000, seed=5, method_defaults=False,
                                   species={"TS0": SpeciesUncertainty(energy_J_per_mol=4000.0)})
    ln_k = sampled_channel_ln_k(result, settings, "bare")
    expected = 4000.0 / (R * 200.0)
    assert expected == pytest.approx(2.405, abs=5e-4)
    assert np.std(ln_k[:, 0]) == pytest.approx(expected, rel=0.03)
    unc = study_uncertainty(result, settings)
    band = unc.channel("bare").k
    assert np.log(band.factor[0]) == pytest.approx(expected, rel=0.03)
    # median: standard error of a median of n normal samples is 1.25 sigma / sqrt(n)
    assert abs(np.log(band.percentiles[2, 0] / result.rates[0].k[0])) < 3 * 1.25 * expected / np.sqrt(1000)
    # the deterministic values are untouched
    assert np.array_equal(band.nominal, result.rates[0].k)
    # d ln k / d E_TS = -1 / (R T) exactly (per J/mol)
    i = unc.space.index("energy", "TS0")
    assert band.sensitivity[i] == pytest.approx(-1.0 / (R * np.array([200.0, 250.0, 300.0])), rel=1e-9)
    # the ranking: one factor holds all of the variance
    assert band.ranking[0].factor == "energy of TS0 (own part)" and band.ranking[0].share == pytest.approx(1.0)


def _brute_force_settings():
    return UncertaintySettings(samples=48, seed=9, method_defaults=False, species={
        "TS0": SpeciesUncertainty(energy_J_per_mol=5e3, frequency_scale_fraction=0.03,
                                  imaginary_frequency_fraction=0.2),
        "H2CO3": SpeciesUncertainty(energy_J_per_mol=3e3, frequency_scale_fraction=0.03),
        "CO2.H2O": SpeciesUncertainty(energy_J_per_mol=4e3)})


def test_eckart_percentiles_equal_a_loop_of_deterministic_runs(demo):
    """The vectorised samples of an Eckart channel (with a product complex) against channel_rates on
    each sample's perturbed species, one at a time: percentiles agree to 2e-8. The samples' Eckart
    factors come from the per-row quadrature, channel_rates' from the shared-grid one; each is
    tuned to 1e-8 against adaptive quadrature (tests/physics/test_tunnelling.py)."""
    T = [150.0, 200.0, 250.0, 300.0]
    study = _rates_only(demo, "bare", T)
    result = compute_study(study)
    settings = _brute_force_settings()
    ln_k = sampled_channel_ln_k(result, settings, "bare")
    space, U = sample_deviations(study, settings)
    loop = np.array([np.log(channel_rates(study.channel("bare"), study_at(study, space, u).species, T).k)
                     for u in U])
    assert np.max(np.abs(ln_k - loop)) < 2e-8          # k to 2e-8 relative
    assert np.allclose(percentiles(np.exp(ln_k)), percentiles(np.exp(loop)), rtol=2e-8, atol=0)


def test_sensitivities_against_finite_differences_of_deterministic_runs(demo):
    T = [160.0, 220.0, 300.0]
    study = _rates_only(demo, "bare", T)
    result = compute_study(study)
    unc = study_uncertainty(result, _brute_force_settings())
    band = unc.channel("bare").k
    for i, inp in enumerate(unc.space.inputs):
        h = 0.02 * inp.sigma
        up = channel_rates(study.channel("bare"), perturbed_study(study, inp, h).species, T).k
        down = channel_rates(study.channel("bare"), perturbed_study(study, inp, -h).species, T).k
        fd = (np.log(up) - np.log(down)) / (2 * h)
        assert band.sensitivity[i] == pytest.approx(fd, rel=2e-4, abs=1e-12), inp.name


def test_the_demo_study_gives_every_band(demo):
    """The whole demo: comparisons, falloff and excitations get bands, f298 and g, and rankings."""
    settings = replace(demo.sections["uncertainty"], samples=64)
    result = compute_study(replace(demo, sections={k: v for k, v in demo.sections.items() if k != "uncertainty"}))
    unc = study_uncertainty(result, settings)
    assert [c.name for c in unc.channels] == ["bare", "one-water", "two-water"]
    for c in unc.channels:
        assert np.all(c.k.factor > 1) and c.f298 > 1 and c.g_K >= 0
        assert np.all(np.diff(c.k.percentiles, axis=0) >= 0)
    comp = unc.comparisons[0]
    assert comp.routes[0].ratio.percentiles.shape == (5, 2, 11)
    assert comp.routes[0].crossover_m3 is not None
    fo = unc.falloff[0]
    assert fo.k.percentiles.shape[1:] == result.falloff.channels[0].rate_constant_per_s.shape
    # the falloff factor stays <= 1: no sample above its own k_inf band
    ex = [e for e in unc.excitations if e.profile_stern_volmer is not None][0]
    assert np.all((ex.profile_stern_volmer.percentiles >= 0) & (ex.profile_stern_volmer.percentiles <= 1))


def test_the_falloff_first_order_step_against_a_deterministic_run(demo):
    """A small move of <dE>down (0.3 sigma): the first-order k(T, P) against the full falloff run."""
    from tstrate.study.falloff import channel_falloff, falloff_section

    T = [200.0, 250.0, 300.0]
    study = replace(demo, conditions=replace(demo.conditions, temperature_K=np.array(T)),
                    sections={"falloff": demo.sections["falloff"]})
    settings = UncertaintySettings(samples=16, seed=1, method_defaults=False, delta_E_down_factor=2.0)
    result = compute_study(study)
    unc = study_uncertainty(result, settings)
    i = unc.space.index("delta_E_down")
    inp = unc.space.inputs[i]
    moved = perturbed_study(study, inp, 0.3 * inp.sigma)
    full = channel_falloff(moved, moved.channel("bare"), settings=falloff_section(moved).for_channel("bare"),
                           temperature_K=T).rate_constant_per_s
    nominal = result.falloff.channels[0].rate_constant_per_s
    # the step's own falloff factor at the nominal inputs is the deterministic one
    from tstrate.study.uncertainty import _ln_falloff_factor

    cf = result.falloff.channels[0]
    assert _ln_falloff_factor(study, "bare", cf.temperature_K, cf.number_density_m3) == pytest.approx(
        np.log(nominal) - np.log(cf.k_high_pressure_per_s)[:, None], rel=1e-12, abs=1e-14)
    first = np.log(nominal) + 0.3 * inp.sigma * unc.falloff[0].k.sensitivity[i]
    change = np.max(np.abs(np.log(full / nominal)))
    assert change > 1e-3                      # the move matters
    # first order: the remainder is second order in the move (7 % of the change at 0.3 sigma)
    assert np.max(np.abs(first - np.log(full))) < 0.1 * change
