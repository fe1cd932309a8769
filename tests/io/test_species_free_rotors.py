"""Species files: ``[[free_rotors]]`` (reading, validation messages, writing and round trips).

The species is the invented H2CO3 of tests/data/falloff/h2co3.toml (made-up wavenumbers, see
the README there); one of its modes (220 cm-1) is declared a free OH torsion.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.constants import c as c_light, h, physical_constants

from tstrate.errors import InputError
from tstrate.io.species import build_species, read_species, species_to_toml
from tstrate.model import FreeRotor

ROOT = Path(__file__).resolve().parents[2]
H2CO3_TEXT = (ROOT / "tests" / "data" / "falloff" / "h2co3.toml").read_text()
AMU_A2 = physical_constants["atomic mass constant"][0] * 1e-20   # 1 u Angstrom^2 in kg m^2 (CODATA)

ROTOR = """
[[free_rotors]]
replaces_cm1 = 220.3
symmetry_number = 1
reduced_moment_amu_A2 = 0.85
"""


def _write(tmp_path, text, name="h2co3.toml"):
    path = tmp_path / name
    path.write_text(text)
    return path


def test_free_rotor_is_read_and_matched_to_its_mode(tmp_path):
    sp = read_species(_write(tmp_path, H2CO3_TEXT + ROTOR))
    assert sp.free_rotors == (FreeRotor(220.0, 1, 0.85),)   # stored as the matched mode's wavenumber
    # the mode leaves the harmonic set; every other real mode stays
    assert sorted(sp.harmonic_frequencies_cm1) == [550, 580, 670, 790, 1010, 1180, 1380, 1450, 1830,
                                                   3630, 3640]
    assert sp.real_frequencies_cm1.size == 12


def test_rotational_constant_is_converted_to_a_moment(tmp_path):
    # B = h / (8 pi^2 c I): written out here with CODATA constants from scipy
    b_cm1 = 19.8
    text = H2CO3_TEXT + ROTOR.replace("reduced_moment_amu_A2 = 0.85", f"rotational_constant_cm1 = {b_cm1}")
    sp = read_species(_write(tmp_path, text))
    moment = h / (8 * math.pi**2 * c_light * 100 * b_cm1) / AMU_A2
    assert sp.free_rotors[0].reduced_moment_amu_A2 == pytest.approx(moment, rel=1e-12)
    assert sp.free_rotors[0].rotational_constant_cm1 == pytest.approx(b_cm1, rel=1e-12)


def test_scaled_frequencies_match_the_unscaled_value(tmp_path):
    # replaces_cm1 names the listed (unscaled) wavenumber; the remaining modes are scaled
    sp = read_species(_write(tmp_path, H2CO3_TEXT + "frequency_scale = 0.5\n" + ROTOR))
    assert 110.0 not in sp.harmonic_frequencies_cm1
    assert sp.harmonic_frequencies_cm1.min() == pytest.approx(275.0)


def test_a_tolerated_small_imaginary_mode_can_be_replaced(tmp_path):
    text = (H2CO3_TEXT.replace("550, 220]", "550, -20]") + "allow_imaginary_below_cm1 = 30\n"
            + ROTOR.replace("220.3", "20"))
    sp = read_species(_write(tmp_path, text))
    assert sp.free_rotors[0].replaces_cm1 == 20.0
    assert sp.harmonic_frequencies_cm1.min() == 550.0


def test_round_trip(tmp_path):
    text = (H2CO3_TEXT + ROTOR + ROTOR.replace("220.3", "550").replace("= 1\n", "= 2\n")
            .replace("0.85", "2.5"))
    sp = read_species(_write(tmp_path, text))
    assert len(sp.free_rotors) == 2
    again = read_species(_write(tmp_path, species_to_toml(sp), "again.toml"))
    assert again.free_rotors == sp.free_rotors
    np.testing.assert_array_equal(again.harmonic_frequencies_cm1, sp.harmonic_frequencies_cm1)
    # and a species without rotors writes no [[free_rotors]]
    assert "free_rotors" not in species_to_toml(read_species(_write(tmp_path, H2CO3_TEXT, "plain.toml")))


def _bad(replaces="220.3", sigma="1", moment_line="reduced_moment_amu_A2 = 0.85", extra=""):
    return (f"\n[[free_rotors]]\nreplaces_cm1 = {replaces}\nsymmetry_number = {sigma}\n{moment_line}\n"
            f"{extra}")


# (id, text appended to the H2CO3 file, regex: the file, [key], the problem)
BAD = [
    ("no-matching-mode", _bad(replaces="300"),
     r"h2co3\.toml \[free_rotors\[0\]\.replaces_cm1\]: no real mode within 1 cm-1 of 300 cm-1; "
     r"nearest modes: 220\.00, 550\.00, 580\.00 cm-1"),
    ("mode-used-twice", _bad() + _bad(replaces="219.5"),
     r"h2co3\.toml \[free_rotors\[1\]\.replaces_cm1\]: the mode at 220\.00 cm-1 is already replaced by "
     r"free_rotors\[0\]"),
    ("zero-wavenumber", _bad(replaces="0"),
     r"h2co3\.toml \[free_rotors\[0\]\.replaces_cm1\]: must be a positive wavenumber"),
    ("imaginary-mode", _bad(replaces="-220"),
     r"h2co3\.toml \[free_rotors\[0\]\.replaces_cm1\]: must be a positive wavenumber"),
    ("zero-symmetry-number", _bad(sigma="0"),
     r"h2co3\.toml \[free_rotors\[0\]\.symmetry_number\]: must be an integer of 1 or more"),
    ("float-symmetry-number", _bad(sigma="3.0"),
     r"h2co3\.toml \[free_rotors\[0\]\.symmetry_number\]: expected an integer"),
    ("negative-moment", _bad(moment_line="reduced_moment_amu_A2 = -0.85"),
     r"h2co3\.toml \[free_rotors\[0\]\.reduced_moment_amu_A2\]: must be positive"),
    ("zero-rotational-constant", _bad(moment_line="rotational_constant_cm1 = 0"),
     r"h2co3\.toml \[free_rotors\[0\]\.rotational_constant_cm1\]: must be positive"),
    ("both-moment-and-constant", _bad(extra="rotational_constant_cm1 = 19.8\n"),
     r"h2co3\.toml \[free_rotors\[0\]\.rotational_constant_cm1\]: give one of reduced_moment_amu_A2 and "
     r"rotational_constant_cm1 \(not both\)"),
    ("neither-moment-nor-constant", _bad(moment_line=""),
     r"h2co3\.toml \[free_rotors\[0\]\]: give one of reduced_moment_amu_A2 and rotational_constant_cm1"),
    ("missing-symmetry-number", "\n[[free_rotors]]\nreplaces_cm1 = 220\nreduced_moment_amu_A2 = 0.85\n",
     r"h2co3\.toml \[free_rotors\[0\]\.symmetry_number\]: missing required key"),
    ("unknown-key", _bad(extra="barrier_cm1 = 300\n"),
     r"h2co3\.toml \[free_rotors\[0\]\.barrier_cm1\]: unknown key"),
    ("not-an-array-of-tables", "\nfree_rotors = 220\n", r"h2co3\.toml \[free_rotors\]: expected a list"),
]


@pytest.mark.parametrize("text,match", [b[1:] for b in BAD], ids=[b[0] for b in BAD])
def test_bad_free_rotors_give_one_line_errors(tmp_path, text, match):
    with pytest.raises(InputError, match=match) as info:
        read_species(_write(tmp_path, H2CO3_TEXT + text))
    assert "\n" not in str(info.value)


def test_two_modes_within_the_match_window_are_ambiguous():
    sp_kwargs = dict(frequencies_cm1=[3640, 3630, 1830, 1450, 1380, 1180, 1010, 790, 670, 580, 220.4, 219.8],
                     energy_J_per_mol=0.0)
    from tstrate.io.species import parse_xyz_body

    body = H2CO3_TEXT[H2CO3_TEXT.index('"""') + 3:H2CO3_TEXT.rindex('"""')]
    symbols, positions = parse_xyz_body(body)
    with pytest.raises(InputError, match=r"\[free_rotors\[0\]\.replaces_cm1\]: 2 real modes lie within 1 cm-1 "
                                         r"of 220\.1 cm-1; nearest modes: 219\.80, 220\.40"):
        build_species("H2CO3", symbols, positions, free_rotors=[FreeRotor(220.1, 1, 0.85)], **sp_kwargs)
    # a value within 1 cm-1 of only one of them picks that one
    sp = build_species("H2CO3", symbols, positions, free_rotors=[FreeRotor(220.9, 1, 0.85)], **sp_kwargs)
    assert sp.free_rotors[0].replaces_cm1 == 220.4
    assert 219.8 in sp.harmonic_frequencies_cm1 and 220.4 not in sp.harmonic_frequencies_cm1
    # the transition state's imaginary mode is not a real mode, so it cannot be replaced
    ts_freqs = [-220.0, 300.0] + sp_kwargs["frequencies_cm1"][:-2]
    with pytest.raises(InputError, match=r"no real mode within 1 cm-1 of 220 cm-1; nearest modes: 300\.00, 580"):
        build_species("TS", symbols, positions, kind="transition_state", frequencies_cm1=ts_freqs,
                      free_rotors=[FreeRotor(220.0, 1, 0.85)])


def test_thermo_json_lists_the_declared_rotor(tmp_path, capsys):
    import json

    from tstrate.cli.main import main

    path = _write(tmp_path, H2CO3_TEXT + ROTOR)
    assert main(["thermo", str(path), "--json"]) == 0
    entry = json.loads(capsys.readouterr().out)["species"][0]
    assert entry["free_rotors"] == [{"replaces_cm1": 220.0, "symmetry_number": 1,
                                     "reduced_moment_amu_A2": 0.85}]
