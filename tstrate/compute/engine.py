"""GFN2-xTB through tblite's ASE calculator: settings, optimisation, finite-difference Hessian.

The semi-empirical level is GFN2-xTB (C. Bannwarth, S. Ehlert, S. Grimme,
J. Chem. Theory Comput. 15, 1652 (2019)) as implemented in tblite, used
through its ASE calculator. Energies from ASE are in eV and forces in eV/A;
everything leaving this module is SI (J/mol, J/m^2) or Angstrom for geometries.

The Hessian is built here by central finite differences of analytic
gradients, one displaced geometry at a time (6N gradient calls for N atoms),
with no file cache: nothing from an earlier geometry can leak into it.
"""

from __future__ import annotations

import ctypes
import datetime as _dt
import logging
import os
from dataclasses import asdict, dataclass
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.physics.vibrations import HESSIAN_UNITS_J_PER_M2
from tstrate.units import energy_to_J_per_mol

log = logging.getLogger(__name__)

#: methods tblite offers through its ASE calculator
METHODS = ("GFN2-xTB", "GFN1-xTB", "IPEA1-xTB")


@dataclass(frozen=True)
class Settings:
    """Numerical settings of the semi-empirical route (all enter the cache key).

    method: tblite Hamiltonian.
    fmax_eV_per_A: convergence criterion of minimisations and saddle searches: largest
        atomic force [eV/Angstrom].
    max_steps: most optimiser steps before giving up (non-convergence is an error).
    hessian_step_A: displacement of the central finite differences [Angstrom].
    accuracy: tblite's accuracy factor (smaller is tighter SCC convergence).
    seed: seed of every random choice (conformer embedding, symmetry-breaking displacement).
    n_conformers: conformers embedded from a SMILES.
    tolerated_imaginary_cm1: minima may keep imaginary modes smaller than this after
        the bounded re-optimisation (numerical noise in flat torsions) [cm^-1].
    threads: OpenMP threads for tblite (one is fastest for small molecules).
    """

    method: str = "GFN2-xTB"
    fmax_eV_per_A: float = 5e-4
    max_steps: int = 1000
    hessian_step_A: float = 5e-3
    accuracy: float = 0.1
    seed: int = 20240611
    n_conformers: int = 10
    tolerated_imaginary_cm1: float = 20.0
    threads: int = 1

    def __post_init__(self):
        if self.method not in METHODS:
            raise InputError(f"unknown method {self.method!r}", field="method",
                             hint="use one of " + ", ".join(METHODS))
        if not self.fmax_eV_per_A > 0:
            raise InputError("fmax must be positive", field="fmax")
        if int(self.max_steps) < 1:
            raise InputError("the step limit must be at least 1", field="max_steps")
        if not 1e-4 <= self.hessian_step_A <= 0.05:
            raise InputError("Hessian step must lie between 1e-4 and 0.05 Angstrom",
                             field="hessian_step_A")
        if int(self.n_conformers) < 1:
            raise InputError("at least one conformer is needed", field="conformers")

    def as_dict(self) -> dict:
        d = asdict(self)
        d.pop("threads")  # does not change results
        return d


def package_versions() -> dict[str, str]:
    """Versions of the packages whose numbers end up in a result."""
    from importlib.metadata import PackageNotFoundError, version

    out = {}
    for pkg in ("tstrate", "tblite", "ase", "sella", "rdkit", "numpy"):
        try:
            out[pkg] = version(pkg)
        except PackageNotFoundError:
            out[pkg] = "not installed"
    return out


def provenance(settings: Settings, *, command: str | None, extra: dict | None = None) -> dict:
    """Provenance strings for a species file made by this route."""
    versions = package_versions()
    prov = {
        "method": settings.method,
        "program": f"tblite {versions['tblite']} (ASE calculator), ASE {versions['ase']}",
        "versions": ", ".join(f"{k} {v}" for k, v in versions.items()),
        "date": _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat(),
        "convergence": (f"max force < {settings.fmax_eV_per_A:g} eV/Angstrom; tblite accuracy "
                        f"{settings.accuracy:g}"),
        "hessian": (f"central finite differences of analytic gradients, step "
                    f"{settings.hessian_step_A:g} Angstrom; frequencies projected (tstrate)"),
    }
    if extra:
        prov.update({k: str(v) for k, v in extra.items()})
    prov["command"] = command or "Python API"
    return prov


