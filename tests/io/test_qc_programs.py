"""Real outputs of open-source quantum-chemistry programs, made here, read or refused faithfully.

The programs are Debian's packages ``nwchem`` (NWChem 7), ``psi4`` (Psi4 1.3) and ``xtb``
(GFN2-xTB); .ci/run installs them. Each job takes well under a few seconds (water and OH at
HF/STO-3G). Tests skip, with the reason, where a program is missing. No output is written by
hand: truncated copies are cut from the real files.

Check values are the numbers the programs print themselves (their total energies and their own
harmonic analyses), read from the output text in the test: a faithful reader reproduces them.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess

import numpy as np
import pytest

pytest.importorskip("cclib")

from tstrate.cli.main import main  # noqa: E402  (the CLI, for one-line refusals)
from tstrate.errors import InputError  # noqa: E402
from tstrate.io.qcout import read_output  # noqa: E402
from tstrate.units import energy_to_J_per_mol  # noqa: E402

ENV = dict(os.environ, OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1")

WATER = ("O 0.0 0.0 0.117", "H 0.0 0.757 -0.467", "H 0.0 -0.757 -0.467")


def _need(program: str):
    if shutil.which(program) is None:
        pytest.skip(f"the {program} program is not installed (apt-get install {program})")


def _run(cmd, cwd, log):
    with open(cwd / log, "w") as out:
        subprocess.run(cmd, cwd=cwd, stdout=out, stderr=subprocess.STDOUT, env=ENV, timeout=600,
                       check=False)
    return cwd / log


@pytest.fixture(scope="session")
def nwchem_water(tmp_path_factory):
    """An NWChem file with two jobs: an SCF optimisation, then an SCF frequency job."""
    _need("nwchem")
    d = tmp_path_factory.mktemp("nwchem_water")
    (d / "w.nw").write_text("start w\ntitle water\ngeometry units angstrom\n " + "\n ".join(WATER)
                            + "\nend\nbasis\n * library sto-3g\nend\ntask scf optimize\ntask scf freq\n")
    return _run(["nwchem", "w.nw"], d, "w.nwout")


@pytest.fixture(scope="session")
def nwchem_mp2_numerical(tmp_path_factory):
    """An NWChem MP2 frequency job: no analytic MP2 Hessian, so NWChem differentiates gradients at 12
    displaced geometries and prints their energies after the reference point's."""
    _need("nwchem")
    d = tmp_path_factory.mktemp("nwchem_mp2")
    (d / "w.nw").write_text("start w\ntitle water\ngeometry units angstrom\n " + "\n ".join(WATER)
                            + "\nend\nbasis\n * library sto-3g\nend\ntask mp2 freq\n")
    return _run(["nwchem", "w.nw"], d, "w.nwout")


NH2 = "geometry units angstrom\n N 0 0 0.14\n H 0 0.80 -0.49\n H 0 -0.80 -0.49\nend\n"
UHF = "basis\n * library sto-3g\nend\nscf\n uhf\n doublet\nend\n"


@pytest.fixture(scope="session")
def nwchem_nh2(tmp_path_factory):
    """Open-shell (doublet, UHF) NH2: a frequency job, and an optimisation followed by one."""
    _need("nwchem")
    d = tmp_path_factory.mktemp("nwchem_nh2")
    (d / "freq.nw").write_text("start freq\n" + NH2 + UHF + "task scf freq\n")
    (d / "optfreq.nw").write_text("start optfreq\n" + NH2 + UHF + "task scf optimize\ntask scf freq\n")
    return _run(["nwchem", "freq.nw"], d, "freq.nwout"), _run(["nwchem", "optfreq.nw"], d, "optfreq.nwout")


