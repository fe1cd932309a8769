"""Unit conversions at the edges. Constants from scipy.constants (CODATA).

Inside the package: molar energies in J/mol, temperatures in K, pressures in
Pa, lengths in m, masses in kg, number densities in m^-3, rate constants in
SI per molecule (s^-1, m^3 s^-1, m^6 s^-1).
"""

from __future__ import annotations

import numpy as np
from scipy import constants as sc

from tstrate.errors import InputError

#: Avogadro constant [1/mol]
N_A = sc.N_A
#: Boltzmann constant [J/K]
K_B = sc.k
#: Planck constant [J s]
H = sc.h
#: Reduced Planck constant [J s]
HBAR = sc.hbar
#: Speed of light [m/s]
C = sc.c
#: Molar gas constant [J/(mol K)]
R = sc.R
#: Atomic mass constant [kg]
AMU = sc.physical_constants["atomic mass constant"][0]
#: Hartree energy [J]
HARTREE_J = sc.physical_constants["Hartree energy"][0]
#: Standard pressure for the 1 bar standard state [Pa]
P_STANDARD = 1e5
#: One standard atmosphere [Pa] (the older standard state some tables use)
P_ATM = float(sc.atm)
#: The standard pressures a study may ask for: name -> [Pa]
STANDARD_PRESSURES_PA = {"1 bar": P_STANDARD, "1 atm": P_ATM}


def standard_pressure_name(pressure_Pa: float) -> str:
    """``"1 bar"`` or ``"1 atm"`` for a standard pressure [Pa]; ValueError for any other."""
    for name, value in STANDARD_PRESSURES_PA.items():
        if abs(pressure_Pa - value) <= 1e-9 * value:
            return name
    raise ValueError(f"standard_pressure_Pa must be 1 bar (1e5 Pa) or 1 atm (101325 Pa), got {pressure_Pa!r}")


def standard_pressure_tag(pressure_Pa: float) -> str:
    """``"1bar"`` or ``"1atm"``: the suffix of output keys whose values depend on the standard state."""
    return standard_pressure_name(pressure_Pa).replace(" ", "")
#: One wavenumber (cm^-1) as energy per molecule [J]
CM1_J = H * C * 100.0

#: molar energy of one unit [J/mol]
ENERGY_UNITS_J_PER_MOL: dict[str, float] = {
    "hartree": HARTREE_J * N_A,
    "eV": sc.eV * N_A,
    "kJ/mol": 1e3,
    "kcal/mol": sc.calorie * 1e3,
    "J/mol": 1.0,
    "cm-1": CM1_J * N_A,
    "K": K_B * N_A,
}

#: one unit of pressure [Pa]
PRESSURE_UNITS_PA: dict[str, float] = {
    "Pa": 1.0,
    "hPa": 100.0,
    "kPa": 1e3,
    "bar": 1e5,
    "mbar": 100.0,
    "atm": sc.atm,
    "Torr": sc.torr,
}


#: other spellings of the energy units, compared without case and spaces
ENERGY_UNIT_ALIASES: dict[str, str] = {
    "eh": "hartree", "ha": "hartree", "au": "hartree", "a.u.": "hartree",
    "kj/mol": "kJ/mol", "kjmol-1": "kJ/mol", "kjmol^-1": "kJ/mol",
    "kcal/mol": "kcal/mol", "kcalmol-1": "kcal/mol", "ev": "eV", "j/mol": "J/mol",
    "cm-1": "cm-1", "cm^-1": "cm-1", "1/cm": "cm-1", "k": "K",
}


def energy_unit(unit: str) -> str:
    """The key of :data:`ENERGY_UNITS_J_PER_MOL` that ``unit`` spells, case and spaces ignored
    (``Hartree``, ``Eh`` and ``au`` are ``hartree``); unknown spellings come back unchanged."""
    if unit in ENERGY_UNITS_J_PER_MOL:
        return unit
    folded = str(unit).replace(" ", "").lower()
    for name in ENERGY_UNITS_J_PER_MOL:
        if name.lower() == folded:
            return name
    return ENERGY_UNIT_ALIASES.get(folded, unit)


def energy_to_J_per_mol(value, unit: str, *, file=None, field=None):
    """Convert an energy given in ``unit`` to J/mol (arrays pass through numpy); the unit's case
    does not matter (:func:`energy_unit`)."""
    try:
        factor = ENERGY_UNITS_J_PER_MOL[energy_unit(unit)]
    except KeyError:
        raise InputError(f"unknown energy unit {unit!r}", file=file, field=field,
                         hint="use one of " + ", ".join(ENERGY_UNITS_J_PER_MOL)) from None
    return np.asarray(value, dtype=float) * factor if np.ndim(value) else float(value) * factor


def energy_from_J_per_mol(value, unit: str):
    """Convert an energy in J/mol to ``unit``."""
    try:
        factor = ENERGY_UNITS_J_PER_MOL[unit]
    except KeyError:
        raise InputError(f"unknown energy unit {unit!r}",
                         hint="use one of " + ", ".join(ENERGY_UNITS_J_PER_MOL)) from None
    return np.asarray(value, dtype=float) / factor if np.ndim(value) else float(value) / factor


def pressure_to_Pa(value, unit: str, *, file=None, field=None):
    """Convert a pressure given in ``unit`` to Pa."""
    try:
        factor = PRESSURE_UNITS_PA[unit]
    except KeyError:
        raise InputError(f"unknown pressure unit {unit!r}", file=file, field=field,
                         hint="use one of " + ", ".join(PRESSURE_UNITS_PA)) from None
    return np.asarray(value, dtype=float) * factor


def number_density_m3(pressure_Pa, temperature_K):
    """Ideal-gas number density [m^-3] at pressure [Pa] and temperature [K]."""
    return np.asarray(pressure_Pa, dtype=float) / (K_B * np.asarray(temperature_K, dtype=float))


#: Rate-constant units for output: name -> (molecularity, factor from SI per-molecule)
#: SI per molecule is s^-1 (order 1), m^3 s^-1 (order 2), m^6 s^-1 (order 3).
RATE_UNITS: dict[str, tuple[int, float]] = {
    "s-1": (1, 1.0),
    "cm3 molecule-1 s-1": (2, 1e6),
    "m3 molecule-1 s-1": (2, 1.0),
    "L mol-1 s-1": (2, 1e3 * N_A),
    "m3 mol-1 s-1": (2, N_A),
    "cm6 molecule-2 s-1": (3, 1e12),
    "m6 molecule-2 s-1": (3, 1.0),
    "L2 mol-2 s-1": (3, 1e6 * N_A**2),
    "m6 mol-2 s-1": (3, N_A**2),
}

#: Default output unit by molecularity (the trade's convention).
DEFAULT_RATE_UNIT = {1: "s-1", 2: "cm3 molecule-1 s-1", 3: "cm6 molecule-2 s-1"}


def rate_from_SI(k_SI, order: int, unit: str | None = None):
    """Convert a rate constant from SI per molecule to ``unit`` (default by order)."""
    unit = unit or DEFAULT_RATE_UNIT[order]
    try:
        unit_order, factor = RATE_UNITS[unit]
    except KeyError:
        raise InputError(f"unknown rate-constant unit {unit!r}",
                         hint="use one of " + ", ".join(RATE_UNITS)) from None
    if unit_order != order:
        raise InputError(f"rate-constant unit {unit!r} does not fit a reaction of order {order}")
    return np.asarray(k_SI, dtype=float) * factor
