"""Sums and densities of states on an energy grain.

Direct count of harmonic-oscillator states by the Beyer-Swinehart algorithm
(T. Beyer and D. F. Swinehart, Commun. ACM 16, 379 (1973)) in the form of
S. E. Stein and B. S. Rabinovitch, J. Chem. Phys. 58, 2438 (1973), with free
rotors and electronic levels in the starting array of the recursion (the same
as convolving them in, at a cost linear in the number of grains), and the Whitten-Rabinovitch approximation
(G. Z. Whitten and B. S. Rabinovitch, J. Chem. Phys. 38, 2466 (1963)) for
checking.

Conventions
-----------
* Energies are measured from the zero-point level of the species and are
  given in J/mol; vibrational wavenumbers in cm^-1.
* The grid is ``E_i = i * grain`` for ``i = 0 .. n-1``. ``counts[i]`` is the
  number of states whose energy rounds to grain ``i`` (dimensionless); a
  state of energy ``E`` belongs to grain ``round(E / grain)``.
* Each wavenumber is rounded to a whole number of grains, so the count is
  exact when every wavenumber is a multiple of the grain and otherwise carries
  the rounding error of at most half a grain per quantum.
* Grain rule: the grain must not exceed one third of the lowest wavenumber
  (:data:`GRAIN_FRACTION_OF_LOWEST`). This is common practice, not a law: at
  three grains per quantum the softest mode is still resolved and the
  relative rounding error of its quantum is at most 1/6. A coarser grain is
  refined to ``lowest / 3`` with a logged warning.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field
from typing import Iterable, Sequence

import numpy as np

from tstrate.arrays import positive, positive_array
from tstrate.errors import InputError
from tstrate.units import AMU, C, CM1_J, H, N_A, R

log = logging.getLogger(__name__)

#: One wavenumber as a molar energy [J/mol per cm^-1].
CM1_J_PER_MOL = CM1_J * N_A

#: Largest grain allowed, as a fraction of the lowest vibrational wavenumber
#: (common practice: at least three grains per quantum of the softest mode).
GRAIN_FRACTION_OF_LOWEST = 1.0 / 3.0


#: what to say when a list of real wavenumbers holds a non-positive one
MODE_HINT = ("imaginary modes are given as negative numbers; leave the reaction coordinate out of a "
             "transition state's real modes")


def rotational_constant_cm1(moment_of_inertia_amu_A2: float) -> float:
    """Rotational constant B = h / (8 pi^2 c I) [cm^-1] of a moment of inertia [amu Angstrom^2]."""
    inertia_kg_m2 = positive(moment_of_inertia_amu_A2, "moment_of_inertia_amu_A2") * AMU * 1e-20
    return H / (8.0 * math.pi**2 * C * inertia_kg_m2) / 100.0


@dataclass(frozen=True)
class Rotor:
    """A separable free rotor whose states are convolved into a vibrational count.

    Attributes
    ----------
    rotational_constant_cm1:
        B [cm^-1]. For an internal free rotor use the reduced moment of inertia
        (:meth:`from_moment_of_inertia`); for the K-rotor of a near-symmetric
        top use A - (B+C)/2.
    symmetry_number:
        Rotational symmetry number sigma (dimensionless, >= 1); the count is divided by it.
    dimension:
        1 for a 1-D rotor (internal free rotor or K-rotor, levels B m^2,
        m = 0, +-1, +-2, ...), 2 for a 2-D rotor (levels B J(J+1), degeneracy 2J+1).
    quantum:
        True counts the discrete levels; False uses the classical sum of states,
        N_1D(E) = (2/sigma) sqrt(E/B) and N_2D(E) = E / (sigma B), differenced at
        grain edges (Robinson and Holbrook, *Unimolecular Reactions*, Wiley 1972, ch. 4).
    """

    rotational_constant_cm1: float
    symmetry_number: int = 1
    dimension: int = 1
    quantum: bool = False

    def __post_init__(self):
        positive(self.rotational_constant_cm1, "rotational_constant_cm1")
        if int(self.symmetry_number) != self.symmetry_number or self.symmetry_number < 1:
            raise InputError(f"rotor symmetry number must be a positive integer, got {self.symmetry_number!r}",
                             field="symmetry_number")
        if self.dimension not in (1, 2):
            raise InputError(f"rotor dimension must be 1 or 2, got {self.dimension!r}", field="dimension")

    @classmethod
    def from_moment_of_inertia(cls, moment_of_inertia_amu_A2: float, symmetry_number: int = 1,
                               dimension: int = 1, quantum: bool = False) -> "Rotor":
        """Rotor from a (reduced) moment of inertia [amu Angstrom^2]."""
        return cls(rotational_constant_cm1(moment_of_inertia_amu_A2), symmetry_number, dimension, quantum)

    @property
    def zpe_J_per_mol(self) -> float:
        """A free rotor's ground level (m = 0 or J = 0) is at zero energy [J/mol]."""
        return 0.0

    def thermo_parts(self, temperature_K):
        """ln q, U/RT, S/R, Cv/R of this rotor alone (the degree-of-freedom protocol of
        :mod:`tstrate.physics.modes`): the classical forms q_1D = sqrt(pi k T / B) / sigma
        (U/RT = Cv/R = 1/2) and q_2D = k T / (sigma B) (U/RT = Cv/R = 1), or with ``quantum`` the
        sum over the levels B m^2 or B J(J+1)."""
        t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
        b = self.rotational_constant_cm1 * CM1_J_PER_MOL
        half = 0.5 * self.dimension
        if not self.quantum:
            y = R * t / b
            ln_q = (0.5 * np.log(math.pi * y) if self.dimension == 1 else np.log(y)) - math.log(self.symmetry_number)
            return ln_q, np.full_like(t, half), ln_q + half, np.full_like(t, half)
        top = int(math.sqrt(60.0 * R * float(t.max()) / b)) + 2
        k = np.arange(0, top + 1)
        energy = b * k**2 if self.dimension == 1 else b * k * (k + 1)
        g = np.where(k == 0, 1.0, 2.0) if self.dimension == 1 else 2.0 * k + 1.0
        x = energy[None, :] / (R * t[:, None])
        w = g * np.exp(-x)
        z = w.sum(axis=1)
        u = (w * x).sum(axis=1) / z
        cv = (w * x**2).sum(axis=1) / z - u**2
        ln_q = np.log(z) - math.log(self.symmetry_number)
        return ln_q, u, ln_q + u, cv

    def counts(self, n_grains: int, grain_J_per_mol: float) -> np.ndarray:
        """States of this rotor alone in each grain (length ``n_grains``)."""
        b = self.rotational_constant_cm1 * CM1_J_PER_MOL
        sigma = float(self.symmetry_number)
        out = np.zeros(n_grains)
        e_top = (n_grains - 0.5) * grain_J_per_mol
        if self.quantum:
            if self.dimension == 1:
                m = np.arange(0, int(math.sqrt(e_top / b)) + 2)
                energy = b * m**2
                degeneracy = np.where(m == 0, 1.0, 2.0)
            else:
                j = np.arange(0, int(math.sqrt(e_top / b)) + 2)
                energy = b * j * (j + 1)
                degeneracy = 2.0 * j + 1.0
            index = np.rint(energy / grain_J_per_mol).astype(np.int64)
            keep = index < n_grains
            np.add.at(out, index[keep], degeneracy[keep] / sigma)
            return out
        edges = (np.arange(n_grains + 1) - 0.5) * grain_J_per_mol
        edges[0] = 0.0
        if self.dimension == 1:
            total = (2.0 / sigma) * np.sqrt(edges / b)
        else:
            total = edges / (sigma * b)
        return np.diff(total)


