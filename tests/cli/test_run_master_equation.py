"""The demo's bare channel through the energy-grained master equation in `tstrate run`
(molecules/carbonic_acid/study_master_equation.toml): the run writes its falloff, its exported
mechanism and the energised-molecule populations, and its high-pressure limit is canonical TST."""

import json
from pathlib import Path

import numpy as np

from tstrate.cli.main import main

STUDY = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid" / "study_master_equation.toml"


def test_run_of_the_master_equation_demo(tmp_path, capsys):
    out = tmp_path / "me"
    assert main(["run", str(STUDY), "-o", str(out), "--quiet", "--json"]) == 0
    json.loads(capsys.readouterr().out)  # the --json summary is JSON
    results = json.loads((out / "results.json").read_text())
    assert results["title"].startswith("H2CO3")
    fo = results["falloff"]["channels"][0]
    assert fo["pressure_method"] == "master_equation"
    # k_inf of the master equation is canonical TST (tunnelling in k(E) and in TST alike), within the
    # grain error of a 10 cm-1 grid
    ratio = np.asarray(fo["k_high_pressure_over_canonical_tst"], dtype=float)
    assert np.all(np.abs(ratio - 1) < 0.03), ratio
    # k(T, p) rises with pressure and stays below k_inf
    k = np.asarray(fo["rate_constant"], dtype=float)
    assert np.all(k[:, 1:] >= k[:, :-1] * (1 - 1e-9))
    assert np.all(k <= np.asarray(fo["k_high_pressure"], dtype=float)[:, None] * (1 + 1e-9))
    assert (out / "mechanism.yaml").exists()
    assert (out / "plots" / "excitation_OH_overtone_5v_populations.png").exists()
