"""GFN2-xTB torsional scans of methanol, and the projection check: the harmonic mode the projection
picks is the one the scan perturbs.

Independent routes compared: (1) the projection of the torsion onto the normal modes of the
finite-difference Hessian; (2) the curvature of the scanned potential at the minimum, which with
Pitzer's reduced moment gives the torsion's own harmonic wavenumber sqrt(V''(0)/I)/(2 pi c); (3) the
Cartesian displacement of each normal mode, which turns the scanned dihedral. The mode picked by (1)
must be the mode nearest the wavenumber of (2), within 10 % (common practice: the torsion couples
weakly to the other modes of methanol), and the mode that carries most of the scan's first relaxed step (3).
"""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("tblite")

from tstrate.physics.rotors import rotor_model  # noqa: E402
from tstrate.physics.vibrations import vibrational_analysis  # noqa: E402


def _methanol_minimum():
    import sys
    from pathlib import Path

    from ase import Atoms

    from tstrate.compute.engine import (Settings, energy_J_per_mol, finite_difference_hessian, minimise,
                                        with_calculator)
    from tstrate.io.species import build_species

    sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "physics"))
    from test_rotors import methanol

    symbols, x = methanol()
    settings = Settings()
    atoms = with_calculator(Atoms(symbols, positions=x), settings)
    minimise(atoms, settings, label="methanol")
    hess = finite_difference_hessian(atoms, settings.hessian_step_A).hessian_J_per_m2
    return build_species("methanol", symbols, atoms.positions, hessian_J_per_m2=hess,
                         energy_J_per_mol=energy_J_per_mol(atoms)), settings


@pytest.mark.slow
def test_projection_picks_the_mode_the_scan_perturbs():
    from tstrate.compute.rotor_scan import species_with_scanned_rotors

    sp, settings = _methanol_minimum()
    new, (scan,) = species_with_scanned_rotors(sp, settings, step_deg=10.0, relaxed=True)
    [rotor] = new.hindered_rotors
    assert rotor.symmetry_number == 3 and rotor.mode_assignment == "projection"
    assert rotor.mode_overlap > 0.9
    # (2) the scan's own harmonic wavenumber
    nu_scan = rotor_model(rotor).harmonic_wavenumber_cm1()
    real = sp.frequencies_cm1[sp.frequencies_cm1 > 0]
    nearest = real[np.argmin(np.abs(real - nu_scan))]
    assert rotor.replaces_cm1 == pytest.approx(nearest)
    assert rotor.replaces_cm1 == pytest.approx(nu_scan, rel=0.10)
    # (3) the mode the scan moves along: the relaxed first step (10 degrees), mass-weighted, overall
    # translation and rotation projected out, decomposed into the normal modes
    from tstrate.physics.vibrations import rigid_body_basis

    nm = vibrational_analysis(sp.hessian_J_per_m2, sp.positions_A, sp.masses_amu)
    step = ((scan.geometries_A[1] - scan.geometries_A[0]) * np.sqrt(sp.masses_amu)[:, None]).ravel()
    rb = rigid_body_basis(sp.positions_A, sp.masses_amu)
    step = step - rb @ (rb.T @ step)
    weights = (nm.modes.reshape(len(nm.modes), -1) @ step) ** 2 / (step @ step)
    assert nm.frequencies_cm1[int(np.argmax(weights))] == pytest.approx(rotor.replaces_cm1)
    assert weights.max() > 0.9
    # the scan spans one period (120 degrees) and the fit reproduces it
    assert scan.angles_deg.max() < 120 and rotor.fit_rms_J_per_mol < 0.02 * (max(rotor.points_J_per_mol) + 1)


@pytest.mark.slow
def test_rigid_scan_and_species_file_round_trip(tmp_path):
    from tstrate.compute.rotor_scan import species_with_scanned_rotors
    from tstrate.io.species import read_species, write_species
    from tstrate.physics.thermo import thermochemistry

    sp, settings = _methanol_minimum()
    new, _ = species_with_scanned_rotors(sp, settings, step_deg=20.0)
    path = write_species(new, tmp_path / "meoh.toml")
    back = read_species(path)
    assert back.hindered_rotors[0].replaces_cm1 == pytest.approx(new.hindered_rotors[0].replaces_cm1)
    s1 = thermochemistry(new, 298.15).entropy_J_per_mol_K
    s2 = thermochemistry(back, 298.15).entropy_J_per_mol_K
    np.testing.assert_allclose(s1, s2, atol=1e-6)


@pytest.mark.slow
def test_compute_rotors_command(tmp_path, capsys):
    from tstrate.cli.main import main
    from tstrate.io.species import read_species, write_species

    sp, _ = _methanol_minimum()
    src = write_species(sp, tmp_path / "meoh.toml")
    out = tmp_path / "meoh_rotors.toml"
    assert main(["compute", "rotors", str(src), "-o", str(out), "--step-deg", "20", "--quiet"]) == 0
    text = capsys.readouterr().out
    assert "rotor C1-O2" in text and "projection" in text
    [r] = read_species(out).hindered_rotors
    assert r.symmetry_number == 3 and len(r.points_deg) == 6
    # an existing output is refused without --force, with exit status 2 as a one-line error
    assert main(["compute", "rotors", str(src), "-o", str(out), "--quiet"]) == 2


def test_relaxed_scan_of_a_transition_state_is_refused():
    from pathlib import Path

    from tstrate.compute.rotor_scan import species_with_scanned_rotors
    from tstrate.errors import InputError
    from tstrate.io.species import read_species

    ts = read_species(Path(__file__).resolve().parents[1] / "data" / "falloff" / "ts_bare.toml")
    with pytest.raises(InputError, match="leaves the saddle point") as err:
        species_with_scanned_rotors(ts, relaxed=True)
    assert "ts_bare.toml" in str(err.value) and "rigid" in str(err.value)