@dataclass(frozen=True)
class StateCounts:
    """Number of states per energy grain, from the zero-point level.

    Attributes
    ----------
    grain_J_per_mol:
        Width of one grain [J/mol]; grain ``i`` is centred on ``i * grain``.
    counts:
        States in each grain (dimensionless), read-only array of length n.
    """

    grain_J_per_mol: float
    counts: np.ndarray = field(repr=False)

    def __post_init__(self):
        arr = np.array(self.counts, dtype=float)
        arr.setflags(write=False)
        object.__setattr__(self, "counts", arr)

    @property
    def n_grains(self) -> int:
        return int(self.counts.size)

    @property
    def grain_cm1(self) -> float:
        """Grain width [cm^-1]."""
        return self.grain_J_per_mol / CM1_J_PER_MOL

    @property
    def energies_J_per_mol(self) -> np.ndarray:
        """Grain centres [J/mol] from the zero-point level."""
        return np.arange(self.n_grains) * self.grain_J_per_mol

    @property
    def density_per_J_per_mol(self) -> np.ndarray:
        """Density of states rho(E) [states per (J/mol)]: counts / grain."""
        return self.counts / self.grain_J_per_mol

    @property
    def sum_of_states(self) -> np.ndarray:
        """Sum of states N(E_i): all states in grains 0..i (dimensionless)."""
        return np.cumsum(self.counts)

    @property
    def grain_averaged_sum_of_states(self) -> np.ndarray:
        """N(E) averaged over grain i: states in grains below i plus half of grain i.

        With states at the grain centres, this is the mean of the step function
        N(E) over [E_i - grain/2, E_i + grain/2]; sums over a Boltzmann factor
        built on it are accurate to second order in grain / kT.
        """
        return np.cumsum(self.counts) - 0.5 * self.counts

    def log_partition_function(self, temperature_K) -> np.ndarray:
        """ln Q(T) = ln sum_i counts_i exp(-E_i / RT), from the zero-point level (dimensionless)."""
        t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
        return _log_boltzmann_sum(self.counts, self.energies_J_per_mol, t)


