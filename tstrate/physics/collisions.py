"""Lennard-Jones collision rates and collision efficiencies.

Collision rate constant per molecule, per unit bath-gas number density:

    Z_LJ = pi sigma^2 sqrt(8 k T / (pi mu)) Omega(2,2)*(T*)   [m^3 s^-1],

T* = k T / eps, with the combining rules sigma = (sigma_1 + sigma_2)/2 and
eps = sqrt(eps_1 eps_2) (Troe, J. Chem. Phys. 66, 4758 (1977);
Hirschfelder, Curtiss and Bird, *Molecular Theory of Gases and Liquids*,
Wiley 1954). The collision frequency is omega = Z_LJ [M] [s^-1].

Collision efficiency beta_c from the average energy transferred per collision
by Troe's weak-collision relation (J. Chem. Phys. 66, 4745 (1977)):

    beta_c / (1 - beta_c^(1/2)) = -<dE> / (F_E k T),

with <dE> the average energy transferred in all (up and down) collisions,
related to the average downward step by -<dE> = <dE>_down^2 / (<dE>_down + F_E k T).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.units import AMU, K_B, R

# ---------------------------------------------------------------- parameters
_GRI = ("GRI-Mech 3.0 transport data (Smith et al., 1999), as shipped in Cantera's gri30.yaml; "
        "checked against that file")


@dataclass(frozen=True)
class LennardJones:
    """Lennard-Jones 12-6 parameters of one gas.

    Attributes: name; sigma_A [Angstrom]; epsilon_K = eps/k_B [K];
    formula (for the mass, via ASE) or None; mass_amu when no formula
    applies (air); source of the values.
    """

    name: str
    sigma_A: float
    epsilon_K: float
    source: str
    formula: str | None = None
    mass_amu: float | None = None

    def __post_init__(self):
        for attr in ("sigma_A", "epsilon_K"):
            v = getattr(self, attr)
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise InputError(f"Lennard-Jones {attr} must be positive, got {v!r}", field=attr)

    def molecular_mass_amu(self) -> float:
        """Mass [amu] from ASE's isotope-averaged atomic masses, or the stored mass."""
        if self.mass_amu is not None:
            return float(self.mass_amu)
        if self.formula is None:
            raise InputError(f"no mass known for {self.name}", field="mass_amu")
        from ase.formula import Formula
        from ase.data import atomic_masses, atomic_numbers

        return float(sum(atomic_masses[atomic_numbers[el]] * n for el, n in Formula(self.formula).count().items()))


#: Mean molar mass of dry air in the 1976 U.S. Standard Atmosphere, M0 = 28.9644 g/mol
#: (NOAA/NASA/USAF 1976, published value of that standard).
AIR_MOLAR_MASS_AMU = 28.9644

#: Built-in bath gases, read-only mapping name -> LennardJones.
BATH_GASES = MappingProxyType({
    "N2": LennardJones("N2", 3.621, 97.53, _GRI, formula="N2"),
    "O2": LennardJones("O2", 3.458, 107.4, _GRI, formula="O2"),
    "CO2": LennardJones("CO2", 3.763, 244.0, _GRI, formula="CO2"),
    "Ar": LennardJones("Ar", 3.33, 136.5, _GRI, formula="Ar"),
    "H2O": LennardJones("H2O", 2.605, 572.4, _GRI, formula="H2O"),
    "He": LennardJones("He", 2.576, 10.2,
                       "CHEMKIN-format transport database entry for He (2.576 Angstrom, 10.2 K), as in "
                       "published mechanism transport files; same as the Hirschfelder-Curtiss-Bird 1954 "
                       "viscosity value (2.576 Angstrom, 10.22 K, from memory)", formula="He"),
    "air": LennardJones("air", 3.711, 78.6,
                        "Svehla, NASA Technical Report R-132 (1962), as tabulated in Bird, Stewart and "
                        "Lightfoot, Transport Phenomena, Table E.1 (from memory)", mass_amu=AIR_MOLAR_MASS_AMU),
})


