"""The output schema (tstrate/output/schema.py) against real outputs, and docs/outputs/ against it.

Real outputs: one `tstrate run` of the reduced GFN2-xTB demo (session fixture ``demo_run``),
the same study computed again with Arrhenius/Troe mechanism expressions and a duplicate
channel (for the mechanism keys a Chebyshev mechanism does not have), a mechanism with given
Troe data (T** included) on the invented test study of tests/output/data, and every command's
``--json`` output on the demo study and on test species. The checks: every key and column of
these outputs is in the schema with a unit its name agrees with; every schema entry shows
up in some output; the committed pages equal what the generator writes now.
"""

from __future__ import annotations

import csv
import json
import shutil
import subprocess
from pathlib import Path

import pytest

from tests.conftest import DEMO, run_cli_json
from tstrate.output import schema

ROOT = Path(__file__).resolve().parents[2]
DOCS = ROOT / "docs" / "outputs"
FREE_ROTOR = """
[[free_rotors]]
replaces_cm1 = 220.3
symmetry_number = 1
reduced_moment_amu_A2 = 0.85
"""


def _yaml(text: str):
    yaml = pytest.importorskip("ruamel.yaml")   # comes with Cantera, a test dependency
    return yaml.YAML(typ="safe").load(text)


def _csv_header(path: Path) -> list[str]:
    with open(path, newline="") as f:
        return next(csv.reader(f))


def _variant_study(study: Path, folder: Path) -> Path:
    """The demo study with modified-Arrhenius/Troe mechanism expressions and a second bare
    channel (a duplicate reaction), without comparisons and excitations."""
    shutil.copytree(study.parent, folder)
    path = folder / "study.toml"
    text = path.read_text()
    cut = text.index("# ---- catalysed"), text.index("# ---- pressure dependence")
    text = text[:cut[0]] + text[cut[1]:]
    text = text[:text.index("[[excitation]]")] + text[text.index("# ---- fits"):]
    assert 'mechanism_form = "chebyshev"' in text
    text = text.replace('mechanism_form = "chebyshev"', 'mechanism_form = "modified"')
    # the duplicate goes through a transition-state ensemble (two identical wells), for its shares
    old = 'TS0 = "refined/ts_bare.toml"'
    assert old in text
    text = text.replace(old, old + '\nTS0pair = { a = "refined/ts_bare.toml", b = "refined/ts_bare.toml" }')
    text += ('\n[[channel]]\nname = "bare-again"\nreactants = ["H2CO3"]\ntransition_state = "TS0pair"\n'
             'products = ["CO2", "H2O"]\ntunnelling = "wigner"\n')
    path.write_text(text)
    return path


