"""Cantera (reference library, test-only) as the independent reader of a written mechanism: each
reaction's k evaluated at a channel's check points (the computed grid and the points between)."""

from __future__ import annotations

import numpy as np
import pytest

from tstrate.units import K_B, N_A

PER_KMOL = N_A * 1e3        # molecules per kmol


def cantera_ratios(gas, fits, bath=None):
    """Channel name -> k_Cantera / k_computed at the channel's check points (Cantera's
    forward_rate_constants in kmol-m-s converted to SI per molecule)."""
    out = {}
    species = gas.species_names
    x = f"{bath}:1" if bath in species else f"{species[0]}:1"
    for i, c in enumerate(fits.channels):
        pts = c.check_points
        if pts is None:
            continue
        ratio = np.empty(pts.k_SI.size)
        for j in range(pts.k_SI.size):
            T = float(pts.temperature_K[j])
            P = (float(pts.pressure_Pa[j]) if pts.pressure_Pa is not None
                 else float(pts.number_density_m3[j]) * K_B * T if pts.number_density_m3 is not None else 1e5)
            gas.TPX = T, P, x
            k = gas.forward_rate_constants[i] / PER_KMOL ** (c.order - 1)
            ratio[j] = k / pts.k_SI[j]
        out[c.name] = ratio
    return out


def assert_within_stated(gas, fits, bath=None, rtol=1e-6):
    """Cantera's k deviates from the computed rates by no more than each channel states, and by what it states."""
    ratios = cantera_ratios(gas, fits, bath)
    for c in fits.channels:
        if c.name not in ratios:
            continue
        worst = float(np.max(np.abs(ratios[c.name] - 1)))
        stated = c.export.deviation.max_rel
        assert worst <= stated * (1 + rtol) + 1e-9, (c.name, worst, stated)
        assert worst == pytest.approx(stated, rel=1e-5, abs=1e-9), (c.name, worst, stated)
    return ratios