def bath_gas(name: str) -> LennardJones:
    """The built-in Lennard-Jones entry of a bath gas (case-insensitive name)."""
    for key, value in BATH_GASES.items():
        if key.lower() == str(name).lower():
            return value
    raise InputError(f"unknown bath gas {name!r}", field="bath_gas",
                     hint="use one of " + ", ".join(BATH_GASES) + " or give sigma and epsilon")


def combine_lennard_jones(sigma1_A: float, epsilon1_K: float, sigma2_A: float, epsilon2_K: float):
    """Pair parameters (sigma_A, epsilon_K): arithmetic mean of sigma, geometric mean of eps."""
    return 0.5 * (sigma1_A + sigma2_A), math.sqrt(epsilon1_K * epsilon2_K)


# ---------------------------------------------------------------- collision integrals
def omega22_neufeld(reduced_temperature):
    """Omega(2,2)*(T*) of the LJ 12-6 potential, Neufeld, Janzen and Aziz, J. Chem. Phys. 57, 1100 (1972).

    A T*^-B + C e^(-D T*) + E e^(-F T*) + R T*^B sin(S T*^W - P), with
    A=1.16145, B=0.14874, C=0.52487, D=0.77320, E=2.16178, F=2.43787,
    R=-6.435e-4, S=18.0323, W=-0.76830, P=7.27371. Stated range 0.3 <= T* <= 100,
    average deviation from the exact integrals about 0.1 %.
    """
    t = np.asarray(reduced_temperature, dtype=float)
    return (1.16145 * t**-0.14874 + 0.52487 * np.exp(-0.77320 * t) + 2.16178 * np.exp(-2.43787 * t)
            - 6.435e-4 * t**0.14874 * np.sin(18.0323 * t**-0.76830 - 7.27371))


def omega22_troe(reduced_temperature):
    """Omega(2,2)* ~ [0.7 + 0.52 log10(T*)]^-1, Troe, J. Chem. Phys. 66, 4758 (1977).

    Meant for 3 < T* < 300 (from memory), where it is within a few per cent.
    """
    t = np.asarray(reduced_temperature, dtype=float)
    return 1.0 / (0.7 + 0.52 * np.log10(t))


_OMEGA = {"neufeld": omega22_neufeld, "troe": omega22_troe}
#: names of the collision-integral approximations collision rates accept
COLLISION_INTEGRALS = tuple(_OMEGA)


def collision_rate_m3_s(temperature_K, sigma_A: float, epsilon_K: float, reduced_mass_amu: float,
                        omega: str = "neufeld"):
    """Z_LJ = pi sigma^2 sqrt(8kT/(pi mu)) Omega(2,2)*(kT/eps) [m^3 s^-1] of a colliding pair.

    ``sigma_A`` [Angstrom] and ``epsilon_K`` [K] are pair parameters (see
    :func:`combine_lennard_jones`), ``reduced_mass_amu`` the reduced mass [amu],
    ``omega`` "neufeld" (default) or "troe".
    """
    try:
        integral = _OMEGA[omega]
    except KeyError:
        raise InputError(f"unknown collision-integral approximation {omega!r}", field="omega",
                         hint="use 'neufeld' or 'troe'") from None
    t = temperatures_K(temperature_K)
    for name, v in (("sigma_A", sigma_A), ("epsilon_K", epsilon_K), ("reduced_mass_amu", reduced_mass_amu)):
        if not (math.isfinite(v) and v > 0):
            raise InputError(f"{name} must be positive, got {v!r}", field=name)
    mu = reduced_mass_amu * AMU
    sigma = sigma_A * 1e-10
    speed = np.sqrt(8.0 * K_B * t / (math.pi * mu))
    return math.pi * sigma**2 * speed * integral(t / epsilon_K)


