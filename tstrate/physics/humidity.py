"""Water (and other catalyst) abundance for catalysed routes.

Saturation vapour pressure of water over ice and over (supercooled) liquid
water from Murphy and Koop (2005), and conversions of an abundance given as a
number density, a partial pressure, a mixing ratio or a relative humidity to a
number density [m^-3]. Also the water-dimer number density from the
equilibrium constant of 2 H2O <=> (H2O)2.

All quantities are SI inside: temperatures in K, pressures in Pa, number
densities in m^-3. The helpers :func:`per_cm3_to_per_m3` and
:func:`per_m3_to_per_cm3` convert molecule cm^-3 at the edges.

The gas is treated as ideal (n = p / k_B T) and the enhancement factor of
water vapour in air (a few tenths of a percent near 1 bar) is neglected.
Relative humidity is defined through partial pressures,
RH = 100 % * p_H2O / p_sat(T), over liquid water or over ice as chosen.

Reference
---------
D. M. Murphy and T. Koop, "Review of the vapour pressures of ice and
supercooled water for atmospheric applications", Q. J. R. Meteorol. Soc. 131,
1539-1565 (2005), doi:10.1256/qj.04.94: eq. (7) for ice (valid T > 110 K) and
eq. (10) for liquid water (valid 123 K < T < 332 K).
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass

import numpy as np

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.units import K_B, P_STANDARD

logger = logging.getLogger(__name__)

#: Validity range of Murphy and Koop (2005) eq. (7), ice [K] (no stated upper bound).
ICE_VALID_RANGE_K = (110.0, math.inf)
#: Validity range of Murphy and Koop (2005) eq. (10), liquid water [K].
LIQUID_VALID_RANGE_K = (123.0, 332.0)

#: Phases a saturation pressure can refer to.
PHASES = ("liquid", "ice")

#: Kinds of abundance; the name carries the unit of ``Abundance.value``.
ABUNDANCE_KINDS = (
    "number_density_m3",          # molecules per m^3
    "partial_pressure_Pa",        # Pa
    "mixing_ratio",               # mol/mol (dimensionless), needs the total pressure
    "relative_humidity_percent",  # %, water only, over liquid or ice
)


# ----------------------------------------------------------------------------
# small helpers
# ----------------------------------------------------------------------------

def _out(values) -> float | np.ndarray:
    """Return a float for a 0-d result (scalar inputs), an array otherwise."""
    values = np.asarray(values, dtype=float)
    return float(values) if values.ndim == 0 else values


def _temperature(temperature_K, *, field: str = "temperature_K") -> np.ndarray:
    return temperatures_K(temperature_K, name=field)


def _non_negative(value, what: str, field: str) -> np.ndarray:
    x = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(x)):
        raise InputError(f"{what} must be finite", field=field)
    if np.any(x < 0.0):
        raise InputError(f"{what} must not be negative, got {x[x < 0.0].ravel()[0]:g}",
                         field=field)
    return x


def _phase(phase: str) -> str:
    if phase not in PHASES:
        raise InputError(f"unknown phase {phase!r} for a saturation pressure",
                         field="phase", hint="use 'liquid' or 'ice'")
    return phase


def _warn_outside(T: np.ndarray, valid: tuple[float, float], what: str) -> None:
    low, high = valid
    outside = (T <= low) | (T >= high)
    if np.any(outside):
        bad = T[outside].ravel()
        logger.warning("%s: %d temperature(s) outside the validity range of Murphy and Koop "
                       "(2005), %g K < T < %g K (e.g. %g K); values are extrapolated",
                       what, bad.size, low, high, bad[0])


def per_cm3_to_per_m3(number_density_cm3):
    """Convert a number density from molecule cm^-3 to m^-3."""
    x = np.asarray(number_density_cm3, dtype=float) * 1e6
    return _out(x)


def per_m3_to_per_cm3(number_density_m3):
    """Convert a number density from m^-3 to molecule cm^-3."""
    x = np.asarray(number_density_m3, dtype=float) * 1e-6
    return _out(x)


# ----------------------------------------------------------------------------
# saturation vapour pressure (Murphy and Koop 2005)
# ----------------------------------------------------------------------------

def ln_saturation_pressure_ice(temperature_K):
    """Natural log of the vapour pressure of hexagonal ice, ln(p / Pa).

    Murphy and Koop (2005), eq. (7), valid for T > 110 K::

        ln p = 9.550426 - 5723.265/T + 3.53068 ln T - 0.00728332 T

    Logs a warning for T outside the validity range; raises InputError for
    non-positive or non-finite T.
    """
    T = _temperature(temperature_K)
    _warn_outside(T, ICE_VALID_RANGE_K, "vapour pressure over ice")
    ln_p = 9.550426 - 5723.265 / T + 3.53068 * np.log(T) - 0.00728332 * T
    return _out(ln_p)


def ln_saturation_pressure_liquid(temperature_K):
    """Natural log of the vapour pressure of (supercooled) liquid water, ln(p / Pa).

    Murphy and Koop (2005), eq. (10), valid for 123 K < T < 332 K::

        ln p = 54.842763 - 6763.22/T - 4.210 ln T + 0.000367 T
               + tanh(0.0415 (T - 218.8))
                 * (53.878 - 1331.22/T - 9.44523 ln T + 0.014025 T)

    Logs a warning for T outside the validity range; raises InputError for
    non-positive or non-finite T.
    """
    T = _temperature(temperature_K)
    _warn_outside(T, LIQUID_VALID_RANGE_K, "vapour pressure over liquid water")
    ln_T = np.log(T)
    ln_p = (54.842763 - 6763.22 / T - 4.210 * ln_T + 0.000367 * T
            + np.tanh(0.0415 * (T - 218.8))
            * (53.878 - 1331.22 / T - 9.44523 * ln_T + 0.014025 * T))
    return _out(ln_p)


def saturation_pressure_ice_Pa(temperature_K):
    """Saturation vapour pressure of water over ice [Pa] (Murphy and Koop 2005, eq. 7)."""
    return _out(np.exp(ln_saturation_pressure_ice(temperature_K)))


def saturation_pressure_liquid_Pa(temperature_K):
    """Saturation vapour pressure over (supercooled) liquid water [Pa].

    Murphy and Koop (2005), eq. (10).
    """
    return _out(np.exp(ln_saturation_pressure_liquid(temperature_K)))


def saturation_pressure_Pa(temperature_K, phase: str = "liquid"):
    """Saturation vapour pressure of water [Pa] over ``phase`` ('liquid' or 'ice')."""
    if _phase(phase) == "ice":
        return saturation_pressure_ice_Pa(temperature_K)
    return saturation_pressure_liquid_Pa(temperature_K)


# ----------------------------------------------------------------------------
# abundance conversions
# ----------------------------------------------------------------------------

def number_density_from_partial_pressure(partial_pressure_Pa, temperature_K):
    """Number density [m^-3] of an ideal gas at partial pressure [Pa] and temperature [K]."""
    p = _non_negative(partial_pressure_Pa, "partial pressure", "partial_pressure_Pa")
    T = _temperature(temperature_K)
    n = p / (K_B * T)
    return _out(n)


def partial_pressure_from_number_density(number_density_m3, temperature_K):
    """Partial pressure [Pa] of an ideal gas at number density [m^-3] and temperature [K]."""
    n = _non_negative(number_density_m3, "number density", "number_density_m3")
    T = _temperature(temperature_K)
    p = n * K_B * T
    return _out(p)


def number_density_from_mixing_ratio(mixing_ratio, total_pressure_Pa, temperature_K):
    """Number density [m^-3] from a mixing ratio [mol/mol] at total pressure [Pa] and T [K].

    n = x * p_total / (k_B T). A mixing ratio above 1 raises InputError.
    """
    x = _non_negative(mixing_ratio, "mixing ratio", "mixing_ratio")
    if np.any(x > 1.0):
        raise InputError(f"mixing ratio must not exceed 1 mol/mol, got {x[x > 1.0].ravel()[0]:g}",
                         field="mixing_ratio", hint="give a mole fraction, e.g. 5e-6 for 5 ppmv")
    p = _non_negative(total_pressure_Pa, "total pressure", "total_pressure_Pa")
    T = _temperature(temperature_K)
    n = x * p / (K_B * T)
    return _out(n)


def mixing_ratio_from_number_density(number_density_m3, total_pressure_Pa, temperature_K):
    """Mixing ratio [mol/mol] of a gas at number density [m^-3], total pressure [Pa] and T [K]."""
    n = _non_negative(number_density_m3, "number density", "number_density_m3")
    p = _non_negative(total_pressure_Pa, "total pressure", "total_pressure_Pa")
    if np.any(p == 0.0):
        raise InputError("total pressure must be positive", field="total_pressure_Pa")
    T = _temperature(temperature_K)
    x = n * K_B * T / p
    return _out(x)


def _relative_humidity(value) -> np.ndarray:
    rh = np.asarray(value, dtype=float)
    if not np.all(np.isfinite(rh)):
        raise InputError("relative humidity must be finite", field="relative_humidity_percent")
    if np.any(rh < 0.0):
        bad = rh[rh < 0.0].ravel()[0]
        raise InputError(f"relative humidity must not be negative, got {bad:g} %",
                         field="relative_humidity_percent")
    return rh


def number_density_from_relative_humidity(relative_humidity_percent, temperature_K,
                                          phase: str = "liquid"):
    """Water number density [m^-3] at relative humidity [%] over ``phase`` at T [K].

    p_H2O = RH/100 * p_sat(T) with p_sat from Murphy and Koop (2005), then
    n = p_H2O / (k_B T). RH < 0 raises InputError; RH > 100 % (supersaturation)
    is allowed and logged as a warning.
    """
    rh = _relative_humidity(relative_humidity_percent)
    if np.any(rh > 100.0):
        logger.warning("relative humidity %g %% over %s is supersaturated (above 100 %%)",
                       float(np.max(rh)), phase)
    T = _temperature(temperature_K)
    p_sat = np.asarray(saturation_pressure_Pa(T, phase))
    n = rh / 100.0 * p_sat / (K_B * T)
    return _out(n)


def relative_humidity_from_number_density(number_density_m3, temperature_K,
                                          phase: str = "liquid"):
    """Relative humidity [%] over ``phase`` of water at number density [m^-3] and T [K]."""
    n = _non_negative(number_density_m3, "number density", "number_density_m3")
    T = _temperature(temperature_K)
    p_sat = np.asarray(saturation_pressure_Pa(T, phase))
    rh = 100.0 * n * K_B * T / p_sat
    return _out(rh)


@dataclass(frozen=True)
class Abundance:
    """The abundance of a catalyst (by default water) as the user gives it.

    Attributes
    ----------
    kind:
        One of :data:`ABUNDANCE_KINDS`; the name carries the unit of ``value``:
        ``'number_density_m3'`` [m^-3], ``'partial_pressure_Pa'`` [Pa],
        ``'mixing_ratio'`` [mol/mol] (needs the total pressure) or
        ``'relative_humidity_percent'`` [%] (water only, over ``phase``).
    value:
        The abundance in the unit named by ``kind``.
    phase:
        For a relative humidity: over 'liquid' water or over 'ice'.
    species:
        Label of the catalyst (relative humidity requires 'H2O').

    Use the class methods (``from_number_density_cm3`` and friends) to build
    one from the usual units. Construction validates the value (negative or
    non-finite values raise InputError).
    """

    kind: str
    value: float
    phase: str = "liquid"
    species: str = "H2O"

    def __post_init__(self):
        if self.kind not in ABUNDANCE_KINDS:
            raise InputError(f"unknown abundance kind {self.kind!r}", field="kind",
                             hint="use one of " + ", ".join(ABUNDANCE_KINDS))
        try:
            value = float(self.value)
        except (TypeError, ValueError):
            raise InputError(f"abundance value must be a number, got {self.value!r}",
                             field=self.kind) from None
        object.__setattr__(self, "value", value)
        _phase(self.phase)
        if self.kind == "relative_humidity_percent":
            _relative_humidity(value)
            if self.species != "H2O":
                raise InputError("relative humidity is defined for water only, "
                                 f"not {self.species!r}", field="species",
                                 hint="give a partial pressure or mixing ratio")
        else:
            _non_negative(value, "abundance", self.kind)
        if self.kind == "mixing_ratio" and value > 1.0:
            raise InputError(f"mixing ratio must not exceed 1 mol/mol, got {value:g}",
                             field="mixing_ratio",
                             hint="give a mole fraction, e.g. 5e-6 for 5 ppmv")

    # -- constructors in the usual units ------------------------------------
    @classmethod
    def from_number_density_m3(cls, value_m3: float, species: str = "H2O") -> "Abundance":
        """Abundance from a number density [m^-3]."""
        return cls("number_density_m3", value_m3, species=species)

    @classmethod
    def from_number_density_cm3(cls, value_cm3: float, species: str = "H2O") -> "Abundance":
        """Abundance from a number density [molecule cm^-3] (stored in m^-3)."""
        return cls("number_density_m3", per_cm3_to_per_m3(float(value_cm3)), species=species)

    @classmethod
    def from_partial_pressure_Pa(cls, value_Pa: float, species: str = "H2O") -> "Abundance":
        """Abundance from a partial pressure [Pa]."""
        return cls("partial_pressure_Pa", value_Pa, species=species)

    @classmethod
    def from_mixing_ratio(cls, value: float, species: str = "H2O") -> "Abundance":
        """Abundance from a mixing ratio [mol/mol] (e.g. 5e-6 for 5 ppmv)."""
        return cls("mixing_ratio", value, species=species)

    @classmethod
    def from_relative_humidity(cls, percent: float, phase: str = "liquid") -> "Abundance":
        """Water abundance from a relative humidity [%] over 'liquid' or 'ice'."""
        return cls("relative_humidity_percent", percent, phase=phase, species="H2O")

    # -- conversion -----------------------------------------------------------
    def number_density_m3(self, temperature_K, total_pressure_Pa=None):
        """Number density [m^-3] at temperature(s) [K] (vectorised).

        ``total_pressure_Pa`` [Pa] is needed for a mixing ratio only (it may be
        an array broadcastable with the temperatures). A fixed number density
        is returned unchanged at every temperature.
        """
        T = _temperature(temperature_K)
        if self.kind == "number_density_m3":
            n = np.full(T.shape, self.value)
        elif self.kind == "partial_pressure_Pa":
            n = np.asarray(number_density_from_partial_pressure(self.value, T))
        elif self.kind == "mixing_ratio":
            if total_pressure_Pa is None:
                raise InputError("a mixing ratio needs the total pressure to give a number density",
                                 field="total_pressure_Pa")
            n = np.asarray(number_density_from_mixing_ratio(self.value, total_pressure_Pa, T))
        else:
            n = np.asarray(number_density_from_relative_humidity(self.value, T, self.phase))
        return _out(n)

    def number_density_cm3(self, temperature_K, total_pressure_Pa=None):
        """Number density [molecule cm^-3] at temperature(s) [K]; see :meth:`number_density_m3`."""
        return per_m3_to_per_cm3(self.number_density_m3(temperature_K, total_pressure_Pa))


# ----------------------------------------------------------------------------
# water dimer
# ----------------------------------------------------------------------------

def dimer_number_density_m3(Kp_per_bar, monomer_number_density_m3, temperature_K):
    """Number density [m^-3] of (H2O)2 in equilibrium 2 H2O <=> (H2O)2.

    Parameters
    ----------
    Kp_per_bar:
        Equilibrium constant Kp = p_dimer / p_monomer^2 with pressures in bar,
        i.e. in bar^-1 (1 bar standard state), as given by the
        thermochemistry at each temperature; array or scalar.
    monomer_number_density_m3:
        Number density of the water monomer [m^-3].
    temperature_K:
        Temperature(s) [K], broadcastable with the other two.

    Returns
    -------
    n_dimer = p_dimer / (k_B T) with p_dimer = Kp * p_H2O^2 / p0, where
    p_H2O = n_monomer k_B T and p0 = 1 bar = 1e5 Pa; i.e.
    n_dimer = Kp * n_monomer^2 * k_B T / p0.
    """
    Kp = _non_negative(Kp_per_bar, "equilibrium constant Kp", "Kp_per_bar")
    n = _non_negative(monomer_number_density_m3, "monomer number density",
                      "monomer_number_density_m3")
    T = _temperature(temperature_K)
    p_monomer = n * K_B * T
    p_dimer = Kp * p_monomer**2 / P_STANDARD
    n_dimer = p_dimer / (K_B * T)
    return _out(n_dimer)
