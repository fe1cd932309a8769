"""`tstrate thermo`: command-line mistakes give one line naming the option, exit status 2."""

from pathlib import Path

import pytest

from tstrate.cli.main import main

H2O = Path(__file__).resolve().parents[2] / "tstrate" / "io" / "reference" / "h2o.toml"


@pytest.mark.parametrize("argv, needle", [
    (["-T", "-5"], "[--temperature]: temperatures must be positive"),
    (["-T", "300", "0"], "[--temperature]: temperatures must be positive"),
    (["-T", "nan"], "[--temperature]: temperatures must be positive"),
    (["--low-mode-cutoff-cm1", "-3"], "[--low-mode-cutoff-cm1]: low-mode cut-off must be positive"),
])
def test_bad_options_name_the_option(capsys, argv, needle):
    # these used to name the library's keys ([temperature_K], [low_modes.cutoff_cm1])
    assert main(["thermo", str(H2O), *argv]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    lines = err.strip().splitlines()
    assert len(lines) == 1 and needle in lines[0], err