# ---- calculator -------------------------------------------------------------------

def _limit_openmp_threads(n: int) -> None:
    """Set the OpenMP thread count of the already-loaded runtime (tblite uses OpenMP).

    On a small molecule OpenMP threads spin against each other and slow tblite
    down by orders of magnitude on a busy machine; one thread is the default.
    """
    try:
        with open("/proc/self/maps") as fh:
            libs = {line.split()[-1] for line in fh if "omp" in line.rsplit("/", 1)[-1]}
    except OSError:
        return
    for lib in sorted(libs):
        if lib.endswith((".so", ".so.1")) or ".so." in lib:
            try:
                ctypes.CDLL(lib).omp_set_num_threads(int(n))
            except (OSError, AttributeError):
                continue


def make_calculator(settings: Settings, charge: int = 0, multiplicity: int = 1):
    """A fresh tblite ASE calculator for ``settings`` (energies eV, forces eV/Angstrom)."""
    os.environ.setdefault("OMP_NUM_THREADS", str(settings.threads))
    try:
        from tblite.ase import TBLite
    except ImportError:
        raise InputError("the semi-empirical route needs tblite",
                         hint="pip install 'tstrate[compute]'") from None
    _limit_openmp_threads(settings.threads)
    return TBLite(method=settings.method, charge=int(charge), multiplicity=int(multiplicity),
                  accuracy=settings.accuracy, verbosity=0)


def with_calculator(atoms, settings: Settings, charge: int = 0, multiplicity: int = 1):
    """A copy of ``atoms`` carrying a fresh calculator."""
    new = atoms.copy()
    new.calc = make_calculator(settings, charge, multiplicity)
    return new


def energy_J_per_mol(atoms) -> float:
    """Electronic energy of ``atoms`` [J/mol] (ASE gives eV)."""
    return float(energy_to_J_per_mol(atoms.get_potential_energy(), "eV"))


class count_gradient_calls:
    """Context manager counting the real calculations of the calculator of ``atoms``.

    ``with count_gradient_calls(atoms) as counter: ...``; ``counter.calls`` grows by
    one per calculation (ASE skips repeated requests at the same geometry).
    """

    def __init__(self, atoms):
        self.calc = atoms.calc
        self.calls = 0

    def __enter__(self):
        inner = self.calc.calculate

        def counted(*args, **kwargs):
            self.calls += 1
            return inner(*args, **kwargs)

        self.calc.calculate = counted
        return self

    def __exit__(self, *exc):
        del self.calc.calculate  # back to the class's method
        return False


def progress_bar(total: int, desc: str, enabled: bool):
    """A tqdm bar on stderr (a do-nothing bar when not ``enabled``)."""
    import sys

    from tqdm import tqdm

    return tqdm(total=total, desc=desc, file=sys.stderr, disable=not enabled, leave=False,
                dynamic_ncols=True)


# ---- Hessian ----------------------------------------------------------------------

@dataclass(frozen=True)
class HessianResult:
    """hessian_J_per_m2: (3N, 3N) symmetrised Cartesian Hessian [J/m^2];
    gradient_calls: calculator calls spent (6N for central differences)."""

    hessian_J_per_m2: np.ndarray
    gradient_calls: int


def finite_difference_hessian(atoms, step_A: float, *, progress: bool = False,
                              desc: str = "Hessian") -> HessianResult:
    """Cartesian Hessian by central differences of forces: H_ij = -(F_j(x+h e_i) - F_j(x-h e_i)) / 2h.

    ``atoms`` must carry a calculator; its positions are left unchanged.
    """
    work = atoms.copy()
    work.calc = atoms.calc
    x0 = atoms.positions.copy()
    n3 = 3 * len(atoms)
    hess = np.empty((n3, n3))
    with count_gradient_calls(work) as counter, progress_bar(n3, desc, progress) as bar:
        for i in range(n3):
            forces = []
            for sign in (1.0, -1.0):
                x = x0.copy()
                x.reshape(-1)[i] += sign * step_A
                work.positions = x
                forces.append(work.get_forces().reshape(-1))
            hess[i] = -(forces[0] - forces[1]) / (2.0 * step_A)  # [eV/A^2]
            bar.update(1)
    atoms.calc.results.clear()
    hess = 0.5 * (hess + hess.T) * HESSIAN_UNITS_J_PER_M2["eV/A2"]
    return HessianResult(hess, counter.calls)


