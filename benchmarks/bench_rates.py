"""Benchmark: canonical TST k(T) with Eckart tunnelling for a 4-channel study on 200 temperatures.

Study: tests/data/tst/study.toml (INVENTED numbers for H2CO3 -> CO2 + H2O, bare, through a
water complex, with two waters, and the reverse of the bare channel; all four with Eckart
tunnelling). The study file and its species files are read once before any timing: the times
below are compute only.

Fast path: tstrate.study.rates.study_rates on the whole temperature array (everything it
returns: k, kappa, reverse rates, Kc, activation quantities).
Reference, timed in the same run: a per-temperature Python loop written here from textbook
formulas - partition functions per volume evaluated one temperature at a time, and the Eckart
thermal average by scipy.integrate.quad at each temperature, with the transmission probability
written out from Eckart's potential (C. Eckart, Phys. Rev. 35, 1303 (1930)) and the barrier
heights and energy floor chosen as the tst.py docstring says. Only k(T) is computed there.

Both run 3 times, interleaved (CPU time); the ratio is the median of the paired ratios with its
spread. Targets: reference/fast >= 20x, largest relative difference in k <= 1e-6, fast path < 100 ms.

Run: python benchmarks/bench_rates.py
"""

from __future__ import annotations

import math
import time
from pathlib import Path

import numpy as np
from scipy import constants as sc
from scipy import integrate, optimize

from tstrate.io.study import read_study
from tstrate.study.rates import study_rates

STUDY = Path(__file__).resolve().parents[1] / "tests" / "data" / "tst" / "study.toml"
TEMPERATURES_K = np.geomspace(150.0, 1500.0, 200)

KB, H, C, NA = sc.k, sc.h, sc.c, sc.N_A
R = KB * NA
AMU = sc.physical_constants["atomic mass constant"][0]


# ---- reference: one temperature at a time --------------------------------------------------------

def _moments(species):
    m = np.asarray(species.masses_amu, dtype=float) * AMU
    x = np.asarray(species.positions_A, dtype=float) * 1e-10
    x = x - (m[:, None] * x).sum(axis=0) / m.sum()
    tensor = sum(mi * (np.dot(xi, xi) * np.eye(3) - np.outer(xi, xi)) for mi, xi in zip(m, x))
    return [float(v) for v in np.linalg.eigvalsh(tensor)]


class RefSpecies:
    """What the per-temperature formulas need from a species (T-independent parts precomputed)."""

    def __init__(self, species):
        self.mass = float(np.sum(species.masses_amu)) * AMU
        self.atom = species.natoms == 1
        self.linear = species.linear
        self.moments = _moments(species) if not self.atom else []
        self.sigma = species.symmetry_number
        self.optical = species.optical_isomers
        self.nu_hz = [f * 100.0 * C for f in species.scaled_frequencies_cm1 if f > 0]
        self.levels = [(lv.energy_cm1 * 100.0 * H * C, lv.degeneracy) for lv in species.levels]
        self.e0 = species.energy_J_per_mol + 0.5 * sum(self.nu_hz) * H * NA   # E + ZPE [J/mol]

    def ln_q_per_volume(self, t: float) -> float:
        kt = KB * t
        ln_q = 1.5 * math.log(2 * math.pi * self.mass * kt / H**2)
        if not self.atom:
            if self.linear:
                ln_q += math.log(8 * math.pi**2 * max(self.moments) * kt / (self.sigma * H**2))
            else:
                ln_q += math.log(math.sqrt(math.pi) / self.sigma * (8 * math.pi**2 * kt / H**2) ** 1.5
                                 * math.sqrt(self.moments[0] * self.moments[1] * self.moments[2]))
        for nu in self.nu_hz:
            ln_q -= math.log(-math.expm1(-H * nu / kt))
        ln_q += math.log(sum(g * math.exp(-e / kt) for e, g in self.levels))
        return ln_q + math.log(self.optical)


def eckart_log_p(E: float, imag_cm1: float, V1: float, V2: float) -> float:
    """ln P(E), energies per molecule [J] above the reactant side; Eckart (1930), length from curvature."""
    A = V1 - V2
    B = (math.sqrt(V1) + math.sqrt(V2)) ** 2
    if E <= 0.0 or E <= A:
        return -math.inf
    y = (A + B) / (B - A)
    vyy = -2 * A / (1 + y) ** 3 + B * (2 * y - 4) / (1 + y) ** 4
    omega = 2 * math.pi * C * imag_cm1 * 100.0
    L = 2 * math.pi * y * math.sqrt(-vyy / (AMU * omega**2))
    c_e = H**2 / (8 * AMU * L**2)
    ta, tb = math.pi * math.sqrt(E / c_e), math.pi * math.sqrt((E - A) / c_e)
    log_num = math.log(2.0) + (ta + math.log(-math.expm1(-2 * ta)) - math.log(2.0)) \
        + (tb + math.log(-math.expm1(-2 * tb)) - math.log(2.0))
    u = ta + tb

    def log_cosh(x):
        return abs(x) + math.log1p(math.exp(-2 * abs(x))) - math.log(2.0)

    if B >= c_e:
        log_den = float(np.logaddexp(log_cosh(u), log_cosh(math.pi * math.sqrt((B - c_e) / c_e))))
    else:
        yw = math.pi * math.sqrt((c_e - B) / c_e)
        log_den = (math.log(2 * math.sinh(u / 2) ** 2 + 2 * math.cos(yw / 2) ** 2)
                   if u < 600 else log_cosh(u))
    return min(log_num - log_den, 0.0)


