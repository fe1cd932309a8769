"""Hindered rotors in rates: a rotor in a transition state (canonical TST), and RRKM k_inf against
canonical TST with hindered rotors in the reactant and the transition state.

The study is the invented carbonic-acid falloff study of tests/data/falloff (made-up wavenumbers and
energies, not physical data). The rotors are the C-O(H) torsions of the hand-built geometries with
invented barriers, each replacing an invented low mode. References: (1) the harmonic oscillator by
hand, q = 1/(1 - e^-x) from its zero-point level, and the rotor's own level sum (checked against the
free-rotor, harmonic, classical and table limits in tests/physics/test_rotors.py); (2) canonical TST
from the same partition functions: the energy-grained k(E) integrated over the thermal distribution
must give it to the grain's rounding (see the test).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import N_A, R, c as c_light, h

from tstrate.io.species import HinderedRotorInput, resolve_hindered_rotor
from tstrate.io.study import read_study
from tstrate.physics.rotors import rotor_model
from tstrate.physics.tst import channel_rates
from tstrate.study.falloff import channel_falloff

DATA = Path(__file__).resolve().parents[1] / "data" / "falloff"
CM1 = h * c_light * 100 * N_A
TEMPS = np.array([200.0, 300.0, 500.0])


def with_rotor(sp, frame, top, barriers_cm1, replaces_cm1):
    spec = HinderedRotorInput((frame, top), ("barriers", [b * CM1 for b in barriers_cm1]), replaces_cm1=replaces_cm1)
    rotor = resolve_hindered_rotor(spec, sp.symbols, sp.positions_A, sp.masses_amu)
    return sp.with_changes(hindered_rotors=(rotor,))


@pytest.fixture(scope="module")
def study():
    return read_study(DATA / "study.toml")


def test_rotor_in_the_transition_state_changes_tst_by_its_q_over_the_oscillator(study):
    ts = study.species["TS_bare"]
    ts_rot = with_rotor(ts, 0, 3, [0.0, 1500.0], 300.0)  # C1-O4(H6) torsion, invented twofold barrier
    [r] = ts_rot.hindered_rotors
    assert r.top_atoms == (3, 5) and r.mode_assignment == "wavenumber"
    ch = study.channel("bare")
    k_plain = channel_rates(ch, study.species, TEMPS).k
    k_rot = channel_rates(ch, dict(study.species, TS_bare=ts_rot), TEMPS).k
    model = rotor_model(r)
    x = 300.0 * CM1 / (R * TEMPS)
    ln_q_ho = -np.log(-np.expm1(-x))                               # from the zero-point level, by hand
    ln_q_hr = model.thermo_parts(TEMPS)[0]                         # from the rotor's ground level
    shift = (model.zpe_J_per_mol - 0.5 * 300.0 * CM1) / (R * TEMPS)  # the TS's ZPE level moves
    np.testing.assert_allclose(np.log(k_rot / k_plain), ln_q_hr - ln_q_ho - shift, rtol=0, atol=1e-9)


def test_k_inf_equals_tst_with_hindered_rotors_in_reactant_and_ts(study):
    species = dict(study.species)
    species["H2CO3"] = with_rotor(species["H2CO3"], 0, 2, [0.0, 3000.0], 220.0)  # C1-O3(H5)
    species["TS_bare"] = with_rotor(species["TS_bare"], 0, 3, [0.0, 1500.0], 300.0)
    st = dataclasses.replace(study, species=species)
    cf = channel_falloff(st, st.channel("bare"), temperature_K=TEMPS)
    ratio = cf.k_high_pressure_per_s / cf.canonical_tst_per_s
    x = cf.model.grain_cm1 * CM1 / (R * TEMPS)
    # the rotors' ground levels move E0 off the 10 cm-1 grid, so the grain becomes 9.997 cm-1 and every
    # harmonic wavenumber is rounded to a whole number of grains (up to half a grain per quantum,
    # states.py): measured 1.0010-1.0017 here; 3e-3 bounds it, against x^2/12 < 5e-4 of the grid alone
    assert abs(cf.model.grain_cm1 - 10.0) < 0.01
    assert np.all(np.abs(ratio - 1) <= 3e-3), (ratio, x)
    plain = channel_falloff(study, study.channel("bare"), temperature_K=TEMPS)
    assert not np.allclose(plain.k_high_pressure_per_s, cf.k_high_pressure_per_s, rtol=1e-3)
