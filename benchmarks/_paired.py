"""Paired timing for the benchmarks: the fast path and its reference run the same number of times,
interleaved in one process (so both see the same machine load), and the ratio is reported as the
median of the per-repetition ratios with its spread (smallest and largest)."""

from __future__ import annotations

import statistics
import time
from dataclasses import dataclass
from typing import Callable


@dataclass(frozen=True)
class Paired:
    fast_s: list[float]
    reference_s: list[float]

    @property
    def ratios(self) -> list[float]:
        return [r / f for f, r in zip(self.fast_s, self.reference_s)]

    def line(self, fast: str, reference: str) -> str:
        r = self.ratios
        return (f"{fast}: median {statistics.median(self.fast_s):.4g} s; {reference}: median "
                f"{statistics.median(self.reference_s):.4g} s; ratio reference/fast median {statistics.median(r):.3g} "
                f"(spread {min(r):.3g}-{max(r):.3g}, {len(r)} paired repetitions)")


def clock(kind: str) -> Callable[[], float]:
    """``"cpu"``: CPU time of this process (the machine's cores are shared); ``"wall"``: wall time."""
    return time.process_time if kind == "cpu" else time.perf_counter


def paired(fast: Callable[[], object], reference: Callable[[], object], repetitions: int = 5,
           kind: str = "cpu") -> Paired:
    """Time ``fast`` and ``reference`` ``repetitions`` times each, alternating (fast first)."""
    now = clock(kind)
    f, r = [], []
    for _ in range(repetitions):
        t0 = now()
        fast()
        f.append(now() - t0)
        t0 = now()
        reference()
        r.append(now() - t0)
    return Paired(f, r)
