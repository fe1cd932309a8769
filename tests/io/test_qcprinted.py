"""The choice of the reference point's energy among a file's energies (tstrate.io.qcprinted)."""

from tstrate.io.qcprinted import reference_index, scan


def test_reference_index():
    # an optimisation and a frequency job: one energy per printed geometry, the last is the reference
    assert reference_index(7, 7) == 6
    # a numerical frequency job: 13 energies at 1 printed geometry (12 displaced points)
    assert reference_index(13, 1) == 0
    # an optimisation (5 geometries) then displaced points: the last printed geometry's energy
    assert reference_index(17, 5) == 4
    # fewer energies than geometries (a file that prints the geometry again): the last energy
    assert reference_index(3, 4) == 2
    # no geometry at all (a Hessian-only output): the last energy
    assert reference_index(2, 0) == 1


def test_other_programs_are_not_scanned(tmp_path):
    path = tmp_path / "x.out"
    path.write_text("FINAL SINGLE POINT ENERGY   -1.0\nONIOM: extrapolated energy = -2.0\n")
    found = scan(path, "NWChem")
    assert found.final_totals_hartree == [] and found.oniom_totals_hartree == [] and not found.embedded
