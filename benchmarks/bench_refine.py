"""Speed of the refinement route (PySCF) against its targets (fresh cache, one thread unless
OMP_NUM_THREADS says otherwise).

1. Single points of the 13 demo species at the default level (wB97X-D3BJ/def2-TZVP, density
   fitting): target 5 minutes in all. Prints the time per species against its number of
   basis functions, and, as the fair reference measured in the same run, a direct PySCF run
   of the largest species at the same level and settings (ratio = tstrate / direct).
2. With --ts: DFT re-optimisation of the bare TS (6 atoms, geomeTRIC seeded with the
   GFN2-xTB Hessian) plus its analytic Hessian at the default level: target 15 minutes
   (without the downhill verification; --verify adds it).

Run: python benchmarks/bench_refine.py [--ts] [--verify]
"""

from __future__ import annotations

import os
import sys
import tempfile
import time
from pathlib import Path

DEMO = Path(__file__).resolve().parents[1] / "molecules" / "carbonic_acid"
FILES = ("h2o.toml", "co2.toml", "water_dimer.toml", "h2co3.toml", "h2co3_cis_trans.toml",
         "ts_bare.toml", "co2_h2o_complex.toml", "h2co3_h2o.toml", "ts_one_water.toml",
         "co2_2h2o_complex.toml", "h2co3_2h2o.toml", "ts_two_water.toml",
         "co2_3h2o_complex.toml")


def _direct(sp) -> float:
    from pyscf import dft, gto

    t = time.perf_counter()
    mol = gto.M(atom=[(s, tuple(p)) for s, p in zip(sp.symbols, sp.positions_A)],
                basis="def2-TZVP", spin=sp.multiplicity - 1, verbose=0)
    mf = dft.RKS(mol, xc="wb97x-d3bj").density_fit()
    mf.conv_tol = 1e-10
    mf.kernel()
    return time.perf_counter() - t


def main() -> int:
    from tstrate.compute.cache import Cache
    from tstrate.compute.refine import Level, RefineOptions, refine_species
    from tstrate.io.species import read_species

    with tempfile.TemporaryDirectory() as cache_dir:
        cache = Cache(cache_dir)
        total, rows = 0.0, []
        for f in FILES:
            sp = read_species(DEMO / f)
            t = time.perf_counter()
            res = refine_species(sp, Level(), cache=cache)
            dt = time.perf_counter() - t
            total += dt
            rows.append((sp.name, len(sp.symbols), res.record["energy"]["n_basis"], dt))
        print(f"{'species':<24} atoms  basis functions   seconds")
        for name, n, nbf, dt in rows:
            print(f"{name:<24} {n:5d}  {nbf:15d}  {dt:8.1f}")
        print(f"13 demo species at wB97X-D3BJ/def2-TZVP: {total:.1f} s; target 300 s; ratio "
              f"{total / 300.0:.2f}")
        big = read_species(DEMO / "co2_3h2o_complex.toml")
        ref = _direct(big)
        mine = [r for r in rows if r[0] == big.name][0][3]
        print(f"largest species, tstrate / direct PySCF (same level, fresh): {mine:.1f} s / "
              f"{ref:.1f} s = {mine / ref:.2f}")
        if "--ts" in sys.argv:
            sp = read_species(DEMO / "ts_bare.toml")
            t = time.perf_counter()
            res = refine_species(sp, Level(), RefineOptions(optimise=True,
                                                            verify="--verify" in sys.argv),
                                 cache=cache)
            dt = time.perf_counter() - t
            o = res.record["optimisation"]
            print(f"bare TS re-optimisation ({o['steps']} steps) + Hessian "
                  f"({res.record['hessian']['how']}): {dt:.0f} s; imaginary modes "
                  f"{res.record['hessian']['imaginary_modes']}; target 900 s; ratio {dt / 900:.2f}")
    return 0


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    sys.exit(main())
