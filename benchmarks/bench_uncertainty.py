"""Speed of the uncertainty step against its target and against a loop of deterministic runs.

1000 samples of the bundled demo study (3 channels, 16 temperatures, a 13-pressure falloff grid,
two comparisons, two excitations), with the demo's [uncertainty] section: target 60 s on 2 cores.
Reference, measured in the same run: ``compute_study`` of the deterministic study of each sample
(every input moved by that sample's deviations, :func:`tstrate.study.uncertainty.study_at`), on a
subset of the same samples; its time per sample times 1000 is compared with the vectorised step.
The loop is the exact recomputation of every step (the vectorised step is exact for rates,
equilibria, comparisons and Arrhenius parameters, first order for falloff and energised molecules).

Run: OMP_NUM_THREADS=1 python benchmarks/bench_uncertainty.py [--subset 8]
"""

from __future__ import annotations

import argparse
import time
from dataclasses import replace
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TARGET_S = 60.0
TARGET_RATIO = 20.0


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--subset", type=int, default=8, help="samples of the deterministic loop")
    parser.add_argument("--samples", type=int, default=1000)
    args = parser.parse_args(argv)

    from tstrate.io.study import read_study
    from tstrate.study.run import compute_study
    from tstrate.study.uncertainty import sample_deviations, study_at, study_uncertainty

    study = read_study(ROOT / "molecules" / "carbonic_acid" / "study.toml")
    settings = replace(study.sections["uncertainty"], samples=args.samples)
    plain = replace(study, sections={k: v for k, v in study.sections.items() if k != "uncertainty"})
    result = compute_study(plain)

    t0 = time.perf_counter()
    unc = study_uncertainty(result, settings)
    t_vec = time.perf_counter() - t0

    space, U = sample_deviations(plain, settings)
    t0 = time.perf_counter()
    for u in U[:args.subset]:
        compute_study(study_at(plain, space, u))
    t_loop = (time.perf_counter() - t0) / args.subset * args.samples

    print(f"uncertainty step, {unc.samples} samples of the demo study: {t_vec:.1f} s "
          f"(target {TARGET_S:g} s, ratio to target {t_vec / TARGET_S:.2f})")
    print(f"loop of deterministic compute_study calls: {t_loop / args.samples:.2f} s per sample "
          f"(measured on {args.subset}), {t_loop:.0f} s for {args.samples}")
    print(f"speed-up of the vectorised step: {t_loop / t_vec:.1f}x (target {TARGET_RATIO:g}x)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
