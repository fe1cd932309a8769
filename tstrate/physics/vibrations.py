"""Harmonic vibrational analysis from a Cartesian Hessian, and isotope masses.

The Hessian is mass-weighted, overall translation and rotation are projected
out exactly (Eckart conditions: the 6, or 5 for a linear geometry, rigid-body
vectors are orthonormalised and the Hessian is diagonalised in their orthogonal
complement), and the 3N-6 (3N-5) eigenvalues become wavenumbers. Negative
eigenvalues give imaginary modes, reported as negative wavenumbers.

Isotopologues reuse the same Hessian with other masses (the Born-Oppenheimer
surface does not depend on nuclear masses). Masses come from RDKit's periodic
table (most common isotope by default, or a given mass number); none is typed in.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants as _sc

from tstrate.errors import InputError
from tstrate.geometry import centre_of_mass_frame, is_linear
from tstrate.units import AMU, C, HARTREE_J

_BOHR = _sc.physical_constants["Bohr radius"][0]
#: Hessian units accepted at the edges -> factor to J/m^2
HESSIAN_UNITS_J_PER_M2: dict[str, float] = {
    "hartree/bohr2": HARTREE_J / _BOHR**2,
    "eV/A2": _sc.eV / 1e-20,
    "kcal/mol/A2": _sc.calorie * 1e3 / _sc.N_A / 1e-20,
    "kJ/mol/A2": 1e3 / _sc.N_A / 1e-20,
    "J/m2": 1.0,
}


def isotope_mass_amu(symbol: str, mass_number: int | None = None) -> float:
    """Mass of an isotope [u] from RDKit's periodic table.

    ``mass_number=None`` gives the most common isotope (the convention of
    quantum-chemistry frequency calculations).
    """
    from ase.data import atomic_numbers
    from rdkit import Chem

    # RDKit dumps a C++ stack trace on stderr for unknown symbols: screen them out first
    if symbol not in atomic_numbers or atomic_numbers[symbol] < 1:
        raise InputError(f"unknown element {symbol!r}")
    table = Chem.GetPeriodicTable()
    try:
        z = table.GetAtomicNumber(symbol)
    except Exception:  # RDKit raises a bare RuntimeError for unknown symbols
        raise InputError(f"unknown element {symbol!r}") from None
    if z < 1:
        raise InputError(f"unknown element {symbol!r}")
    if mass_number is None:
        return float(table.GetMostCommonIsotopeMass(z))
    mass = float(table.GetMassForIsotope(z, int(mass_number)))
    if mass <= 0 or abs(mass - mass_number) > 0.5:
        raise InputError(f"no isotope {symbol}-{mass_number} in RDKit's periodic table")
    return mass


def default_masses_amu(symbols) -> np.ndarray:
    """Most-common-isotope masses [u] for a list of element symbols."""
    return np.array([isotope_mass_amu(s) for s in symbols])


def rigid_body_basis(positions_A, masses_amu, linear: bool | None = None) -> np.ndarray:
    """Orthonormal mass-weighted translation and rotation vectors, shape (3N, 6 or 5)."""
    x = centre_of_mass_frame(positions_A, masses_amu)
    m = np.asarray(masses_amu, dtype=float)
    n = len(m)
    sq = np.sqrt(m)
    vecs = []
    for k in range(3):
        t = np.zeros((n, 3))
        t[:, k] = sq
        vecs.append(t.ravel())
    for k in range(3):
        axis = np.zeros(3)
        axis[k] = 1.0
        vecs.append((np.cross(axis, x) * sq[:, None]).ravel())
    d = np.array(vecs).T
    u, s, _ = np.linalg.svd(d, full_matrices=False)
    if linear is None:
        linear = is_linear(positions_A, masses_amu)
    nrb = 5 if linear else 6
    if n == 1:
        nrb = 3
    return u[:, :nrb]


@dataclass(frozen=True)
class NormalModes:
    """Result of a vibrational analysis.

    frequencies_cm1: (M,) wavenumbers [cm^-1], ascending; imaginary ones negative.
    modes: (M, N, 3) mass-weighted normal-mode vectors (orthonormal), one per frequency.
    linear: whether the geometry was treated as linear.
    """

    frequencies_cm1: np.ndarray
    modes: np.ndarray
    linear: bool

    @property
    def imaginary_count(self) -> int:
        return int(np.sum(self.frequencies_cm1 < 0))


def vibrational_analysis(hessian_J_per_m2, positions_A, masses_amu,
                         linear: bool | None = None) -> NormalModes:
    """Projected harmonic frequencies from a Cartesian Hessian.

    Parameters
    ----------
    hessian_J_per_m2: (3N, 3N) Cartesian second derivatives of the energy [J/m^2].
    positions_A: (N, 3) geometry [Angstrom].
    masses_amu: (N,) masses [u].
    linear: override the linearity detected from the geometry.
    """
    x = np.asarray(positions_A, dtype=float)
    m = np.asarray(masses_amu, dtype=float)
    n = len(m)
    h = np.asarray(hessian_J_per_m2, dtype=float)
    if h.shape != (3 * n, 3 * n):
        raise InputError(f"Hessian has shape {h.shape}, expected {(3 * n, 3 * n)} for {n} atoms",
                         field="hessian")
    from tstrate.model.species import hessian_problem

    problem = hessian_problem(h)
    if problem:
        raise InputError(problem, field="hessian")
    h = 0.5 * (h + h.T)
    if linear is None:
        linear = is_linear(x, m)
    inv_sqrt_m = 1.0 / np.sqrt(np.repeat(m * AMU, 3))
    hmw = h * inv_sqrt_m[:, None] * inv_sqrt_m[None, :]  # [1/s^2]
    rb = rigid_body_basis(x, m, linear)
    # orthonormal basis of the vibrational complement
    q, _ = np.linalg.qr(np.hstack([rb, np.eye(3 * n)]))
    vib = q[:, rb.shape[1]:3 * n]
    hint = vib.T @ hmw @ vib
    lam, vec = np.linalg.eigh(0.5 * (hint + hint.T))
    omega = np.sign(lam) * np.sqrt(np.abs(lam))  # [rad/s]
    freqs = omega / (2 * np.pi * C * 100.0)  # [cm^-1]
    modes = (vib @ vec).T.reshape(-1, n, 3)
    return NormalModes(frequencies_cm1=freqs, modes=modes, linear=bool(linear))
