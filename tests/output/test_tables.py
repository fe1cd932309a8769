"""CSV tables and JSON dumps: units in column names, values as computed, atomic writes."""

from __future__ import annotations

import csv
import io
import json
import os
import shutil
from pathlib import Path

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.io.study import read_study
from tstrate.output import tables
from tstrate.study.fits import fit_study
from tstrate.physics.thermo import thermochemistry
from tstrate.units import N_A

CARBONIC = Path(__file__).resolve().parent / "data" / "carbonic" / "study.toml"


def _read_csv(text):
    rows = list(csv.reader(io.StringIO(text)))
    return rows[0], rows[1:]


def test_thermo_csv_values_and_units(carbonic, tmp_path):
    T = [150.0, 298.15, 500.0]
    thermos = [thermochemistry(carbonic.species[n], T) for n in ("H2CO3", "CO2")]
    path = tables.write_thermo_csv(tmp_path / "thermo.csv", thermos)
    header, rows = _read_csv(path.read_text())
    assert header[:5] == ["species", "T [K]", "Cp [J mol-1 K-1]", "S [J mol-1 K-1]",
                          "H(T)-H(0) [kJ mol-1]"]
    assert all("[" in h for h in header[1:])             # every numeric column has its unit
    assert len(rows) == 6
    row = rows[1]                                        # H2CO3 at 298.15 K
    th = thermos[0]
    assert row[0] == "H2CO3" and float(row[1]) == 298.15
    assert float(row[2]) == th.heat_capacity_J_per_mol_K[1]          # repr round-trips exactly
    assert float(row[4]) == pytest.approx(th.enthalpy_increment_J_per_mol[1] / 1e3, rel=1e-15)
    assert float(row[header.index("H(T) [kJ mol-1]")]) == pytest.approx(
        th.enthalpy_J_per_mol[1] / 1e3, rel=1e-15)
    assert float(row[header.index("p_standard [bar]")]) == 1.0               # 1e5 Pa


def test_thermo_csv_without_energy_leaves_cells_empty(carbonic):
    th = thermochemistry(carbonic.species["CO2"].with_changes(energy_J_per_mol=None), [300.0])
    header, rows = _read_csv(tables.thermo_csv_text([th]))
    assert rows[0][header.index("H(T) [kJ mol-1]")] == ""
    assert rows[0][header.index("E_electronic [kJ mol-1]")] == ""


def test_rates_csv_units_per_order(rates):
    bare, water = rates
    header, rows = _read_csv(tables.rates_csv_text(water))
    assert header[2] == "k [cm3 molecule-1 s-1]"
    assert header[5] == "k_reverse [cm6 molecule-2 s-1]"           # three products
    assert header[6] == "Kc [(molecule cm-3)^1]"
    assert len(rows) == water.temperature_K.size
    # 1 m^3 = 1e6 cm^3; 1 m^6 = 1e12 cm^6
    assert float(rows[0][2]) == pytest.approx(water.k[0] * 1e6, rel=1e-14)
    assert float(rows[0][5]) == pytest.approx(water.k_reverse[0] * 1e12, rel=1e-14)
    assert float(rows[0][4]) == pytest.approx(water.kappa[0], rel=1e-15)
    header, rows = _read_csv(tables.rates_csv_text(water, {2: "L mol-1 s-1"}))
    assert header[2] == "k [L mol-1 s-1]"
    assert float(rows[0][2]) == pytest.approx(water.k[0] * 1e3 * N_A, rel=1e-14)   # m^3 -> L, per mol
    header, _ = _read_csv(tables.rates_csv_text(bare))
    assert header[2] == "k [s-1]" and header[5] == "k_reverse [cm3 molecule-1 s-1]"


def test_rates_csv_has_the_kappa_of_the_other_floor_for_channels_through_a_complex(rates):
    from tstrate.io.study import read_study
    from tstrate.study.rates import study_rates

    # the invented test study of tests/data/tst: its water channel is Eckart through a complex
    study = read_study(Path(__file__).resolve().parents[1] / "data" / "tst" / "study.toml")
    water = next(r for r in study_rates(study) if r.channel == "water")
    header, rows = _read_csv(tables.rates_csv_text(water))
    col = header.index("kappa_other_floor [1]")
    assert water.kappa_other_floor is not None
    assert [float(r[col]) for r in rows] == pytest.approx(list(water.kappa_other_floor), rel=1e-15)
    header, rows = _read_csv(tables.rates_csv_text(rates[0]))      # no complex: empty cells
    assert all(r[header.index("kappa_other_floor [1]")] == "" for r in rows)


