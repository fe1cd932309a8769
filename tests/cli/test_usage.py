"""Usage errors of every parser are one line on stderr with exit status 2; --help works everywhere.

The parser tree is walked from :func:`tstrate.cli.main.build_parser`, so a command or a
``tstrate compute`` action added later is covered without editing this file.
"""

from __future__ import annotations

import argparse
import re
import subprocess
import sys
from pathlib import Path

import pytest

from tstrate.cli.main import SUBCOMMANDS, build_parser, main

DATA = Path(__file__).resolve().parents[1] / "data"
STUDY = DATA / "tst" / "study.toml"
H2O = Path(__file__).resolve().parents[2] / "molecules" / "reference" / "h2o.toml"


def _commands(parser, path=()):
    """Every command path below ``parser``: (), ("run",), ..., ("compute", "read"), ..."""
    yield path
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from _commands(sub, path + (name,))


ALL_COMMANDS = list(_commands(build_parser()))


def test_the_walk_finds_every_command_and_compute_action():
    found = {c for c in ALL_COMMANDS}
    assert {(name,) for name in SUBCOMMANDS} <= found
    assert {("compute", a) for a in ("minimum", "saddle", "relay", "read")} <= found


def _usage_error(capsys, argv):
    with pytest.raises(SystemExit) as info:
        main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return info.value.code, out, err


USAGE_ERRORS = {
    "missing-positional": (["rates"], "tstrate rates: error: the following arguments are required: STUDY"),
    "option-without-value": (["rates", STUDY, "--plot"], "tstrate rates: error: argument --plot: expected one argument"),
    "unknown-option": (["thermo", H2O, "--bogus"], "tstrate thermo: error: unrecognized arguments: --bogus"),
    "bad-type": (["tunnel", "--imaginary-cm1", "x", "--forward-barrier", "1", "--reverse-barrier", "1"],
                 "tstrate tunnel: error: argument --imaginary-cm1: invalid float value: 'x'"),
    "bad-choice": (["tunnel", "--imaginary-cm1", "1000", "--forward-barrier", "1", "--reverse-barrier", "1",
                    "--model", "bell"], "tstrate tunnel: error: argument --model: invalid choice: 'bell'"),
    "exclusive-options": (["excite", STUDY, "--wavelength", "300", "--wavenumber", "7000"],
                          "tstrate excite: error: argument --wavenumber: not allowed with argument --wavelength"),
    "unknown-command": (["bogus"], "tstrate: error: argument COMMAND: invalid choice: 'bogus'"),
    "no-command": ([], "tstrate: error: give a command: run, thermo, rates"),
    "compute-without-action": (["compute"], "tstrate compute: error: the following arguments are required: ACTION"),
    "compute-bad-int": (["compute", "saddle", "--name", "ts", "--charge", "one"],
                        "tstrate compute saddle: error: argument --charge: invalid int value: 'one'"),
    "compute-bad-choice": (["compute", "relay", "--waters", "3"],
                           "tstrate compute relay: error: argument --waters: invalid choice: 3"),
    "compute-missing-input": (["compute", "read"],
                              "tstrate compute read: error: the following arguments are required: QC_FILE"),
    "compute-unknown-option": (["compute", "minimum", "--smiles", "O", "--name", "w", "--bogus"],
                               "tstrate compute minimum: error: unrecognized arguments: --bogus"),
}


@pytest.mark.parametrize("case", list(USAGE_ERRORS), ids=list(USAGE_ERRORS))
def test_usage_errors_are_one_line_with_status_2(capsys, case):
    argv, start = USAGE_ERRORS[case]
    code, out, err = _usage_error(capsys, argv)
    assert code == 2
    assert out == ""
    assert err.count("\n") == 1 and err.endswith("\n"), err  # one line, no usage block
    assert err.startswith(start), err
    assert "usage:" not in err


def test_usage_error_as_a_process_of_a_nested_compute_action():
    """The status the shell sees, and nothing but the one line."""
    proc = subprocess.run([sys.executable, "-m", "tstrate.cli.main", "compute", "saddle", "--name", "ts",
                           "--neb-images", "many"], capture_output=True, text=True, check=False)
    assert proc.returncode == 2
    assert proc.stdout == ""
    assert proc.stderr == ("tstrate compute saddle: error: argument --neb-images: invalid int value: "
                           "'many'\n")


@pytest.mark.parametrize("path", ALL_COMMANDS, ids=[" ".join(p) or "tstrate" for p in ALL_COMMANDS])
def test_help_works_for_every_command_and_action(capsys, path):
    with pytest.raises(SystemExit) as info:
        main([*path, "--help"])
    out, err = capsys.readouterr()
    assert info.value.code == 0 and err == ""
    assert out.startswith("usage: " + " ".join(("tstrate",) + path))
    assert "options:" in out


def test_compute_read_names_its_input_qc_file(capsys):
    with pytest.raises(SystemExit):
        main(["compute", "read", "--help"])
    out = capsys.readouterr().out
    usage = out.split("\n\n")[0]
    assert usage.rstrip().endswith(" QC_FILE")  # the positional input (it was shown as OUTPUT)
    assert re.search(r"^\s+QC_FILE\s+the input: an output file of a", out, re.M)


@pytest.mark.parametrize("action", ["saddle", "relay", "read"])
def test_charge_help_mentions_no_smiles_where_there_is_none(capsys, action):
    with pytest.raises(SystemExit):
        main(["compute", action, "--help"])
    out = capsys.readouterr().out
    assert "--smiles" not in out and "SMILES" not in out.split("--charge", 1)[1].split("--fmax")[0]


def test_quiet_on_every_command_with_a_progress_bar(capsys):
    for path in [("run",), ("falloff",), ("excite",), ("compare",), ("compute", "minimum"),
                 ("compute", "saddle"), ("compute", "relay")]:
        with pytest.raises(SystemExit):
            main([*path, "--help"])
        assert "--quiet" in capsys.readouterr().out, path
