"""The standard pressure (1 bar or 1 atm) moves S, G, Kp and activation quantities by the ideal-gas
terms R ln(p1/p2) alone, and leaves rate constants unchanged."""

import json
import math

import numpy as np
import pytest
from scipy import constants

from tstrate.cli.main import main
from tstrate.io.species import read_species
from tstrate.io.study import read_study
from tstrate.physics.thermo import thermochemistry
from tstrate.physics.tst import channel_rates
from pathlib import Path
import shutil

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"
R = constants.R
LN_ATM_OVER_BAR = math.log(constants.atm / constants.bar)


def test_entropy_differs_by_R_ln_of_the_pressure_ratio():
    # S(1 atm) = S(1 bar) - R ln(101325/100000) = S(1 bar) - 0.1094 J/(mol K): the textbook ideal-gas
    # term (e.g. the NIST-JANAF introduction on the change of standard state from 1 atm to 1 bar)
    sp = read_species(DEMO / "h2o.toml")
    bar = thermochemistry(sp, [200.0, 298.15], pressure_Pa=constants.bar)
    atm = thermochemistry(sp, [200.0, 298.15], pressure_Pa=constants.atm)
    assert np.allclose(bar.entropy_J_per_mol_K - atm.entropy_J_per_mol_K, R * LN_ATM_OVER_BAR, rtol=1e-12)
    assert R * LN_ATM_OVER_BAR == pytest.approx(0.1094, abs=1e-4)
    assert np.allclose(bar.heat_capacity_J_per_mol_K, atm.heat_capacity_J_per_mol_K, rtol=0, atol=0)


def test_rates_are_independent_and_kp_and_activation_terms_shift():
    study = read_study(DEMO / "study.toml")
    T = np.array([200.0, 300.0])
    for ch in study.channels:
        b = channel_rates(ch, study.species, T, standard_pressure_Pa=constants.bar)
        a = channel_rates(ch, study.species, T, standard_pressure_Pa=constants.atm)
        assert np.allclose(a.k, b.k, rtol=1e-13)
        dn = len(ch.products) - len(ch.reactants)
        # Kp = Kc (kT/p0)^dn: ln Kp(atm) - ln Kp(bar) = -dn ln(atm/bar)
        assert np.allclose(a.ln_kp - b.ln_kp, -dn * LN_ATM_OVER_BAR, rtol=0, atol=1e-12)
        # dG = -RT [ln k - ln(kT/h) + (n-1) ln c0]: shifts by -RT (n-1) ln(atm/bar)
        n = ch.order
        assert np.allclose(a.delta_G_J_per_mol - b.delta_G_J_per_mol, -R * T * (n - 1) * LN_ATM_OVER_BAR,
                           rtol=0, atol=1e-6)


def test_cli_thermo_and_rates_state_the_standard_pressure(capsys):
    assert main(["thermo", str(DEMO / "h2o.toml"), "--standard-pressure", "atm", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["standard_pressure_bar"] == pytest.approx(1.01325)
    assert doc["conventions"]["standard_pressure"] == "1 atm"
    assert main(["rates", str(DEMO / "study.toml"), "--standard-pressure", "atm", "--json"]) == 0
    ch = json.loads(capsys.readouterr().out)["channels"][0]
    assert "Kp_1atm" in ch and "Kp_1bar" not in ch


def test_study_key_and_its_refusal(tmp_path):
    demo = tmp_path / "demo"
    shutil.copytree(DEMO, demo)
    text = (demo / "study.toml").read_text()
    assert "[conditions]" in text
    path = demo / "p0.toml"
    for value, ok in (('"1 atm"', True), ('"1 bar"', True), ('"2 bar"', False)):
        path.write_text(text.replace("[conditions]", f"[conditions]\nstandard_pressure = {value}", 1))
        if ok:
            p0 = read_study(path).conditions.standard_pressure_Pa
            assert p0 == pytest.approx(constants.atm if "atm" in value else constants.bar)
        else:
            assert main(["rates", str(path)]) == 2
