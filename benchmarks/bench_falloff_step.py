"""Benchmark: the whole falloff step of one channel against its bare state count plus thermal sum.

Channel: the demo's one-water route as a unimolecular channel of its complex,
H2CO3.H2O -> CO2 + 2 H2O through TS1 (molecules/carbonic_acid, GFN2-xTB geometries and
frequencies, refined energies), Eckart tunnelling with the reverse barrier from the product
complex; Lennard-Jones parameters of the complex INVENTED (5.0 A, 450 K), bath CO2; the demo's
[falloff] settings at a 10 cm-1 grain; 30 temperatures (150-300 K) x 30 pressures (1 Pa - 1 bar).

Fast path (the whole step, as `tstrate run` does it): tstrate.study.falloff.channel_falloff -
state counts with the K-rotors, the Eckart N(E), k(E), strong-collision falloff on the study grid,
the Troe-fit grid and the plot curve (J-resolved thresholds), and the effective-k0 Troe fit.
Reference (named): the bare state count plus thermal sum - Beyer-Swinehart counts of the same
complex and TS (oscillators only, same grain and grid), the classical RRKM k(E) and its thermal
average k_inf(T) on the 30 temperatures.
Both run 5 times, interleaved (CPU time); the ratio step/reference is the median of the paired
ratios with its spread. Target (issue 19): at most 3.

Run: python benchmarks/bench_falloff_step.py
"""

from __future__ import annotations

import dataclasses
import statistics
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _paired import paired  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "molecules" / "carbonic_acid" / "study.toml"
T = np.linspace(150.0, 300.0, 30)
P_PA = np.logspace(0, 5, 30)


def setup():
    from tstrate.io.study import read_study
    from tstrate.model import Channel

    study = read_study(DEMO)
    ch = Channel("one-water-complex", ("H2CO3.H2O",), "TS1", ("CO2", "H2O", "H2O"), tunnelling="eckart",
                 product_complex="CO2.(H2O)2")
    sp = dict(study.species)
    sp["H2CO3.H2O"] = dataclasses.replace(sp["H2CO3.H2O"], lennard_jones=(5.0, 450.0))  # INVENTED
    cond = dataclasses.replace(study.conditions, temperature_K=T, pressure_Pa=P_PA)
    return dataclasses.replace(study, conditions=cond, channels=study.channels + (ch,), species=sp), ch


def main() -> int:
    from tstrate.physics.falloff import thermal_distribution
    from tstrate.physics.rrkm import microcanonical_rate
    from tstrate.physics.states import CM1_J_PER_MOL, count_states
    from tstrate.physics.tst import zpe_level_J_per_mol
    from tstrate.study import falloff as sf

    study, ch = setup()
    step = sf.channel_falloff(study, ch)          # warm-up (imports), and the grid it uses
    model = step.model
    reac, ts = study.species["H2CO3.H2O"], study.species["TS1"]
    e0 = zpe_level_J_per_mol(ts) - zpe_level_J_per_mol(reac)
    e_top = model.rate.energies_J_per_mol[-1]

    def bare():
        r = count_states(reac.harmonic_frequencies_cm1, e_top, grain_cm1=model.grain_cm1, refine=False)
        t = count_states(ts.harmonic_frequencies_cm1, e_top, grain_cm1=model.grain_cm1, refine=False)
        k = microcanonical_rate(r, t, e0)
        return thermal_distribution(r, T) @ k.rate_per_s

    print(f"one-water channel of the complex, {T.size} x {P_PA.size} grid, grain {model.grain_cm1:.4g} cm-1, "
          f"{model.rate.reactant.n_grains} grains; Troe max deviation {100 * step.troe.max_rel_deviation:.2f} %")
    res = paired(lambda: sf.channel_falloff(study, ch), bare, repetitions=5)
    ratios = [1.0 / r for r in res.ratios]
    print(f"falloff step: median {statistics.median(res.fast_s):.3f} s; bare state count + thermal sum: median "
          f"{statistics.median(res.reference_s):.4f} s; ratio step/bare median {statistics.median(ratios):.1f} "
          f"(spread {min(ratios):.1f}-{max(ratios):.1f}, {len(ratios)} paired repetitions)")
    print(f"target step/bare <= 3: {'met' if statistics.median(ratios) <= 3 else 'NOT met'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
