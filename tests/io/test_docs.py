"""The pages docs/species-file.md and docs/study-file.md against the readers' key tables.

(1) the committed pages are what the generator writes now; (2) every documented key is accepted
by the reader (species and study files that use every key, built from the invented test data under
tests/data); (3) an undocumented key in any table is refused in one line naming the file and the
key; (4) the bundled demo study and its species files use only documented keys.
"""

from __future__ import annotations

import json
import re
import tomllib
from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io import docs
from tstrate.io.keys import Key, Keys, undocumented, walk
from tstrate.io.species import SPECIES_KEYS, read_species
from tstrate.io.study import CHANNEL_KEYS, SECTION_READERS, STUDY_KEYS, read_study
from tstrate.io.tables import Table
from tstrate.io.sections.fits import KEYS as FITS_KEYS
from tstrate.io.sections.pressure import EXCITATION_KEYS, FALLOFF_KEYS
from tstrate.units import ENERGY_UNITS_J_PER_MOL, PRESSURE_UNITS_PA

ROOT = Path(__file__).resolve().parents[2]
DATA = ROOT / "tests" / "data"
DEMO = ROOT / "molecules" / "carbonic_acid"
BAD = "undocumented_key"


# ---- a small TOML writer (the standard library only reads TOML) --------------------------------------

def _key(k: str) -> str:
    return k if re.fullmatch(r"[A-Za-z0-9_-]+", k) else json.dumps(k)


def _value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, str):
        return json.dumps(v)   # JSON string escapes are valid TOML
    if isinstance(v, (int, float)):
        return repr(v)
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    raise TypeError(v)


def _is_tables(v) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def to_toml(data: dict, prefix: str = "") -> str:
    lines = [f"{_key(k)} = {_value(v)}" for k, v in data.items() if not isinstance(v, dict) and not _is_tables(v)]
    for k, v in data.items():
        path = f"{prefix}.{_key(k)}" if prefix else _key(k)
        if isinstance(v, dict):
            lines += ["", f"[{path}]", to_toml(v, path)]
        elif _is_tables(v):
            for item in v:
                lines += ["", f"[[{path}]]", to_toml(item, path)]
    return "\n".join(lines) + "\n"


def test_the_writer_round_trips():
    data = tomllib.loads((DATA / "falloff" / "study.toml").read_text())
    assert tomllib.loads(to_toml(data)) == data


# ---- files that use every documented key --------------------------------------------------------------

def species_files(tmp_path) -> list[Path]:
    """H2CO3 with listed wavenumbers and D2O from a Hessian (tests/data), with every key between them."""
    h2co3 = tomllib.loads((DATA / "falloff" / "h2co3.toml").read_text())
    h2co3.update(
        kind="minimum", frequency_scale=0.98,
        single_point={"value": -264.1, "unit": "hartree", "method": "CCSD(T)/CBS (invented)"},
        linear=False, allow_imaginary_below_cm1=5.0, accept_unusual_wavenumbers=False,
        masses_amu=[12.0, 15.994915, 15.994915, 15.994915, 1.007825, 1.007825],
        electronic_levels=[{"energy_cm1": 0.0, "degeneracy": 1}, {"energy_cm1": 8000.0, "degeneracy": 3}],
        free_rotors=[{"replaces_cm1": 220.0, "symmetry_number": 1, "reduced_moment_amu_A2": 0.85},
                     {"replaces_cm1": 550.0, "symmetry_number": 2, "rotational_constant_cm1": 20.0}],
        # hindered rotors: the two C-O torsions, each potential form once; the modes they replace are
        # invented (each needs its own), read only for the keys
        hindered_rotors=[
            {"bond_atoms": [1, 3], "replaces_cm1": 3640.0, "symmetry_number": 1, "reduced_moment_amu_A2": 0.8,
             "angles_deg": [0.0, 90.0, 180.0, 270.0], "energies_kJ_per_mol": [0.0, 20.0, 40.0, 20.0],
             "fourier_terms": 1},
            {"bond_atoms": [1, 4], "replaces_cm1": 3630.0, "angles_deg": [0.0, 120.0, 240.0],
             "energies_cm1": [0.0, 900.0, 900.0]},
            {"bond_atoms": [1, 3], "replaces_cm1": 1830.0, "angles_deg": [0.0, 120.0, 240.0],
             "energies_hartree": [-264.1, -264.09, -264.09]},
            {"bond_atoms": [1, 4], "replaces_cm1": 1450.0, "barriers_cm1": [500.0, 3000.0]},
            {"bond_atoms": [1, 3], "replaces_cm1": 1380.0, "barriers_kJ_per_mol": [5.0, 30.0]},
            {"bond_atoms": [1, 4], "replaces_cm1": 1180.0, "cos_terms_cm1": [-250.0, -1500.0],
             "sin_terms_cm1": [10.0, 0.0]},
            {"bond_atoms": [1, 3], "replaces_cm1": 1010.0, "cos_terms_kJ_per_mol": [-2.5, -15.0],
             "sin_terms_kJ_per_mol": [0.0, 0.1]},
        ],
        provenance={"method": "invented test data"})
    d2o = tomllib.loads((DATA / "species" / "d2o_hessian.toml").read_text())
    d2o["frequencies_cm1"] = [1200.0, 2700.0, 2800.0]   # only counted when a Hessian is given
    # D2O keeps the C2v of H2O: an override with isotopes, confirmed
    d2o.update(symmetry_number=2, symmetry_confirmed_with_isotopes=True)
    out = []
    for name, data in (("h2co3_all_keys.toml", h2co3), ("d2o_all_keys.toml", d2o)):
        path = tmp_path / name
        path.write_text(to_toml(data))
        out.append(path)
    return out


