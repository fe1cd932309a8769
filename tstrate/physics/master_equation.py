"""Energy-grained master equation: one or more wells, collisions, reactions, phenomenological k(T, P).

The model
---------
All wells share one energy grid ``E_i = i * grain`` [J/mol], measured from one common reference
(usually the zero-point level of the lowest well). A well is its number of states per grain on
that grid (zero below its own zero-point level). Reactions are microcanonical rate constants
k(E) [s^-1] on the same grid:

* a **loss** from a well to products (a sink: the products are not followed back), or
* an **isomerisation** from one well to another; the reverse k(E) follows from microscopic
  reversibility, k_back(E) = k(E) rho_source(E) / rho_target(E). Any two wells may be joined, so
  well-skipping needs nothing special.

Any k(E) array will do: RRKM (:mod:`tstrate.physics.rrkm`), Eckart-corrected, or an
inverse-Laplace k(E) of a barrierless channel. For an association A + B -> AB*, give the
dissociation AB* -> A + B as a loss of the well (the way back to the reactants) and use its
k(E) for the chemical-activation distribution (:func:`chemical_activation_distribution`).

The equation for the populations n(E, t) of every well is dn/dt = M n with

    M = sum over wells of omega_w (P_w - I) - diag(k_loss) + (isomerisation terms),

omega_w = Z_LJ [M] the collision frequency [s^-1] of well w and P_w its collision matrix.

Collisions (:func:`collision_matrix`)
-------------------------------------
* Exponential-down: P(E <- E') for E < E' proportional to exp(-(E' - E) / a(E')), with a set so
  that the grained kernel's mean downward step is alpha = <Delta E>down [J/mol] exactly,
  a = -grain / ln(1 - grain / alpha) (the plain choice a = alpha adds grain/2 to the step). alpha
  may depend on T and on the starting energy E' (give one number or one per grain).
* Upward transitions from detailed balance, P(E' <- E) f(E) = P(E <- E') f(E'), f the
  Boltzmann distribution of the well; columns normalised from the top grain down so that each
  column holds probability one (Gilbert and Smith, *Theory of Unimolecular and Recombination
  Reactions*, Blackwell 1990, ch. 5). The matrix conserves molecules exactly: its diagonal is
  one minus the column's off-diagonal sum.
* Sparse low grains (remedy, documented): the downward kernel accepts into grain E in proportion
  to its share of a smoothed density, rho(E) / rho_smooth(E) (rho_smooth averaged over
  ``smoothing_grains``). Grains without a state receive nothing, and the upward sums out of
  sparse grains no longer exceed one. :func:`collision_matrix` returns the largest column sum
  before any clipping, so a caller can see whether it mattered.
* Strong collisions: P(E <- E') = f(E), as an option (``kernel="strong"``).

Solution
--------
* :func:`dense_eigen`: symmetrised with the equilibrium distribution, S = F^-1/2 M F^1/2, and
  solved by ``scipy.linalg.eigh``. In double precision it loses the chemically significant
  eigenvalue at low T and P (it sits many orders below the collision frequency).
* :func:`precise_eigen`: the chemically significant eigenvalues without cancellation. -M is an
  M-matrix whose column sums are the loss rates; its LU factors are built by Gaussian
  elimination with every diagonal recomputed as the sum of the column's off-diagonal magnitudes
  plus its loss (the Grassmann-Taksar-Heyman idea, Grassmann, Taksar and Heyman, Oper. Res. 33,
  1107 (1985); for rate matrices of reaction networks, Alfa, Xue and Ye, Math. Comp. 71, 217
  (2002)). Every step adds positive numbers, so (-M)^-1 b is accurate to rounding for b >= 0.
  The slowest N eigenpairs then come from subspace (inverse) iteration with that solver.
* :func:`rate_coefficients`: phenomenological rate coefficients from the N chemically
  significant eigenpairs (Bartis and Widom, J. Chem. Phys. 60, 3474 (1974); Miller and
  Klippenstein, J. Phys. Chem. A 110, 10528 (2006)): with right eigenvectors u_a = F^1/2 g_a,
  X[w, a] = sum over well w of u_a, Y[p, a] = sum_E k_p(E) u_a(E),
  K_wells = X diag(lambda) X^-1 (dx/dt = K x) and K_products = Y X^-1. The ratio of the
  slowest relaxation eigenvalue to the fastest chemical one is returned and warned about when it
  is below :data:`MIN_SEPARATION`.
* :func:`populations`: time-resolved populations of every grain and the products formed, for a
  given initial distribution (dense eigen-decomposition), and :func:`reaction_yields`, the
  fraction of an initial distribution that ends in each product channel.

API for callers (one well or many)
----------------------------------
>>> import numpy as np
>>> from tstrate.physics import master_equation as me
>>> grain = 100.0                                     # J/mol
>>> counts = np.arange(1, 301, dtype=float) ** 2      # states per grain of a model molecule
>>> k = np.where(np.arange(300) >= 200, 1e8, 0.0)     # k(E) [s^-1], threshold at grain 200
>>> well = me.Well("AB", counts, collision_frequency_per_s=1e9, delta_E_down_J_per_mol=2000.0)
>>> system = me.MasterEquation(grain, (well,), (me.Reaction("AB->P", "AB", None, k),))
>>> result = me.rate_coefficients(system, 300.0)
>>> float(result.product_per_s[0, 0]) > 0             # k(T, P) of AB -> P [s^-1]
True

``Well(name, counts, collision_frequency_per_s, delta_E_down_J_per_mol, kernel="exponential")``:
counts (n_grains,) on the common grid; collision frequency omega = Z_LJ [M] [s^-1];
<Delta E>down [J/mol] a number or an array (n_grains,) over the starting energy.
``Reaction(name, source, target, rate_per_s)``: target a well name or None (products);
rate_per_s (n_grains,) [s^-1] on the common grid, from the source well.
``MasterEquation(grain_J_per_mol, wells, reactions)``; every array has the same length.

Units: energies J/mol, temperatures K, rates and frequencies s^-1, times s.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from tstrate.errors import InputError
from tstrate.units import R

log = logging.getLogger(__name__)

#: smallest accepted ratio of the slowest relaxation eigenvalue to the fastest chemically
#: significant one (common practice: an order of magnitude)
MIN_SEPARATION = 10.0


# ---------------------------------------------------------------- model records
@dataclass(frozen=True)
class Well:
    """One well on the common energy grid.

    name; counts (n,) states per grain (dimensionless, zero below the well's zero-point level);
    collision_frequency_per_s: omega = Z_LJ [M] [s^-1]; delta_E_down_J_per_mol: alpha of the
    exponential-down model [J/mol], a number or one per starting grain (n,); kernel
    "exponential" or "strong"; smoothing_grains: width of the smoothed density of the sparse-grain
    remedy (0 automatic, 1 off); energies_J_per_mol (n,): the energy of each grain's states
    (state-weighted grain energies, e.g. from :func:`merge_grains`; None: the grid energies).
    """

    name: str
    counts: np.ndarray = field(repr=False)
    collision_frequency_per_s: float = 0.0
    delta_E_down_J_per_mol: float | np.ndarray = 0.0
    kernel: str = "exponential"
    smoothing_grains: int = 0
    energies_J_per_mol: np.ndarray | None = field(default=None, repr=False)

    def __post_init__(self):
        if self.energies_J_per_mol is not None:
            e = np.array(self.energies_J_per_mol, dtype=float)
            if e.shape != np.shape(self.counts) or np.any(~np.isfinite(e)):
                raise InputError(f"well {self.name!r}: one grain energy per grain", field="energies_J_per_mol")
            e.setflags(write=False)
            object.__setattr__(self, "energies_J_per_mol", e)
        c = np.array(self.counts, dtype=float)
        if c.ndim != 1 or np.any(~np.isfinite(c)) or np.any(c < 0) or not np.any(c > 0):
            raise InputError(f"well {self.name!r}: counts must be non-negative numbers, some positive",
                             field="counts")
        c.setflags(write=False)
        object.__setattr__(self, "counts", c)
        if not (math.isfinite(self.collision_frequency_per_s) and self.collision_frequency_per_s >= 0):
            raise InputError(f"well {self.name!r}: collision frequency must be >= 0 s^-1",
                             field="collision_frequency_per_s")
        if self.kernel not in ("exponential", "strong"):
            raise InputError(f"well {self.name!r}: unknown kernel {self.kernel!r}", field="kernel",
                             hint="use 'exponential' or 'strong'")
        a = np.asarray(self.delta_E_down_J_per_mol, dtype=float)
        if self.kernel == "exponential":
            if a.ndim > 1 or (a.ndim == 1 and a.size != c.size) or np.any(~np.isfinite(a)) or np.any(a <= 0):
                raise InputError(f"well {self.name!r}: <Delta E>down must be positive J/mol, one number or "
                                 "one per grain", field="delta_E_down_J_per_mol")

    @property
    def n_grains(self) -> int:
        return int(self.counts.size)

    def with_collisions(self, collision_frequency_per_s: float, delta_E_down_J_per_mol=None) -> "Well":
        """A copy at another collision frequency (and <Delta E>down)."""
        a = self.delta_E_down_J_per_mol if delta_E_down_J_per_mol is None else delta_E_down_J_per_mol
        return Well(self.name, self.counts, float(collision_frequency_per_s), a, self.kernel,
                    self.smoothing_grains, self.energies_J_per_mol)


@dataclass(frozen=True)
class Reaction:
    """A microcanonical reaction: k(E) [s^-1] (n,) from well ``source`` to well ``target`` (None:
    products, a sink). An isomerisation's reverse is made by detailed balance; do not add it."""

    name: str
    source: str
    target: str | None
    rate_per_s: np.ndarray = field(repr=False)

    def __post_init__(self):
        k = np.array(self.rate_per_s, dtype=float)
        if k.ndim != 1 or np.any(~np.isfinite(k)) or np.any(k < 0):
            raise InputError(f"reaction {self.name!r}: k(E) must be non-negative numbers in s^-1",
                             field="rate_per_s")
        k.setflags(write=False)
        object.__setattr__(self, "rate_per_s", k)


@dataclass(frozen=True)
class MasterEquation:
    """Wells and reactions on one grid of ``grain_J_per_mol`` [J/mol]."""

    grain_J_per_mol: float
    wells: tuple[Well, ...]
    reactions: tuple[Reaction, ...] = ()

    def __post_init__(self):
        object.__setattr__(self, "wells", tuple(self.wells))
        object.__setattr__(self, "reactions", tuple(self.reactions))
        if not (math.isfinite(self.grain_J_per_mol) and self.grain_J_per_mol > 0):
            raise InputError("grain must be positive J/mol", field="grain_J_per_mol")
        if not self.wells:
            raise InputError("a master equation needs at least one well", field="wells")
        n = self.wells[0].n_grains
        names = [w.name for w in self.wells]
        if len(set(names)) != len(names):
            raise InputError("well names must be unique", field="wells")
        for w in self.wells:
            if w.n_grains != n:
                raise InputError(f"well {w.name!r} has {w.n_grains} grains, expected {n}", field="counts")
        for r in self.reactions:
            if r.source not in names or (r.target is not None and r.target not in names):
                raise InputError(f"reaction {r.name!r} joins unknown wells", field="reactions",
                                 hint="wells: " + ", ".join(names))
            if r.target == r.source:
                raise InputError(f"reaction {r.name!r} joins a well to itself", field="reactions")
            if r.rate_per_s.size != n:
                raise InputError(f"reaction {r.name!r}: k(E) has {r.rate_per_s.size} grains, expected {n}",
                                 field="rate_per_s")

    @property
    def n_grains(self) -> int:
        return self.wells[0].n_grains

    @property
    def energies_J_per_mol(self) -> np.ndarray:
        return np.arange(self.n_grains) * self.grain_J_per_mol

    @property
    def losses(self) -> tuple[Reaction, ...]:
        return tuple(r for r in self.reactions if r.target is None)

    def well_index(self, name: str) -> int:
        return [w.name for w in self.wells].index(name)

    def with_collision_frequencies(self, frequencies_per_s: Sequence[float], delta_E_down=None) -> "MasterEquation":
        """The same model at other collision frequencies (one per well) and <Delta E>down."""
        de = [None] * len(self.wells) if delta_E_down is None else list(delta_E_down)
        wells = tuple(w.with_collisions(f, d) for w, f, d in zip(self.wells, frequencies_per_s, de))
        return MasterEquation(self.grain_J_per_mol, wells, self.reactions)


# ---------------------------------------------------------------- equilibrium and collisions
def boltzmann_weights(counts: np.ndarray, energies_J_per_mol: np.ndarray, temperature_K: float) -> np.ndarray:
    """ln of counts_i exp(-E_i/RT) (-inf where there is no state)."""
    with np.errstate(divide="ignore"):
        return np.log(counts) - energies_J_per_mol / (R * float(temperature_K))


def _smoothed(counts: np.ndarray, width: int) -> np.ndarray:
    if width <= 1:
        return counts
    kernel = np.ones(width) / width
    return np.convolve(counts, kernel, mode="same")


@dataclass(frozen=True)
class CollisionMatrix:
    """P[i, j] = probability that a collision takes a molecule from grain j to grain i (columns sum
    to one); populated grains only (``grains``, indices on the grid); f the Boltzmann distribution
    over them (sums to one); max_column_sum: the largest off-diagonal column sum (above one: the
    plain kernel could not be normalised there, and the diagonal is negative)."""

    grains: np.ndarray
    matrix: np.ndarray = field(repr=False)
    distribution: np.ndarray = field(repr=False)
    max_column_sum: float = 1.0


def collision_matrix(counts, grain_J_per_mol: float, temperature_K: float, delta_E_down_J_per_mol=None, *,
                     kernel: str = "exponential", smoothing_grains: int = 0,
                     energies_J_per_mol=None, lowest_column: int = 0) -> CollisionMatrix:
    """The collision matrix of one well (see the module docstring).

    counts (n,) states per grain; delta_E_down_J_per_mol alpha [J/mol], a number or (n,) over the
    starting grain; smoothing_grains: width of the smoothed density the downward kernel accepts by
    (0: automatic, the smallest odd width that leaves no empty grain among the populated range
    above the first state; 1: off); energies_J_per_mol (n,) the grain energies (None: i * grain);
    lowest_column: grid index below which columns are not normalised (their grains are lumped
    into a reservoir by the caller; the columns above do not depend on them).
    """
    c = np.asarray(counts, dtype=float)
    grains = np.flatnonzero(c > 0)
    e_all = (np.arange(c.size) * float(grain_J_per_mol) if energies_J_per_mol is None
             else np.asarray(energies_J_per_mol, dtype=float))
    e = e_all[grains]
    log_f = np.log(c[grains]) - e / (R * float(temperature_K))
    f = np.exp(log_f - log_f.max())
    f /= f.sum()
    m = grains.size
    if kernel == "strong":
        p = np.repeat(f[:, None], m, axis=1)
        return CollisionMatrix(grains, p, f, 1.0)
    alpha = np.broadcast_to(np.asarray(delta_E_down_J_per_mol, dtype=float), c.shape)[grains]
    # the grained kernel exp(-j grain / a), j = 1, 2, ... has the mean downward step
    # grain / (1 - exp(-grain / a)); choosing a = -grain / ln(1 - grain / alpha) makes it alpha
    # exactly (on an unbounded grid), so coarser grains do not raise the energy transfer by grain/2
    dg = float(grain_J_per_mol)
    if np.any(alpha <= dg):
        raise InputError(f"<Delta E>down ({alpha.min():.4g} J/mol) must exceed the grain ({dg:.4g} J/mol)",
                         field="delta_E_down_J_per_mol", hint="use a finer grain")
    alpha = -dg / np.log1p(-dg / alpha)
    width = int(smoothing_grains)
    if width == 0:
        gaps = np.diff(grains)
        width = int(2 * (gaps.max() // 2) + 1) if gaps.size else 1
    if width > 1:
        share = c / np.maximum(_smoothed(c, width), 1e-300)
        share = share[grains]
    else:
        share = np.ones(m)
    # shape of the downward kernel, column j (from): exp(-(E_j - E_i)/alpha_j) share_i, i < j
    diff = e[None, :] - e[:, None]                      # E_j - E_i
    with np.errstate(over="ignore"):
        shape = np.where(diff > 0, np.exp(-np.maximum(diff, 0) / alpha[None, :]), 0.0) * share[:, None]
    # ratio f_j / f_i for the upward probabilities P[j, i] = P[i, j] f_j / f_i (i < j)
    p = np.zeros((m, m))
    max_sum = 0.0
    j_stop = int(np.searchsorted(grains, int(lowest_column)))
    for j in range(m - 1, j_stop - 1, -1):
        up = float(p[j + 1:, j].sum())          # already set by the columns above (detailed balance)
        down_norm = float(shape[:j, j].sum())
        total_wanted = 1.0
        max_sum = max(max_sum, up)
        if down_norm > 0:
            scale = max(total_wanted - up, 0.0) / down_norm
            p[:j, j] = shape[:j, j] * scale
            # upward partners: P[j, i] = P[i, j] f_j / f_i
            p[j, :j] = p[:j, j] * f[j] / f[:j]
    np.fill_diagonal(p, 0.0)
    col = p.sum(axis=0)
    # a column over one (the plain kernel on sparse low grains, without the remedy) is left as it
    # is: the rate matrix still conserves molecules and obeys detailed balance, but such a grain
    # makes more than one transition per collision; max_column_sum reports it
    np.fill_diagonal(p, 1.0 - p.sum(axis=0))
    return CollisionMatrix(grains, p, f, max_sum)


# ---------------------------------------------------------------- the rate matrix
@dataclass(frozen=True)
class RateMatrix:
    """-M of a master equation at one temperature, split for the elimination that never subtracts.

    offdiag[i, j] >= 0: rate [s^-1] from state j to state i (collisions and isomerisations);
    leak[j] >= 0: loss rate [s^-1] of state j to products; so -M = diag(offdiag column sums +
    leak) - offdiag. States are the populated grains of every well, well by well:
    well_of[s], grain_of[s]; equilibrium (n_states,) is the Boltzmann distribution over all wells
    (sums to one); loss_rates (n_losses, n_states) k_p(E) of each loss reaction;
    max_column_sum per well (see :class:`CollisionMatrix`).
    """

    offdiag: np.ndarray = field(repr=False)
    leak: np.ndarray = field(repr=False)
    equilibrium: np.ndarray = field(repr=False)
    well_of: np.ndarray = field(repr=False)
    grain_of: np.ndarray = field(repr=False)
    loss_rates: np.ndarray = field(repr=False)
    max_column_sum: tuple[float, ...] = ()

    @property
    def n_states(self) -> int:
        return int(self.leak.size)

    def dense(self) -> np.ndarray:
        """M itself (n_states, n_states) [s^-1]."""
        m = self.offdiag.copy()
        np.fill_diagonal(m, -(self.offdiag.sum(axis=0) + self.leak))
        return m


def rate_matrix(system: MasterEquation, temperature_K: float) -> RateMatrix:
    """Assemble -M of ``system`` at ``temperature_K`` [K] (see :class:`RateMatrix`)."""
    t = float(temperature_K)
    if not (math.isfinite(t) and t > 0):
        raise InputError(f"temperature must be positive, got {temperature_K!r} K", field="temperature_K")
    g = system.grain_J_per_mol
    e_grid = system.energies_J_per_mol
    blocks, offsets, log_w, max_sums = [], [], [], []
    start = 0
    for w in system.wells:
        cm = collision_matrix(w.counts, g, t, w.delta_E_down_J_per_mol, kernel=w.kernel,
                              smoothing_grains=w.smoothing_grains, energies_J_per_mol=w.energies_J_per_mol)
        blocks.append(cm)
        offsets.append(start)
        start += cm.grains.size
        e_w = e_grid if w.energies_J_per_mol is None else w.energies_J_per_mol
        log_w.append(boltzmann_weights(w.counts[cm.grains], e_w[cm.grains], t))
        max_sums.append(cm.max_column_sum)
    n = start
    lw = np.concatenate(log_w)
    eq = np.exp(lw - lw.max())
    eq /= eq.sum()
    off = np.zeros((n, n))
    well_of = np.concatenate([np.full(b.grains.size, i) for i, b in enumerate(blocks)])
    grain_of = np.concatenate([b.grains for b in blocks])
    for w, b, o in zip(system.wells, blocks, offsets):
        sl = slice(o, o + b.grains.size)
        p = b.matrix.copy()
        np.fill_diagonal(p, 0.0)
        off[sl, sl] = w.collision_frequency_per_s * p
    leak = np.zeros(n)
    losses = []
    for r in system.reactions:
        i = system.well_index(r.source)
        gi = blocks[i].grains
        k = r.rate_per_s[gi]
        if r.target is None:
            leak[offsets[i]:offsets[i] + gi.size] += k
            row = np.zeros(n)
            row[offsets[i]:offsets[i] + gi.size] = k
            losses.append(row)
            continue
        j = system.well_index(r.target)
        gj = blocks[j].grains
        src = system.wells[i].counts
        dst = system.wells[j].counts
        # forward i -> j at each shared grain, reverse by microscopic reversibility
        common, ii, jj = np.intersect1d(gi, gj, return_indices=True)
        kf = k[ii]
        kb = kf * src[common] / dst[common]
        off[offsets[j] + jj, offsets[i] + ii] += kf
        off[offsets[i] + ii, offsets[j] + jj] += kb
        lost = np.setdiff1d(np.arange(gi.size), ii)
        if np.any(k[lost] > 0):
            raise InputError(f"reaction {r.name!r}: k(E) > 0 at grains where {r.target!r} has no state",
                             field="rate_per_s")
    loss_rates = np.array(losses) if losses else np.zeros((0, n))
    return RateMatrix(off, leak, eq, well_of, grain_of, loss_rates, tuple(max_sums))


# ---------------------------------------------------------------- elimination without subtraction
@dataclass(frozen=True)
class NonSubtractingLU:
    """LU factors of -M built so that no step subtracts (see the module docstring).

    lower[i, p] = -offdiag'[i, p] / d[p] (i > p), upper[p, j] = -offdiag'[p, j] (j > p), d the
    pivots [s^-1]; -M = L U with L = I + strictly-lower(lower), U = diag(d) + strictly-upper(upper).
    """

    lower: np.ndarray = field(repr=False)
    upper: np.ndarray = field(repr=False)
    pivots: np.ndarray = field(repr=False)

    def solve(self, b: np.ndarray) -> np.ndarray:
        """x = (-M)^-1 b for b of shape (n,) or (n, k). For b >= 0 every operation adds positive
        numbers (the factors' off-diagonals are <= 0), so x is accurate to rounding."""
        from scipy.linalg import solve_triangular

        y = solve_triangular(self.lower, b, lower=True, unit_diagonal=True, check_finite=False)
        return solve_triangular(self.upper, y, lower=False, check_finite=False)


#: below this many states the elimination runs pivot by pivot; above, in blocks (BLAS)
_BLOCK = 96


def _factor_unblocked(b: np.ndarray, s: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(lower magnitudes, upper magnitudes, pivots) of D - B, pivot by pivot (GTH)."""
    b = b.copy()
    s = s.copy()
    n = s.size
    d = np.empty(n)
    for p in range(n):
        col = b[p + 1:, p]
        d[p] = col.sum() + s[p]
        if not d[p] > 0:
            raise InputError("the master equation has a state with no way out (a closed set of states "
                             "without loss); give every well a loss or a path to one", field="reactions")
        if p == n - 1:
            break
        row = b[p, p + 1:]
        sub = b[p + 1:, p + 1:]
        sub += np.outer(col / d[p], row)
        s[p + 1:] += row * (s[p] / d[p])
        np.fill_diagonal(sub, 0.0)
    return np.tril(b, -1) / d[None, :], np.triu(b, 1), d


def _factor(b: np.ndarray, s: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Recursive blocked form of :func:`_factor_unblocked`. With A = [A11 A12; A21 A22] = D - B:
    A11 is factored with its flows into the second block counted as loss; then
    |U12| = L11^-1 B12, |L21| = B21 U11^-1, B22 += |L21| |U12| and s2 += (s1 U11^-1) |U12|: every
    product and sum is of non-negative numbers."""
    from scipy.linalg import solve_triangular

    n = s.size
    if n <= _BLOCK:
        return _factor_unblocked(b, s)
    k = n // 2
    b11, b12, b21, b22 = b[:k, :k], b[:k, k:], b[k:, :k], b[k:, k:]
    l11, u11, d1 = _factor(b11, s[:k] + b21.sum(axis=0))
    lo = np.eye(k) - l11
    up = np.diag(d1) - u11
    u12 = solve_triangular(lo, b12, lower=True, unit_diagonal=True, check_finite=False)
    l21 = solve_triangular(up, b21.T, trans="T", lower=False, check_finite=False).T
    s1u = solve_triangular(up, s[:k], trans="T", lower=False, check_finite=False)
    schur = b22 + l21 @ u12
    np.fill_diagonal(schur, 0.0)
    l22, u22, d2 = _factor(schur, s[k:] + s1u @ u12)
    lower = np.zeros((n, n))
    upper = np.zeros((n, n))
    lower[:k, :k], lower[k:, :k], lower[k:, k:] = l11, l21, l22
    upper[:k, :k], upper[:k, k:], upper[k:, k:] = u11, u12, u22
    return lower, upper, np.concatenate([d1, d2])


def factor_without_subtraction(rm: RateMatrix) -> NonSubtractingLU:
    """Gaussian elimination of -M in the Grassmann-Taksar-Heyman form (Alfa, Xue and Ye 2002):
    off-diagonal magnitudes and losses are updated by additions only, and each pivot is the sum of
    its column's remaining off-diagonal magnitudes plus its (updated) loss. Blocked (recursive
    halves, BLAS products of non-negative matrices) above a few dozen states."""
    lower_mag, upper_mag, d = _factor(rm.offdiag, rm.leak)
    lower = -lower_mag
    np.fill_diagonal(lower, 1.0)
    upper = -upper_mag
    np.fill_diagonal(upper, d)
    return NonSubtractingLU(lower, upper, d)


# ---------------------------------------------------------------- eigenpairs
@dataclass(frozen=True)
class EigenPairs:
    """Eigenpairs of -M (rates mu_a = -lambda_a >= 0 [s^-1], ascending) with eigenvectors g (n, k)
    of the symmetrised matrix F^-1/2 (-M) F^1/2 (orthonormal columns); ``relaxation_per_s``: the
    slowest eigenvalue beyond the ones returned (NaN when unknown)."""

    rates_per_s: np.ndarray
    vectors: np.ndarray = field(repr=False)
    relaxation_per_s: float = math.nan


def _symmetrised(rm: RateMatrix) -> np.ndarray:
    a = -rm.dense()
    r = np.sqrt(rm.equilibrium)
    s = a * (r[None, :] / r[:, None])
    return 0.5 * (s + s.T)


def dense_eigen(rm: RateMatrix) -> EigenPairs:
    """All eigenpairs of the symmetrised -M by ``scipy.linalg.eigh`` (double precision; see
    :func:`precise_eigen` for low T and P)."""
    from scipy.linalg import eigh

    w, v = eigh(_symmetrised(rm))
    return EigenPairs(w, v, math.nan)


def precise_eigen(rm: RateMatrix, n_chemical: int, *, tol: float = 1e-13, max_iter: int = 500,
                  lu: NonSubtractingLU | None = None) -> EigenPairs:
    """The ``n_chemical`` slowest eigenpairs of -M by subspace inverse iteration with the
    non-subtracting LU (:func:`factor_without_subtraction`), Rayleigh-Ritz in the symmetrised
    frame; two guard vectors estimate the slowest relaxation eigenvalue.

    With one chemical eigenvalue the iterates stay positive, so the eigenvalue is accurate to
    rounding whatever its distance below the collision frequency.
    """
    lu = lu or factor_without_subtraction(rm)
    n = rm.n_states
    k = min(n, n_chemical + 2)
    r = np.sqrt(rm.equilibrium)
    # start: the equilibrium distribution of each well, and energy-weighted guards
    q = np.zeros((n, k))
    for a in range(k):
        if a < n_chemical:
            q[:, a] = np.where(rm.well_of == a % max(1, rm.well_of.max() + 1), r, 0.0)
        else:
            q[:, a] = r * (1.0 + rm.grain_of / max(1, rm.grain_of.max())) ** (a + 1)
    q, _ = np.linalg.qr(q)
    prev = None
    mu = None
    for _ in range(max_iter):
        if k == 1:
            v = q[:, 0] * r
            x = lu.solve(np.abs(v))           # positive: the Perron vector of (-M)^-1
            w = (x / r)[:, None]
        else:
            x = lu.solve(q * r[:, None])
            w = x / r[:, None]
        h = q.T @ w
        h = 0.5 * (h + h.T)
        theta, c = np.linalg.eigh(h)
        order = np.argsort(theta)[::-1]      # largest 1/mu first
        theta, c = theta[order], c[:, order]
        mu = 1.0 / theta
        y = w @ c
        q, _ = np.linalg.qr(y)
        # keep the sign of the first vector positive
        q = q * np.sign(q.sum(axis=0) + 1e-300)[None, :]
        if prev is not None and np.all(np.abs(mu[:n_chemical] - prev[:n_chemical])
                                       <= tol * np.abs(mu[:n_chemical])):
            break
        prev = mu
    else:
        log.warning("inverse iteration did not converge to %g in %d steps", tol, max_iter)
    # the slowest pair again by inverse iteration on positive vectors alone (Perron-Frobenius:
    # (-M)^-1 >= 0 and its dominant eigenvector is positive), so that no solve sees a sign change
    x = np.abs(q[:, 0]) * r
    mu0 = float(mu[0])
    for _ in range(max_iter):
        x_new = lu.solve(x)
        est = float(x.sum() / x_new.sum())
        x = x_new / x_new.sum()
        if abs(est - mu0) <= tol * est:
            mu0 = est
            break
        mu0 = est
    g0 = x / r
    g0 /= np.linalg.norm(g0)
    mu = mu.copy()
    mu[0] = mu0
    q = q.copy()
    q[:, 0] = g0
    if n_chemical > 1:        # re-orthogonalise the other chemical vectors against the refined first
        q[:, 1:n_chemical] -= np.outer(g0, g0 @ q[:, 1:n_chemical])
        q[:, 1:n_chemical], _ = np.linalg.qr(q[:, 1:n_chemical])
    relax = float(mu[n_chemical]) if mu.size > n_chemical else math.nan
    if not relax > mu[n_chemical - 1]:      # the guard vectors did not settle: unknown
        relax = math.nan
    return EigenPairs(mu[:n_chemical], q[:, :n_chemical], relax)


# ---------------------------------------------------------------- phenomenological rate coefficients
@dataclass(frozen=True)
class RateCoefficients:
    """Phenomenological rate coefficients at one (T, [M]) (Bartis and Widom 1974; Miller and
    Klippenstein 2006).

    wells (names, n_w); products (loss reaction names, n_p);
    well_per_s (n_w, n_w): K with dx/dt = K x, x the well populations; K[i, j] (i != j) is the
    rate coefficient j -> i [s^-1], -K[j, j] the total loss of j to other wells and products;
    product_per_s (n_p, n_w): rate coefficient of well j to product channel p [s^-1];
    eigenvalues_per_s (n_w): the chemically significant -lambda [s^-1];
    relaxation_per_s: the slowest relaxation -lambda [s^-1]; separation = relaxation / fastest
    chemical (warned below :data:`MIN_SEPARATION`); warnings.
    """

    wells: tuple[str, ...]
    products: tuple[str, ...]
    well_per_s: np.ndarray
    product_per_s: np.ndarray
    eigenvalues_per_s: np.ndarray
    relaxation_per_s: float
    separation: float
    warnings: tuple[str, ...] = ()


def coefficients_from_eigen(system: MasterEquation, rm: RateMatrix, eig: EigenPairs) -> RateCoefficients:
    """Rate coefficients from the chemically significant eigenpairs (see :class:`RateCoefficients`)."""
    nw = len(system.wells)
    mu = np.asarray(eig.rates_per_s[:nw])
    u = eig.vectors[:, :nw] * np.sqrt(rm.equilibrium)[:, None]        # right eigenvectors of M
    x = np.zeros((nw, nw))
    for i in range(nw):
        x[i] = u[rm.well_of == i].sum(axis=0)
    y = rm.loss_rates @ u
    xinv = np.linalg.inv(x)
    k_wells = x @ np.diag(-mu) @ xinv
    k_prod = y @ xinv
    relax = float(eig.relaxation_per_s)
    sep = relax / float(mu.max()) if mu.size and mu.max() > 0 and math.isfinite(relax) else math.inf
    warnings = []
    if sep < MIN_SEPARATION:
        warnings.append(f"the chemically significant eigenvalues are not separated from the relaxation ones "
                        f"(slowest relaxation / fastest chemical = {sep:.3g} < {MIN_SEPARATION:g}); the "
                        "phenomenological rate coefficients are not well defined here")
    return RateCoefficients(tuple(w.name for w in system.wells), tuple(r.name for r in system.losses),
                            k_wells, k_prod, mu, relax, sep, tuple(warnings))


def rate_coefficients(system: MasterEquation, temperature_K: float, *, method: str = "precise") -> RateCoefficients:
    """Phenomenological rate coefficients of ``system`` at ``temperature_K`` [K]; ``method``
    "precise" (:func:`precise_eigen`) or "dense" (:func:`dense_eigen`)."""
    rm = rate_matrix(system, temperature_K)
    nw = len(system.wells)
    if method == "precise":
        eig = precise_eigen(rm, nw)
    elif method == "dense":
        full = dense_eigen(rm)
        relax = float(full.rates_per_s[nw]) if full.rates_per_s.size > nw else math.nan
        eig = EigenPairs(full.rates_per_s[:nw], full.vectors[:, :nw], relax)
    else:
        raise InputError(f"unknown method {method!r}", field="method", hint="use 'precise' or 'dense'")
    return coefficients_from_eigen(system, rm, eig)


# ---------------------------------------------------------------- time evolution and yields
@dataclass(frozen=True)
class Populations:
    """n(t) of every state (n_times, n_states) and the products formed (n_times, n_losses), for an
    initial distribution summing to one; times_s (n_times) [s]; well_populations (n_times, n_w)."""

    times_s: np.ndarray
    states: np.ndarray = field(repr=False)
    products: np.ndarray = field(repr=False)
    well_populations: np.ndarray = field(repr=False)


def initial_vector(system: MasterEquation, rm: RateMatrix, well: str, distribution) -> np.ndarray:
    """A state vector from a distribution over the grid (n_grains,) of one well (normalised)."""
    i = system.well_index(well)
    d = np.asarray(distribution, dtype=float)
    if d.shape != (system.n_grains,) or np.any(d < 0) or not d.sum() > 0:
        raise InputError("initial distribution must be non-negative, one value per grain", field="distribution")
    v = np.zeros(rm.n_states)
    sel = rm.well_of == i
    v[sel] = d[rm.grain_of[sel]]
    return v / v.sum()


def populations(rm: RateMatrix, initial, times_s) -> Populations:
    """Time-resolved populations from the dense eigen-decomposition: n(t) = F^1/2 G e^{-mu t} G^T
    F^-1/2 n0, and the products P_p(t) = sum_a Y_pa c_a (1 - e^{-mu_a t}) / mu_a."""
    eig = dense_eigen(rm)
    r = np.sqrt(rm.equilibrium)
    g, mu = eig.vectors, eig.rates_per_s
    c = g.T @ (np.asarray(initial, dtype=float) / r)
    t = np.atleast_1d(np.asarray(times_s, dtype=float))
    ex = np.exp(-np.outer(t, mu))
    states = (ex * c[None, :]) @ (g.T * r[None, :])
    y = rm.loss_rates @ (g * r[:, None])
    with np.errstate(divide="ignore", invalid="ignore"):
        growth = np.where(mu[None, :] > 0, -np.expm1(-np.outer(t, mu)) / mu[None, :], t[:, None])
    products = (growth * c[None, :]) @ y.T
    nw = int(rm.well_of.max()) + 1
    wells = np.stack([states[:, rm.well_of == i].sum(axis=1) for i in range(nw)], axis=1)
    return Populations(t, states, products, wells)


def reaction_yields(rm: RateMatrix, initial, lu: NonSubtractingLU | None = None) -> np.ndarray:
    """Fraction of an initial distribution that ends in each loss channel, k_p^T (-M)^-1 n0
    (n_losses,), by the non-subtracting solver (every molecule ends in some product)."""
    lu = lu or factor_without_subtraction(rm)
    return rm.loss_rates @ lu.solve(np.asarray(initial, dtype=float))


def prompt_yields(system: MasterEquation, rm: RateMatrix, initial, eig: EigenPairs | None = None,
                  lu: NonSubtractingLU | None = None) -> tuple[np.ndarray, np.ndarray]:
    """(prompt yield per loss channel (n_losses,), stabilised fraction per well (n_w,)) of an
    initial distribution: what reacts while the distribution relaxes, and what is left in each
    well's chemically significant modes once it has (Bartis-Widom split of the solution)."""
    lu = lu or factor_without_subtraction(rm)
    nw = len(system.wells)
    eig = eig or precise_eigen(rm, nw, lu=lu)
    r = np.sqrt(rm.equilibrium)
    n0 = np.asarray(initial, dtype=float)
    c = eig.vectors.T @ (n0 / r)                       # amplitudes of the chemical modes
    u = eig.vectors * r[:, None]
    total = reaction_yields(rm, n0, lu)
    chem = (rm.loss_rates @ u) @ (c / eig.rates_per_s)
    stabilised = np.array([u[rm.well_of == i].sum(axis=0) @ c for i in range(nw)])
    return np.maximum(total - chem, 0.0), stabilised


def chemical_activation_distribution(counts, rate_per_s, grain_J_per_mol: float, temperature_K: float) -> np.ndarray:
    """Energy distribution of adducts formed from reactants through a channel whose dissociation
    k(E) is ``rate_per_s``: proportional to k(E) rho(E) exp(-E/RT) (detailed balance of the
    association with that dissociation), normalised (n_grains,)."""
    c = np.asarray(counts, dtype=float)
    k = np.asarray(rate_per_s, dtype=float)
    lw = boltzmann_weights(c * k, np.arange(c.size) * grain_J_per_mol, temperature_K)
    if not np.any(np.isfinite(lw)):
        raise InputError("the entrance channel has k(E) = 0 everywhere", field="rate_per_s")
    w = np.exp(lw - lw[np.isfinite(lw)].max())
    return w / w.sum()


# ---------------------------------------------------------------- one well: falloff on a grid
def merge_grains(counts, rate_per_s, grain_J_per_mol: float, factor: int, temperature_K: float,
                 n_grains: int | None = None, boundary: int = 0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Merge ``factor`` fine grains into one: (counts (m,), grain energies (m,) [J/mol], k (m,) [s^-1]).

    The merged grain's energy is E = -RT ln(sum c e^{-E/RT} / sum c) and its k the Boltzmann
    average of the fine k(E), so the thermal distribution and the high-pressure rate sum_E f k of the
    fine grid are kept exactly at ``temperature_K`` (state-weighted grain energies; a state-centred
    grid would shift the ground state and bias k_inf by 1-2.5 % at 200 K). A merged grain starts at
    the fine grain ``boundary`` (give the barrier's, so that no merged grain straddles the
    threshold); ``n_grains`` cuts the fine grid first (the energy ceiling).
    """
    c = np.asarray(counts, dtype=float)
    k = np.asarray(rate_per_s, dtype=float)
    n = c.size if n_grains is None else min(int(n_grains), c.size)
    c, k = c[:n], k[:n]
    e = np.arange(n) * float(grain_J_per_mol)
    r = max(1, int(factor))
    shift = (r - int(boundary) % r) % r
    label = (np.arange(n) + shift) // r
    label -= label[0]
    m = int(label[-1]) + 1
    starts = np.searchsorted(label, np.arange(m))
    rt = R * float(temperature_K)
    e_ref = e[starts][label]
    w = c * np.exp(-(e - e_ref) / rt)                      # relative to the merged grain's bottom
    ws = np.bincount(label, w, m)
    cs = np.bincount(label, c, m)
    wk = np.bincount(label, w * k, m)
    with np.errstate(divide="ignore", invalid="ignore"):
        energies = np.where(cs > 0, e[starts] - rt * np.log(ws / np.where(cs > 0, cs, 1.0)), e[starts])
        k_m = np.where(ws > 0, wk / np.where(ws > 0, ws, 1.0), 0.0)
    return cs, energies, k_m


@dataclass(frozen=True)
class FalloffME:
    """k(T, [M]) of one well reacting to products, from its master equation.

    rate_per_s (n_T, n_M) [s^-1]; high_pressure_per_s (n_T) [s^-1] = sum_E f k; low_pressure_m3_s
    (n_T) [m^3 s^-1]: -lambda / [M] at omega = :data:`LOW_PRESSURE_OMEGA_FRACTION` k(E0);
    separation (n_T, n_M): slowest relaxation / chemical eigenvalue; grain_J_per_mol and
    top_J_per_mol: the (finest) merged grain and the energy ceiling used; n_grains: states solved at
    the last temperature.
    """

    rate_per_s: np.ndarray = field(repr=False)
    high_pressure_per_s: np.ndarray = field(repr=False)
    low_pressure_m3_s: np.ndarray = field(repr=False)
    separation: np.ndarray = field(repr=False)
    grain_J_per_mol: float
    top_J_per_mol: float
    n_grains: int


#: the low-pressure limit is taken at this fraction of k(E) at the barrier's grain as collision frequency
LOW_PRESSURE_OMEGA_FRACTION = 1e-6


def _reservoir_system(p: np.ndarray, leak: np.ndarray, f: np.ndarray, cut: int):
    """(off-diagonal probabilities, loss, distribution) with the states below ``cut`` lumped into one
    reservoir state (index 0) held in internal Boltzmann equilibrium (the reservoir-state
    approximation, Green and Bhatti, Phys. Chem. Chem. Phys. 9, 4275 (2007)). Transfer into the
    reservoir is the collision probability of reaching any grain below the cut; out of it, the
    same by detailed balance; its loss the thermal average of k below the cut."""
    if cut <= 0:
        return p, leak, f
    f_r = float(f[:cut].sum())
    above = slice(cut, None)
    to_r = p[:cut, above].sum(axis=0)
    n = p.shape[0] - cut + 1
    q = np.zeros((n, n))
    q[1:, 1:] = p[above, above]
    q[0, 1:] = to_r
    q[1:, 0] = to_r * f[above] / f_r
    lk = np.concatenate([[float(f[:cut] @ leak[:cut]) / f_r], leak[above]])
    return q, lk, np.concatenate([[f_r], f[above]])


def _single_well_rate(p_off: np.ndarray, leak: np.ndarray, f: np.ndarray, omega: float) -> tuple[float, float]:
    """(-lambda_1, slowest relaxation estimate) of one well at collision frequency omega."""
    n = leak.size
    rm = RateMatrix(omega * p_off, leak, f, np.zeros(n, dtype=int), np.arange(n), leak[None, :], ())
    eig = precise_eigen(rm, 1)
    return float(eig.rates_per_s[0]), float(eig.relaxation_per_s)


def single_well_falloff(counts, rate_per_s, grain_J_per_mol: float, barrier_index: int, temperature_K,
                        number_density_m3, collision_rate_m3_s, delta_E_down_J_per_mol=None, *,
                        merge: int = 1, top_J_per_mol: float | None = None,
                        reservoir_J_per_mol: float | None = None,
                        low_pressure_number_density_m3=None) -> FalloffME:
    """k(T, [M]) [s^-1] of a well with one loss k(E) (``rate_per_s`` on the fine grid of
    ``counts``), by the master equation with the non-subtracting solver.

    temperature_K (n_T,); number_density_m3 (n_T, n_M) [m^-3]; collision_rate_m3_s Z_LJ (n_T,)
    [m^3 s^-1]; delta_E_down_J_per_mol (n_T,) [J/mol] (None: strong collisions);
    merge: fine grains per master-equation grain (:func:`merge_grains`), one number or one per
    temperature; top_J_per_mol: the energy
    ceiling (None: the whole grid); reservoir_J_per_mol: grains below this energy form one
    reservoir state in thermal equilibrium (:func:`_reservoir_system`; None: every grain is
    solved); low_pressure_number_density_m3 (n_T,): where k0 = k / [M] is taken (None: at a
    collision frequency :data:`LOW_PRESSURE_OMEGA_FRACTION` k(E0)).
    """
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    m = np.asarray(number_density_m3, dtype=float)
    z = np.broadcast_to(np.asarray(collision_rate_m3_s, dtype=float), t.shape)
    strong = delta_E_down_J_per_mol is None
    alpha = None if strong else np.broadcast_to(np.asarray(delta_E_down_J_per_mol, dtype=float), t.shape)
    n_fine = np.asarray(counts).size
    n_cut = n_fine if top_J_per_mol is None else min(n_fine, int(top_J_per_mol / grain_J_per_mol) + 1)
    out = np.zeros(m.shape)
    sep = np.zeros(m.shape)
    k_inf = np.zeros(t.size)
    k0 = np.zeros(t.size)
    n_used = 0
    merges = np.broadcast_to(np.asarray(merge, dtype=int), t.shape)
    for i, ti in enumerate(t):
        c, e, k = merge_grains(counts, rate_per_s, grain_J_per_mol, int(merges[i]), ti, n_cut, barrier_index)
        cut_grid = 0 if reservoir_J_per_mol is None else int(np.searchsorted(e, reservoir_J_per_mol))
        cm = collision_matrix(c, grain_J_per_mol * int(merges[i]), ti, None if strong else alpha[i],
                              kernel="strong" if strong else "exponential", energies_J_per_mol=e,
                              lowest_column=cut_grid)
        p = cm.matrix.copy()
        np.fill_diagonal(p, 0.0)
        leak = k[cm.grains]
        f = cm.distribution
        k_inf[i] = float(f @ leak)
        p, leak, f = _reservoir_system(p, leak, f, int(np.searchsorted(cm.grains, cut_grid)))
        n_used = leak.size
        for j, mj in enumerate(m[i]):
            out[i, j], relax = _single_well_rate(p, leak, f, z[i] * mj)
            sep[i, j] = relax / out[i, j] if out[i, j] > 0 else math.nan
        kb = float(k[min(int(np.searchsorted(e, barrier_index * grain_J_per_mol - 1e-9)), k.size - 1)])
        if low_pressure_number_density_m3 is not None:
            omega0 = float(z[i] * np.broadcast_to(low_pressure_number_density_m3, t.shape)[i])
        else:
            omega0 = LOW_PRESSURE_OMEGA_FRACTION * kb if kb > 0 else 1e-6
        k0[i] = _single_well_rate(p, leak, f, omega0)[0] / (omega0 / z[i])
    return FalloffME(out, k_inf, k0, sep, grain_J_per_mol * float(merges.min()), (n_cut - 1) * grain_J_per_mol,
                     n_used)


# ---------------------------------------------------------------- energised molecules
@dataclass(frozen=True)
class EnergisedYield:
    """Fate of energised molecules of one well at one temperature, per collision frequency.

    reacted (n_omega,): fraction that reacts (through k(E), tunnelling below E0 included) before
    collisions take it below ``stabilised_below_J_per_mol``; stabilised (n_omega,) = 1 - reacted,
    computed separately (both by the non-subtracting solver, so small fractions keep their digits);
    initial (n_grains,): the initial distribution on the (merged) grid; with ``keep_matrix``, matrix:
    the rate matrix above the stabilisation energy at the last collision frequency (losses
    "reacted" and "stabilised") and start: the initial vector on its states (fractions of all
    molecules).
    """

    reacted: np.ndarray
    stabilised: np.ndarray
    stabilised_below_J_per_mol: float
    initial: np.ndarray = field(repr=False)
    matrix: "RateMatrix | None" = field(repr=False, default=None)
    start: np.ndarray | None = field(repr=False, default=None)


def energised_yield(counts, rate_per_s, grain_J_per_mol: float, temperature_K: float, excitation_J_per_mol: float,
                    collision_frequencies_per_s, delta_E_down_J_per_mol=None, *, stabilised_below_J_per_mol: float,
                    merge: int = 1, top_J_per_mol: float | None = None, boundary: int = 0,
                    keep_matrix: bool = False) -> EnergisedYield:
    """Fraction of molecules energised by ``excitation_J_per_mol`` [J/mol] on top of their thermal
    distribution at ``temperature_K`` that react before collisions stabilise them.

    The master equation of the well runs on the grains above ``stabilised_below_J_per_mol``
    [J/mol] (well below the barrier: grains there are counted as stabilised, an absorbing
    boundary; molecules that start below it count as stabilised); the initial distribution is the
    thermal one shifted up by the excitation. k(E) below
    the barrier (e.g. Eckart-corrected) takes part, so tunnelling of molecules energised below the
    barrier is counted. With the strong-collider kernel and a molecule excited far above the
    thermal range this is Stern-Volmer, k / (k + omega). ``collision_frequencies_per_s`` omega =
    Z [M] (n_omega,); <Delta E>down [J/mol] (None: strong collider); ``merge``, ``top_J_per_mol``
    and ``boundary`` as in :func:`merge_grains`.
    """
    c_f = np.asarray(counts, dtype=float)
    n_fine = c_f.size
    n_cut = n_fine if top_J_per_mol is None else min(n_fine, int(top_J_per_mol / grain_J_per_mol) + 1)
    # the initial distribution on the fine grid: thermal, shifted up by the excitation
    lw = boltzmann_weights(c_f, np.arange(n_fine) * grain_J_per_mol, temperature_K)
    f_fine = np.where(np.isfinite(lw), np.exp(lw - lw[np.isfinite(lw)].max()), 0.0)
    shift = int(round(float(excitation_J_per_mol) / grain_J_per_mol))
    n0_fine = np.zeros(n_fine)
    if shift < n_fine:
        n0_fine[shift:] = f_fine[:n_fine - shift]
    n0_fine[:n_cut] *= c_f[:n_cut] > 0         # onto populated grains only
    c, e, k = merge_grains(c_f, rate_per_s, grain_J_per_mol, merge, temperature_K, n_cut, boundary)
    r = max(1, int(merge))
    sh = (r - int(boundary) % r) % r
    label = (np.arange(n_cut) + sh) // r
    label -= label[0]
    n0 = np.bincount(label, n0_fine[:n_cut], c.size)
    if not n0.sum() > 0:
        raise InputError("the energised distribution lies above the energy grid", field="excitation_J_per_mol",
                         hint="extend the grid (energy_above_barrier_cm1)")
    strong = delta_E_down_J_per_mol is None
    cm = collision_matrix(c, grain_J_per_mol * r, temperature_K, delta_E_down_J_per_mol,
                          kernel="strong" if strong else "exponential", energies_J_per_mol=e,
                          lowest_column=int(np.searchsorted(e, stabilised_below_J_per_mol)))
    p = cm.matrix.copy()
    np.fill_diagonal(p, 0.0)
    cut = int(np.searchsorted(e[cm.grains], stabilised_below_J_per_mol))
    above = slice(cut, None)
    p_above = p[above, above]
    to_stable = p[:cut, above].sum(axis=0)
    k_above = k[cm.grains][above]
    start = n0[cm.grains][above] / n0.sum()      # molecules starting below the cut are stabilised at once
    below_share = 1.0 - float(start.sum())
    reacted, stabilised = [], []
    for om in np.atleast_1d(np.asarray(collision_frequencies_per_s, dtype=float)):
        leak = k_above + om * to_stable
        n = leak.size
        rm = RateMatrix(om * p_above, leak, cm.distribution[above] / cm.distribution[above].sum(),
                        np.zeros(n, dtype=int), np.arange(n), np.vstack([k_above, om * to_stable]), ())
        y = reaction_yields(rm, start) if start.sum() > 0 else np.zeros(2)
        reacted.append(y[0])
        stabilised.append(y[1] + below_share)
    return EnergisedYield(np.array(reacted), np.array(stabilised), float(stabilised_below_J_per_mol), n0,
                          rm if keep_matrix else None, start if keep_matrix else None)
