"""Benchmark: Eckart tunnelling factors of 4 channels on 200 temperatures.

Fast path: ``tstrate.physics.tunnelling.eckart_log``, one call per channel (P(E) once per channel on
a grid shared by the temperatures; tuned to 1e-8 against adaptive quadrature).
Reference (named, fair): ``scipy.integrate.quad`` per temperature of an integrand written with
scalar ``math`` functions, every constant computed once per barrier (P(E) in closed form, written
here independently of tstrate's numpy code), with the peak from a 24-point scan and the barrier
top passed as break points,
at the loosest ``epsrel`` (1e-3, 1e-4, ... tried in turn) whose results agree with a fine quad
(epsrel 1e-11) to 1e-6 for every channel and temperature, a lower accuracy than the fast path's
(printed).
Both run 5 times, interleaved, in this process (CPU time); the ratio is the median of the paired
ratios with its spread. Target (issue 19): ratio >= 40.

The barriers are illustrative values of the kind met in carbonic acid decomposition
(H2CO3 -> CO2 + H2O, bare and with one or two water molecules relaying the proton), not computed
results.

Run: python benchmarks/bench_tunnelling.py
"""

from __future__ import annotations

import math
import statistics
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _paired import paired  # noqa: E402
from scipy import constants as sc  # noqa: E402

R = sc.k * sc.N_A
H_C_NA = sc.h * sc.c * 100.0 * sc.N_A      # J/mol per cm^-1

CASES = [
    # (label, imaginary wavenumber [cm^-1], V1 [J/mol], V2 [J/mol], energy floor [J/mol] or None)
    ("bare 1,3-H shift (illustrative)", 1900.0, 150e3, 140e3, None),
    ("one-water relay (illustrative)", 1500.0, 90e3, 85e3, None),
    ("two-water relay, floor 10 kJ/mol above complex", 1300.0, 70e3, 65e3, 10e3),
    ("steep narrow barrier", 2500.0, 100e3, 150e3, None),
]
T = np.linspace(150.0, 1000.0, 200)


def lean_log_p(nu, V1, V2):
    """A scalar log P(E) [E in J/mol] with every constant computed once (the closed form of the
    tunnelling module docstring, written here with math functions only): the fair reference."""
    c = 2.0 * math.pi / (nu * H_C_NA)
    k = 2.0 * c / (1.0 / math.sqrt(V1) + 1.0 / math.sqrt(V2))
    A = V1 - V2
    w2 = 4.0 * c * c * V1 * V2 - math.pi ** 2
    log2 = math.log(2.0)

    def log_cosh(x):
        x = abs(x)
        return x - log2 + math.log1p(math.exp(-2.0 * x))

    def log_sinh(x):
        return x - log2 + math.log(-math.expm1(-2.0 * x))

    def f(E):
        if E <= 0.0 or E <= A:
            return -math.inf
        p, q = k * math.sqrt(E), k * math.sqrt(E - A)
        u = p + q
        num = log2 + log_sinh(p) + log_sinh(q)
        if w2 >= 0.0:
            w = math.sqrt(w2)
            den = log2 + log_cosh(0.5 * (u + w)) + log_cosh(0.5 * (u - w))
        else:
            den = math.log(2.0 * math.sinh(0.5 * u) ** 2 + 2.0 * math.cos(0.5 * math.sqrt(-w2)) ** 2) \
                if u < 600 else log_cosh(u)
        return min(num - den, 0.0)
    return f


def quad_kappa(t, log_p, V1, V2, floor, epsrel):
    """kappa at one temperature by scipy quad (energies in J/mol), break points at the peak (from
    a 24-point scan) and the barrier top."""
    from scipy import integrate

    rt = R * t
    E0 = max(floor or 0.0, 0.0, V1 - V2)
    top = max(V1, E0) + 60 * rt

    def g(E):
        return log_p(E) - (E - V1) / rt - math.log(rt)

    scan = [E0 + (top - E0) * (i + 0.5) / 24 for i in range(24)]
    vals = [g(e) for e in scan]
    i = max(range(24), key=vals.__getitem__)
    peak, gmax = scan[i], vals[i]
    cuts = sorted({E0, peak, min(max(V1, E0), top), top})
    total = 0.0
    for a, b in zip(cuts[:-1], cuts[1:]):
        if b > a:
            total += integrate.quad(lambda e: math.exp(g(e) - gmax), a, b, epsabs=0.0, epsrel=epsrel,
                                    limit=200)[0]
    return math.exp(gmax) * total


def reference(epsrel=1e-6):
    out = []
    for _, nu, V1, V2, fl in CASES:
        log_p = lean_log_p(nu, V1, V2)
        out.append(np.array([quad_kappa(t, log_p, V1, V2, fl, epsrel) for t in T]))
    return out


def fast():
    from tstrate.physics.tunnelling import eckart_log

    return [np.exp(eckart_log(T, nu, V1, V2, fl)) for _, nu, V1, V2, fl in CASES]


def main() -> int:
    fast()                                     # warm-up (imports)
    fine = reference(1e-11)
    got = fast()
    for eps in (1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8):
        ref = reference(eps)
        if all(np.max(np.abs(r / x - 1)) <= 1e-6 for r, x in zip(ref, fine)):
            break
    print(f"Eckart kappa, {len(CASES)} channels x {T.size} temperatures ({T[0]:.0f}-{T[-1]:.0f} K)")
    for (label, *_), f, r, x in zip(CASES, got, ref, fine):
        print(f"  {label:48s} kappa(150 K) {f[0]:10.4g}  fast vs fine quad {np.max(np.abs(f / x - 1)):.1e}  "
              f"reference (epsrel {eps:g}) vs fine quad {np.max(np.abs(r / x - 1)):.1e}")
    res = paired(fast, lambda: reference(eps), repetitions=5)
    print(res.line("fast (eckart_log, 4 calls)", f"reference (quad per temperature, epsrel {eps:g})"))
    med = statistics.median(res.ratios)
    print(f"target ratio >= 40: {'met' if med >= 40 else 'NOT met'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
