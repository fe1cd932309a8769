"""Canonical TST rate constants of every channel of a study."""

from __future__ import annotations

from tstrate.arrays import temperatures_K
from tstrate.errors import InputError
from tstrate.physics.thermo import HARMONIC, LowModes
from tstrate.physics.tst import ChannelRates, channel_rates


def study_rates(study, *, low_modes: LowModes = HARMONIC, temperature_K=None) -> list[ChannelRates]:
    """TST results for every channel of a study (at its temperatures unless given)."""
    T = temperatures_K(study.conditions.temperature_K if temperature_K is None else temperature_K, ndim=1)
    out = []
    for i, ch in enumerate(study.channels):
        try:
            out.append(channel_rates(ch, study.species, T, low_modes=low_modes))
        except InputError as exc:  # a problem of the channel: its key in the study file
            raise exc.within(file=study.file, prefix=f"channel[{i}]") from None
    return out
