"""Speed of the semi-empirical route against its targets (fresh cache, one thread).

1. SMILES -> frequencies for carbonic acid (conformer search, tight optimisation,
   finite-difference Hessian): target 5 s.
2. One-water relay transition state of H2CO3 -> CO2 + H2O, with the pre-reactive
   complex and the verification (both downhill minimisations and their Hessians):
   target 30 s.
Also counts the gradient calls of each Hessian against the 6N minimum of central
differences, and prints each time as a ratio to its target (below 1 is inside).

Run: python benchmarks/bench_compute.py
"""

from __future__ import annotations

import os
import sys
import tempfile
import time


def main() -> int:
    with tempfile.TemporaryDirectory() as cache_dir:
        os.environ["TSTRATE_CACHE"] = cache_dir
        from tstrate.compute.cache import Cache
        from tstrate.compute.minima import compute_minimum
        from tstrate.compute.relay import find_relay

        cache = Cache(cache_dir)
        rows = []
        t0 = time.perf_counter()
        res = compute_minimum(name="H2CO3", smiles="OC(=O)O", cache=cache)
        t_min = time.perf_counter() - t0
        n = res.species.natoms
        rows.append(("H2CO3 SMILES -> frequencies", t_min, 5.0, res.gradient_calls_hessian, 6 * n))

        t0 = time.perf_counter()
        relay = find_relay(1, cache=cache)
        t_relay = time.perf_counter() - t0
        n = relay.saddle.ts.natoms
        rows.append(("one-water relay TS + verification", t_relay, 30.0,
                     relay.saddle.gradient_calls_hessian, 6 * n))

        t0 = time.perf_counter()
        again = find_relay(1, cache=cache)
        t_cached = time.perf_counter() - t0
        assert again.saddle.from_cache

    print(f"{'task':38s} {'time/s':>8s} {'target/s':>9s} {'ratio':>6s} {'grad calls':>10s} {'6N':>4s}")
    for name, t, target, calls, six_n in rows:
        print(f"{name:38s} {t:8.2f} {target:9.1f} {t / target:6.2f} {calls:10d} {six_n:4d}")
    print(f"rerun of the relay from the cache: {t_cached:.3f} s "
          f"({t_cached / rows[1][1]:.4f} of the first run)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