def study_data() -> dict:
    """The invented catalysis study of tests/data/catalysis with every section and key added."""
    data = tomllib.loads((DATA / "catalysis" / "study.toml").read_text())
    data["species"] = {k: str((DATA / "catalysis" / v).resolve()) for k, v in data["species"].items()}
    data["conditions"].update(pressure_bar=[1e-4, 1e-2, 1.0], bath_gas="CO2",
                              rate_units={"unimolecular": "s-1", "bimolecular": "L mol-1 s-1",
                                          "termolecular": "cm6 molecule-2 s-1"})
    one_water = next(c for c in data["channel"] if c["name"] == "one_water")
    one_water.update(degeneracy=2.0, tunnelling_floor="complex", accept_large_energy_differences=False)
    # product_complex: any minimum with the products' atoms will do for reading every key
    next(c for c in data["channel"] if c["name"] == "bare").update(product_complex="H2CO3")
    base = {"reference": "bare", "assisted": ["one_water"], "catalyst": "H2O"}
    data["comparison"] += [
        {"name": "number density", "description": "every key", "substrate": "H2CO3",
         "number_density_per_cm3": [1e12, 1e14], **base},
        {"name": "partial pressure Pa", "partial_pressure_Pa": 0.1, **base},
        {"name": "partial pressure bar", "partial_pressure_bar": [1e-6], **base},
        {"name": "mixing ratio Pa", "mixing_ratio": 5e-6, "total_pressure_Pa": [1000.0, 2000.0], **base},
    ]
    data["falloff"] = {"grain_cm1": 20.0, "energy_above_barrier_cm1": 30000.0, "collision_efficiency": 0.3,
                       "delta_E_temperature_exponent": 0.5, "collision_integral": "troe", "fit_T2": True,
                       "pressure_method": "strong_collision", "master_equation_grain_cm1": 30.0,
                       "channels": {"bare": {"delta_E_down_cm1": 300.0, "grain_cm1": 10.0,
                                             "pressure_method": "master_equation", "master_equation_grain_cm1": 40.0,
                                             "energy_above_barrier_cm1": 25000.0, "fit_T2": False,
                                             "delta_E_temperature_exponent": 0.0, "collision_integral": "neufeld"},
                                    "one_water": {"delta_E_all_cm1": -50.0},
                                    "two_water": {"collision_efficiency": 0.5}}}
    data["excitation"] = [
        {"name": "overtone", "channel": "bare", "wavenumber_cm1": 7200.0, "temperature_K": [200.0, 250.0],
         "delta_E_down_cm1": 200.0, "collision_efficiency": 0.2, "pressures": True,
         "profile": "us-standard-1976", "altitude_km": [0.0, 40.0], "altitude_step_km": 4.0},
        {"name": "near-UV", "wavelength_nm": 400.0, "profile": str(DATA / "falloff" / "profile.csv")},
        {"name": "given energy", "energy": {"value": 260.0, "unit": "kJ/mol"}, "temperature_K": 220.0},
    ]
    data["fits"] = {"max_deviation_percent": 3.0, "split": 220.0, "mechanism_form": "chebyshev",
                    "T0_K": 300.0, "chebyshev_temperature_terms": 4, "chebyshev_pressure_terms": 2}
    data["isotopes"] = {"temperature_K": [250.0, 300.0], "fractionation": [["CO2", "H2O"], ["CO2", "waters"]],
                        "pools": {"waters": {"H2O": 1.0}}, "substitution": [
        {"isotope": "D"},
        {"isotope": "13C", "label": "13C bare", "mode": "atoms", "channels": ["bare"],
         "atoms": {"H2CO3": [2], "TS_bare": [1], "CO2": [1]}}]}
    data["uncertainty"] = {"samples": 64, "seed": 3, "sampling": "latin-hypercube", "run": False,
                           "method_defaults": False, "energy_correlation": 0.4, "delta_E_down_factor": 2.0,
                           "lennard_jones_sigma_percent": 10.0, "lennard_jones_epsilon_percent": 20.0,
                           "catalyst_abundance_factor": 1.5, "sensitivity_step": 0.02,
                           "species": {"H2CO3": {"energy": {"value": 4.0, "unit": "kJ/mol"},
                                                 "frequency_scale_percent": 3.0,
                                                 "imaginary_frequency_percent": 20.0}}}
    data["reference_rate"] = [
        {"channel": "one_water", "source": "invented", "form": "arrhenius", "A": 1e-12, "E_over_R_K": 300.0,
         "n": 1.5, "T0_K": 298.0, "unit": "cm3 molecule-1 s-1", "label": "measured (invented)", "kind": "measured",
         "temperature_range_K": [200.0, 300.0]},
        {"channel": "bare", "source": "invented", "form": "iupac_falloff", "k0_300K": 1e-10, "n": 2.0,
         "kinf_300K": 1e12, "m": 0.0, "Fc": 0.4, "N": 1.2, "k0_E_over_R_K": 20000.0, "kinf_E_over_R_K": 19000.0,
         "unit": "s-1", "k0_unit": "cm3 molecule-1 s-1", "pressure_range_bar": [1e-3, 1.0], "bath_gas": "N2",
         "temperature_range_K": [250.0, 300.0]},
    ]
    # a barrierless association needs its own species (the bundled OH + SO2 example's)
    oh_so2 = ROOT / "molecules" / "oh_so2"
    data["species"].update(OH=str(oh_so2 / "oh.toml"), SO2=str(oh_so2 / "so2.toml"),
                           HOSO2=str(oh_so2 / "hoso2.toml"))
    data["association"] = [
        {"name": "OH + SO2", "reactants": ["OH", "SO2"], "adduct": "HOSO2", "k_inf_cm3_per_molecule_s": 1.7e-12,
         "k_inf_temperature_exponent": 0.2, "k_inf_reference_temperature_K": 300.0,
         "k_inf_activation_energy_kJ_per_mol": 0.5, "pressure_method": "strong_collision",
         "adduct_rotation": "spectator", "delta_E_down_cm1": 300.0, "delta_E_temperature_exponent": -0.5,
         "grain_cm1": 25.0, "energy_above_threshold_cm1": 6000.0, "temperature_K": [220.0, 260.0],
         "reference_k0_cm6_per_molecule2_s": 2.9e-31, "reference_k0_temperature_exponent": -4.1,
         "reference": "JPL 19-5"}]
    return data