@pytest.fixture(scope="session")
def psi4_water(tmp_path_factory):
    """Psi4's text output of an optimisation plus frequency job, and a QCSchema Hessian result
    (``psi4 --json``) at the optimised geometry."""
    _need("psi4")
    d = tmp_path_factory.mktemp("psi4_water")
    (d / "w.in").write_text("memory 500 mb\nmolecule {\n0 1\n" + "\n".join(WATER)
                            + "\n}\nset basis sto-3g\noptimize('scf')\nfrequency('scf')\n")
    subprocess.run(["psi4", "-n", "1", "w.in", "w.out"], cwd=d, env=ENV, timeout=600, check=False,
                   stdout=subprocess.DEVNULL, stderr=subprocess.STDOUT)
    text = (d / "w.out").read_text()
    # the optimised geometry Psi4 prints in its final block (Angstrom)
    block = text[text.rindex("Final optimized geometry"):]
    rows = re.findall(r"^\s*([A-Z][a-z]?)\s+(-?\d+\.\d+)\s+(-?\d+\.\d+)\s+(-?\d+\.\d+)\s*$", block, re.M)[:3]
    bohr_A = 0.52917721067  # CODATA 2014 Bohr radius in Angstrom (Psi4 1.3's constant)
    geom = [float(v) / bohr_A for r in rows for v in r[1:]]
    job = {"schema_name": "qcschema_input", "schema_version": 1,
           "molecule": {"symbols": [r[0] for r in rows], "geometry": geom,
                        "molecular_charge": 0, "molecular_multiplicity": 1},
           "driver": "hessian", "model": {"method": "hf", "basis": "sto-3g"}, "keywords": {}}
    (d / "hess.json").write_text(json.dumps(job))
    subprocess.run(["psi4", "--json", "hess.json"], cwd=d, env=ENV, timeout=600, check=False,
                   stdout=subprocess.DEVNULL, stderr=subprocess.STDOUT)
    return d


@pytest.fixture(scope="session")
def xtb_jobs(tmp_path_factory):
    """xtb: planar NH3 (a saddle point of the inversion, one imaginary mode) and the OH radical."""
    _need("xtb")
    d = tmp_path_factory.mktemp("xtb_jobs")
    (d / "nh3.xyz").write_text("4\nplanar\nN 0 0 0\nH 1.01 0 0\nH -0.505 0.8747 0\nH -0.505 -0.8747 0\n")
    (d / "oh.xyz").write_text("2\n\nO 0 0 0\nH 0 0 0.97\n")
    for stem, extra in (("nh3", ["--hess"]), ("oh", ["--ohess", "--uhf", "1"])):
        sub = d / stem
        sub.mkdir()
        shutil.copy(d / f"{stem}.xyz", sub)
        _run(["xtb", f"{stem}.xyz", *extra], sub, f"{stem}.out")
    return d


def _nwchem_last_scf_hartree(path) -> float:
    return float(re.findall(r"Total SCF energy =\s+(-?\d+\.\d+)", path.read_text())[-1])


def _nwchem_projected_cm1(path) -> np.ndarray:
    """The frequencies of NWChem's projected harmonic analysis (its last 'P.Frequency' lines)."""
    text = path.read_text()
    part = text[text.rindex("Projected Frequencies"):] if "Projected Frequencies" in text else text
    values = [float(v) for line in re.findall(r"P\.Frequency\s+(.*)", part) for v in line.split()]
    return np.array(values)


# ---- read right --------------------------------------------------------------------------------

def test_nwchem_two_jobs_give_the_frequency_jobs_geometry_energy_and_modes(nwchem_water):
    sp = read_output(nwchem_water, name="H2O")
    assert sp.symbols == ("O", "H", "H") and sp.charge == 0 and sp.multiplicity == 1
    # the energy NWChem prints last (the frequency job's SCF at the optimised geometry)
    e = _nwchem_last_scf_hartree(nwchem_water)
    assert sp.energy_J_per_mol == pytest.approx(energy_to_J_per_mol(e, "hartree"), rel=1e-11, abs=1e-3)
    printed = _nwchem_projected_cm1(nwchem_water)
    vib = np.sort(printed[np.abs(printed) > 100])  # NWChem lists the 6 projected-out modes near 0
    assert len(vib) == 3
    # tstrate's own harmonic analysis of NWChem's Hessian against NWChem's (printed to 0.01 cm-1)
    assert np.allclose(np.sort(sp.frequencies_cm1), vib, atol=0.5)
    assert sp.hessian_J_per_m2 is not None


