"""Reading quantum-chemistry outputs: real xtb outputs made here, read through cclib.

The xtb program (Debian package ``xtb``; .ci/run installs it) runs GFN2-xTB on water in
well under a second: ``xtb h2o.xyz --ohess`` writes a log that cclib parses (geometry,
energies, frequencies) and a plain-number Hessian file. tstrate's direct route (tblite,
another implementation of the same method) is the independent reference.
"""

from __future__ import annotations

import re
import shutil
import subprocess

import numpy as np
import pytest

pytest.importorskip("cclib")

from tstrate.errors import InputError  # noqa: E402
from tstrate.io.qcout import read_output, single_point_J_per_mol  # noqa: E402
from tstrate.io.species import read_species, write_species  # noqa: E402
from tstrate.physics.thermo import thermochemistry  # noqa: E402
from tstrate.units import ENERGY_UNITS_J_PER_MOL  # noqa: E402

HARTREE = ENERGY_UNITS_J_PER_MOL["hartree"]

needs_xtb = pytest.mark.skipif(shutil.which("xtb") is None,
                               reason="the xtb program is not installed (apt-get install xtb)")

WATER_XYZ = "3\nwater guess\nO 0.0 0.0 0.10\nH 0.0 0.76 -0.50\nH 0.0 -0.76 -0.50\n"


@pytest.fixture(scope="module")
def xtb_water(tmp_path_factory):
    if shutil.which("xtb") is None:
        pytest.skip("the xtb program is not installed (apt-get install xtb)")
    d = tmp_path_factory.mktemp("xtb")
    (d / "h2o.xyz").write_text(WATER_XYZ)
    with open(d / "h2o.out", "w") as out:
        subprocess.run(["xtb", "h2o.xyz", "--ohess"], cwd=d, stdout=out, stderr=subprocess.STDOUT,
                       check=True, env={"OMP_NUM_THREADS": "1", "PATH": "/usr/bin:/bin"})
    return d


def _printed(d):
    text = (d / "h2o.out").read_text()
    energy = float(re.findall(r"TOTAL ENERGY\s+(-?\d+\.\d+) Eh", text)[-1])
    block = text[text.rindex("projected vibrational frequencies"):]
    freqs = [float(v) for line in block.splitlines()[1:4] if line.startswith("eigval")
             for v in line.split(":")[1].split()]
    return energy, np.array([f for f in freqs if abs(f) > 1.0])


@needs_xtb
def test_energy_unit_and_frequencies_from_cclib(xtb_water):
    sp = read_output(xtb_water / "h2o.out", multiplicity=1, name="H2O")
    e_hartree, freqs = _printed(xtb_water)
    # cclib 1.8 stores energies in eV; converted back they must match the printed hartree value
    assert sp.energy_J_per_mol == pytest.approx(e_hartree * HARTREE, abs=1e-6 * HARTREE)
    np.testing.assert_allclose(sp.frequencies_cm1, np.sort(freqs), atol=0.01)
    assert sp.kind == "minimum" and sp.symmetry_number == 2
    assert sp.provenance["program"] == "xTB 6.5.1" or sp.provenance["program"].startswith("xTB")
    assert sp.provenance["method"] == "GFN2-xTB"


@needs_xtb
def test_hessian_file_gives_the_printed_frequencies(xtb_water):
    sp = read_output(xtb_water / "h2o.out", multiplicity=1, hessian_file=xtb_water / "hessian")
    _, freqs = _printed(xtb_water)
    # tstrate's projection of xtb's Hessian against xtb's own projected frequencies
    np.testing.assert_allclose(sp.frequencies_cm1, np.sort(freqs), atol=0.5)
    d2o = sp.with_changes()  # isotopologue through the Hessian
    from tstrate.io.species import build_species

    d2o = build_species("D2O", sp.symbols, sp.positions_A, hessian_J_per_m2=sp.hessian_J_per_m2,
                        isotopes={1: 2, 2: 2})
    assert np.all(d2o.frequencies_cm1 < 0.75 * sp.frequencies_cm1)