def study_variants() -> list[dict]:
    """The study above, once per way of giving the pressures and the energy transfer of [falloff]
    (at most one of each per file)."""
    out = [study_data()]
    transfer = {"pressure_Pa": ("delta_E_down_cm1", 250.0), "pressure_Torr": ("delta_E_all_cm1", -40.0),
                "number_density_per_cm3": ("collision_efficiency", 0.1)}
    for key, (energy_key, energy) in transfer.items():
        data = study_data()
        values = data["conditions"].pop("pressure_bar")
        data["conditions"][key] = [v * 1e9 for v in values] if key.startswith("number") else values
        data["falloff"].pop("collision_efficiency")
        data["falloff"][energy_key] = energy
        out.append(data)
    out[-1]["conditions"]["standard_pressure"] = "1 atm"
    return out


def _used(files: list[dict], tables) -> set[tuple[tuple, str]]:
    used = set()
    for data in files:
        for dotted, table, name in walk(data, tables):
            assert table is not None, f"test file holds {dotted}, which no table documents"
            used.add((table.path, name if name in table else "*"))
    return used


def _documented(tables) -> set[tuple[tuple, str]]:
    return {(t.path, k) for t in tables for k in t} | {(t.path, "*") for t in tables if t.any_key}


# ---- (1) the committed pages are what the tables give ---------------------------------------------------

