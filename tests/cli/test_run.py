"""`tstrate run`: the whole job into one folder, atomically, never over inputs.

The study is a copy of the bundled GFN2-xTB carbonic-acid demo restricted to a
few temperatures (semi-empirical numbers: these tests check the plumbing and
the agreement of the exported mechanism with tstrate's own numbers, which
Cantera - a general-purpose reference library - evaluates independently).
"""

from __future__ import annotations

import base64
import hashlib
import json
import shutil
from pathlib import Path

import numpy as np
import pytest

from tstrate.cli.main import main

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"


@pytest.fixture()
def study(tmp_path) -> Path:
    folder = tmp_path / "demo"
    shutil.copytree(DEMO, folder, ignore=shutil.ignore_patterns("inputs", "*.sh", "*.md"))
    text = (folder / "study.toml").read_text()
    # fewer temperatures keep the test quick; the rest of the study is as bundled
    start = text.index("temperature_K = [150")
    end = text.index("]", start) + 1
    text = text[:start] + "temperature_K = [200, 215, 230, 245, 260, 275, 290, 300]" + text[end:]
    (folder / "study.toml").write_text(text)
    return folder / "study.toml"


def _hashes(folder: Path) -> dict:
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in folder.glob("*.toml")}


def test_run_writes_every_output_and_leaves_inputs_alone(study, tmp_path, capsys):
    before = _hashes(study.parent)
    out = tmp_path / "out"
    assert main(["run", str(study), "--output", str(out), "--quiet"]) == 0
    for name in ("mechanism.yaml", "fits.json", "fits.csv", "results.json", "inputs.json", "report.md",
                 "report.html", "tables/thermochemistry.csv", "plots/arrhenius.png"):
        assert (out / name).is_file(), name
    assert list((out / "tables").glob("rates_*.csv"))
    assert _hashes(study.parent) == before
    # no temporary folder is left beside the output
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []
    # the HTML report is self-contained: the Arrhenius PNG is embedded byte for byte
    html = (out / "report.html").read_text()
    png = base64.b64encode((out / "plots" / "arrhenius.png").read_bytes()).decode()
    assert png in html
    assert "estimate" in html.lower() and "caution" in html.lower()
    # limits drawn from the results: the demo's bare channel tunnels deeply and two channels
    # go through complexes treated in the high-pressure limit
    report = (out / "report.md").read_text()
    limits = report[report.index("## Limits of these results"):]
    assert "Channel bare: deep tunnelling" in limits
    assert "high-pressure limit" in limits
    # the demo's bare-channel falloff fits best with one decaying term (a at its bound 0): fits.json
    # names the parameter at the bound and the report's warnings say what it means
    bare = next(c for c in json.loads((out / "fits.json").read_text())["channels"] if c["name"] == "bare")
    assert bare["falloff_troe"]["parameters_at_bound"] == ["a"] and bare["falloff_troe"]["a"] == 0.0
    assert "channel 'bare': Troe fit: F_cent has a single decaying term exp(-T/T***)" in report
    # inputs with their hashes
    inputs = json.loads((out / "inputs.json").read_text())["inputs"]
    assert {Path(i["file"]).name for i in inputs} >= {"study.toml", "h2co3.toml", "ts_bare.toml"}
    for i in inputs:
        assert i["sha256"] == hashlib.sha256(Path(i["file"]).read_bytes()).hexdigest()
    assert "wrote" in capsys.readouterr().out


def test_rerun_needs_force_and_default_folder_is_never_reused(study, tmp_path, monkeypatch, capsys):
    out = tmp_path / "out"
    assert main(["run", str(study), "-o", str(out), "-q"]) == 0
    stamp = (out / "report.md").read_text()
    assert main(["run", str(study), "-o", str(out), "-q"]) == 2
    assert "--force" in capsys.readouterr().err
    assert (out / "report.md").read_text() == stamp
    assert main(["run", str(study), "-o", str(out), "-q", "--force"]) == 0
    monkeypatch.chdir(tmp_path)
    assert main(["run", str(study), "-q"]) == 0
    assert main(["run", str(study), "-q"]) == 0
    made = sorted(p.name for p in (tmp_path / "tstrate-output").iterdir())
    assert made == ["demo", "demo-2"]