def test_nwchem_numerical_frequency_job_gives_the_reference_points_energy(nwchem_mp2_numerical):
    sp = read_output(nwchem_mp2_numerical, name="H2O")
    energies = [float(v) for v in re.findall(r"Total MP2 energy\s+(-?\d+\.\d+)", nwchem_mp2_numerical.read_text())]
    assert len(energies) > 2 and len(set(energies)) > 2   # the reference point and displaced ones
    # the first MP2 energy NWChem prints is at the input (reference) geometry, not the file's last
    assert sp.energy_J_per_mol == pytest.approx(energy_to_J_per_mol(energies[0], "hartree"), rel=1e-11, abs=1e-3)
    assert abs(energies[-1] - energies[0]) * 2625.5 > 0.01      # the last differs by more than 0.01 kJ/mol
    assert "displaced points" in sp.provenance["read_warnings"]
    assert "reference point" in sp.provenance["energy"]


def test_nwchem_open_shell_doublet(nwchem_nh2, capsys):
    freq, optfreq = nwchem_nh2
    # cclib 1.8.1 gives no multiplicity for this file: it must be given, never assumed
    with pytest.raises(InputError, match=r"\[multiplicity\]: the file gives no multiplicity"):
        read_output(freq)
    sp = read_output(freq, name="NH2", multiplicity=2)
    assert sp.multiplicity == 2 and not sp.linear and len(sp.frequencies_cm1) == 3
    assert sp.energy_J_per_mol == pytest.approx(
        energy_to_J_per_mol(_nwchem_last_scf_hartree(freq), "hartree"), rel=1e-11, abs=1e-3)
    printed = _nwchem_projected_cm1(freq)
    # the job's geometry is not a stationary point (cclib stops on NWChem's open-shell
    # optimisations), where projections of the rotations differ slightly: 1 % agreement
    assert np.allclose(np.sort(sp.frequencies_cm1), np.sort(printed[np.abs(printed) > 100]), rtol=0.01)
    # cclib 1.8.1 raises on NWChem's open-shell optimisation output: its message and the other routes
    _cli_refuses(["compute", "read", str(optfreq), "--multiplicity", "2"], capsys,
                 r"cclib stopped on this file \(.*\).*QCSchema")


def test_psi4_qcschema_hessian_result(psi4_water):
    data = json.loads((psi4_water / "hess.json").read_text())
    if not data.get("success"):
        pytest.skip("psi4 --json did not produce a result on this machine")
    sp = read_output(psi4_water / "hess.json", name="H2O")
    assert sp.symbols == ("O", "H", "H") and sp.multiplicity == 1
    assert sp.energy_J_per_mol == pytest.approx(
        energy_to_J_per_mol(data["properties"]["return_energy"], "hartree"), rel=1e-12)
    # Psi4's own harmonic analysis of the same job (its text output's "Freq [cm^-1]" lines)
    text = (psi4_water / "w.out").read_text()
    printed = np.array([float(v) for line in re.findall(r"Freq \[cm\^-1\]\s+(.*)", text) for v in line.split()])
    assert np.allclose(np.sort(sp.frequencies_cm1), np.sort(printed[-3:]), atol=1.0)
    assert "Psi4" in sp.provenance["program"] or "psi4" in sp.provenance["program"].lower()


def test_xtb_saddle_point_is_a_transition_state_and_radical_needs_its_multiplicity(xtb_jobs):
    # a Hessian-only xtb job (--hess) prints no coordinates: paired with its geometry file
    with pytest.raises(InputError, match=r"no coordinates.*--geometry FILE"):
        read_output(xtb_jobs / "nh3" / "nh3.out", multiplicity=1)
    ts = read_output(xtb_jobs / "nh3" / "nh3.out", multiplicity=1, geometry_file=xtb_jobs / "nh3.xyz")
    assert ts.kind == "transition_state" and np.sum(ts.frequencies_cm1 < 0) == 1
    # xtb prints the spin only through its --uhf option (cclib reads it there): the closed-shell
    # job above needs --multiplicity, the radical's file gives it
    with pytest.raises(InputError, match=r"\[multiplicity\]: the file gives no multiplicity"):
        read_output(xtb_jobs / "nh3" / "nh3.out", geometry_file=xtb_jobs / "nh3.xyz")
    oh = read_output(xtb_jobs / "oh" / "oh.out")
    assert oh.multiplicity == 2 and len(oh.frequencies_cm1) == 1


# ---- refused, in one line ------------------------------------------------------------------------

def _cut(src, dst, fraction=None, before=None, after_lines=0):
    text = src.read_text()
    if before is not None:
        i = text.rindex(before)
        lines = text[i:].splitlines(keepends=True)
        text = text[:i] + "".join(lines[:after_lines])
    else:
        text = text[:int(len(text) * fraction)]
    dst.write_text(text)
    return dst


