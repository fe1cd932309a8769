"""`--plot DIR` of rates, compare, falloff and excite writes the file names `tstrate run` writes
into its plots/ folder (one table of names: tstrate.output.plots.FIGURE_STEMS).

Study: a copy of the bundled carbonic-acid demo (GFN2-xTB, semi-empirical numbers; only the
file names matter here) with fewer temperatures, as in tests/cli/test_run.py.
"""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from tstrate.cli.main import main

DEMO = Path(__file__).resolve().parents[2] / "molecules" / "carbonic_acid"
PNG_MAGIC = b"\x89PNG\r\n\x1a\n"  # PNG specification (ISO/IEC 15948), file signature


@pytest.fixture(scope="module")
def demo(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("demo")
    shutil.copytree(DEMO, folder, dirs_exist_ok=True, ignore=shutil.ignore_patterns("inputs", "*.sh", "*.md"))
    text = (folder / "study.toml").read_text()
    start = text.index("temperature_K = [150")
    end = text.index("]", start) + 1
    (folder / "study.toml").write_text(text[:start] + "temperature_K = [200, 215, 230, 245, 260, 275, 290, 300]" + text[end:])
    return folder / "study.toml"


@pytest.fixture(scope="module")
def run_plots(demo, tmp_path_factory) -> set[str]:
    out = tmp_path_factory.mktemp("run") / "out"
    assert main(["run", str(demo), "--output", str(out), "--quiet"]) == 0
    return {p.name for p in (out / "plots").iterdir()}


def _plot_names(command, demo, folder, *extra) -> set[str]:
    assert main([command, str(demo), "--plot", str(folder), "--quiet" if command != "rates" else "--json",
                 *extra]) == 0
    return {p.name for p in folder.iterdir()}


def test_run_writes_every_kind_of_figure(run_plots):
    # the demo asks for everything: otherwise the comparisons below would prove little
    for prefix in ("arrhenius.", "compare_", "falloff_", "excitation_"):
        assert any(n.startswith(prefix) for n in run_plots), prefix


def test_rates_plot_dir_is_runs_arrhenius_plot(demo, run_plots, tmp_path, capsys):
    names = _plot_names("rates", demo, tmp_path / "figures")
    assert names == {"arrhenius.png"} == {n for n in run_plots if n.startswith("arrhenius")}
    assert (tmp_path / "figures" / "arrhenius.png").read_bytes().startswith(PNG_MAGIC)
    assert json.loads(capsys.readouterr().out)["plots"] == [str(tmp_path / "figures" / "arrhenius.png")]


@pytest.mark.parametrize("command, prefix", [("compare", "compare_"), ("falloff", "falloff_")])
def test_compare_and_falloff_write_runs_names(demo, run_plots, tmp_path, capsys, command, prefix):
    names = _plot_names(command, demo, tmp_path)
    capsys.readouterr()
    assert names and names == {n for n in run_plots if n.startswith(prefix)}


def test_excite_writes_runs_names_and_its_k_of_E(demo, run_plots, tmp_path, capsys):
    names = _plot_names("excite", demo, tmp_path)
    capsys.readouterr()
    k_of_e = {n for n in names if n.rsplit(".", 1)[0].endswith("_k_of_E")}
    assert k_of_e  # one k(E) figure per excitation, which run does not draw
    assert names - k_of_e == {n for n in run_plots if n.startswith("excitation_")}
