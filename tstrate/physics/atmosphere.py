"""Temperature and pressure of the atmosphere versus altitude.

* :func:`us_standard_atmosphere_1976`: the U.S. Standard Atmosphere, 1976
  (NOAA, NASA and USAF, U.S. Government Printing Office, Washington D.C.,
  1976), 0-86 km geometric altitude, computed from its layer definitions
  (base geopotential heights and molecular-scale temperature gradients) with
  the hydrostatic equation. The document's own constants are used: they
  define that standard and are not the current CODATA values:
  g0 = 9.80665 m s^-2, M0 = 28.9644 kg/kmol, R* = 8.31432 J/(mol K)
  (8.31432e3 J/(kmol K)), r0 = 6356766 m, P0 = 101325 Pa, T0 = 288.15 K.
  Between 80 and 86 km the kinetic temperature is the molecular-scale
  temperature times M/M0 from the document's Table 8 (linear interpolation
  between its 0.5 km entries).
* a user profile read from a CSV file by :func:`tstrate.io.profiles.read_profile_csv`.

Altitudes are geometric, in m; temperatures K; pressures Pa.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import constants as _sc

from tstrate.errors import InputError
from tstrate.units import number_density_m3

# ---- constants of the 1976 standard (published values of that document) ----
#: Standard acceleration of gravity [m s^-2]: 9.80665 in the 1976 standard, the same exact
#: conventional value as scipy.constants.g.
G0 = _sc.g
#: Sea-level mean molar mass of air [kg/mol] (28.9644 kg/kmol, U.S. Standard Atmosphere 1976).
M0_KG_PER_MOL = 28.9644e-3
#: Gas constant of the 1976 standard [J/(mol K)] (8.31432e3 J/(kmol K)); not the CODATA value.
R_STAR = 8.31432
#: Effective Earth radius for geopotential height [m] (U.S. Standard Atmosphere 1976).
R0_M = 6356766.0
#: Sea-level pressure [Pa] (101325 Pa in the 1976 standard, = scipy.constants.atm) and temperature [K].
P0_PA = _sc.atm
T0_K = 288.15

#: Layer bases: geopotential height H_b [m'] and molecular-temperature gradient L_b [K/m'] (Table 4).
_LAYER_BASES_M = np.array([0.0, 11000.0, 20000.0, 32000.0, 47000.0, 51000.0, 71000.0, 84852.0])
_LAPSE_K_PER_M = np.array([-6.5, 0.0, 1.0, 2.8, 0.0, -2.8, -2.0]) * 1e-3

#: M/M0 between 80 and 86 km geometric altitude (Table 8 of the 1976 standard).
_MRATIO_Z_M = np.arange(80000.0, 86001.0, 500.0)
_MRATIO = np.array([1.000000, 0.999996, 0.999989, 0.999971, 0.999941, 0.999909, 0.999870,
                    0.999829, 0.999786, 0.999741, 0.999694, 0.999641, 0.999579])

_HYDRO = G0 * M0_KG_PER_MOL / R_STAR  # [K/m']


def _layer_base_values():
    t = [T0_K]
    p = [P0_PA]
    for i, lapse in enumerate(_LAPSE_K_PER_M):
        dh = _LAYER_BASES_M[i + 1] - _LAYER_BASES_M[i]
        tb, pb = t[-1], p[-1]
        if lapse == 0.0:
            p.append(pb * math.exp(-_HYDRO * dh / tb))
            t.append(tb)
        else:
            tn = tb + lapse * dh
            p.append(pb * (tb / tn) ** (_HYDRO / lapse))
            t.append(tn)
    return np.array(t), np.array(p)


#: Molecular-scale temperature [K] and pressure [Pa] at the layer bases, from the hydrostatic equation.
LAYER_BASE_TEMPERATURE_K, LAYER_BASE_PRESSURE_PA = _layer_base_values()


def geopotential_height_m(altitude_m):
    """Geopotential height H = r0 Z / (r0 + Z) [m'] of geometric altitude Z [m]."""
    z = np.asarray(altitude_m, dtype=float)
    return R0_M * z / (R0_M + z)


@dataclass(frozen=True)
class AtmosphereProfile:
    """Altitude [m], temperature [K] and pressure [Pa] arrays of one profile, with its source."""

    altitude_m: np.ndarray = field(repr=False)
    temperature_K: np.ndarray = field(repr=False)
    pressure_Pa: np.ndarray = field(repr=False)
    source: str = ""

    @property
    def number_density_m3(self) -> np.ndarray:
        """Ideal-gas number density [m^-3]."""
        return number_density_m3(self.pressure_Pa, self.temperature_K)


def us_standard_atmosphere_1976(altitude_m) -> AtmosphereProfile:
    """U.S. Standard Atmosphere 1976 at geometric altitudes 0 <= Z <= 86,000 m.

    Pressure from the hydrostatic equation in each layer,
    P = P_b [T_b / (T_b + L_b (H - H_b))]^(g0 M0 / (R* L_b)) or
    P = P_b exp(-g0 M0 (H - H_b) / (R* T_b)) when L_b = 0, with geopotential H.
    """
    z = np.atleast_1d(np.asarray(altitude_m, dtype=float))
    if np.any(~np.isfinite(z)) or np.any(z < -1e-9) or np.any(z > 86000.0 + 1e-6):
        raise InputError("the 1976 standard atmosphere is defined here for 0-86 km geometric altitude",
                         field="altitude_m", hint="give altitudes in metres between 0 and 86000")
    h = geopotential_height_m(np.clip(z, 0.0, 86000.0))
    layer = np.clip(np.searchsorted(_LAYER_BASES_M, h, side="right") - 1, 0, _LAPSE_K_PER_M.size - 1)
    hb = _LAYER_BASES_M[layer]
    lapse = _LAPSE_K_PER_M[layer]
    tb = LAYER_BASE_TEMPERATURE_K[layer]
    pb = LAYER_BASE_PRESSURE_PA[layer]
    t_m = tb + lapse * (h - hb)
    iso = lapse == 0.0
    safe_lapse = np.where(iso, 1.0, lapse)
    p = np.where(iso, pb * np.exp(-_HYDRO * (h - hb) / tb), pb * (tb / t_m) ** (_HYDRO / safe_lapse))
    t = t_m * np.interp(z, _MRATIO_Z_M, _MRATIO, left=1.0, right=_MRATIO[-1])
    return AtmosphereProfile(z, t, p, "U.S. Standard Atmosphere, 1976")
