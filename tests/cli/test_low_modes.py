"""--low-modes and --low-mode-cutoff-cm1 on every command whose numbers depend on them.

The treatments are named after what they do: harmonic, rotor-entropy-blend (Grimme 2012) and
frequency-floor (Ribeiro, Marenich, Cramer and Truhlar 2011). The numbers the commands print are
compared with the library's for the same LowModes (tstrate.physics.thermo, checked against hand
evaluations of the papers' equations in tests/physics/test_thermo.py); here the point is that
the options reach the computation and the output says which treatment was used. Data: the
invented studies in tests/data/tst/ and tests/data/catalysis/ (their complexes and transition
states have modes of 40-110 cm-1, so the treatments change the numbers).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest

from tstrate.cli.main import main
from tstrate.io.species import read_species
from tstrate.io.study import read_study
from tstrate.study.routes import study_comparisons
from tstrate.physics.thermo import DEFAULT_LOW_MODE_CUTOFF_CM1, LOW_MODE_METHODS, LowModes, thermochemistry
from tstrate.study.rates import study_rates

DATA = Path(__file__).resolve().parents[1] / "data"
TST = DATA / "tst" / "study.toml"
CATALYSIS = DATA / "catalysis" / "study.toml"
COMPLEX = DATA / "tst" / "h2co3_h2o.toml"   # lowest modes 60 and 110 cm-1

#: every command with the low-mode options, and a first argument it accepts
COMMANDS = {"thermo": COMPLEX, "rates": TST, "compare": CATALYSIS, "run": TST}


def _json(capsys, *argv):
    assert main([str(a) for a in argv]) == 0
    return json.loads(capsys.readouterr().out)


def test_the_names_are_the_new_ones():
    assert LOW_MODE_METHODS == ("harmonic", "rotor-entropy-blend", "frequency-floor")


@pytest.mark.parametrize("command", list(COMMANDS))
@pytest.mark.parametrize("old", ["grimme", "truhlar"])
def test_old_names_are_refused_in_one_line_naming_the_new_ones(capsys, command, old):
    with pytest.raises(SystemExit) as info:
        main([command, str(COMMANDS[command]), "--low-modes", old])
    out, err = capsys.readouterr()
    assert info.value.code == 2 and out == ""
    assert err.count("\n") == 1
    assert err.startswith(f"tstrate {command}: error: argument --low-modes: unknown treatment '{old}'")
    for name in LOW_MODE_METHODS:
        assert name in err
    assert "Grimme 2012" in err and "Ribeiro, Marenich, Cramer and Truhlar 2011" in err


@pytest.mark.parametrize("command", list(COMMANDS))
def test_help_lists_the_names_their_sources_and_the_library_default_cut_off(capsys, command):
    with pytest.raises(SystemExit):
        main([command, "--help"])
    out = " ".join(capsys.readouterr().out.split())  # undo the line wrapping
    assert "--low-modes METHOD" in out and "--low-mode-cutoff-cm1 CM1" in out
    assert "one of harmonic, rotor-entropy-blend, frequency-floor (default harmonic)" in out
    assert "(Grimme 2012)" in out and "(Ribeiro, Marenich, Cramer and Truhlar 2011)" in out
    (default,) = re.findall(r"cut-off nu0 of --low-modes in cm-1 \(default (\S+),", out)
    assert float(default) == DEFAULT_LOW_MODE_CUTOFF_CM1


@pytest.mark.parametrize("method, cutoff", [("rotor-entropy-blend", None), ("frequency-floor", 150.0)])
def test_thermo_uses_the_treatment(capsys, method, cutoff):
    extra = [] if cutoff is None else ["--low-mode-cutoff-cm1", cutoff]
    doc = _json(capsys, "thermo", COMPLEX, "-T", 150, 298.15, "--json", "--low-modes", method, *extra)
    low = LowModes(method, DEFAULT_LOW_MODE_CUTOFF_CM1 if cutoff is None else cutoff)
    assert doc["low_modes"] == {"method": method, "cutoff_cm1": low.cutoff_cm1}
    (rec,) = doc["species"]
    sp = read_species(COMPLEX)
    expected = thermochemistry(sp, [150.0, 298.15], low_modes=low).entropy_J_per_mol_K
    harmonic = thermochemistry(sp, [150.0, 298.15]).entropy_J_per_mol_K
    np.testing.assert_allclose(rec["entropy_J_per_mol_K"], expected, rtol=1e-12)
    assert np.all(np.abs(expected - harmonic) > 0.5)  # J/(mol K): the soft modes matter


def test_rates_use_the_treatment_and_cut_off(capsys):
    doc = _json(capsys, "rates", TST, "--json", "--low-modes", "frequency-floor", "--low-mode-cutoff-cm1", 150)
    assert doc["low_modes"] == {"method": "frequency-floor", "cutoff_cm1": 150.0}
    study = read_study(TST)
    library = study_rates(study, low_modes=LowModes("frequency-floor", 150.0))
    harmonic = study_rates(study)
    for rec, lib, har in zip(doc["channels"], library, harmonic):
        assert rec["name"] == lib.channel
        np.testing.assert_allclose(rec["delta_S_activation_J_per_mol_K"], lib.delta_S_J_per_mol_K,
                                   rtol=1e-12)
    water = {r.channel: (r, h) for r, h in zip(library, harmonic)}["water"]
    assert np.all(np.abs(water[0].k / water[1].k - 1) > 0.1)  # its complex and TS have soft modes


def test_compare_uses_the_treatment(capsys):
    doc = _json(capsys, "compare", CATALYSIS, "--json", "--low-modes", "rotor-entropy-blend")
    assert doc["low_modes"] == {"method": "rotor-entropy-blend", "cutoff_cm1": DEFAULT_LOW_MODE_CUTOFF_CM1}
    library = study_comparisons(read_study(CATALYSIS), low_modes=LowModes("rotor-entropy-blend"))
    rec = doc["comparisons"][-1]  # the last scenario: the last comparison at its only abundance
    res = library[-1]
    assert rec["name"] == res.comparison.name
    harmonic = study_comparisons(read_study(CATALYSIS))[-1]
    for route_rec, route, har in zip(rec["routes"], res.routes, harmonic.routes):
        k1 = route.pseudo_first_order_per_s[0]  # shape (abundance, T)
        np.testing.assert_allclose(route_rec["pseudo_first_order_per_s"], k1, rtol=1e-12)
    assert np.any(np.abs(k1 / har.pseudo_first_order_per_s[0] - 1) > 0.01)  # an assisted route changes


def test_run_records_the_treatment_in_results_fits_mechanism_and_report(tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["run", str(TST), "--output", str(out), "--quiet", "--low-modes", "frequency-floor",
                 "--low-mode-cutoff-cm1", "150"]) == 0
    capsys.readouterr()
    record = {"method": "frequency-floor", "cutoff_cm1": 150.0}
    results = json.loads((out / "results.json").read_text())
    assert results["low_modes"] == record
    assert json.loads((out / "fits.json").read_text())["low_modes"] == record
    assert "(low modes: frequency-floor, nu0 = 150 cm-1)" in (out / "mechanism.yaml").read_text()
    report = (out / "report.md").read_text()
    assert ("Low modes: frequency-floor: real modes below nu0 raised to nu0 in every function except the "
            "zero-point energy (Ribeiro, Marenich, Cramer and Truhlar 2011); nu0 = 150 cm-1.") in report
    # the thermochemistry in results.json is the library's with the same treatment
    study = read_study(TST)
    rec = next(r for r in results["thermochemistry"] if r["name"] == "H2CO3_H2O")
    th = thermochemistry(study.species["H2CO3_H2O"], rec["temperature_K"], low_modes=LowModes("frequency-floor", 150.0))
    np.testing.assert_allclose(rec["entropy_J_per_mol_K"], th.entropy_J_per_mol_K, rtol=1e-12)


def test_harmonic_report_names_both_alternatives_with_their_sources(tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["run", str(TST), "--output", str(out), "--quiet"]) == 0
    capsys.readouterr()
    report = (out / "report.md").read_text()
    assert "Low modes: harmonic: every real mode a harmonic oscillator." in report
    assert ("The quasi-harmonic alternatives are rotor-entropy-blend (Grimme 2012) and frequency-floor "
            "(Ribeiro, Marenich, Cramer and Truhlar 2011)") in report
