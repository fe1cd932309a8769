"""A batch of copies of the demo study on a 2-worker LocalCluster against the same studies run serially.

Target (issue "speed where the time goes", item 6): at least 1.6x faster than serial on 2 cores.

Both sides do the whole job of `tstrate run` for each of N copies of the bundled demo study
(molecules/carbonic_acid, each copy in its own folder): compute_study, then write_outputs
(tables, plots, report). The reference runs them one after the other in this process, whose
modules are imported before the clock starts (so it pays no start-up, which favours it); the
batch is `tstrate many run` through the library - start a LocalCluster of 2 single-threaded
worker processes, run the N tasks, stop the cluster - and its time includes starting and
stopping the cluster and the imports in the workers. The ratio printed is reference time over
batch time, measured in the same run. On a machine shared with other work the two cores may
not both be free: the benchmark also measures the parallel capacity it is given, before and
after, as 2 x (time of a pure-Python loop alone) / (its time when two processes run it at
once) - 2.0 on two free cores, 1.0 when the two processes share one core's worth - and
prints the speed-up beside it; with --repeats R > 1 both are repeated alternately and
the median ratio is printed with its range. The batch's results.json files are checked to
equal the serial ones.

Run: OMP_NUM_THREADS=1 python benchmarks/bench_batch.py [--copies 8] [--workers 2] [--repeats 1]
"""

from __future__ import annotations

import argparse
import shutil
import statistics
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "molecules" / "carbonic_acid"
TARGET_RATIO = 1.6


def _copies(base: Path, n: int) -> list[Path]:
    out = []
    for i in range(n):
        folder = base / "in" / f"demo{i + 1}"
        shutil.copytree(DEMO, folder, ignore=shutil.ignore_patterns("inputs", "*.sh", "*.md"))
        out.append(folder / "study.toml")
    return out


def _spin(n: int = 4_000_000) -> float:
    """Wall time [s] of a pure-Python loop (no numpy: no BLAS threads involved)."""
    t0 = time.perf_counter()
    s = 0
    for i in range(n):
        s += i * i
    return time.perf_counter() - t0


def parallel_capacity() -> float:
    """2 x (loop alone) / (mean of the loop in two processes at once): the cores this run gets."""
    import multiprocessing as mp

    with mp.get_context("spawn").Pool(2) as pool:
        pool.map(_spin, [10_000] * 2)                      # start both processes first
        alone = min(pool.apply(_spin) for _ in range(3))
        together = statistics.mean(pool.map(_spin, [4_000_000] * 2))
    return 2.0 * alone / together


def _serial(studies, out: Path) -> float:
    from tstrate.io.study import read_study
    from tstrate.output.folder import write_outputs
    from tstrate.study.run import compute_study

    t0 = time.perf_counter()
    for s in studies:
        write_outputs(compute_study(read_study(s)), out / s.parent.name, force=True)
    return time.perf_counter() - t0


def _batch(studies, out: Path, workers: int) -> tuple[float, float, list]:
    from tstrate.compute.batch import dask_client, run_batch, study_tasks

    t0 = time.perf_counter()
    with dask_client(workers=workers) as client:
        t1 = time.perf_counter()
        records = run_batch(study_tasks(studies, out), client, out, resume=False)
        t2 = time.perf_counter()
    return time.perf_counter() - t0, t2 - t1, records


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--copies", type=int, default=8)
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--repeats", type=int, default=1)
    args = parser.parse_args(argv)

    import json
    import logging

    import matplotlib.pyplot  # noqa: F401  (the reference's imports happen before its clock starts)

    import tstrate.output.folder  # noqa: F401
    import tstrate.study.run  # noqa: F401

    logging.getLogger("distributed").setLevel(logging.ERROR)
    with tempfile.TemporaryDirectory(prefix="tstrate-bench-batch-") as tmp:
        tmp = Path(tmp)
        studies = _copies(tmp, args.copies)
        ratios, serial_t, batch_t, tasks_t = [], [], [], []
        capacity = [parallel_capacity()]
        for rep in range(args.repeats):
            ts = _serial(studies, tmp / "serial")
            tb, tt, records = _batch(studies, tmp / "batch", args.workers)
            failed = [r for r in records if r.status != "done"]
            if failed:
                print(f"batch task failed: {failed[0].name}: {failed[0].error}")
                return 1
            serial_t.append(ts)
            batch_t.append(tb)
            tasks_t.append(tt)
            ratios.append(ts / tb)
            capacity.append(parallel_capacity())
            print(f"repeat {rep + 1}: serial {ts:.1f} s, batch {tb:.1f} s ({tt:.1f} s of tasks), ratio {ts / tb:.2f}; "
                  f"parallel capacity {capacity[-2]:.2f} before, {capacity[-1]:.2f} after")
        same = all(json.loads((tmp / "serial" / s.parent.name / "results.json").read_text())
                   == json.loads((tmp / "batch" / s.parent.name / "results.json").read_text()) for s in studies)
    med = statistics.median(ratios)
    print(f"{args.copies} copies of the demo study: serial {statistics.median(serial_t):.1f} s, "
          f"{args.workers}-worker LocalCluster {statistics.median(batch_t):.1f} s including start and stop "
          f"({statistics.median(tasks_t):.1f} s of tasks)")
    print(f"speed-up {med:.2f}x (range {min(ratios):.2f}-{max(ratios):.2f} over {args.repeats} repeats; "
          f"target {TARGET_RATIO:g}x); batch results.json equal to serial: {'yes' if same else 'NO'}")
    print(f"parallel capacity given to this run: {min(capacity):.2f}-{max(capacity):.2f} of 2 (2.0: two free "
          f"cores); speed-up per unit of capacity {med / statistics.median(capacity):.2f} (1.0: no overhead)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
