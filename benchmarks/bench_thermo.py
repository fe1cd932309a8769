"""Benchmark: ideal-gas thermochemistry of 10 species on 1,000 temperatures.

tstrate evaluates H, S, Cp and G of one species on the whole temperature grid in one
vectorised call. The reference, timed in the same run on identical inputs (geometry,
masses, wavenumbers converted to eV with tstrate's constants, symmetry number, spin), is
ASE's ``IdealGasThermo`` called once per temperature (get_enthalpy and get_entropy;
G = H - T S from those two, so ASE is not charged for recomputing them).

The numbers are checked first: S and H to 1e-6 relative, G to 1e-6 of |H| + |T S| (G nearly
cancels at some temperatures). The ~4e-7 residual is ASE's CODATA 2014 constants against
tstrate's CODATA 2022 ones (see tests/physics/test_thermo.py).

Species: the five experimental reference species in tstrate/io/reference/ and five molecules
from ASE's G2 set with approximate experimental fundamentals (Shimanouchi 1972, from memory;
they only need to be identical inputs to both codes).

Run: python benchmarks/bench_thermo.py      (exit status 1 if the numbers disagree or the
speed ratio is below the target)
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
try:
    import tstrate  # noqa: F401
except ImportError:  # running from a checkout without `pip install -e .`
    sys.path.insert(0, str(ROOT))

from ase import Atoms  # noqa: E402
from ase.build import molecule  # noqa: E402
from ase.thermochemistry import IdealGasThermo  # noqa: E402
from scipy import constants as sc  # noqa: E402

from tstrate.io.species import build_species, read_species  # noqa: E402
from tstrate.physics.thermo import thermochemistry  # noqa: E402
from tstrate.units import CM1_J, N_A  # noqa: E402

TARGET_RATIO = 30.0
TEMPERATURES_K = np.linspace(50.0, 3000.0, 1000)
PRESSURE_PA = 1e5
REPEATS = 5

# Approximate fundamentals [cm^-1] (Shimanouchi 1972, from memory), degenerate modes repeated.
G2_FUNDAMENTALS = {
    "CH4": [1306] * 3 + [1534] * 2 + [2917] + [3019] * 3,
    "NH3": [950, 1627, 1627, 3337, 3444, 3444],
    "HCN": [712, 712, 2097, 3311],
    "C2H4": [826, 943, 949, 1023, 1236, 1342, 1444, 1623, 2989, 3026, 3103, 3106],
    "H2CO": [1167, 1249, 1500, 1746, 2782, 2843],
}


def load_species():
    """(species, ASE geometry keyword, spin) for the 10 benchmark species."""
    out = []
    for name in ("h2o", "co2", "so2", "n2", "o2"):
        sp = read_species(ROOT / "tstrate" / "io" / "reference" / f"{name}.toml")
        if name == "o2":  # ASE knows only the spin degeneracy, not the a1Delta_g level
            sp = sp.with_changes(electronic_levels=())
        out.append(sp)
    for name, freqs in G2_FUNDAMENTALS.items():
        atoms = molecule(name)
        out.append(build_species(name, atoms.get_chemical_symbols(), atoms.positions,
                                 frequencies_cm1=freqs))
    return [(sp, "linear" if sp.linear else "nonlinear", (sp.multiplicity - 1) / 2) for sp in out]


def run_tstrate(species):
    """Vectorised: one call per species. Returns (S [J/(mol K)], H [J/mol], G [J/mol], Cp)."""
    rows = []
    for sp, _, _ in species:
        th = thermochemistry(sp, TEMPERATURES_K, pressure_Pa=PRESSURE_PA)
        h = th.zpe_J_per_mol + th.enthalpy_increment_J_per_mol  # ASE's H(T) with E_pot = 0
        g = th.zpe_J_per_mol + th.gibbs_increment_J_per_mol
        rows.append((th.entropy_J_per_mol_K, h, g, th.heat_capacity_J_per_mol_K))
    return rows


def run_ase(species):
    """Reference: ASE's IdealGasThermo, one call per temperature."""
    to_j_mol = sc.eV * N_A
    rows = []
    for sp, geometry, spin in species:
        atoms = Atoms(sp.symbols, positions=sp.positions_A, masses=sp.masses_amu)
        thermo = IdealGasThermo(sp.frequencies_cm1 * CM1_J / sc.eV, geometry, potentialenergy=0.0,
                                atoms=atoms, symmetrynumber=sp.symmetry_number, spin=spin)
        s = np.empty_like(TEMPERATURES_K)
        h = np.empty_like(TEMPERATURES_K)
        for i, t in enumerate(TEMPERATURES_K):
            s[i] = thermo.get_entropy(t, PRESSURE_PA, verbose=False) * to_j_mol
            h[i] = thermo.get_enthalpy(t, verbose=False) * to_j_mol
        rows.append((s, h, h - TEMPERATURES_K * s))
    return rows


def best_time(fn, *args, repeats=REPEATS):
    best, result = np.inf, None
    for _ in range(repeats):
        t0 = time.perf_counter()
        result = fn(*args)
        best = min(best, time.perf_counter() - t0)
    return best, result


def main() -> int:
    species = load_species()
    t_ours, ours = best_time(run_tstrate, species)
    t_ase, ref = best_time(run_ase, species, repeats=max(1, REPEATS // 2))

    worst_s = worst_h = worst_g = 0.0
    for (s, h, g, _), (s_ref, h_ref, g_ref) in zip(ours, ref):
        worst_s = max(worst_s, float(np.max(np.abs(s / s_ref - 1))))
        worst_h = max(worst_h, float(np.max(np.abs(h / h_ref - 1))))
        scale = np.abs(h_ref) + np.abs(TEMPERATURES_K * s_ref)
        worst_g = max(worst_g, float(np.max(np.abs(g - g_ref) / scale)))
    agree = max(worst_s, worst_h, worst_g) <= 1e-6

    n = len(species) * len(TEMPERATURES_K)
    ratio = t_ase / t_ours
    print(f"species: {len(species)}, temperatures: {len(TEMPERATURES_K)} "
          f"({TEMPERATURES_K[0]:.0f}-{TEMPERATURES_K[-1]:.0f} K), {n} (species, T) points")
    print(f"largest relative difference vs ASE: S {worst_s:.1e}, H {worst_h:.1e}, "
          f"G {worst_g:.1e} (of |H| + |TS|)  -> {'agree' if agree else 'DISAGREE'} (limit 1e-6)")
    print(f"tstrate (vectorised, H S Cp G): {t_ours * 1e3:9.2f} ms  "
          f"({t_ours / n * 1e9:7.1f} ns per point)")
    print(f"ASE IdealGasThermo (T loop, H S G): {t_ase * 1e3:9.2f} ms  "
          f"({t_ase / n * 1e6:7.2f} us per point)")
    print(f"speed ratio: {ratio:.0f}x (target >= {TARGET_RATIO:.0f}x) -> "
          f"{'met' if ratio >= TARGET_RATIO else 'NOT MET'}")
    return 0 if agree and ratio >= TARGET_RATIO else 1


if __name__ == "__main__":
    sys.exit(main())