@pytest.fixture(scope="module")
def outputs(demo_run, tmp_path_factory):
    """(document name, content) of real outputs; content is parsed JSON/YAML or a CSV header."""
    from tstrate.io.study import read_study
    from tstrate.output.mechanism import mechanism_yaml
    from tstrate.output.run_files import fits_document
    from tstrate.output.tables import json_text
    from tstrate.study.run import compute_study

    study, out, summary = demo_run
    got = [("tstrate run --json", summary)]
    for name in ("results.json", "fits.json", "inputs.json", "evaluation_forms.json"):
        got.append((name, json.loads((out / name).read_text())))
    got.append(("fits.csv", _csv_header(out / "fits.csv")))
    for path in sorted((out / "tables").glob("*.csv")):
        name = "tables/rates_<channel>.csv" if path.name.startswith("rates_") else f"tables/{path.name}"
        got.append((name, _csv_header(path)))
    # a barrierless association: the OH + SO2 example cut to one temperature and two pressures
    assoc = tmp_path_factory.mktemp("assoc")
    shutil.copytree(ROOT / "molecules" / "oh_so2", assoc / "oh_so2", ignore=shutil.ignore_patterns("inputs"))
    spath = assoc / "oh_so2" / "study.toml"
    text = spath.read_text()
    text = text.replace("temperature_K = [200, 220, 240, 260, 280, 300]", "temperature_K = [250]")
    spath.write_text(text.replace("pressure_bar = [1e-4, 1e-3, 1e-2, 0.03, 0.1, 0.3, 1.0]", "pressure_bar = [1.0]"))
    from tstrate.cli.main import main

    assert main(["run", str(spath), "-o", str(assoc / "out")]) == 0
    for path in sorted((assoc / "out" / "tables").glob("association_*.csv")):
        got.append(("tables/association_<name>.csv", _csv_header(path)))
    got.append(("mechanism.yaml", _yaml((out / "mechanism.yaml").read_text())))

    tmp = tmp_path_factory.mktemp("schema")
    variant = compute_study(read_study(_variant_study(study, tmp / "variant")))
    got.append(("fits.json", json.loads(json_text(fits_document(variant)))))
    from tstrate.output.run_files import _results_json

    got.append(("results.json", json.loads(json_text(_results_json(variant)))))
    got.append(("mechanism.yaml", _yaml(mechanism_yaml(variant.fits))))
    # Troe with T** (the demo's falloff fits have none): given Troe data on the invented test study
    from tstrate.expressions.troe import TroeFit
    from tstrate.study.fits import arrhenius_expression, fit_study

    carbonic = read_study(ROOT / "tests/output/data/carbonic/study.toml")
    kinf = fit_study(carbonic).channel_fit("bare").modified
    troe = TroeFit(k0=arrhenius_expression(1e-16, -3.0, 150e3, order=2), kinf=kinf, a=0.6, T3_K=300.0,
                    T1_K=3000.0, T2_K=5000.0, bath_gas="CO2")
    got.append(("mechanism.yaml", _yaml(mechanism_yaml(fit_study(carbonic, troe={"bare": troe})))))
    # a per-pressure Arrhenius table (pressure-dependent-Arrhenius) from an invented smooth k(T, P) grid
    import numpy as np

    bare = fit_study(carbonic).channel_fit("bare")
    P = np.logspace(3, 6, 4)
    grid = {"bare": (P, bare.k_SI[:, None] / (1 + 1e3 / P[None, :]))}
    got.append(("mechanism.yaml", _yaml(mechanism_yaml(fit_study(carbonic, mechanism_form="pressure_table",
                                                                 falloff_grid=grid)))))

    # reference expressions ([[reference_rate]]): the invented falloff study of tests/study with references
    from tests.study.test_evaluation_references import _study as reference_study
    from tstrate.output.folder import write_outputs

    refs = compute_study(read_study(reference_study(tmp / "references")))
    write_outputs(refs, tmp / "references_out")
    got.append(("results.json", json.loads((tmp / "references_out" / "results.json").read_text())))
    got.append(("tables/reference_ratios.csv", _csv_header(tmp / "references_out" / "tables" / "reference_ratios.csv")))
    got.append(("evaluation_forms.json", json.loads((tmp / "references_out" / "evaluation_forms.json").read_text())))

    rotor = tmp / "h2co3_rotor.toml"
    rotor.write_text((ROOT / "tests/data/falloff/h2co3.toml").read_text() + FREE_ROTOR)
    got.append(("tstrate thermo --json", run_cli_json(["thermo", str(DEMO / "h2co3.toml"), str(rotor),
                                                       str(ROOT / "tests/data/rotors/ethane.toml"),
                                                       "-T", "200", "300", "--json"])))
    for command in ("rates", "compare", "falloff", "excite", "isotopes"):
        got.append((f"tstrate {command} --json", run_cli_json([command, str(study), "--json"])))
    got.append(("tstrate rates --json", run_cli_json(["rates", str(study), "--standard-pressure", "atm",
                                                      "--json"])))
    # the master-equation keys: the demo's bare channel through the master equation
    me_study = DEMO / "study_master_equation.toml"
    for command in ("falloff", "excite"):
        got.append((f"tstrate {command} --json", run_cli_json([command, str(me_study), "--json"])))
    got.append(("tstrate uncertainty --json", run_cli_json(["uncertainty", str(study), "--samples", "64",
                                                            "--quiet", "--json"])))
    tunnel = ["tunnel", "--imaginary-cm1", "1500", "--forward-barrier", "150", "--reverse-barrier", "170",
              "-T", "200", "300", "--json"]
    got.append(("tstrate tunnel --json", run_cli_json(tunnel)))
    got.append(("tstrate tunnel --json", run_cli_json(tunnel + ["--model", "eckart"])))
    return got


@pytest.fixture(scope="module")
def compute_outputs(tmp_path_factory):
    """``tstrate compute ... --json`` outputs (semi-empirical: empty without tblite, Sella, xtb)."""
    for module in ("tblite", "sella", "cclib"):
        try:
            __import__(module)
        except ImportError:
            return []
    if shutil.which("xtb") is None:
        return []
    import os

    from ase import Atoms
    from ase.io import write

    from tstrate.io.species import read_species

    tmp = tmp_path_factory.mktemp("compute")
    old = os.environ.get("TSTRATE_CACHE")
    os.environ["TSTRATE_CACHE"] = str(tmp / "cache")
    try:
        got = [("tstrate compute minimum", run_cli_json(["compute", "minimum", "--smiles", "O", "--name", "H2O",
                                                         "--work-dir", str(tmp), "--quiet", "--json"]))]
        got.append(("tstrate compute conformers", run_cli_json(
            ["compute", "conformers", "--smiles", "CCO", "--name", "ethanol", "--conformers", "4", "--output-dir",
             str(tmp / "ethanol"), "--work-dir", str(tmp), "--quiet", "--json"])))
        ts = tmp / "ts.toml"
        got.append(("tstrate compute relay", run_cli_json(["compute", "relay", "--waters", "0", "-o", str(ts),
                                                           "--work-dir", str(tmp), "--quiet", "--json"])))
        sp = read_species(ts)
        write(tmp / "ts.xyz", Atoms(sp.symbols, positions=sp.positions_A))
        got.append(("tstrate compute saddle", run_cli_json(["compute", "saddle", "--guess", str(tmp / "ts.xyz"),
                                                            "--name", "TS", "--work-dir", str(tmp), "--quiet",
                                                            "--json"])))
        (tmp / "h2o.xyz").write_text("3\nwater\nO 0.0 0.0 0.117\nH 0.0 0.757 -0.467\nH 0.0 -0.757 -0.467\n")
        with open(tmp / "h2o.out", "w") as log:
            subprocess.run(["xtb", "h2o.xyz", "--ohess"], cwd=tmp, stdout=log, stderr=subprocess.STDOUT,
                           check=True, env={"OMP_NUM_THREADS": "1", "PATH": "/usr/bin:/bin"})
        got.append(("tstrate compute read", run_cli_json(["compute", "read", str(tmp / "h2o.out"), "--multiplicity", "1", "--json"])))
    finally:
        if old is None:
            os.environ.pop("TSTRATE_CACHE", None)
        else:
            os.environ["TSTRATE_CACHE"] = old
    return [(f"{name} --json", data) for name, data in got]