def eckart_kappa(t: float, imag_cm1: float, V1_mol: float, V2_mol: float, floor_mol: float) -> float:
    """exp(V1/kT)/kT * integral_{E0}^inf P(E) exp(-E/kT) dE with scipy quad (one temperature)."""
    V1, V2 = V1_mol / NA, V2_mol / NA
    kt = KB * t
    E0 = max(floor_mol / NA, 0.0, V1 - V2)
    top = max(V1, E0) + 60 * kt

    def g(E):
        return eckart_log_p(E, imag_cm1, V1, V2) - (E - V1) / kt - math.log(kt)

    peak = optimize.minimize_scalar(lambda e: -g(e), bounds=(E0, top), method="bounded",
                                    options={"xatol": 1e-6 * kt}).x
    gmax = g(peak)
    cuts = sorted({E0, peak, min(max(V1, E0), top), top})
    total = 0.0
    for a, b in zip(cuts[:-1], cuts[1:]):
        if b > a:
            total += integrate.quad(lambda e: math.exp(g(e) - gmax), a, b, epsabs=0.0, epsrel=1e-11,
                                    limit=200)[0]
    return math.exp(gmax) * total


def reference_rates(study, temperatures):
    """k(T) of every channel, SI per molecule, one temperature at a time."""
    out = []
    for ch in study.channels:
        reac = [RefSpecies(study.species[n]) for n in ch.reactants]
        prod = [RefSpecies(study.species[n]) for n in ch.products]
        ts_sp = study.species[ch.transition_state]
        ts = RefSpecies(ts_sp)
        imag = float(-ts_sp.scaled_frequencies_cm1.min())
        e0_r = sum(s.e0 for s in reac)
        e0_p = sum(s.e0 for s in prod)
        if ch.complex:  # V1 from the complex; floor at the separated reactants unless told otherwise
            e0_c = RefSpecies(study.species[ch.complex]).e0
            v1 = ts.e0 - e0_c
            floor = max(0.0, e0_r - e0_c) if ch.tunnelling_floor == "reactants" else 0.0
        else:
            v1, floor = ts.e0 - e0_r, 0.0
        v2 = ts.e0 - e0_p
        ks = []
        for t in temperatures:
            ln_k = (math.log(KB * t / H) + ts.ln_q_per_volume(t) - sum(s.ln_q_per_volume(t) for s in reac)
                    - (ts.e0 - e0_r) / (R * t))
            ks.append(math.exp(ln_k) * eckart_kappa(t, imag, v1, v2, floor))
        out.append(np.array(ks))
    return out


# ---- run -----------------------------------------------------------------------------------------

def main() -> None:
    study = read_study(STUDY)                    # file reading: not timed
    assert len(study.channels) == 4 and all(c.tunnelling == "eckart" for c in study.channels)
    study_rates(study, temperature_K=TEMPERATURES_K)          # warm-up (imports, caches)
    # the same number of repetitions of both, interleaved, CPU time of this process (the machine's
    # cores are shared); the ratio is the median of the paired ratios, with its spread
    import sys

    sys.path.insert(0, str(Path(__file__).resolve().parent))
    from _paired import paired

    out = {}
    res = paired(lambda: out.__setitem__("fast", study_rates(study, temperature_K=TEMPERATURES_K)),
                 lambda: out.__setitem__("ref", reference_rates(study, TEMPERATURES_K)), repetitions=3)
    fast, ref = out["fast"], out["ref"]
    fast_s = float(np.median(res.fast_s))
    worst = 0.0
    print(f"{len(study.channels)} channels x {TEMPERATURES_K.size} temperatures "
          f"({TEMPERATURES_K[0]:.0f}-{TEMPERATURES_K[-1]:.0f} K), Eckart tunnelling; "
          "study read before timing (compute only)")
    print(f"{'channel':>12} {'order':>5} {'kappa range':>22} {'max rel diff':>13}")
    for cr, k_ref in zip(fast, ref):
        dev = float(np.max(np.abs(cr.k / k_ref - 1.0)))
        worst = max(worst, dev)
        print(f"{cr.channel:>12} {cr.order:>5} {cr.kappa.min():>10.3g} .. {cr.kappa.max():<9.3g} {dev:>13.1e}")
    ratio = float(np.median(res.ratios))
    print(res.line("fast path (study_rates, whole study)", "reference per-temperature loop (quad, epsrel "
                   "1e-11, + scalar partition functions)"))
    print(f"fast path median {1e3 * fast_s:.1f} ms CPU (target < 100 ms: {'met' if fast_s < 0.1 else 'NOT met'}); "
          f"ratio target >= 20x: {'met' if ratio >= 20 else 'NOT met'}")
    print(f"largest relative difference in k = {worst:.1e} (target <= 1e-6: "
          f"{'met' if worst <= 1e-6 else 'NOT met'})")


if __name__ == "__main__":
    main()
