"""The [fits] table of a study file (tstrate.io.sections.fits): the chebyshev form and its keys.

Each case appends a [fits] table to a copy of the invented test study tests/data/tst/ and checks
what it gives, or that a mistake is a one-line InputError naming the file and the key.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from tstrate.errors import InputError
from tstrate.io.study import read_study

DATA = Path(__file__).resolve().parents[1] / "data" / "tst"


def _study_with(tmp_path, fits_text: str):
    target = tmp_path / "study"
    shutil.copytree(DATA, target)
    path = target / "study.toml"
    path.write_text(path.read_text() + "\n[fits]\n" + fits_text + "\n")
    return path


def test_chebyshev_form_with_term_counts(tmp_path):
    path = _study_with(tmp_path, 'mechanism_form = "chebyshev"\nchebyshev_temperature_terms = 5\n'
                                 'chebyshev_pressure_terms = 3')
    opts = read_study(path).sections["fits"]
    assert (opts.mechanism_form, opts.chebyshev_temperature_terms,
            opts.chebyshev_pressure_terms) == ("chebyshev", 5, 3)


def test_chebyshev_term_counts_default_to_none(tmp_path):
    opts = read_study(_study_with(tmp_path, 'mechanism_form = "chebyshev"')).sections["fits"]
    assert opts.chebyshev_temperature_terms is None and opts.chebyshev_pressure_terms is None


@pytest.mark.parametrize("text, key, message", [
    ('mechanism_form = "polynomial"', "mechanism_form", "unknown form 'polynomial'"),
    ('mechanism_form = "modified"\nchebyshev_temperature_terms = 5',
     "chebyshev_temperature_terms", "used only with mechanism_form = \"chebyshev\""),
    ('chebyshev_pressure_terms = 3', "chebyshev_pressure_terms", "used only with"),
    ('mechanism_form = "chebyshev"\nchebyshev_temperature_terms = 0',
     "chebyshev_temperature_terms", "must be at least 1"),
    ('mechanism_form = "chebyshev"\nchebyshev_pressure_terms = 2.5',
     "chebyshev_pressure_terms", "expected"),
    ('mechanism_form = "chebyshev"\nchebyshev_temperature_terms = true',
     "chebyshev_temperature_terms", "expected"),
    ('mechanism_form = "chebyshev"\nchebyshev_terms = 4', "chebyshev_terms", "unknown key"),
])
def test_bad_fits_table_is_a_one_line_error(tmp_path, text, key, message):
    path = _study_with(tmp_path, text)
    with pytest.raises(InputError, match=message) as info:
        read_study(path)
    assert info.value.field == f"fits.{key}" and Path(info.value.file) == path
    assert "\n" not in str(info.value)


def test_unknown_form_hint_names_chebyshev(tmp_path):
    with pytest.raises(InputError) as info:
        read_study(_study_with(tmp_path, 'mechanism_form = "polynomial"'))
    assert "chebyshev" in info.value.hint