def test_rate_tables_one_file_per_channel(rates, tmp_path):
    paths = tables.write_rate_tables(tmp_path / "out", rates)
    assert [p.name for p in paths] == ["rates_bare.csv", "rates_water.csv"]
    assert all(p.is_file() for p in paths)


def test_rate_tables_write_nothing_when_one_table_fails(rates, tmp_path):
    out = tmp_path / "out"
    # a wrong unit for order 3 breaks only the water channel's reverse column
    with pytest.raises(InputError, match="does not fit a reaction of order 3"):
        tables.write_rate_tables(out, rates, {3: "cm3 molecule-1 s-1"})
    assert not out.exists() or list(out.iterdir()) == []


def test_fits_csv_and_json(carbonic, tmp_path):
    fits = fit_study(carbonic, split=True)
    header, rows = _read_csv(tables.fits_csv_text(fits))
    assert "Ea [kJ mol-1]" in header and "A unit" in header
    assert [r[1] for r in rows if r[0] == "bare"] == ["arrhenius", "modified_arrhenius",
                                                      "modified_arrhenius", "modified_arrhenius"]
    path = tables.write_fits_json(tmp_path / "fits.json", fits)
    data = json.loads(path.read_text())
    assert data["channels"][0]["modified_arrhenius"]["A_unit"] == "s-1"
    assert data["species"][0]["nasa7"]["reference_pressure_bar"] == 1.0     # 1e5 Pa
    tables.write_fits_csv(tmp_path / "fits.csv", fits)
    assert (tmp_path / "fits.csv").read_text().startswith("channel,")


def test_json_text_converts_numpy_and_nan():
    text = tables.json_text({"a": np.array([1.0, np.nan]), "b": np.float64(2.5), "c": np.int64(3)})
    assert json.loads(text) == {"a": [1.0, None], "b": 2.5, "c": 3}


def test_writers_refuse_inputs_and_write_atomically(carbonic, rates, tmp_path, monkeypatch):
    folder = tmp_path / "carbonic"
    shutil.copytree(CARBONIC.parent, folder)
    study = read_study(folder / "study.toml")
    fits = fit_study(study)
    before = (folder / "study.toml").read_bytes()
    with pytest.raises(InputError, match="refusing to overwrite an input file"):
        tables.write_fits_json(folder / "study.toml", fits)
    with pytest.raises(InputError, match="refusing to overwrite an input file"):
        tables.write_rates_csv(folder / "co2.toml", rates[0], inputs=fits.input_files)
    assert (folder / "study.toml").read_bytes() == before

    target = tmp_path / "rates.csv"
    target.write_text("previous\n")

    def broken_replace(src, dst):
        raise OSError("no space left")

    monkeypatch.setattr(os, "replace", broken_replace)
    with pytest.raises(OSError, match="no space left"):
        tables.write_rates_csv(target, rates[0])
    assert target.read_text() == "previous\n"
    assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".part")] == []


def test_unwritable_folder(rates, tmp_path):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    with pytest.raises(InputError, match="cannot write here") as exc:
        tables.write_rates_csv(blocker / "rates.csv", rates[0])
    assert "\n" not in str(exc.value)


def test_safe_file_stem():
    assert tables.safe_file_stem("H2CO3 + H2O / 2") == "H2CO3___H2O___2"
    assert tables.safe_file_stem("..") == "unnamed"


def test_reverse_of_four_products_has_a_unit(rates):
    """H2CO3 + 2 H2O <=> CO2 + 3 H2O has a fourth-order reverse rate constant: m^9 -> cm^9."""
    import dataclasses

    four = dataclasses.replace(rates[1], reverse_order=4)
    header, rows = _read_csv(tables.rates_csv_text(four))
    assert header[5] == "k_reverse [cm9 molecule-3 s-1]"
    assert float(rows[0][5]) == pytest.approx(four.k_reverse[0] * 1e18, rel=1e-14)
