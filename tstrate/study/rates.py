"""Canonical TST rate constants of every channel of a study."""

from __future__ import annotations

import numpy as np

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
            out.append(channel_rates(ch, study.species, T, low_modes=low_modes,
                                     standard_pressure_Pa=study.conditions.standard_pressure_Pa))
        except InputError as exc:  # a problem of the channel: its key in the study file
            raise exc.within(file=study.file, prefix=f"channel[{i}]") from None
    return out


def study_conformers(study, *, low_modes: LowModes = HARMONIC, temperature_K=None) -> dict:
    """Species name -> :class:`~tstrate.physics.ensembles.EnsembleParts` of each conformer ensemble
    of the study (members, energies relative to the representative, populations against T)."""
    from tstrate.physics.ensembles import ensemble_parts

    T = temperatures_K(study.conditions.temperature_K if temperature_K is None else temperature_K, ndim=1)
    return {name: ensemble_parts(sp, T, low_modes=low_modes) for name, sp in study.species.items()
            if sp.conformers}


def conformer_effects(study, rates, *, low_modes: LowModes = HARMONIC) -> list[dict]:
    """How much the conformer ensembles change each channel that uses one: per channel,
    k(ensembles) / k(each ensemble's representative conformer alone) and the same for Kc, on the
    rates' temperatures. Channels without an ensemble are left out."""
    from tstrate.physics.tst import channel_rates

    alone = {n: sp.with_changes(conformers=()) for n, sp in study.species.items() if sp.conformers}
    out = []
    for ch, cr in zip(study.channels, rates):
        names = {*ch.reactants, *ch.products, ch.transition_state, ch.complex, ch.product_complex}
        used = sorted(n for n in names if n in alone)
        if not used:
            continue
        one = channel_rates(ch, {**study.species, **alone}, cr.temperature_K, low_modes=low_modes)
        out.append({"channel": ch.name, "ensembles": used, "temperature_K": cr.temperature_K,
                    "k_ratio": cr.k / one.k, "Kc_ratio": np.exp(cr.ln_kc - one.ln_kc)})
    return out


def capture_limits(study, rates) -> tuple[tuple, list[str]]:
    """The capture ceiling of every bimolecular channel (:mod:`tstrate.physics.capture`) against its
    TST rate constant, and a warning for each channel whose k_TST exceeds it somewhere."""
    from tstrate.physics.capture import capture_limit

    out, warnings = [], []
    for ch, cr in zip(study.channels, rates):
        if ch.order != 2:
            continue
        first, second = (study.species[n] for n in ch.reactants)
        lim = capture_limit(ch.name, first, second, cr.temperature_K, cr.k)
        out.append(lim)
        if lim.exceeded.any():
            i = int(np.argmax(lim.ratio))
            warnings.append(
                f"channel {ch.name}: the TST rate constant exceeds the capture limit of its reactants at "
                f"{int(lim.exceeded.sum())} of {lim.exceeded.size} temperatures, up to {lim.ratio[i]:.3g} times "
                f"at {lim.temperature_K[i]:g} K ({lim.model}); no rate constant can exceed it: the TST "
                "bottleneck is not rate-limiting there (a submerged barrier?); results.json gives the "
                "capped value (1/k_TST + 1/k_capture)^-1 beside the uncapped one")
    return tuple(out), warnings


def connection_warnings(study) -> list[str]:
    """A warning for each channel whose transition state, by the minima the compute route found
    downhill from it (``reactant_side_geometry`` / ``product_side_geometry`` in its [provenance]),
    connects to another structure (e.g. another conformer) than the channel's own reactant-side
    species (its complex, or its one reactant) or product complex. Channels whose TS records no
    connected minima, or whose species have other atoms than the connected minimum, are not checked;
    a conformer ensemble passes when one of its conformers is the connected minimum.
    """
    from tstrate.physics.conformers import SAME_STRUCTURE_TOLERANCE_A, parse_xyz_lines, structure_difference_A

    out = []
    for ch in study.channels:
        ts = study.species[ch.transition_state]
        sides = (("reactant_side_geometry", ch.complex or (ch.reactants[0] if ch.order == 1 else None)),
                 ("product_side_geometry", ch.product_complex
                  or (ch.products[0] if len(ch.products) == 1 else None)))
        for key, target in sides:
            text = ts.provenance.get(key)
            if not text or target is None:
                continue
            try:
                symbols, positions = parse_xyz_lines(text)
            except ValueError:
                out.append(f"channel {ch.name}: the {key} recorded in {ts.name}'s [provenance] is not "
                           "'Symbol x y z' lines; the connection was not checked")
                continue
            sp = study.species[target]
            # a conformer ensemble is connected when any of its conformers is the connected minimum
            diffs = [structure_difference_A(symbols, positions, m.symbols, m.positions_A)
                     for m in (sp, *sp.conformers)]
            diff = None if any(d is None for d in diffs) else min(diffs)
            if diff is not None and diff > SAME_STRUCTURE_TOLERANCE_A:
                side = "reactant" if key.startswith("reactant") else "product"
                out.append(f"channel {ch.name}: the transition state {ts.name} connects on its {side} side to "
                           f"another structure than {target} (interatomic distances differ by up to "
                           f"{diff:.2f} Angstrom: another conformer?); the rate constant is then that of "
                           f"the conformer it connects to - check the channel's species, or make the species a "
                           "conformer ensemble with the connected conformer")
    return out