def _log_boltzmann_sum(counts: np.ndarray, energies: np.ndarray, temperature_K: np.ndarray) -> np.ndarray:
    from scipy.special import logsumexp

    nonzero = counts > 0
    log_c = np.log(counts[nonzero])
    e = energies[nonzero]
    return np.array([logsumexp(log_c - e / (R * t)) for t in temperature_K])


def check_grain(grain_cm1: float, frequencies_cm1, *, refine: bool = True) -> float:
    """Return a grain [cm^-1] fine enough for ``frequencies_cm1``.

    Raises InputError for a non-positive grain or wavenumber. When the grain
    exceeds ``GRAIN_FRACTION_OF_LOWEST * min(frequencies_cm1)`` a warning is
    logged and, with ``refine=True``, the grain is reduced to that value.
    """
    grain = positive(grain_cm1, "grain_cm1")
    freqs = np.atleast_1d(np.asarray(frequencies_cm1, dtype=float))
    if freqs.size == 0:
        return grain
    freqs = positive_array(freqs, "frequencies_cm1", hint=MODE_HINT)
    limit = GRAIN_FRACTION_OF_LOWEST * float(freqs.min())
    if grain > limit * (1.0 + 1e-12):
        if refine:
            log.warning("grain %.4g cm-1 is coarser than 1/3 of the lowest wavenumber (%.4g cm-1); "
                        "refined to %.4g cm-1", grain, freqs.min(), limit)
            return limit
        log.warning("grain %.4g cm-1 is coarser than 1/3 of the lowest wavenumber (%.4g cm-1); "
                    "counts of the softest mode are coarse", grain, freqs.min())
    return grain