def test_unwritable_output_is_a_one_line_error(study, tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("not a folder")
    assert main(["run", str(study), "-o", str(blocker / "sub"), "-q"]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "error" in err


def test_json_summary(study, tmp_path, capsys):
    out = tmp_path / "o"
    assert main(["run", str(study), "-o", str(out), "-q", "--json"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["output_dir"] == str(out)
    assert {c["name"] for c in doc["channels"]} == {"bare", "one-water", "two-water"}


def test_mechanism_reproduces_tstrate_in_cantera(study, tmp_path):
    """Cantera (reference library) evaluates the exported mechanism; its k(T) equals the fitted
    expression and tstrate's own k within the fit's stated deviation, and its Kc matches tstrate's."""
    ct = pytest.importorskip("cantera")
    out = tmp_path / "o"
    assert main(["run", str(study), "-o", str(out), "-q"]) == 0
    doc = json.loads((out / "results.json").read_text())
    fits = json.loads((out / "fits.json").read_text())
    gas = ct.Solution(str(out / "mechanism.yaml"))
    avogadro = ct.avogadro  # molecules per kmol
    for i, ch in enumerate(doc["channels"]):
        dev = next(c for c in fits["channels"] if c["name"] == ch["name"])
        for j, T in enumerate(ch["temperature_K"]):
            gas.TP = T, 1e5
            k_ct = gas.forward_rate_constants[i]  # (m3/kmol)^(n-1) s-1
            n = ch["order"]
            k_cm = k_ct * (1e6 / avogadro) ** (n - 1)
            k_ts = ch["rate_constant"][j]
            fit = dev["mechanism"]  # what the mechanism holds, its deviation measured on the grid and between
            tol = fit["max_deviation_percent"] / 100 * (1 + 1e-6) + 1e-9
            assert k_cm == pytest.approx(k_ts, rel=tol), (ch["name"], T)
            # Kc in Cantera's kmol/m3 units against tstrate's molecule cm-3 units
            dn = sum(gas.reaction(i).products.values()) - sum(gas.reaction(i).reactants.values())
            kc_ct = gas.equilibrium_constants[i] * (avogadro / 1e6) ** dn
            assert np.log(kc_ct) == pytest.approx(np.log(ch["Kc"][j]), abs=0.02), (ch["name"], T)



def test_fits_at_each_pressure_reproduce_the_falloff_table(study, tmp_path):
    """Each fixed-pressure modified Arrhenius fit reproduces tstrate's k(T, p) within its stated deviation."""
    out = tmp_path / "o"
    assert main(["run", str(study), "-o", str(out), "-q"]) == 0
    fits = json.loads((out / "fits.json").read_text())["fits_at_each_pressure"]
    falloff = json.loads((out / "results.json").read_text())["falloff"]["channels"]
    assert set(fits) == {c["name"] for c in falloff} == {"bare"}
    ch = falloff[0]
    T = np.asarray(ch["temperature_K"])
    k = np.asarray(ch["rate_constant"])  # (T, P) in s-1
    assert len(fits["bare"]) == len(ch["pressure_bar"]) == k.shape[1]
    for j, f in enumerate(fits["bare"]):
        assert f["pressure_bar"] == pytest.approx(ch["pressure_bar"][j])
        model = f["A"] * (T / f["T0_K"]) ** f["n"] * np.exp(-f["Ea_over_R_K"] / T)
        dev = np.max(np.abs(model / k[:, j] - 1))
        assert dev == pytest.approx(f["max_deviation_percent"] / 100, rel=1e-6, abs=1e-9)
    assert (out / "tables" / "fits_at_each_pressure.csv").is_file()


def test_no_plots_and_both_formats_drawn_in_a_pool(study, tmp_path, capsys):
    """--no-plots writes no figure (the report still builds); --plot-formats png,svg writes each
    figure in both formats (drawn once, here in two worker processes), and the report embeds the PNG."""
    bare = tmp_path / "bare"
    assert main(["run", str(study), "-o", str(bare), "-q", "--no-plots"]) == 0
    assert not (bare / "plots").exists() and (bare / "report.html").is_file()
    assert "<img" not in (bare / "report.html").read_text()
    both = tmp_path / "both"
    assert main(["run", str(study), "-o", str(both), "-q", "--plot-formats", "png,svg", "--plot-workers", "2"]) == 0
    names = {p.name for p in (both / "plots").iterdir()}
    stems = {n.rsplit(".", 1)[0] for n in names}
    assert names == {f"{s}.{x}" for s in stems for x in ("png", "svg")} and "arrhenius" in stems
    assert b"<svg" in (both / "plots" / "arrhenius.svg").read_bytes()[:2000]
    png = base64.b64encode((both / "plots" / "arrhenius.png").read_bytes()).decode()
    assert png in (both / "report.html").read_text()


def test_unknown_plot_format_is_a_one_line_error(study, tmp_path, capsys):
    assert main(["run", str(study), "-o", str(tmp_path / "x"), "-q", "--plot-formats", "png,tiff"]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "tiff" in err and "--plot-formats" in err