def pair_collision_rate_m3_s(temperature_K, molecule: LennardJones, bath: LennardJones | str,
                             molecule_mass_amu: float | None = None, omega: str = "neufeld"):
    """Z_LJ [m^3 s^-1] of ``molecule`` in ``bath`` (a LennardJones or a built-in name), combining rules applied."""
    if isinstance(bath, str):
        bath = bath_gas(bath)
    m1 = molecule.molecular_mass_amu() if molecule_mass_amu is None else float(molecule_mass_amu)
    m2 = bath.molecular_mass_amu()
    sigma, eps = combine_lennard_jones(molecule.sigma_A, molecule.epsilon_K, bath.sigma_A, bath.epsilon_K)
    return collision_rate_m3_s(temperature_K, sigma, eps, m1 * m2 / (m1 + m2), omega)


# ---------------------------------------------------------------- collision efficiency
def energy_dependence_factor(energies_J_per_mol, density_per_J_per_mol, barrier_J_per_mol: float,
                             temperature_K):
    """F_E = int_{E0}^inf rho(E) exp(-E/RT) dE / [RT rho(E0) exp(-E0/RT)] (Troe 1977), dimensionless.

    Evaluated on the grain (trapezoidal rule) from a density of states
    [states per J/mol] on a uniform grid of energies [J/mol]; vectorised over T.
    """
    e = np.asarray(energies_J_per_mol, dtype=float)
    rho = np.asarray(density_per_J_per_mol, dtype=float)
    t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
    grain = e[1] - e[0]
    i0 = int(round(barrier_J_per_mol / grain))
    if i0 >= e.size or rho[i0] <= 0:
        raise InputError("density of states must be positive at the barrier and the grid must extend past it",
                         field="density")
    rel = (e[i0:] - e[i0])[None, :] / (R * t[:, None])
    g = rho[i0:][None, :] / rho[i0] * np.exp(-rel)
    # trapezoidal rule from E0 (the integrand has decayed at the top of the grid)
    return (g.sum(axis=1) - 0.5 * g[:, 0]) * grain / (R * t)


def collision_efficiency(mean_energy_transferred_J_per_mol: float, temperature_K, *, kind: str = "all",
                         energy_factor=1.0):
    """beta_c from Troe's relation beta_c/(1 - beta_c^(1/2)) = -<dE>/(F_E k T) (Troe 1977).

    Parameters
    ----------
    mean_energy_transferred_J_per_mol:
        kind="all": <dE>, average energy transferred per collision, up and
        down [J/mol], negative (energy lost); kind="down": <dE>_down, the
        average energy removed in downward collisions [J/mol], positive. It
        is turned into <dE> by -<dE> = <dE>_down^2/(<dE>_down + F_E RT).
    temperature_K:
        Temperature(s) [K].
    energy_factor:
        F_E (dimensionless, >= 1), given or from :func:`energy_dependence_factor`.

    Returns beta_c in (0, 1) (dimensionless), solved in closed form: with
    x = beta_c^(1/2) and q = -<dE>/(F_E RT), x = (-q + sqrt(q^2 + 4q))/2.
    """
    de = float(mean_energy_transferred_J_per_mol)
    t = np.asarray(temperature_K, dtype=float)
    fe = np.asarray(energy_factor, dtype=float)
    if np.any(fe < 1.0 - 1e-9):
        raise InputError("F_E must be at least 1", field="energy_factor")
    if kind == "down":
        if not de > 0:
            raise InputError(f"<dE>down must be positive (energy removed per down step), got {de!r}",
                             field="mean_energy_transferred")
        de = -(de**2) / (de + fe * R * t)
    elif kind == "all":
        if not de < 0:
            raise InputError(f"<dE> over all collisions must be negative (energy lost), got {de!r}",
                             field="mean_energy_transferred", hint="give kind='down' for <dE>down")
    else:
        raise InputError(f"kind must be 'all' or 'down', got {kind!r}", field="kind")
    q = -de / (fe * R * t)
    x = 0.5 * (-q + np.sqrt(q * q + 4.0 * q))
    return x * x
