"""Benchmark: `tstrate run` on the demo, per phase, default against all figures in both formats.

Study: molecules/carbonic_acid/study.toml (the bundled demo, everything it asks for).
Fast path: the default run (PNG figures, at most 10 channels per figure).
Reference (named): the same run asked to draw every figure in both formats, as tstrate did before
(`--plot-formats png,svg`, no cap that bites on the demo).
Each runs 3 times, interleaved, in this process (CPU time of the process: the machine's cores are
shared, so wall time measures the neighbours; the runs draw in this process). The computation is
identical, so the difference is the figures. Per phase (compute steps, tables, plots, report) the median wall time
is printed. Targets (issue 19): plots under 40 % of the default run's wall time, and the
reference run at least 3x as long as the default one.

Run: python benchmarks/bench_run.py
"""

from __future__ import annotations

import statistics
import sys
import tempfile
import time
from pathlib import Path

DEMO = Path(__file__).resolve().parents[1] / "molecules" / "carbonic_acid" / "study.toml"


def timed_run(study_file, plots, workdir: Path, tag: str) -> dict[str, float]:
    """One `tstrate run` through its library calls; wall seconds per phase."""
    from tstrate.io.study import read_study
    from tstrate.output.folder import write_outputs
    from tstrate.study.run import compute_study

    phases: dict[str, float] = {}
    mark = [time.process_time(), "read"]

    def progress(name):
        now = time.process_time()
        phases[mark[1]] = phases.get(mark[1], 0.0) + now - mark[0]
        mark[0], mark[1] = now, name

    t0 = time.process_time()
    study = read_study(study_file)
    result = compute_study(study, progress=progress)
    write_outputs(result, workdir / tag, force=True, progress=progress, plots=plots)
    progress("end")
    phases.pop("end", None)
    phases["total"] = time.process_time() - t0
    return phases


def summarise(runs: list[dict[str, float]]) -> dict[str, float]:
    return {k: statistics.median(r[k] for r in runs) for k in runs[0]}


def main(argv=None) -> int:
    import argparse

    from tstrate.output.plots import PlotSettings

    ap = argparse.ArgumentParser()
    ap.add_argument("--reps", type=int, default=3)
    args = ap.parse_args(argv)
    default = PlotSettings()
    everything = PlotSettings(formats=("png", "svg"), max_channels=10_000)
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        timed_run(DEMO, default, tmp, "warm")         # imports, caches
        fast, ref = [], []
        for i in range(args.reps):
            fast.append(timed_run(DEMO, default, tmp, f"d{i}"))
            ref.append(timed_run(DEMO, everything, tmp, f"a{i}"))
    f, r = summarise(fast), summarise(ref)
    print(f"tstrate run on the demo ({args.reps} paired repetitions, median CPU s per phase)")
    print(f"{'phase':>14} {'default':>9} {'png+svg, all':>13}")
    for k in f:
        print(f"{k:>14} {f[k]:9.3f} {r[k]:13.3f}")
    share = f["plots"] / f["total"]
    ratios = [b["total"] / a["total"] for a, b in zip(fast, ref)]
    print(f"plots: {100 * share:.0f} % of the default run (target < 40 %: {'met' if share < 0.4 else 'NOT met'})")
    print(f"all figures in both formats / default: median {statistics.median(ratios):.2f}x "
          f"(spread {min(ratios):.2f}-{max(ratios):.2f}; target >= 3x: "
          f"{'met' if statistics.median(ratios) >= 3 else 'NOT met'})")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