@pytest.mark.parametrize("name", sorted(docs.PAGES))
def test_committed_page_is_what_the_generator_writes(name):
    committed = (ROOT / "docs" / name).read_text(encoding="utf-8")
    assert committed == docs.PAGES[name](), (f"docs/{name} is out of date with the readers' key tables: "
                                             f"regenerate it with `{docs.COMMAND}` (from the repository root)")


def test_check_mode_tells_drift(tmp_path, capsys):
    assert docs.main(["--write", str(tmp_path)]) == 0
    assert docs.main(["--check", str(tmp_path)]) == 0
    page = tmp_path / "study-file.md"
    page.write_text(page.read_text().replace("`tunnelling`", "`tunneling`"))
    assert docs.main(["--check", str(tmp_path)]) == 1
    assert f"study-file.md is out of date; regenerate it with `{docs.COMMAND}`" in capsys.readouterr().err


def test_pages_hold_every_key_and_the_demo():
    for name, tables in (("species-file.md", docs.SPECIES_FILE), ("study-file.md", docs.STUDY_FILE)):
        text = docs.PAGES[name]()
        for t in tables:
            assert docs._heading(t) in text
            for k in t.keys + ((t.any_key,) if t.any_key else ()):
                assert f"| `{k.name}` |" in text, (name, t.title, k.name)
    assert (DEMO / "study.toml").read_text() in docs.study_page()
    assert (DEMO / "h2o.toml").read_text() in docs.species_page()


def test_allowed_values_come_from_the_code():
    page = docs.study_page()
    for unit in ENERGY_UNITS_J_PER_MOL:
        assert f'`"{unit}"`' in page
    assert ", ".join(PRESSURE_UNITS_PA) in page
    assert CHANNEL_KEYS["tunnelling"].choices == ("none", "wigner", "skodje-truhlar", "eckart")
    from tstrate.model import TUNNELLING_MODELS
    assert CHANNEL_KEYS["tunnelling"].choices == TUNNELLING_MODELS


def test_tables_hang_together():
    docs.check_tables(docs.SPECIES_FILE)
    docs.check_tables(docs.STUDY_FILE)
    assert set(SECTION_READERS) <= set(STUDY_KEYS)
    broken = Keys(("x",), "[x]", "a table with a sub-table nobody documents", (Key("sub", "table", "a table"),))
    with pytest.raises(ValueError, match="holds a table that no key table documents"):
        docs.check_tables((Keys((), "top level", "top", (Key("x", "table", "x"),)), broken))


def test_a_key_table_needs_units_for_numbers():
    with pytest.raises(ValueError, match="needs a unit"):
        Key("grain", "number", "a grain")
    with pytest.raises(ValueError, match="not one of"):
        Key("grain_cm1", "float", "a grain", unit="cm-1")
    with pytest.raises(ValueError, match="listed twice"):
        Keys((), "top level", "x", (Key("a", "string", "a"), Key("a", "string", "b")))


def test_a_reader_that_asks_for_an_undocumented_key_is_a_bug():
    t = Table({"kind": "minimum"}, "x.toml")
    t.get("kind", str)
    t.get("colour", str, None)
    with pytest.raises(AssertionError, match="undocumented key 'colour'"):
        t.reject_unknown(SPECIES_KEYS)