def _check(items, seen):
    problems = []
    for name, content in items:
        doc = schema.DOCUMENTS[name]
        if doc.kind == "csv":
            problems += schema.check_csv(doc, content, seen)
        else:
            problems += schema.check_json(doc, content, seen)
    return problems


def test_the_schema_is_consistent():
    assert schema.schema_problems() == []


def test_every_key_of_a_real_output_is_in_the_schema(outputs):
    assert _check(outputs, set()) == []


@pytest.mark.slow
def test_every_key_of_the_compute_outputs_is_in_the_schema(compute_outputs):
    if not compute_outputs:
        pytest.skip("tblite, Sella, cclib and xtb are needed for the compute commands")
    assert _check(compute_outputs, set()) == []


@pytest.mark.slow
def test_every_schema_entry_appears_in_a_real_output(outputs, compute_outputs):
    seen: set = set()
    _check(outputs + compute_outputs, seen)
    produced = {name for name, _ in outputs + compute_outputs}
    expected = schema.entries_of(produced)
    assert sorted(expected - seen) == []
    # every document is covered, the compute commands when their programs are installed
    missing = set(schema.DOCUMENTS) - produced - set(schema.BATCH_DOCUMENTS)  # tests/compute/test_batch.py
    if compute_outputs:
        assert missing == set()
    else:
        assert all(name.startswith("tstrate compute") for name in missing)


def test_committed_pages_equal_the_generated_ones():
    pages = schema.pages()
    on_disk = {p.name: p.read_text(encoding="utf-8") for p in DOCS.glob("*.md")}
    assert sorted(on_disk) == sorted(pages), "run: python -m tstrate.output.schema --write docs/outputs"
    for name, text in pages.items():
        assert on_disk[name] == text, f"docs/outputs/{name} is stale; run: python -m tstrate.output.schema --write docs/outputs"


def test_the_checks_catch_what_breaks_the_convention():
    # the old spellings are refused by name alone
    assert schema.name_problems("zpe_J_per_mol", schema.KJ)
    assert schema.name_problems("total_pressure_Pa", schema.BAR)
    assert schema.name_problems("max_relative_deviation", schema.ONE)
    assert schema.name_problems("energy_hartree", schema.KJ)
    # a unit the name does not carry, and a number with neither suffix nor unit key
    assert schema.name_problems("barrier_zpe_kJ_per_mol", schema.CM1)
    assert schema.name_problems("barrier", schema.KJ)
    assert schema.name_problems("kappa", schema.ONE) == []
    assert schema.name_problems("rate_constant", "@rate_constant_unit") == []
    doc = schema.DOCUMENTS["tstrate tunnel --json"]
    good = {"model": "eckart", "imaginary_frequency_cm1": 1500.0, "temperature_K": [300.0], "kappa": [2.0],
            "tunnelling_forward_barrier_kJ_per_mol": 1.0, "tunnelling_reverse_barrier_kJ_per_mol": 2.0,
            "tunnelling_energy_floor_kJ_per_mol": 0.0}
    assert schema.check_json(doc, good) == []
    assert schema.check_json(doc, good | {"barrier_J_per_mol": 1.0}) == [
        "tstrate tunnel --json: barrier_J_per_mol is not in the schema"]
    assert schema.check_json(doc, good | {"model": 3}) != []
    rates = schema.DOCUMENTS["tstrate rates --json"]
    rec = {"name": "x", "rate_constant": [1.0]}          # rate_constant_unit is missing
    assert any("rate_constant_unit" in p for p in schema.check_json(rates, {"channels": [rec]}))
    table = schema.DOCUMENTS["tables/thermochemistry.csv"]
    assert schema.check_csv(table, ["species", "T [K]", "p_standard [bar]"]) == []
    assert schema.check_csv(table, ["species", "T [K]", "p_standard [Pa]"]) != []
    assert schema.check_csv(table, ["species", "T"]) != []