@needs_xtb
def test_round_trip_matches_direct_route(xtb_water, tmp_path, monkeypatch):
    pytest.importorskip("tblite")
    monkeypatch.setenv("TSTRATE_CACHE", str(tmp_path / "cache"))
    from tstrate.compute.minima import compute_minimum

    read = read_output(xtb_water / "h2o.out", multiplicity=1, name="H2O", hessian_file=xtb_water / "hessian")
    path = write_species(read, tmp_path / "h2o.toml")
    back = read_species(path)
    np.testing.assert_allclose(back.frequencies_cm1, read.frequencies_cm1, atol=0.01)
    assert back.energy_J_per_mol == pytest.approx(read.energy_J_per_mol, abs=1e-3)
    direct = compute_minimum(name="H2O", smiles="O").species
    # same method, two programs: energies within 1e-4 hartree, geometry within 1e-3 A,
    # frequencies within 2 cm^-1 (different SCC and finite-difference settings)
    assert back.energy_J_per_mol == pytest.approx(direct.energy_J_per_mol, abs=1e-4 * HARTREE)

    def dists(x):
        return np.sort(np.linalg.norm(x[:, None] - x[None, :], axis=2).ravel())

    np.testing.assert_allclose(dists(back.positions_A), dists(direct.positions_A), atol=1e-3)
    np.testing.assert_allclose(back.frequencies_cm1, direct.frequencies_cm1, atol=2.0)
    T = np.array([200.0, 298.15, 1000.0])
    a, b = thermochemistry(back, T), thermochemistry(direct, T)
    np.testing.assert_allclose(a.entropy_J_per_mol_K, b.entropy_J_per_mol_K, atol=0.01)
    np.testing.assert_allclose(a.enthalpy_increment_J_per_mol, b.enthalpy_increment_J_per_mol,
                               atol=1.0)
    assert a.zpe_J_per_mol == pytest.approx(b.zpe_J_per_mol, abs=20.0)  # 2 cm-1 x 3 modes / 2


@needs_xtb
def test_single_point_overrides_geometry_energy(xtb_water):
    sp = read_output(xtb_water / "h2o.out", multiplicity=1, single_point="-76.4 hartree")
    assert sp.energy_J_per_mol == pytest.approx(-76.4 * HARTREE)
    assert sp.geometry_energy_J_per_mol == pytest.approx(-5.0705 * HARTREE, rel=1e-3)
    from_file = read_output(xtb_water / "h2o.out", multiplicity=1, single_point=str(xtb_water / "h2o.out"))
    assert from_file.energy_J_per_mol == pytest.approx(from_file.geometry_energy_J_per_mol)


@needs_xtb
def test_geometry_file_needs_modes(xtb_water):
    with pytest.raises(InputError, match="no vibrational frequencies or Hessian.*--hessian FILE"):
        read_output(xtb_water / "xtbopt.xyz", charge=0, multiplicity=1)
    # a geometry file holds no energy: said at read time, not later by a rate calculation
    with pytest.raises(InputError, match=r"\[energy\]: the file holds no electronic energy"):
        read_output(xtb_water / "xtbopt.xyz", charge=0, multiplicity=1, hessian_file=xtb_water / "hessian")
    sp = read_output(xtb_water / "xtbopt.xyz", charge=0, multiplicity=1, single_point="-5.07 Eh",
                     hessian_file=xtb_water / "hessian")
    assert len(sp.frequencies_cm1) == 3 and sp.geometry_energy_J_per_mol is None
    assert sp.energy_J_per_mol == pytest.approx(-5.07 * 2625499.639, rel=1e-9)  # CODATA 2018 hartree


def test_bad_inputs(tmp_path):
    with pytest.raises(InputError, match="does not exist"):
        read_output(tmp_path / "missing.out")
    junk = tmp_path / "junk.out"
    junk.write_text("this is not an output file\n")
    with pytest.raises(InputError, match="neither cclib nor ASE can read"):
        read_output(junk)
    with pytest.raises(InputError, match="neither 'VALUE UNIT'"):
        single_point_J_per_mol("-76.4 hartrees")
    assert single_point_J_per_mol("-1 kJ/mol") == -1000.0


def test_geometry_without_modes_names_the_hessian_option(tmp_path):
    # a plain geometry has no modes; the message names --hessian (not the species-file keys)
    xyz = tmp_path / "w.xyz"
    xyz.write_text(WATER_XYZ)
    with pytest.raises(InputError, match="--hessian FILE") as info:
        read_output(xyz, charge=0, multiplicity=1)
    assert info.value.file == str(xyz)


def test_binary_or_folder_hessian_file(tmp_path):
    # --hessian pointing at a binary file or a folder: one-line InputError, not a UnicodeDecodeError
    from tstrate.io.qcout import read_hessian_file

    binary = tmp_path / "hessian"
    binary.write_bytes(b"\xd0\xff\x00\x81" * 40)
    with pytest.raises(InputError, match="not a text file") as info:
        read_hessian_file(binary, 3)
    assert info.value.file == str(binary)
    with pytest.raises(InputError, match="is a folder"):
        read_hessian_file(tmp_path, 3)
