"""Bare against catalysed routes: every ``[[comparison]]`` of a study."""

from __future__ import annotations

from tstrate.errors import InputError
from tstrate.physics.catalysis import ComparisonResult, compare_routes
from tstrate.physics.thermo import HARMONIC, LowModes


def study_comparisons(study, *, low_modes: LowModes = HARMONIC) -> list[ComparisonResult]:
    """Results of every ``[[comparison]]`` of a study (each at its own or the study's temperatures)."""
    out = []
    for i, comp in enumerate(study.sections.get("comparison", ())):
        T = comp.temperature_K if comp.temperature_K is not None else study.conditions.temperature_K
        try:
            out.append(compare_routes(comp, study.species, study.channels, T, low_modes=low_modes))
        except InputError as exc:  # a problem of this comparison: its key in the study file
            raise exc.within(file=study.file, prefix=f"comparison[{i}]") from None
    return out
