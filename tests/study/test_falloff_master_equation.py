"""The study's falloff by the master equation ([falloff] pressure_method = "master_equation") on the
invented carbonic-acid test study: canonical TST at high pressure, the strong-collision sum with
the strong-collider kernel, Troe's weak-collision efficiency at low pressure, and the stability
checks it reports."""

import dataclasses
from pathlib import Path

import numpy as np
import pytest

from tstrate.io.study import read_study
from tstrate.model.settings import FalloffSection
from tstrate.physics.collisions import collision_efficiency
from tstrate.physics.falloff import strong_collision_falloff
from tstrate.study.falloff import channel_falloff, falloff_section

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"


def _with(study, **changes):
    section = falloff_section(study)
    new = FalloffSection(dataclasses.replace(section.default, **changes),
                         {k: dataclasses.replace(v, **changes) for k, v in section.channels.items()})
    return dataclasses.replace(study, sections={**study.sections, "falloff": new})


@pytest.fixture(scope="module")
def study():
    return read_study(DATA / "study.toml")


@pytest.fixture(scope="module")
def me_exponential(study):
    st = _with(study, pressure_method="master_equation")
    return channel_falloff(st, st.channel("bare"), temperature_K=[200.0, 300.0])


def test_master_equation_high_pressure_is_canonical_tst(me_exponential):
    """k_inf of the master equation against canonical TST (tstrate.physics.tst) within 1 %."""
    cf = me_exponential
    np.testing.assert_allclose(cf.k_high_pressure_per_s, cf.canonical_tst_per_s, rtol=1e-2)
    assert cf.pressure_method == "master_equation"
    info = cf.master_equation
    # reported stability against the grain, the ceiling and the reservoir
    assert abs(info.grain_change) < 0.02 and abs(info.ceiling_change) < 1e-3 and abs(info.reservoir_change) < 1e-3
    assert info.min_separation > 10
    # monotone falloff below k_inf
    k = cf.rate_constant_per_s
    assert np.all(np.diff(k, axis=1) > 0) and np.all(k <= cf.k_high_pressure_per_s[:, None] * (1 + 1e-9))


def test_strong_collider_kernel_reproduces_strong_collision_falloff(study):
    """Without an energy-transfer key the master equation uses the strong-collider kernel; it must
    reproduce the strong-collision sum (Troe 1977) within 1 % (same k(E), no J-resolved threshold)."""
    st = _with(study, pressure_method="master_equation", delta_E_down_cm1=None)
    cf = channel_falloff(st, st.channel("bare"), temperature_K=[200.0, 300.0])
    assert cf.master_equation.kernel == "strong"
    ref = strong_collision_falloff(cf.model.rate, cf.temperature_K, cf.number_density_m3,
                                   collision_rate_m3_s=cf.collision_rate_m3_per_s).rate_per_s
    np.testing.assert_allclose(cf.rate_constant_per_s, ref, rtol=1e-2)


def test_low_pressure_limit_against_troe_efficiency(me_exponential):
    """k0 of the master equation over the strong-collision k0 (same k(E)) against Troe's beta_c
    from <dE>down (Troe, J. Chem. Phys. 66, 4745 (1977)) within 20 %."""
    cf = me_exponential
    rate = cf.model.rate
    t = cf.temperature_K
    m0 = cf.number_density_m3.min() * 1e-2
    strong = strong_collision_falloff(rate, t, [m0], collision_rate_m3_s=cf.collision_rate_m3_per_s).rate_per_s[:, 0] / m0
    beta_troe = np.array([float(collision_efficiency(d, ti, kind="down", energy_factor=fe))
                          for d, ti, fe in zip(cf.efficiency.delta_E_J_per_mol, t, cf.efficiency.energy_factor)])
    np.testing.assert_allclose(cf.k_low_pressure_m3_per_s / strong, beta_troe, rtol=0.2)
