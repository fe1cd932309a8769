"""Benchmark: the default `tstrate run` of a generated 200-channel study.

Study (generated in a temporary folder): the demo's species (molecules/carbonic_acid/refined) and
200 channels, each through its own copy of the demo's bare, one-water or two-water transition state
(in turn) with its energy shifted by a random amount within +-3 kJ/mol (seed 19), so that the
channels differ; the demo's temperatures, one comparison of the bare copies' first channel with
every one- and two-water channel, and the demo's [fits]. No falloff, excitations, isotopes or
uncertainty: those sections cost per unimolecular channel or per sample, and the issue's 200-channel
case is about rates, fits, tables and figures.
Reference (named): the same run asked to draw every figure in both formats with no cap on the
channels per figure (`--plot-formats png,svg --plot-max-channels 100000`), as tstrate did before.
Each runs twice, interleaved (CPU time of this process; the cores are shared). Targets (issue 19): default run under 20 s on 2 cores.

Run: python benchmarks/bench_study200.py [--channels N]
"""

from __future__ import annotations

import shutil
import statistics
import sys
import tempfile
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_run import timed_run  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "molecules" / "carbonic_acid"
HARTREE_J_PER_MOL = 2625499.639479      # CODATA 2018 hartree per molecule times N_A [J/mol]


def make_study(folder: Path, n: int, seed: int = 19) -> Path:
    import re

    shutil.copytree(DEMO / "refined", folder / "refined")
    demo = (DEMO / "study.toml").read_text()
    species = demo[demo.index("[species]"):demo.index("[conditions]")]
    conditions = demo[demo.index("[conditions]"):demo.index("[[channel]]")]
    conditions = "\n".join(l for l in conditions.splitlines() if not l.startswith("pressure_bar"))  # no falloff
    fits = demo[demo.index("[fits]"):demo.index("# ---- how sure")]
    routes = {"bare": ("TS0", '["H2CO3"]', None, '["CO2", "H2O"]', "CO2.H2O"),
              "one-water": ("TS1", '["H2CO3", "H2O"]', "H2CO3.H2O", '["CO2", "H2O", "H2O"]', "CO2.(H2O)2"),
              "two-water": ("TS2", '["H2CO3", "H2O", "H2O"]', "H2CO3.(H2O)2", '["CO2", "H2O", "H2O", "H2O"]',
                            "CO2.(H2O)3")}
    files = {"TS0": "ts_bare.toml", "TS1": "ts_one_water.toml", "TS2": "ts_two_water.toml"}
    rng = np.random.default_rng(seed)
    lines, channels, assisted = [], [], []
    for i in range(n):
        kind = ("bare", "one-water", "two-water")[i % 3]
        ts, reac, cpx, prod, pc = routes[kind]
        text = (folder / "refined" / files[ts]).read_text()
        shift = rng.uniform(-3e3, 3e3) / HARTREE_J_PER_MOL
        text = re.sub(r"energy = \{ value = ([-0-9.eE+]+)",
                      lambda m: f"energy = {{ value = {float(m.group(1)) + shift!r}", text, count=1)
        name = f"{ts}-{i}"
        text = re.sub(r'^name = ".*"', f'name = "{name}"', text, count=1, flags=re.M)
        (folder / "refined" / f"ts_copy_{i}.toml").write_text(text)
        lines.append(f'"{name}" = "refined/ts_copy_{i}.toml"')
        channels.append(f'[[channel]]\nname = "c{i}-{kind}"\nreactants = {reac}\ntransition_state = "{name}"\n'
                        f'products = {prod}\ntunnelling = "eckart"\nproduct_complex = "{pc}"\n'
                        + (f'complex = "{cpx}"\n' if cpx else ""))
        if kind != "bare":
            assisted.append(f'"c{i}-{kind}"')
    comparison = ('[[comparison]]\nname = "all routes"\nreference = "c0-bare"\nassisted = [' + ", ".join(assisted)
                  + ']\ncatalyst = "H2O"\ncatalyst_dimer = "(H2O)2"\nmixing_ratio = [2e-6]\n'
                    'total_pressure_bar = 0.01\ntemperature_K = [150, 175, 200]\n')
    study = (f'title = "generated {n}-channel study (perturbed copies of the demo transition states)"\n\n'
             + species + "\n".join(lines) + "\n\n" + conditions + "\n".join(channels) + "\n" + comparison + "\n"
             + fits)
    path = folder / "study.toml"
    path.write_text(study)
    return path


def main(argv=None) -> int:
    import argparse

    from tstrate.output.plots import PlotSettings

    ap = argparse.ArgumentParser()
    ap.add_argument("--channels", type=int, default=200)
    ap.add_argument("--reps", type=int, default=2)
    args = ap.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        study = make_study(tmp / "study", args.channels)
        fast, ref = [], []
        for i in range(args.reps):
            fast.append(timed_run(study, PlotSettings(), tmp, f"d{i}"))
            ref.append(timed_run(study, PlotSettings(formats=("png", "svg"), max_channels=100_000), tmp, f"a{i}"))
        size = (tmp / "d0" / "report.html").stat().st_size
    med = {k: statistics.median(r[k] for r in fast) for k in fast[0]}
    medr = {k: statistics.median(r[k] for r in ref) for k in ref[0]}
    print(f"{args.channels}-channel study, {args.reps} paired repetitions (median CPU s)")
    for k in med:
        print(f"{k:>18} {med[k]:9.3f} {medr[k]:9.3f}")
    print(f"default run {med['total']:.1f} s (target < 20 s: {'met' if med['total'] < 20 else 'NOT met'}); "
          f"plots {100 * med['plots'] / med['total']:.0f} %; report.html {size / 1e6:.1f} MB; "
          f"all figures in both formats, uncapped: {medr['total']:.1f} s "
          f"({medr['total'] / med['total']:.1f}x)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