def _cli_refuses(argv, capsys, pattern):
    assert main(argv) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    assert captured.err.count("\n") == 1 and "Traceback" not in captured.err
    assert re.search(pattern, captured.err), captured.err


def test_truncated_nwchem_files_are_refused(nwchem_water, tmp_path, capsys):
    cut_header = _cut(nwchem_water, tmp_path / "header.nwout", fraction=0.01)
    cut_geometry = _cut(nwchem_water, tmp_path / "geometry.nwout", before="Output coordinates",
                        after_lines=5)
    cut_freqs = _cut(nwchem_water, tmp_path / "freqs.nwout", before="P.Frequency", after_lines=3)
    cut_end = _cut(nwchem_water, tmp_path / "end.nwout", fraction=0.97)
    for path in (cut_header, cut_geometry, cut_freqs, cut_end):
        out = tmp_path / f"{path.stem}.toml"
        _cli_refuses(["compute", "read", str(path), "-o", str(out)], capsys,
                     rf"{re.escape(path.name)}.*(did not end normally|no atoms|cut|unfinished|vibrations)")
        assert not out.exists()


def test_psi4_text_output_that_cclib_cannot_parse_names_cclib_and_the_other_routes(psi4_water, capsys):
    # cclib 1.8.1 stops on the version string of Debian's Psi4 build; the message shows cclib's
    # exception and the routes that remain
    _cli_refuses(["compute", "read", str(psi4_water / "w.out")], capsys,
                 r"cclib stopped on this file .*QCSchema")


def test_single_point_file_of_another_molecule_is_refused(nwchem_water, xtb_jobs, capsys):
    _cli_refuses(["compute", "read", str(nwchem_water), "--single-point", str(xtb_jobs / "oh" / "oh.out")], capsys,
                 r"\[single_point\]: the single-point file holds HO .* the frequency job H2O")


def test_single_point_units_in_any_case(nwchem_water):
    a = read_output(nwchem_water, single_point="-76.0 Hartree")
    b = read_output(nwchem_water, single_point="-76.0 Eh")
    c = read_output(nwchem_water, single_point="-76.0 au")
    assert a.energy_J_per_mol == b.energy_J_per_mol == c.energy_J_per_mol


def test_hessian_file_as_a_lower_triangle_and_one_triangle_only(xtb_jobs, tmp_path, capsys):
    from tstrate.io.qcout import read_hessian_file

    full = read_hessian_file(xtb_jobs / "nh3" / "hessian", 4)
    n3 = 12
    rows, cols = np.tril_indices(n3)
    h = full / full.flat[0] * 1.0  # any scale: only the packing is tested here
    tri = tmp_path / "tri.hess"
    tri.write_text("\n".join(f"{v:.10e}" for v in h[rows, cols]))
    assert np.allclose(read_hessian_file(tri, 4) / read_hessian_file(tri, 4).flat[0], h / h.flat[0])
    one = np.tril(h)
    half = tmp_path / "half.hess"
    half.write_text("\n".join(" ".join(f"{v:.10e}" for v in row) for row in one))
    _cli_refuses(["compute", "read", str(xtb_jobs / "nh3" / "nh3.out"), "--multiplicity", "1",
                  "--geometry", str(xtb_jobs / "nh3.xyz"), "--hessian", str(half)], capsys,
                 r"\[hessian\]: .*not symmetric.*one triangle")


def test_special_files_are_refused_without_reading(tmp_path, capsys):
    fifo = tmp_path / "pipe.out"
    os.mkfifo(fifo)
    _cli_refuses(["compute", "read", str(fifo)], capsys, r"not a regular file")
    loop = tmp_path / "loop.out"
    loop.symlink_to(tmp_path / "loop.out")
    _cli_refuses(["compute", "read", str(loop)], capsys, r"loop\.out: output file cannot be opened")
    if os.path.exists("/dev/zero"):
        _cli_refuses(["compute", "read", "/dev/zero"], capsys, r"/dev/zero: is not a regular file")


def test_size_cap_names_its_option(nwchem_water, capsys):
    _cli_refuses(["compute", "read", str(nwchem_water), "--max-file-mib", "0.01"], capsys,
                 r"is larger than 0\.01 MiB.*--max-file-mib")
