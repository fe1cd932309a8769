"""Hindered rotors in species files: keys, errors, thermochemistry, ZPE, state counts, round trip.

Check values: ethane S(298.15 K, 1 bar) = 229.16 +- 0.10 J/(mol K) and methanol 239.87 J/(mol K)
(Gurvich's tables via the NIST CCCBDB experimental pages; barriers and fundamentals from the same
pages, see tests/data/rotors/*.toml). The state-count check is an independent route: the Boltzmann
sum over the grained counts of oscillators convolved with the rotor's levels equals the product of
the analytic oscillator q and the rotor's level sum, to the grain's rounding.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.species import read_species, species_to_toml
from tstrate.physics.rotors import TorsionPotential, rotor_model
from tstrate.physics.states import count_states
from tstrate.physics.thermo import harmonic_oscillators, thermochemistry, zero_point_energy_J_per_mol
from tstrate.physics.unimolecular import free_rotor_states
from tstrate.units import CM1_J, N_A

DATA = Path(__file__).resolve().parents[1] / "data" / "rotors"
CM1 = CM1_J * N_A


def _entropy(sp):
    return float(thermochemistry(sp, 298.15).entropy_J_per_mol_K[0])


@pytest.mark.parametrize("name,reference,tol", [("ethane", 229.16, 0.5), ("methanol", 239.87, 1.0)],
                         ids=["ethane-Gurvich-229.16", "methanol-Gurvich-239.87"])
def test_table_entropy_through_the_species_file(name, reference, tol):
    sp = read_species(DATA / f"{name}.toml")
    [rotor] = sp.hindered_rotors
    assert rotor.symmetry_number == 3 and rotor.moment_definition.startswith("Pitzer")
    assert sp.harmonic_frequencies_cm1.size == sp.real_frequencies_cm1.size - 1
    assert _entropy(sp) == pytest.approx(reference, abs=tol)


def _with_rotor_table(tmp_path, text):
    body = (DATA / "ethane.toml").read_text().split("[[hindered_rotors]]")[0]
    path = tmp_path / "sp.toml"
    path.write_text(body + "[[hindered_rotors]]\nbond_atoms = [1, 2]\nreplaces_cm1 = 289\n" + text)
    return path


def test_points_fit_matches_the_barrier_form_and_reports_its_error(tmp_path):
    ref = read_species(DATA / "ethane.toml")
    angles = np.arange(0.0, 120.0, 10.0)
    energies = TorsionPotential.from_barriers([0, 0, 1024 * CM1])(np.deg2rad(angles)) / 1e3 - 20.0
    path = _with_rotor_table(tmp_path, f"angles_deg = {angles.tolist()}\nenergies_kJ_per_mol = {energies.tolist()}\n")
    sp = read_species(path)
    [r] = sp.hindered_rotors
    assert r.potential_source == "points" and r.fit_rms_J_per_mol < 1e-6 and len(r.points_deg) == 12
    assert _entropy(sp) == pytest.approx(_entropy(ref), abs=1e-6)
    # round trip: the file written back reads to the same thermochemistry
    again = tmp_path / "again.toml"
    again.write_text(species_to_toml(sp))
    assert _entropy(read_species(again)) == pytest.approx(_entropy(sp), abs=1e-9)
    again.write_text(species_to_toml(ref))
    assert _entropy(read_species(again)) == pytest.approx(_entropy(ref), abs=1e-9)


def test_zero_point_energy_includes_the_rotor_ground_level():
    sp = read_species(DATA / "ethane.toml")
    zpe = zero_point_energy_J_per_mol(sp)
    harmonic = 0.5 * sp.harmonic_frequencies_cm1.sum() * CM1
    rotor = rotor_model(sp.hindered_rotors[0])
    assert zpe == pytest.approx(harmonic + rotor.zpe_J_per_mol, rel=1e-12)
    # near half the torsional fundamental (289 cm-1): a stiff threefold well
    assert rotor.zpe_J_per_mol / CM1 == pytest.approx(289 / 2, rel=0.08)


def test_state_counts_reproduce_the_partition_function():
    sp = read_species(DATA / "methanol.toml")
    T = np.array([300.0, 600.0])
    grain = 2.0  # cm-1
    counts = count_states(sp.harmonic_frequencies_cm1, 200e3, grain_cm1=grain, rotors=free_rotor_states(sp))
    ln_q_counts = counts.log_partition_function(T)
    ln_q = harmonic_oscillators(sp.harmonic_frequencies_cm1, T)[0].sum(axis=1) \
        + rotor_model(sp.hindered_rotors[0]).thermo_parts(T)[0]
    np.testing.assert_allclose(ln_q_counts, ln_q, atol=5e-3)


@pytest.mark.parametrize("text,field,match", [
    ("barriers_cm1 = [0, 0, 1024]\ncos_terms_cm1 = [1.0]\n", "hindered_rotors[0]", "one potential form"),
    ("angles_deg = [0, 60, 120]\n", "hindered_rotors[0].angles_deg", "need energies"),
    ("angles_deg = [0, 60]\nenergies_cm1 = [0, 1, 2]\n", "hindered_rotors[0].energies_cm1", "3 energies"),
    ("barriers_cm1 = [0, 0, 1024]\nfourier_terms = 2\n", "hindered_rotors[0].fourier_terms", "goes with points"),
    ("barriers_cm1 = [0, 0, 1024]\nbarriers_kJ_per_mol = [1]\n", "barriers_kJ_per_mol", "not several"),
    ("barriers_hartree = [0, 0, 1]\n", "hindered_rotors[0]", "one potential form"),
])
def test_potential_key_errors(tmp_path, text, field, match):
    with pytest.raises(InputError, match=match) as err:
        read_species(_with_rotor_table(tmp_path, text))
    assert field in str(err.value) and "sp.toml" in str(err.value)


def test_bond_errors(tmp_path):
    body = (DATA / "ethane.toml").read_text().split("[[hindered_rotors]]")[0]
    path = tmp_path / "sp.toml"
    path.write_text(body + "[[hindered_rotors]]\nbond_atoms = [3, 4]\nreplaces_cm1 = 289\nbarriers_cm1 = [0, 0, 1]\n")
    with pytest.raises(InputError, match="not bonded") as err:
        read_species(path)
    assert "hindered_rotors[0].bond_atoms" in str(err.value)
    path.write_text(body + "[[hindered_rotors]]\nbond_atoms = [1, 2]\nbarriers_cm1 = [0, 0, 1]\n")
    with pytest.raises(InputError, match="mode the rotor replaces is unknown"):
        read_species(path)
    path.write_text(body + "[[hindered_rotors]]\nbond_atoms = [1, 2]\nreplaces_cm1 = 500\nbarriers_cm1 = [0, 0, 1]\n")
    with pytest.raises(InputError, match="0 real modes within"):
        read_species(path)


def test_a_poor_fit_is_reported_in_the_warnings(tmp_path):
    # a sawtooth cannot be followed by one harmonic: RMS error of several kJ/mol
    angles = list(range(0, 360, 30))
    energies = [float(a % 120) / 10 for a in angles]
    sp = read_species(_with_rotor_table(tmp_path, f"angles_deg = {angles}\nenergies_kJ_per_mol = {energies}\n"
                                        "fourier_terms = 1\n"))
    assert any("Fourier fit misses the points" in w for w in sp.warnings)
    assert sp.hindered_rotors[0].fit_rms_J_per_mol > 500