# ---- (2) every documented key is accepted ---------------------------------------------------------------

def test_species_files_with_every_key_are_read(tmp_path):
    paths = species_files(tmp_path)
    parsed = [tomllib.loads(p.read_text()) for p in paths]
    missing = _documented(docs.SPECIES_FILE) - _used(parsed, docs.SPECIES_FILE)
    assert not missing, f"the test files do not use {sorted(missing)}"
    h2co3, d2o = (read_species(p) for p in paths)
    assert h2co3.frequency_scale == 0.98 and h2co3.kind == "minimum"
    assert h2co3.energy_J_per_mol == pytest.approx(-264.1 * ENERGY_UNITS_J_PER_MOL["hartree"])
    assert h2co3.geometry_energy_J_per_mol == 0.0
    assert h2co3.provenance["single_point_method"] == "CCSD(T)/CBS (invented)"
    assert [(lv.energy_cm1, lv.degeneracy) for lv in h2co3.electronic_levels] == [(0.0, 1), (8000.0, 3)]
    assert [r.replaces_cm1 for r in h2co3.free_rotors] == [220.0, 550.0]
    assert [r.potential_source for r in h2co3.hindered_rotors] == ["points"] * 3 + ["barriers"] * 2 + ["terms"] * 2
    assert h2co3.hindered_rotors[0].reduced_moment_amu_A2 == 0.8 and h2co3.hindered_rotors[1].symmetry_number == 1
    np.testing.assert_allclose(h2co3.masses_amu, parsed[0]["masses_amu"])
    assert h2co3.lennard_jones == (4.2, 400.0)
    assert d2o.masses_amu[1] == pytest.approx(2.014, abs=1e-3)   # deuterium from `isotopes`
    assert d2o.hessian_J_per_m2 is not None and d2o.frequencies_cm1.size == 3


def test_study_files_with_every_key_are_read(tmp_path):
    variants = study_variants()
    missing = _documented(docs.STUDY_FILE) - _used(variants, docs.STUDY_FILE)
    assert not missing, f"the test files do not use {sorted(missing)}"
    read = []
    for i, data in enumerate(variants):
        path = tmp_path / f"study_{i}.toml"
        path.write_text(to_toml(data))
        read.append(read_study(path))
    st, data = read[0], variants[0]
    assert [s.conditions.bath_gas for s in read] == ["CO2"] * 4
    np.testing.assert_allclose(read[1].conditions.pressure_Pa, [1e-4, 1e-2, 1.0])
    np.testing.assert_allclose(read[2].conditions.pressure_Pa, np.array([1e-4, 1e-2, 1.0]) * PRESSURE_UNITS_PA["Torr"])
    np.testing.assert_allclose(read[3].conditions.number_density_m3, np.array([1e5, 1e7, 1e9]) * 1e6)
    assert [s.sections["falloff"].default.energy_transfer for s in read] == ["efficiency", "down", "all",
                                                                             "efficiency"]
    # the values reach the records under the names of the keys
    assert st.conditions.rate_units == {1: "s-1", 2: "L mol-1 s-1", 3: "cm6 molecule-2 s-1"}
    one_water = st.channel("one_water")
    assert (one_water.degeneracy, one_water.tunnelling_floor) == (2.0, "complex")
    falloff = st.sections["falloff"]
    for key, value in data["falloff"].items():
        if key != "channels":
            assert getattr(falloff.default, key) == value, key
    assert falloff.for_channel("bare").delta_E_down_cm1 == 300.0
    assert falloff.for_channel("bare").collision_efficiency is None   # the override replaces the choice
    assert falloff.for_channel("bare").pressure_method == "master_equation"
    assert falloff.for_channel("bare").master_equation_grain_cm1 == 40.0
    assert falloff.for_channel("one_water").delta_E_all_cm1 == -50.0
    arr, iupac = st.sections["reference_rate"]
    assert (arr.kind, arr.label, arr.expression.n, arr.expression.T0_K) == ("measured", "measured (invented)", 1.5, 298.0)
    assert arr.expression.A == pytest.approx(1e-18)                        # cm3 molecule-1 s-1 -> m3 s-1
    assert (iupac.expression.Fc, iupac.expression.N, iupac.bath_gas, iupac.pressure_min_Pa) == (0.4, 1.2, "N2", 100.0)
    assert iupac.expression.k0_300 == pytest.approx(1e-16) and iupac.expression.kinf_E_over_R_K == 19000.0
    overtone, near_uv, given = st.sections["excitation"]
    assert (overtone.altitude_step_km, overtone.altitude_range_km, overtone.pressure_scan) == (4.0, (0.0, 40.0), True)
    assert given.energy_J_per_mol == pytest.approx(260e3) and given.temperature_K == (220.0,)
    assert near_uv.channel == "bare" and near_uv.profile.endswith("profile.csv")
    fits = st.sections["fits"]
    assert (fits.max_deviation, fits.split, fits.mechanism_form, fits.T0_K, fits.chebyshev_temperature_terms,
            fits.chebyshev_pressure_terms) == (pytest.approx(0.03), 220.0, "chebyshev", 300.0, 4, 2)
    names = [c.name for c in st.sections["comparison"]]
    assert names[-4:] == ["number density", "partial pressure Pa", "partial pressure bar", "mixing ratio Pa"]
    (assoc,) = st.sections["association"]
    assert (assoc.k_inf_A_m3_per_s, assoc.k_inf_activation_energy_J_per_mol, assoc.reference_k0_m6_per_s) == (
        pytest.approx(1.7e-18), pytest.approx(500.0), pytest.approx(2.9e-43))
    assert (assoc.adduct_rotation, assoc.pressure_method, assoc.temperature_K) == ("spectator", "strong_collision",
                                                                                  (220.0, 260.0))