def add_oscillators(counts: np.ndarray, frequencies_cm1, grain_cm1: float) -> np.ndarray:
    """Beyer-Swinehart step: convolve harmonic oscillators into ``counts``.

    For each oscillator of r grains (r = round(nu / grain), at least 1) the
    recursion ``c[i] += c[i - r]`` for increasing i is applied; it is done
    here as a cumulative sum over the grid folded into rows of length r, so
    the cost is one pass over the grid per oscillator. Returns a new array.
    """
    grain = positive(grain_cm1, "grain_cm1")
    freqs = positive_array(frequencies_cm1, "frequencies_cm1", hint=MODE_HINT) if np.size(frequencies_cm1) else []
    c = np.array(counts, dtype=float)
    n = c.size
    for nu in freqs:
        r = max(1, int(round(nu / grain)))
        if r >= n:
            continue
        rows = -(-n // r)
        buf = np.zeros(rows * r)
        buf[:n] = c
        c = buf.reshape(rows, r).cumsum(axis=0).ravel()[:n]
    return c


def convolve_counts(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Discrete convolution of two per-grain counts, truncated to the length of ``a``.

    Direct (not FFT) convolution, so counts spanning many orders of magnitude keep their
    relative precision. Quadratic in the number of grains: :func:`count_states` does not use it
    (rotors are its starting array, levels shifted copies); it is kept as the independent check.
    """
    a = np.asarray(a, dtype=float)
    return np.convolve(a, np.asarray(b, dtype=float))[: a.size]


def add_shifted_copies(counts: np.ndarray, levels) -> np.ndarray:
    """``counts`` convolved with a few discrete levels, as a sum of shifted copies.

    ``levels`` are (grain index, degeneracy) pairs; the result, truncated to the length of
    ``counts``, is ``sum_l g_l counts[i - i_l]``: the direct convolution with the sparse array
    of the levels, at a cost of one pass over the grid per level instead of one per grain.
    """
    c = np.asarray(counts, dtype=float)
    out = np.zeros_like(c)
    for index, degeneracy in levels:
        i = int(index)
        if i < 0:
            raise InputError(f"level grain index must be >= 0, got {i}", field="levels")
        if i < c.size:
            out[i:] += float(degeneracy) * c[: c.size - i]
    return out


def _fft_convolve(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Convolution of two non-negative arrays of length n by real FFT, truncated to n (>= 0)."""
    n = a.size
    size = 1 << int(2 * n - 1).bit_length()
    out = np.fft.irfft(np.fft.rfft(a, size) * np.fft.rfft(b, size), size)[:n]
    return np.maximum(out, 0.0)


def _rotor_start(rotors: Sequence[Rotor], n: int, grain: float) -> np.ndarray:
    """Counts of all ``rotors`` together (length n): the starting array of the oscillator pass.

    Quantum rotors (a few discrete levels) enter as shifted copies (:func:`add_shifted_copies`);
    the first classical rotor's counts are the starting array itself, and each further classical
    rotor is convolved in by FFT. Classical rotor counts are smooth power laws in E (no zeros,
    a range of a few decades), so the FFT keeps their relative precision (its round-off is
    about 1e-15 of the largest count), unlike the oscillator counts that the Beyer-Swinehart
    pass adds afterwards.
    """
    start = None
    quantum = []
    for rotor in rotors:
        if not isinstance(rotor, Rotor):
            if not callable(getattr(rotor, "counts", None)):
                raise InputError(f"rotors must be Rotor objects or other degrees of freedom with counts(), got "
                                 f"{type(rotor).__name__}", field="rotors")
            quantum.append(rotor)  # discrete levels (a hindered rotor's): shifted copies
            continue
        if rotor.quantum:
            quantum.append(rotor)
            continue
        c = rotor.counts(n, grain)
        start = c if start is None else _fft_convolve(start, c)
    if start is None:
        start = np.zeros(n)
        start[0] = 1.0
    for rotor in quantum:
        c = rotor.counts(n, grain)
        nz = np.flatnonzero(c)
        start = add_shifted_copies(start, zip(nz, c[nz]))
    return start


def count_states(frequencies_cm1, max_energy_J_per_mol: float, *, grain_cm1: float | None = None,
                 grain_J_per_mol: float | None = None, rotors: Sequence[Rotor] | Iterable[Rotor] = (),
                 levels: Iterable[tuple[float, float]] = (), refine: bool = True) -> StateCounts:
    """Count states of harmonic oscillators plus free rotors up to ``max_energy_J_per_mol``.

    Parameters
    ----------
    frequencies_cm1:
        Harmonic wavenumbers [cm^-1], all positive (may be empty when rotors are given).
    max_energy_J_per_mol:
        Highest energy of the grid [J/mol] above the zero-point level.
    grain_cm1, grain_J_per_mol:
        Grain width, one of the two. Checked against the lowest wavenumber
        (see :func:`check_grain`).
    rotors:
        :class:`Rotor` objects (internal free rotors, K-rotor, 2-D external rotor). Their
        counts together are the starting array of the Beyer-Swinehart pass (see
        :func:`_rotor_start`), which is the same as convolving them in.
    levels:
        (energy [J/mol], degeneracy) of electronic levels, the ground level included; they
        enter as shifted copies of the starting array (energies rounded to the grain; levels
        above the grid are left out). Empty: a single non-degenerate level.
    refine:
        Refine a grain that is too coarse instead of only warning.
    """
    if (grain_cm1 is None) == (grain_J_per_mol is None):
        raise InputError("give exactly one of grain_cm1 and grain_J_per_mol", field="grain")
    if grain_cm1 is None:
        grain_cm1 = positive(grain_J_per_mol, "grain_J_per_mol") / CM1_J_PER_MOL
    freqs = np.atleast_1d(np.asarray(frequencies_cm1, dtype=float))
    rotors = tuple(rotors)
    if freqs.size == 0 and not rotors:
        raise InputError("nothing to count: no frequencies and no rotors", field="frequencies_cm1")
    grain_cm1 = check_grain(grain_cm1, freqs, refine=refine)
    e_max = positive(max_energy_J_per_mol, "max_energy_J_per_mol")
    grain = grain_cm1 * CM1_J_PER_MOL
    n = int(math.ceil(e_max / grain)) + 1
    counts = _rotor_start(rotors, n, grain)
    levels = [(int(round(float(e) / grain)), float(g)) for e, g in levels]
    if levels and levels != [(0, 1.0)]:
        counts = add_shifted_copies(counts, levels)
    if freqs.size:
        counts = add_oscillators(counts, freqs, grain_cm1)
    return StateCounts(grain, counts)


def whitten_rabinovitch(frequencies_cm1, energies_J_per_mol):
    """Whitten-Rabinovitch sum and density of harmonic-oscillator states.

    N(E) = (E + a E_z)^s / (s! prod h nu_i),
    rho(E) = (E + a E_z)^(s-1) (1 - beta dw/dE') / ((s-1)! prod h nu_i),
    with E_z the zero-point energy, E' = E / E_z, a = 1 - beta w(E'),
    beta = (s-1)/s * <nu^2>/<nu>^2, and w = 10^(-1.0506 E'^0.25) for E' >= 1,
    1/w = 5 E' + 2.73 E'^0.5 + 3.51 for 0.1 <= E' < 1
    (Whitten and Rabinovitch, J. Chem. Phys. 38, 2466 (1963); Robinson and
    Holbrook 1972, eq. 4.27-4.33). Stated accuracy: about 1 % for E' > 1.

    Returns ``(sum_of_states, density_per_J_per_mol)`` as arrays over
    ``energies_J_per_mol`` (energies from the zero-point level).
    """
    freqs = positive_array(frequencies_cm1, "frequencies_cm1", hint=MODE_HINT)
    e = np.asarray(energies_J_per_mol, dtype=float)
    s = freqs.size
    hnu = freqs * CM1_J_PER_MOL
    e_z = 0.5 * hnu.sum()
    beta = (s - 1.0) / s * np.mean(freqs**2) / np.mean(freqs) ** 2
    ep = np.maximum(e / e_z, 1e-12)
    high = ep >= 1.0
    w = np.where(high, 10.0 ** (-1.0506 * ep**0.25), 1.0 / (5.0 * ep + 2.73 * np.sqrt(ep) + 3.51))
    dw = np.where(high, w * math.log(10.0) * (-1.0506 * 0.25) * ep**-0.75,
                  -(w**2) * (5.0 + 1.365 / np.sqrt(ep)))
    a = 1.0 - beta * w
    x = e + a * e_z
    log_prod = np.sum(np.log(hnu))
    total = np.exp(s * np.log(x) - math.lgamma(s + 1) - log_prod)
    density = np.exp((s - 1) * np.log(x) - math.lgamma(s) - log_prod) * (1.0 - beta * dw)
    return total, density