# ---- optimisation -----------------------------------------------------------------

def write_xyz(path: Path, atoms, comment: str = "") -> Path:
    """Write one geometry as XYZ [Angstrom] atomically."""
    from tstrate.io.files import atomic_write_text

    lines = [str(len(atoms)), comment.replace("\n", " ")]
    lines += [f"{s:<2} {x:16.10f} {y:16.10f} {z:16.10f}"
              for s, (x, y, z) in zip(atoms.get_chemical_symbols(), atoms.positions)]
    atomic_write_text(path, "\n".join(lines) + "\n")
    return path


def _not_converged(atoms, label: str, what: str, steps: int, fmax: float, work_dir) -> InputError:
    safe = "".join(c if c.isalnum() or c in "-_." else "_" for c in label) or "geometry"
    path = Path(work_dir or ".") / f"{safe}.unconverged.xyz"
    write_xyz(path, atoms, f"{label}: last geometry of an unconverged {what}")
    return InputError(f"{what} of {label} did not converge in {steps} steps (max force "
                      f"> {fmax:g} eV/Angstrom); last geometry kept in {path}",
                      hint="raise the step limit or start from a better geometry")


class _scf_failure_is_input_error:
    """Turn a failed electronic-structure calculation inside an optimisation into an InputError
    (the geometry reached is kept in ``<label>.failed.xyz``): it comes from the geometry given."""

    def __init__(self, atoms, label, what, work_dir):
        self.atoms, self.label, self.what, self.work_dir = atoms, label, what, work_dir

    def __enter__(self):
        return self

    def __exit__(self, exc_type, exc, tb):
        from ase.calculators.calculator import CalculationFailed

        if exc_type is None or not issubclass(exc_type, CalculationFailed):
            return False
        safe = "".join(c if c.isalnum() or c in "-_." else "_" for c in self.label) or "geometry"
        path = Path(self.work_dir or ".") / f"{safe}.failed.xyz"
        write_xyz(path, self.atoms, f"{self.label}: geometry where the calculation failed")
        raise InputError(f"the GFN2-xTB calculation failed during the {self.what} of {self.label} "
                         f"({exc}); geometry kept in {path}",
                         hint="check the geometry (atoms too close?), charge and multiplicity") \
            from None


def minimise(atoms, settings: Settings, *, label: str, fmax: float | None = None,
             max_steps: int | None = None, work_dir=None, must_converge: bool = True) -> int:
    """Minimise ``atoms`` in place with ASE's BFGS; returns the number of steps.

    Raises InputError (keeping the last geometry in ``<label>.unconverged.xyz``
    in ``work_dir``) when not converged and ``must_converge``.
    """
    from ase.optimize import BFGS

    fmax = settings.fmax_eV_per_A if fmax is None else fmax
    steps = settings.max_steps if max_steps is None else max_steps
    opt = BFGS(atoms, logfile=None, maxstep=0.2)
    with _scf_failure_is_input_error(atoms, label, "minimisation", work_dir):
        converged = bool(opt.run(fmax=fmax, steps=steps))
    if not converged and must_converge:
        raise _not_converged(atoms, label, "minimisation", steps, fmax, work_dir)
    return int(opt.nsteps)


def saddle_optimise(atoms, settings: Settings, *, label: str, internal: bool = True,
                    work_dir=None) -> int:
    """First-order saddle search with Sella (order=1) in place; returns the steps taken.

    Sella: E. D. Hermes, K. Sargsyan, H. N. Najm, J. Zador, J. Chem. Theory
    Comput. 18, 6974 (2022). Raises InputError when not converged.
    """
    try:
        from sella import Sella
    except ImportError:
        raise InputError("saddle searches need sella", hint="pip install 'tstrate[compute]'") from None
    opt = Sella(atoms, order=1, internal=internal, logfile=None, trajectory=None)
    with _scf_failure_is_input_error(atoms, label, "saddle search", work_dir):
        converged = bool(opt.run(fmax=settings.fmax_eV_per_A, steps=settings.max_steps))
    if not converged:
        raise _not_converged(atoms, label, "saddle search", settings.max_steps,
                             settings.fmax_eV_per_A, work_dir)
    return int(opt.nsteps)