def test_documented_defaults_are_what_the_readers_use(tmp_path):
    data = study_data()
    for key in ("falloff", "fits"):
        data[key] = {}
    data["excitation"] = [{"wavenumber_cm1": 7200.0}]
    data["channel"][0].pop("tunnelling")
    path = tmp_path / "defaults.toml"
    path.write_text(to_toml(data))
    st = read_study(path)
    bare = st.channel("bare")
    for key in ("tunnelling", "tunnelling_floor"):
        assert getattr(bare, key) == CHANNEL_KEYS.default(key)
    assert bare.degeneracy is None and bare.complex is None
    settings = st.sections["falloff"].default
    for key in FALLOFF_KEYS:
        if FALLOFF_KEYS[key].default_text is None and key != "channels":
            assert getattr(settings, key) == FALLOFF_KEYS.default(key), key
    (exc,) = st.sections["excitation"]
    assert exc.altitude_step_km == EXCITATION_KEYS.default("altitude_step_km")
    assert exc.name == "excitation 1" and exc.pressure_scan is None
    fits = st.sections["fits"]
    assert fits.max_deviation * 100 == pytest.approx(FITS_KEYS.default("max_deviation_percent"))
    for key in ("split", "mechanism_form", "T0_K"):
        assert getattr(fits, key) == FITS_KEYS.default(key)
    water = read_species(DATA / "water_dimer" / "h2o.toml")
    assert water.kind == SPECIES_KEYS.default("kind")
    assert water.frequency_scale == SPECIES_KEYS.default("frequency_scale")


# ---- (3) an undocumented key is refused, in one line naming the file and the key -------------------------

def _locations(data, path: tuple, dotted: str = ""):
    """(dict, dotted key) of each table of ``data`` at the pattern ``path`` ("[]" items, "*" any name)."""
    if not path:
        yield data, dotted
        return
    head, rest = path[0], path[1:]
    if rest and rest[0] == "[]":
        for i, item in enumerate(data.get(head, [])):
            yield from _locations(item, rest[1:], f"{dotted}.{head}[{i}]" if dotted else f"{head}[{i}]")
        return
    names = list(data) if head == "*" else [head] if head in data else []
    for name in names:
        if isinstance(data[name], dict):
            yield from _locations(data[name], rest, f"{dotted}.{name}" if dotted else name)


def _fixed(tables):
    return [t for t in tables if t.any_key is None]


