"""The ``tstrate compute`` command: outputs, JSON, refusals and exit status 2 on user mistakes."""

from __future__ import annotations

import json

import pytest

pytest.importorskip("tblite")

from tstrate.cli.main import main  # noqa: E402
from tstrate.io.species import read_species  # noqa: E402


def test_minimum_writes_species_and_refuses_overwrite(tmp_path, capsys):
    out = tmp_path / "h2o.toml"
    assert main(["compute", "minimum", "--smiles", "O", "--name", "H2O", "-o", str(out),
                 "--json", "--quiet"]) == 0
    summary = json.loads(capsys.readouterr().out)
    assert summary["species"]["formula"] == "H2O" and summary["from_cache"] is False
    sp = read_species(out)
    assert sp.hessian_J_per_m2 is not None
    assert sp.provenance["command"].startswith("tstrate compute minimum")
    assert main(["compute", "minimum", "--smiles", "O", "--name", "H2O", "-o", str(out)]) == 2
    assert "refusing to overwrite" in capsys.readouterr().err
    assert main(["compute", "minimum", "--smiles", "O", "--name", "H2O", "-o", str(out),
                 "--force", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["from_cache"] is True


def test_bad_smiles_exit_2(capsys):
    assert main(["compute", "minimum", "--smiles", "C1CC(", "--name", "x"]) == 2
    assert "cannot parse the SMILES" in capsys.readouterr().err


def test_empty_smiles_exit_2(capsys):
    assert main(["compute", "minimum", "--smiles", "", "--name", "x"]) == 2
    err = capsys.readouterr().err
    assert "SMILES is empty" in err and "Traceback" not in err and len(err.strip().splitlines()) == 1


def test_output_folder_is_refused_before_computing(tmp_path, capsys):
    # with --force a folder used to reach the atomic write after the calculation (IsADirectoryError)
    code = main(["compute", "minimum", "--smiles", "O", "--name", "x", "-o", str(tmp_path), "--force",
                 "--no-cache"])
    err = capsys.readouterr().err
    assert code == 2 and "is a folder, not a file" in err and "[--output]" in err and "Traceback" not in err
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("argv, needle", [
    (["--smiles", "C1CC("], "[--smiles]: RDKit cannot parse"),
    (["--smiles", "O", "--fmax", "-1"], "[--fmax]: fmax must be positive"),
    (["--smiles", "O", "--conformers", "0"], "[--conformers]: at least one conformer"),
])
def test_errors_name_the_option(capsys, argv, needle):
    # the library's argument names ([smiles], [fmax] ...) are shown as the options the user typed
    assert main(["compute", "minimum", "--name", "x", *argv]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and needle in err, err


@pytest.mark.parametrize("option, value", [("--charge", "1"), ("--multiplicity", "3")])
def test_relay_refuses_charge_and_multiplicity_it_would_ignore(capsys, option, value):
    # the relay always builds neutral singlet H2CO3 + water; these options were silently ignored
    assert main(["compute", "relay", "--waters", "1", option, value, "--no-cache"]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and f"[{option}]" in err and "cannot apply" in err, err


def test_non_convergence_exit_2_and_no_species_file(tmp_path, capsys):
    out = tmp_path / "w.toml"
    code = main(["compute", "minimum", "--smiles", "O", "--name", "w", "--max-steps", "1",
                 "--conformers", "1", "--no-cache", "--work-dir", str(tmp_path), "-o", str(out)])
    assert code == 2
    err = capsys.readouterr().err
    assert "did not converge" in err and "w-conformer1.unconverged.xyz" in err
    assert not out.exists()
    assert (tmp_path / "w-conformer1.unconverged.xyz").exists()


def test_mismatched_atom_order_exit_2(tmp_path, capsys):
    (tmp_path / "r.xyz").write_text("3\n\nH 0 0 -1.07\nC 0 0 0\nN 0 0 1.15\n")
    (tmp_path / "p.xyz").write_text("3\n\nC 0 0 0\nN 0 0 1.17\nH 0 0 2.17\n")
    code = main(["compute", "saddle", "--reactant", str(tmp_path / "r.xyz"), "--product",
                 str(tmp_path / "p.xyz"), "--name", "ts"])
    assert code == 2
    assert "atom order differs" in capsys.readouterr().err


def test_saddle_needs_inputs_and_never_overwrites_inputs(tmp_path, capsys):
    assert main(["compute", "saddle", "--name", "ts"]) == 2
    assert "give --guess" in capsys.readouterr().err
    g = tmp_path / "g.xyz"
    g.write_text("3\n\nH 0 0 -1.07\nC 0 0 0\nN 0 0 1.15\n")
    assert main(["compute", "saddle", "--guess", str(g), "--name", "ts", "-o", str(g),
                 "--force"]) == 2
    assert "input file" in capsys.readouterr().err


def test_help_lists_actions(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["compute", "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    for action in ("minimum", "saddle", "relay", "read"):
        assert action in out
