"""One-dimensional hindered internal rotors: torsional potential, exact levels, thermochemistry, state counts.

The torsion angle phi [rad] turns a top about a bond against the rest of the molecule; phi = 0 is
the geometry of the species. The potential is a Fourier series

    V(phi) = sum_k [a_k cos(k phi) + b_k sin(k phi)] + c        (k = 1 .. K, [J/mol])

with c chosen so that V(0) = 0: energies are measured from the species' own geometry. It comes
from given coefficients, or is fitted to scan points by linear least squares (:func:`fit_potential`,
which reports the RMS and largest residual of the fit).

Energy levels: the Hamiltonian H = -B d^2/dphi^2 + V(phi), B = hbar^2 / (2 I) with I the reduced
moment, is diagonalised exactly in a truncated free-rotor basis {1, cos(m phi), sin(m phi)},
m = 1 .. M, normalised on [0, 2 pi). The matrix is real symmetric; its potential part is computed by
a uniform quadrature that is exact for trigonometric polynomials of the degree involved, so the only
approximation is the truncation M, chosen so that B M^2 is far above the highest level asked for
(the eigenvalues of a truncated basis are upper bounds that converge from above; common practice).
For a rotor of symmetry number sigma (a sigma-fold potential and sigma indistinguishable
positions of the top) the levels of the full 2 pi problem are all kept and each counts 1/sigma,

    q = (1/sigma) sum_i exp(-(E_i - E_0) / kT)

(the convention of K. S. Pitzer and W. D. Gwinn, J. Chem. Phys. 10, 428 (1942); exact in the
free-rotor and harmonic limits). q is measured from the rotor's ground level E_0, like the harmonic
oscillators of :mod:`tstrate.physics.thermo`; the rotor's zero-point energy is E_0 - V(0).

Each :class:`HinderedRotorModel` answers the questions of the degree-of-freedom protocol
(:class:`tstrate.physics.modes.DegreeOfFreedom`): ln q, U, S, Cv on a temperature grid, its
zero-point energy, and its states on an energy grain for RRKM and the master equation.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from tstrate.units import AMU, HBAR, K_B, N_A, R

#: free-rotor basis functions kept beyond the highest wanted level: B M^2 >= BASIS_MARGIN * (E_max + V_span) (common practice)
BASIS_MARGIN = 2.0
#: fewest m values of the free-rotor basis
MIN_BASIS_M = 24
#: levels are computed up to this many k_B T above the ground level for thermochemistry (e^-50 neglected)
THERMAL_SPAN_KT = 50.0
#: most harmonics fitted by default (common practice for torsional scans: up to six terms)
DEFAULT_MAX_HARMONICS = 6
#: largest free-rotor basis (m up to this value; a matrix of 2 M + 1 rows)
MAX_BASIS_M = 2000


def rotational_constant_J_per_mol(moment_amu_A2: float) -> float:
    """B = hbar^2 / (2 I) of a reduced moment [u Angstrom^2], as a molar energy [J/mol]."""
    if not moment_amu_A2 > 0:
        raise ValueError(f"moment_amu_A2 must be positive, got {moment_amu_A2!r}")
    return HBAR**2 / (2.0 * moment_amu_A2 * AMU * 1e-20) * N_A


# ---- the potential ----------------------------------------------------------------

@dataclass(frozen=True)
class TorsionPotential:
    """V(phi) = sum_k [cos_J_per_mol[k-1] cos(k phi) + sin_J_per_mol[k-1] sin(k phi)] + c [J/mol],
    phi [rad], with c such that V(0) = 0.

    cos_J_per_mol, sin_J_per_mol: (K,) coefficients of harmonics k = 1 .. K [J/mol].
    """

    cos_J_per_mol: np.ndarray
    sin_J_per_mol: np.ndarray

    def __post_init__(self):
        a = np.array(self.cos_J_per_mol, dtype=float).ravel()
        b = np.array(self.sin_J_per_mol, dtype=float).ravel()
        if b.size == 0:
            b = np.zeros_like(a)
        if a.size != b.size:
            raise ValueError(f"cos_J_per_mol has {a.size} terms and sin_J_per_mol {b.size}; give as many")
        if not (np.all(np.isfinite(a)) and np.all(np.isfinite(b))):
            raise ValueError("the Fourier coefficients must be finite")
        a.setflags(write=False)
        b.setflags(write=False)
        object.__setattr__(self, "cos_J_per_mol", a)
        object.__setattr__(self, "sin_J_per_mol", b)

    @classmethod
    def from_barriers(cls, barriers_J_per_mol, sin_J_per_mol=()) -> "TorsionPotential":
        """V(phi) = sum_k (V_k / 2) (1 - cos(k phi)) [+ sin terms]: ``barriers_J_per_mol[k-1]`` is V_k
        (the tabulated form: V3 is the barrier of a threefold rotor)."""
        v = np.asarray(barriers_J_per_mol, dtype=float).ravel()
        s = np.asarray(sin_J_per_mol, dtype=float).ravel()
        if s.size < v.size:
            s = np.concatenate([s, np.zeros(v.size - s.size)])
        return cls(-0.5 * v, s)

    @property
    def harmonics(self) -> int:
        """K, the highest harmonic."""
        return int(self.cos_J_per_mol.size)

    def __call__(self, phi_rad) -> np.ndarray:
        """V(phi) [J/mol], V(0) = 0."""
        phi = np.asarray(phi_rad, dtype=float)
        k = np.arange(1, self.harmonics + 1)
        if k.size == 0:
            return np.zeros_like(phi)
        kp = phi[..., None] * k
        return np.cos(kp) @ self.cos_J_per_mol + np.sin(kp) @ self.sin_J_per_mol - float(np.sum(self.cos_J_per_mol))

    def _grid(self, n: int = 7200):
        phi = np.linspace(0.0, 2 * np.pi, n, endpoint=False)
        return phi, self(phi)

    @property
    def minimum_J_per_mol(self) -> float:
        """Lowest V on a 0.05 degree grid [J/mol] (0 or below: V(0) = 0)."""
        return float(min(0.0, self._grid()[1].min()))

    @property
    def maximum_J_per_mol(self) -> float:
        """Highest V on a 0.05 degree grid [J/mol]."""
        return float(self._grid()[1].max())

    @property
    def barrier_J_per_mol(self) -> float:
        """Highest minus lowest V [J/mol]."""
        return self.maximum_J_per_mol - self.minimum_J_per_mol

    @property
    def minimum_angle_rad(self) -> float:
        """Angle of the lowest V [rad] (grid value)."""
        phi, v = self._grid()
        return float(phi[np.argmin(v)])

    def curvature_J_per_mol_rad2(self, phi_rad: float = 0.0) -> float:
        """d^2V/dphi^2 at ``phi_rad`` [J/mol/rad^2]."""
        k = np.arange(1, self.harmonics + 1)
        return float(-np.sum(k**2 * (self.cos_J_per_mol * np.cos(k * phi_rad)
                                     + self.sin_J_per_mol * np.sin(k * phi_rad))))


@dataclass(frozen=True)
class PotentialFit:
    """A Fourier series fitted to scan points, with its error.

    potential: the fitted series (V(0) = 0).
    harmonics_used: the harmonics k fitted (multiples of the symmetry number).
    rms_J_per_mol, max_abs_J_per_mol: RMS and largest |fit - point| over the points [J/mol].
    angles_rad, energies_J_per_mol: the points, energies on the fit's scale (V_fit(0) = 0).
    """

    potential: TorsionPotential
    harmonics_used: tuple[int, ...]
    rms_J_per_mol: float
    max_abs_J_per_mol: float
    angles_rad: np.ndarray = field(repr=False)
    energies_J_per_mol: np.ndarray = field(repr=False)


def fit_potential(angles_rad, energies_J_per_mol, *, symmetry_number: int = 1,
                  harmonics: int | None = None) -> PotentialFit:
    """Least-squares Fourier series through scan points.

    Parameters
    ----------
    angles_rad: (n,) torsion angles [rad] from the species' geometry (any range; taken modulo 2 pi).
    energies_J_per_mol: (n,) energies [J/mol] on any common zero.
    symmetry_number: sigma; only harmonics k = sigma, 2 sigma, ... are fitted, so that the series
        has the rotor's period (points over one period 2 pi / sigma suffice).
    harmonics: how many harmonics (terms) to fit; by default as many as the distinct angles
        within one period allow, at most :data:`DEFAULT_MAX_HARMONICS`. Two coefficients per
        harmonic plus a constant: needs 2 * harmonics + 1 distinct angles.
    """
    phi = np.asarray(angles_rad, dtype=float).ravel()
    e = np.asarray(energies_J_per_mol, dtype=float).ravel()
    if phi.size != e.size:
        raise ValueError(f"{phi.size} angles but {e.size} energies")
    if not (np.all(np.isfinite(phi)) and np.all(np.isfinite(e))):
        raise ValueError("angles and energies must be finite")
    sigma = int(symmetry_number)
    if sigma < 1:
        raise ValueError(f"symmetry_number must be 1 or more, got {symmetry_number!r}")
    period = 2 * np.pi / sigma
    reduced = np.round(np.mod(phi, period), 8)
    reduced[np.isclose(reduced, period)] = 0.0
    distinct = np.unique(reduced).size
    most = (distinct - 1) // 2
    if harmonics is None:
        harmonics = min(DEFAULT_MAX_HARMONICS, most)
    if harmonics < 1 or harmonics > most:
        raise ValueError(f"{distinct} distinct angles within one period (360/{sigma} degrees) allow 1 to "
                         f"{most} harmonics, asked for {harmonics}")
    ks = sigma * np.arange(1, harmonics + 1)
    design = np.hstack([np.ones((phi.size, 1)), np.cos(phi[:, None] * ks), np.sin(phi[:, None] * ks)])
    coef, *_ = np.linalg.lstsq(design, e, rcond=None)
    k_max = int(ks[-1])
    a = np.zeros(k_max)
    b = np.zeros(k_max)
    a[ks - 1] = coef[1:1 + harmonics]
    b[ks - 1] = coef[1 + harmonics:]
    pot = TorsionPotential(a, b)
    shift = float(coef[0] + a.sum())  # the fitted V at phi = 0
    resid = (design @ coef) - e
    return PotentialFit(pot, tuple(int(k) for k in ks), float(np.sqrt(np.mean(resid**2))),
                        float(np.max(np.abs(resid))), phi, e - shift)


# ---- levels ------------------------------------------------------------------------

def _basis_size(b_J_per_mol: float, span_J_per_mol: float) -> int:
    m = int(math.ceil(math.sqrt(BASIS_MARGIN * span_J_per_mol / b_J_per_mol))) + 8
    m = max(MIN_BASIS_M, m)
    if m > MAX_BASIS_M:
        raise ValueError(f"the levels asked for need a free-rotor basis of m up to {m} (more than "
                         f"{MAX_BASIS_M}); lower max_energy_J_per_mol or check the reduced moment")
    return m


def torsional_levels_J_per_mol(potential: TorsionPotential, b_J_per_mol: float,
                               max_energy_J_per_mol: float, *, basis_m: int | None = None) -> np.ndarray:
    """Eigenvalues of -B d^2/dphi^2 + V(phi) on [0, 2 pi) [J/mol], ascending, on the potential's
    scale (V(0) = 0), for all levels up to ``max_energy_J_per_mol`` above the lowest.

    ``basis_m``: the largest m of the free-rotor basis; by default from :data:`BASIS_MARGIN`.
    """
    if not b_J_per_mol > 0:
        raise ValueError(f"b_J_per_mol must be positive, got {b_J_per_mol!r}")
    if not max_energy_J_per_mol > 0:
        raise ValueError(f"max_energy_J_per_mol must be positive, got {max_energy_J_per_mol!r}")
    vmin = potential.minimum_J_per_mol
    span = max_energy_J_per_mol + potential.maximum_J_per_mol - vmin
    m_top = _basis_size(b_J_per_mol, span) if basis_m is None else int(basis_m)
    k = potential.harmonics
    n_grid = 2 * (2 * m_top + k) + 2
    phi = np.arange(n_grid) * (2 * np.pi / n_grid)
    m = np.arange(1, m_top + 1)
    # orthonormal real basis on [0, 2 pi): 1/sqrt(2 pi), cos(m phi)/sqrt(pi), sin(m phi)/sqrt(pi)
    basis = np.hstack([np.full((n_grid, 1), 1 / math.sqrt(2 * math.pi)),
                       np.cos(phi[:, None] * m) / math.sqrt(math.pi),
                       np.sin(phi[:, None] * m) / math.sqrt(math.pi)])
    weight = 2 * np.pi / n_grid
    v = potential(phi)
    ham = (basis * (v * weight)[:, None]).T @ basis
    kinetic = b_J_per_mol * np.concatenate([[0.0], m**2, m**2])
    ham[np.diag_indices_from(ham)] += kinetic
    from scipy.linalg import eigh

    levels = eigh(0.5 * (ham + ham.T), eigvals_only=True, driver="evr")
    return levels[levels <= levels[0] + max_energy_J_per_mol]


@dataclass(frozen=True)
class HinderedRotorModel:
    """A 1-D hindered rotor: reduced moment, symmetry number and potential.

    moment_amu_A2: reduced moment of inertia I [u Angstrom^2].
    symmetry_number: sigma of the rotor (3 for a methyl group).
    potential: V(phi) [J/mol], V(0) = 0 at the species' geometry.
    """

    moment_amu_A2: float
    symmetry_number: int
    potential: TorsionPotential

    def __post_init__(self):
        if not float(self.moment_amu_A2) > 0:
            raise ValueError(f"moment_amu_A2 must be positive, got {self.moment_amu_A2!r}")
        if int(self.symmetry_number) != self.symmetry_number or self.symmetry_number < 1:
            raise ValueError(f"symmetry_number must be a positive integer, got {self.symmetry_number!r}")
        object.__setattr__(self, "_cache", {})

    @property
    def b_J_per_mol(self) -> float:
        """Rotational constant B = hbar^2 / (2 I) [J/mol]."""
        return rotational_constant_J_per_mol(self.moment_amu_A2)

    def levels_J_per_mol(self, max_energy_J_per_mol: float) -> np.ndarray:
        """Levels of the full 2 pi problem up to ``max_energy_J_per_mol`` above the ground level,
        measured from the ground level [J/mol] (each counts 1/sigma)."""
        cache = self._cache
        if cache.get("top", -1.0) >= max_energy_J_per_mol:
            lv = cache["levels"]
            return lv[lv <= max_energy_J_per_mol]
        e = torsional_levels_J_per_mol(self.potential, self.b_J_per_mol, max_energy_J_per_mol)
        lv = e - e[0]
        lv.setflags(write=False)
        cache.update(top=float(max_energy_J_per_mol), levels=lv, ground=float(e[0]))
        return lv

    @property
    def zpe_J_per_mol(self) -> float:
        """Ground level above V(0), the energy at the species' geometry [J/mol]; negative when the
        geometry is not at the lowest well of the potential."""
        if "ground" not in self._cache:
            self.levels_J_per_mol(max(THERMAL_SPAN_KT * R * 300.0, 10 * self.b_J_per_mol))
        return self._cache["ground"]

    def thermo_parts(self, temperature_K: np.ndarray):
        """ln q (from the ground level), U/RT, S/R, Cv/R, each of shape (T,)."""
        t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
        e = self.levels_J_per_mol(THERMAL_SPAN_KT * R * float(t.max()))
        x = e[None, :] / (R * t[:, None])
        w = np.exp(-x)
        z = w.sum(axis=1)
        p = w / z[:, None]
        u = (p * x).sum(axis=1)
        cv = (p * x**2).sum(axis=1) - u**2
        ln_q = np.log(z) - math.log(self.symmetry_number)
        return ln_q, u, ln_q + u, cv

    def counts(self, n_grains: int, grain_J_per_mol: float) -> np.ndarray:
        """States of this rotor alone in each grain (levels from the ground level, 1/sigma each;
        a level of energy E belongs to grain round(E / grain))."""
        top = (n_grains - 0.5) * grain_J_per_mol
        e = self.levels_J_per_mol(max(top, grain_J_per_mol))
        idx = np.rint(e / grain_J_per_mol).astype(np.int64)
        out = np.zeros(n_grains)
        keep = idx < n_grains
        np.add.at(out, idx[keep], 1.0 / self.symmetry_number)
        return out

    def harmonic_wavenumber_cm1(self) -> float:
        """The small-vibration wavenumber at phi = 0, sqrt(V''(0) / I) / (2 pi c) [cm^-1] (NaN at a
        maximum or a flat point)."""
        from tstrate.units import C

        k = self.potential.curvature_J_per_mol_rad2(0.0) / N_A  # J/rad^2 per molecule
        if not k > 0:
            return float("nan")
        omega = math.sqrt(k / (self.moment_amu_A2 * AMU * 1e-20))
        return omega / (2 * math.pi * C * 100.0)


@lru_cache(maxsize=512)
def rotor_model(rotor) -> HinderedRotorModel:
    """The physics of a :class:`tstrate.model.HinderedRotor` record (cached per record: the levels
    are solved once)."""
    return HinderedRotorModel(rotor.reduced_moment_amu_A2, rotor.symmetry_number,
                              TorsionPotential(rotor.cos_terms_J_per_mol, rotor.sin_terms_J_per_mol))


def rotor_partition_function(potential: TorsionPotential, moment_amu_A2: float, symmetry_number: int,
                             temperature_K, *, max_level_energy_J_per_mol: float | None = None):
    """A rotor's partition function and levels from its potential and reduced moment, without a species.

    Returns ``(ln_q, levels_J_per_mol)``: ln q from the ground level on the temperatures [K], and the
    levels of the 2 pi problem from the ground level [J/mol] (each counting 1/symmetry_number), up to
    ``max_level_energy_J_per_mol`` (by default 50 k_B T above the ground level at the highest T).
    """
    model = HinderedRotorModel(moment_amu_A2, symmetry_number, potential)
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    top = THERMAL_SPAN_KT * R * float(t.max()) if max_level_energy_J_per_mol is None else max_level_energy_J_per_mol
    return model.thermo_parts(t)[0], model.levels_J_per_mol(top)


def classical_ln_q(model: HinderedRotorModel, temperature_K) -> np.ndarray:
    """ln of the classical partition function (1/sigma) (2 pi I k T)^(1/2) / h * integral exp(-V/kT) dphi,
    from V(0) = 0 (numerical quadrature on 7200 points; the check against the exact levels at high T)."""
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    phi, v = model.potential._grid()
    from scipy.special import logsumexp

    moment = model.moment_amu_A2 * AMU * 1e-20
    ln_int = np.array([logsumexp(-v / (R * tt)) for tt in t]) + math.log(2 * math.pi / phi.size)
    return 0.5 * np.log(2 * math.pi * moment * K_B * t) - math.log(2 * math.pi * HBAR) + ln_int \
        - math.log(model.symmetry_number)
