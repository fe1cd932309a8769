"""The [uncertainty] table of a study file (tstrate.io.sections.uncertainty).

Each case appends an [uncertainty] table to a copy of the invented test study tests/data/tst/ and
checks what it gives, or that a mistake is a one-line InputError naming the file and the key.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from tstrate.errors import InputError
from tstrate.io.study import read_study

DATA = Path(__file__).resolve().parents[1] / "data" / "tst"


def _study_with(tmp_path, text: str):
    target = tmp_path / "study"
    shutil.copytree(DATA, target)
    path = target / "study.toml"
    path.write_text(path.read_text() + "\n" + text + "\n")
    return path


def _a_species(path):
    return next(iter(read_study(path).species))


def test_values_and_units(tmp_path):
    path = _study_with(tmp_path, "[uncertainty]\nsamples = 256\nseed = 4\nsampling = \"latin-hypercube\"\n"
                                 "energy_correlation = 0.3\ndelta_E_down_factor = 2\n"
                                 "lennard_jones_sigma_percent = 10\ncatalyst_abundance_factor = 1.5\n")
    name = _a_species(path)
    path.write_text(path.read_text() + f'\n[uncertainty.species."{name}"]\n'
                    'energy = { value = 1, unit = "kcal/mol" }\nfrequency_scale_percent = 3\n')
    s = read_study(path).sections["uncertainty"]
    assert (s.samples, s.seed, s.sampling, s.energy_correlation) == (256, 4, "latin-hypercube", 0.3)
    assert s.lennard_jones_sigma_fraction == pytest.approx(0.1) and s.delta_E_down_factor == 2.0
    assert s.species[name].energy_J_per_mol == pytest.approx(4184.0)      # 1 kcal/mol (thermochemical)
    assert s.species[name].frequency_scale_fraction == pytest.approx(0.03)
    assert s.species[name].imaginary_frequency_fraction is None


@pytest.mark.parametrize("text, key", [
    ("samples = 4", "uncertainty.samples"),
    ("sampling = \"grid\"", "uncertainty.sampling"),
    ("energy_correlation = 1.5", "uncertainty.energy_correlation"),
    ("delta_E_down_factor = 0.5", "uncertainty.delta_E_down_factor"),
    ("lennard_jones_epsilon_percent = -3", "uncertainty.lennard_jones_epsilon_percent"),
    ("seeds = 3", "uncertainty.seeds"),
])
def test_mistakes_name_the_file_and_key(tmp_path, text, key):
    path = _study_with(tmp_path, "[uncertainty]\n" + text)
    with pytest.raises(InputError) as exc:
        read_study(path)
    assert exc.value.file == str(path) and exc.value.field == key


def test_unknown_species_and_negative_energy(tmp_path):
    path = _study_with(tmp_path, "[uncertainty.species.nobody]\nfrequency_scale_percent = 3")
    with pytest.raises(InputError, match="not a species of the study"):
        read_study(path)
    path = _study_with(tmp_path / "b", "[uncertainty]")
    name = _a_species(path)
    path.write_text(path.read_text() + f'\n[uncertainty.species."{name}"]\nenergy = {{ value = -1, unit = "kJ/mol" }}\n')
    with pytest.raises(InputError, match="negative"):
        read_study(path)
