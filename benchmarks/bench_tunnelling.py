"""Speed and accuracy of the vectorised Eckart thermal average.

For each barrier, kappa on 200 temperatures (150-1000 K) from
``tstrate.physics.tunnelling.eckart`` (one vectorised call) against a loop of
``scipy.integrate.quad`` calls, one per temperature, measured in the same run.
Prints the speed ratio (quad loop time / vectorised time) and the largest
relative difference. The barriers are illustrative values of the kind met in
carbonic acid decomposition (H2CO3 -> CO2 + H2O, bare and with one or two
water molecules relaying the proton), not computed results.

Run: python benchmarks/bench_tunnelling.py
"""

from __future__ import annotations

import math
import time

import numpy as np

CASES = [
    # (label, imaginary wavenumber [cm^-1], V1 [J/mol], V2 [J/mol], energy floor [J/mol] or None)
    ("bare 1,3-H shift (illustrative)", 1900.0, 150e3, 140e3, None),
    ("one-water relay (illustrative)", 1500.0, 90e3, 85e3, None),
    ("two-water relay, floor 10 kJ/mol above complex", 1300.0, 70e3, 65e3, 10e3),
    ("steep narrow barrier", 2500.0, 100e3, 150e3, None),
]


def quad_loop(T, nu, V1, V2, floor):
    """Reference: adaptive quadrature per temperature, break points at the peak and the top."""
    from scipy.integrate import quad

    from tstrate.physics.tunnelling import eckart_log_transmission
    from tstrate.units import R

    E0 = max(0.0, V1 - V2) if floor is None else max(floor, 0.0, V1 - V2)
    out = np.empty(len(T))
    for i, t in enumerate(T):
        beta = 1.0 / (R * t)

        def log_f(E):
            return eckart_log_transmission(E, nu, V1, V2) - beta * (E - V1) + math.log(beta)

        top = max(V1, E0)
        hi = top + 60.0 / beta
        grid = np.linspace(E0, hi, 2001)[1:]
        lg = log_f(grid)
        peak, log_max = grid[np.argmax(lg)], np.max(lg)
        points = sorted({peak} | ({V1} if E0 < V1 < hi else set()))
        val, _ = quad(lambda E: math.exp(log_f(E) - log_max), E0, hi, points=points,
                      epsabs=0.0, epsrel=1e-10, limit=500)
        tail, _ = quad(lambda E: math.exp(log_f(E) - log_max), hi, np.inf, epsabs=0.0, epsrel=1e-10)
        out[i] = math.log(val + tail) + log_max
    return out


def main() -> int:
    from tstrate.physics.tunnelling import eckart_log

    T = np.linspace(150.0, 1000.0, 200)
    print(f"Eckart kappa on {T.size} temperatures, {T[0]:.0f}-{T[-1]:.0f} K")
    print(f"{'case':48s} {'kappa(150 K)':>12s} {'vector/s':>9s} {'quad/s':>8s} {'ratio':>7s} {'max rel diff':>12s}")
    for label, nu, V1, V2, floor in CASES:
        eckart_log(T, nu, V1, V2, floor)          # warm-up (quadrature nodes are cached)
        reps = 5
        t0 = time.perf_counter()
        for _ in range(reps):
            fast = eckart_log(T, nu, V1, V2, floor)
        t_fast = (time.perf_counter() - t0) / reps
        t0 = time.perf_counter()
        ref = quad_loop(T, nu, V1, V2, floor)
        t_quad = time.perf_counter() - t0
        rel = float(np.max(np.abs(np.expm1(fast - ref))))
        print(f"{label:48s} {math.exp(fast[0]):12.4g} {t_fast:9.4f} {t_quad:8.3f} "
              f"{t_quad / t_fast:7.0f} {rel:12.2e}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
