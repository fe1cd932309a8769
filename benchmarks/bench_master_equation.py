"""Benchmark: the energy-grained master equation, against the dense eigen-solver in the same run.

1. One well with about 5000 fine grains (INVENTED demo wavenumbers of carbonic acid, grain 5 cm-1,
   barrier 15,000 cm-1, grid to 10,000 cm-1 above it), k(T, P) on a 30 x 30 (T, P) grid by the
   production path (:func:`tstrate.physics.master_equation.single_well_falloff`: merged grains of
   <dE>down/6, a thermal reservoir 10 <dE>down + 10 RT below the barrier, the non-subtracting
   solver). Reference: ``scipy.linalg.eigh`` of the same symmetrised matrices, timed on a sample of
   the points and scaled to the grid.
2. Three wells and two product channels (the test model of tests/physics/test_master_equation.py
   scaled up): precise against dense, per (T, P) point.
3. Cost per (T, P) point against the number of grains solved, three sizes, both solvers.

Run: OMP_NUM_THREADS=1 python benchmarks/bench_master_equation.py
"""

from __future__ import annotations

import time

import numpy as np

from tstrate.physics import master_equation as me
from tstrate.physics.rrkm import rrkm_rate
from tstrate.physics.states import CM1_J_PER_MOL
from tstrate.units import R, number_density_m3

# INVENTED demo wavenumbers (cm-1) of H2CO3 and its TS (as in tests/physics/test_master_equation.py)
H2CO3_CM1 = [3641, 3633, 1831, 1452, 1383, 1179, 1013, 791, 667, 583, 551, 221]
TS_CM1 = [3702, 2603, 1897, 1402, 1151, 943, 802, 649, 561, 479, 301]
E0 = 15000 * CM1_J_PER_MOL
ALPHA_300_CM1 = 250.0
T_GRID = np.linspace(150.0, 400.0, 30)
P_GRID_PA = np.logspace(-1, 6, 30)
Z_M3_S = 4.5e-16          # Lennard-Jones collision rate constant [m^3 s^-1] (typical magnitude)


def single_well():
    rate = rrkm_rate(H2CO3_CM1, TS_CM1, E0, grain_cm1=5.0, energy_above_barrier_J_per_mol=10000 * CM1_J_PER_MOL,
                     refine_grain=False)
    alpha = ALPHA_300_CM1 * CM1_J_PER_MOL * (T_GRID / 300.0) ** 0.85
    m = number_density_m3(P_GRID_PA[None, :], T_GRID[:, None])
    g = rate.grain_J_per_mol
    merge = np.maximum(1, np.floor(alpha / 6 / g).astype(int))
    top = E0 + 30 * R * T_GRID.max() + 5 * alpha.max()
    reservoir = E0 - 10 * R * T_GRID.max() - 10 * alpha.max()
    t0 = time.perf_counter()
    res = me.single_well_falloff(rate.reactant.counts, rate.rate_per_s, g, rate.barrier_index, T_GRID, m,
                                 np.full(T_GRID.size, Z_M3_S), alpha, merge=merge, top_J_per_mol=top,
                                 reservoir_J_per_mol=reservoir)
    t_precise = time.perf_counter() - t0
    # dense reference on the same reduced matrices, a sample of points
    sample = [(0, 0), (10, 15), (29, 29), (29, 0), (15, 5)]
    t_dense = 0.0
    worst = 0.0
    for i, j in sample:
        c, e, k = me.merge_grains(rate.reactant.counts, rate.rate_per_s, g, int(merge[i]), T_GRID[i],
                                  int(top / g) + 1, rate.barrier_index)
        cut = int(np.searchsorted(e, reservoir))
        cm = me.collision_matrix(c, g * merge[i], T_GRID[i], alpha[i], energies_J_per_mol=e, lowest_column=cut)
        p = cm.matrix.copy()
        np.fill_diagonal(p, 0.0)
        p, leak, f = me._reservoir_system(p, k[cm.grains], cm.distribution, int(np.searchsorted(cm.grains, cut)))
        n = leak.size
        rm = me.RateMatrix(Z_M3_S * m[i, j] * p, leak, f, np.zeros(n, int), np.arange(n), leak[None, :], ())
        t1 = time.perf_counter()
        lam = me.dense_eigen(rm).rates_per_s[0]
        t_dense += time.perf_counter() - t1
        worst = max(worst, abs(lam / res.rate_per_s[i, j] - 1))
    t_dense_grid = t_dense / len(sample) * T_GRID.size * P_GRID_PA.size
    print(f"1. one well: {rate.reactant.n_grains} fine grains, {res.n_grains} states solved at 400 K")
    print(f"   30 x 30 grid: master equation {t_precise:.2f} s; dense eigh on the same matrices "
          f"{t_dense_grid:.2f} s (scaled from {len(sample)} points); ratio dense / precise "
          f"{t_dense_grid / t_precise:.2f}")
    print(f"   largest relative difference of dense eigh from the precise eigenvalue on the sample: {worst:.2e}"
          " (double-precision eigh loses the slowest eigenvalue at low T and P)")


