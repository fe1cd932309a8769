"""The capture (collision) limit of a bimolecular reaction, to check TST rate constants against.

A bimolecular rate constant cannot exceed the rate at which the two reactants meet. Two capture
models of the trade are used, both for neutral reactants:

* Lennard-Jones collisions, when both reactants carry Lennard-Jones parameters:
  k_cap = pi sigma_12^2 sqrt(8 k_B T / (pi mu)) Omega(2,2)*(k_B T / eps_12) with the usual
  combining rules (:func:`tstrate.physics.collisions.collision_rate_m3_s`; Neufeld, Janzen and
  Aziz 1972), which includes the attraction of the dispersion well;
* hard spheres otherwise: k_cap = pi d_12^2 sqrt(8 k_B T / (pi mu)) with d_12 = (d_1 + d_2) / 2 and
  each diameter twice the largest distance of a nucleus from the centre of mass plus that atom's
  van der Waals radius (Bondi 1964, through ASE's table); gas-kinetic theory (e.g. Steinfeld,
  Francisco and Hase, Chemical Kinetics and Dynamics, 2nd ed., ch. 4).

Both are common practice for a ceiling, not rate constants: strongly polar or ionic reactants can
be captured faster (dipole or ion-dipole capture), which this check does not model.

A TST rate constant above the ceiling means that the TST bottleneck is not the rate-limiting
one (typically a transition state below the reactants). The two bottlenecks in series give
k = (1/k_TST + 1/k_cap)^-1, the capped value reported beside the uncapped one (common practice
for a barrierless entrance followed by a tight transition state).

Units: m^3 s^-1 per molecule, K, Angstrom, u.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.geometry import centre_of_mass_frame
from tstrate.model import Species
from tstrate.physics import collisions as coll
from tstrate.units import AMU, K_B

LENNARD_JONES_MODEL = "Lennard-Jones collision rate (Neufeld, Janzen and Aziz 1972 collision integral)"
HARD_SPHERE_MODEL = "gas-kinetic hard spheres (diameters from the geometry and Bondi 1964 van der Waals radii)"


def hard_sphere_diameter_A(species: Species) -> float:
    """Twice the largest (distance from the centre of mass + van der Waals radius) of an atom [Angstrom]."""
    from ase.data import atomic_numbers, vdw_radii

    x = centre_of_mass_frame(species.positions_A, species.masses_amu)
    r = np.linalg.norm(x, axis=1)
    radii = np.array([vdw_radii[atomic_numbers[s]] for s in species.symbols], dtype=float)
    radii = np.where(np.isfinite(radii), radii, 2.0)  # an element without a tabulated radius: 2 Angstrom
    return float(2.0 * np.max(r + radii))


@dataclass(frozen=True)
class CaptureLimit:
    """The capture ceiling of one bimolecular channel against its TST rate constant (arrays over T).

    channel: channel name. model: the capture model used. temperature_K (T,) [K];
    k_tst_m3_per_s and k_capture_m3_per_s (T,) [m^3 s^-1]; k_series_m3_per_s (T,) [m^3 s^-1]:
    (1/k_TST + 1/k_cap)^-1; exceeded (T,): where k_TST > k_cap.
    """

    channel: str
    model: str
    temperature_K: np.ndarray
    k_tst_m3_per_s: np.ndarray
    k_capture_m3_per_s: np.ndarray
    k_series_m3_per_s: np.ndarray
    exceeded: np.ndarray

    @property
    def ratio(self) -> np.ndarray:
        """k_TST / k_cap (dimensionless)."""
        return self.k_tst_m3_per_s / self.k_capture_m3_per_s


def capture_rate_m3_s(first: Species, second: Species, temperature_K) -> tuple[np.ndarray, str]:
    """(k_cap(T) [m^3 s^-1], model name) of two neutral reactants (see the module docstring)."""
    t = temperatures_K(temperature_K, ndim=1)
    m1, m2 = float(np.sum(first.masses_amu)), float(np.sum(second.masses_amu))
    mu = m1 * m2 / (m1 + m2)
    if first.lennard_jones is not None and second.lennard_jones is not None:
        sigma, eps = coll.combine_lennard_jones(*first.lennard_jones, *second.lennard_jones)
        return np.asarray(coll.collision_rate_m3_s(t, sigma, eps, mu), dtype=float), LENNARD_JONES_MODEL
    d = 0.5 * (hard_sphere_diameter_A(first) + hard_sphere_diameter_A(second)) * 1e-10
    return math.pi * d**2 * np.sqrt(8.0 * K_B * t / (math.pi * mu * AMU)), HARD_SPHERE_MODEL


def capture_limit(channel: str, first: Species, second: Species, temperature_K, k_tst_m3_per_s) -> CaptureLimit:
    """Compare a bimolecular TST rate constant [m^3 s^-1] with the capture ceiling of its reactants."""
    t = temperatures_K(temperature_K, ndim=1)
    k = np.asarray(k_tst_m3_per_s, dtype=float)
    cap, model = capture_rate_m3_s(first, second, t)
    with np.errstate(divide="ignore", over="ignore"):
        series = 1.0 / (1.0 / k + 1.0 / cap)
    return CaptureLimit(channel, model, t, k, cap, series, k > cap)