@pytest.mark.parametrize("table", _fixed(docs.SPECIES_FILE), ids=lambda t: t.title)
def test_undocumented_species_key_is_refused(tmp_path, table):
    for path in species_files(tmp_path):
        data = tomllib.loads(path.read_text())
        spot = next(_locations(data, table.path), None)
        if spot is not None:
            break
    assert spot is not None, f"no test file has {table.title}"
    place, dotted = spot
    place[BAD] = 1
    path.write_text(to_toml(data))
    key = f"{dotted}.{BAD}" if dotted else BAD
    with pytest.raises(InputError) as info:
        read_species(path)
    assert str(info.value) == f"{path} [{key}]: unknown key (check the spelling against the documentation)"


@pytest.mark.parametrize("table", _fixed(docs.STUDY_FILE), ids=lambda t: t.title)
def test_undocumented_study_key_is_refused(tmp_path, table):
    data = study_data()
    place, dotted = next(_locations(data, table.path))
    place[BAD] = "x"
    path = tmp_path / "study.toml"
    path.write_text(to_toml(data))
    key = f"{dotted}.{BAD}" if dotted else BAD
    with pytest.raises(InputError) as info:
        read_study(path)
    # a molecularity is named by its own check, before the generic one
    problem = "unknown molecularity" if table.path == ("conditions", "rate_units") else "unknown key"
    assert str(info.value).startswith(f"{path} [{key}]: {problem} (")
    assert "\n" not in str(info.value)


# ---- (4) the demo uses only documented keys ---------------------------------------------------------------

def test_demo_study_and_species_use_only_documented_keys():
    study_toml = tomllib.loads((DEMO / "study.toml").read_text())
    assert undocumented(study_toml, docs.STUDY_FILE) == []
    def files(value):  # a species file, or a conformer ensemble's list or table of files
        return [value] if isinstance(value, str) else list(value.values() if isinstance(value, dict) else value)

    named = {DEMO / rel for value in study_toml["species"].values() for rel in files(value)}
    # study_gfn2.toml: the same study at the GFN2-xTB level (study.toml uses refined/)
    assert undocumented(tomllib.loads((DEMO / "study_gfn2.toml").read_text()), docs.STUDY_FILE) == []
    every = named | set(DEMO.glob("*.toml")) | set(DEMO.glob("refined/*.toml"))
    every -= set(DEMO.glob("study*.toml"))
    every |= set((ROOT / "tstrate" / "io" / "reference").glob("*.toml"))
    for path in sorted(every):
        assert undocumented(tomllib.loads(path.read_text()), docs.SPECIES_FILE) == [], path
    st = read_study(DEMO / "study.toml")   # and the readers accept them
    assert set(st.species_files.values()) == {str(p) for p in named}


def test_walk_reports_what_no_table_documents():
    data = {"name": "x", "colour": "red", "free_rotors": [{"replaces_cm1": 1.0, "barrier_cm1": 2.0}],
            "provenance": {"anything": "goes"}}
    assert undocumented(data, docs.SPECIES_FILE) == ["colour", "free_rotors[0].barrier_cm1"]


def test_every_reader_refuses_with_its_key_table():
    """No ``reject_unknown()`` without a table in the readers: a key they asked for would pass undocumented."""
    calls = []
    for path in sorted((ROOT / "tstrate" / "io").rglob("*.py")):
        for line_no, line in enumerate(path.read_text().splitlines(), 1):
            if ".reject_unknown(" in line and "def reject_unknown" not in line:
                calls.append((path.relative_to(ROOT), line_no, line.strip()))
    assert len(calls) >= 15
    bare = [c for c in calls if ".reject_unknown()" in c[2]]
    assert not bare, f"reject_unknown() without a key table: {bare}"


def test_readme_examples_use_only_documented_keys():
    readme = (ROOT / "README.md").read_text()
    blocks = re.findall(r"```toml\n(.*?)```", readme, flags=re.S)
    assert len(blocks) >= 2
    for block in blocks:
        data = tomllib.loads(block)
        tables = (docs.STUDY_FILE if ("species" in data or "uncertainty" in data or "reference_rate" in data)
                  else docs.SPECIES_FILE)
        assert undocumented(data, tables) == [], block[:60]
    assert "docs/species-file.md" in readme and "docs/study-file.md" in readme