def three_wells(omega=1e9, grain=250.0, n=360):
    e = np.arange(n) * grain
    def counts(shift):
        c = np.zeros(n)
        i0 = int(round(shift / grain))
        c[i0:] = (1.0 + (np.arange(n - i0) * grain / 1000.0)) ** 3.5
        return c
    wells = tuple(me.Well(name, counts(shift), omega, 4000.0) for name, shift in
                  (("A", 0.0), ("B", 10000.0), ("C", 20000.0)))
    def step(threshold, a):
        return np.where(e >= threshold, a * (1 - threshold / np.maximum(e, 1.0)) ** 3, 0.0)
    reactions = (me.Reaction("A->B", "A", "B", step(45000.0, 5e9)), me.Reaction("B->C", "B", "C", step(48000.0, 3e9)),
                 me.Reaction("A->C", "A", "C", step(52000.0, 1e9)), me.Reaction("A->P1", "A", None, step(58000.0, 2e10)),
                 me.Reaction("C->P2", "C", None, step(55000.0, 1e10)))
    return me.MasterEquation(grain, wells, reactions)


def bench_three_wells():
    points = [(500.0, 1e9), (400.0, 1e8), (600.0, 1e10)]
    tp = td = 0.0
    for t, om in points:
        s = three_wells(om)
        t0 = time.perf_counter()
        p = me.rate_coefficients(s, t)
        tp += time.perf_counter() - t0
        t0 = time.perf_counter()
        d = me.rate_coefficients(s, t, method="dense")
        td += time.perf_counter() - t0
        dev = np.max(np.abs(p.product_per_s / d.product_per_s - 1))
    n = me.rate_matrix(three_wells(), 500.0).n_states
    print(f"2. three wells, two products, {n} states: per point precise {tp / len(points):.3f} s, dense "
          f"{td / len(points):.3f} s, ratio dense / precise {td / tp:.2f}; last product coefficients agree to {dev:.1e}")


def bench_sizes():
    print("3. cost per (T, P) point against the states solved (one well, 300 K):")
    for n in (250, 500, 1000):
        c = (1 + np.arange(n)) ** 4.0
        k = np.where(np.arange(n) > 0.7 * n, 1e9, 0.0)
        s = me.MasterEquation(50000.0 / n, (me.Well("A", c, 1e8, 1000.0),), (me.Reaction("p", "A", None, k),))
        rm = me.rate_matrix(s, 300.0)
        t0 = time.perf_counter()
        for _ in range(3):
            me.precise_eigen(rm, 1)
        tp = (time.perf_counter() - t0) / 3
        t0 = time.perf_counter()
        for _ in range(3):
            me.dense_eigen(rm)
        td = (time.perf_counter() - t0) / 3
        print(f"   {n:5d} states: precise {1e3 * tp:8.1f} ms, dense eigh {1e3 * td:8.1f} ms, ratio {td / tp:.2f}")


if __name__ == "__main__":
    single_well()
    bench_three_wells()
    bench_sizes()
