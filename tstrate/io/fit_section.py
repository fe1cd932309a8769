"""The optional ``[fits]`` table of a study file: how rate constants are fitted.

    [fits]
    max_deviation_percent = 5          # warn when a fit misses a point by more than this
    split = true                       # also fit two temperature ranges (true: break searched;
                                       # or a break temperature in K, e.g. split = 220)
    mechanism_form = "modified"        # "modified" (A (T/T0)^n exp(-Ea/RT)) or "arrhenius"
    T0_K = 298.15                      # reference temperature of the modified form
"""

from __future__ import annotations

from dataclasses import dataclass

from tstrate.physics.fitting import MAX_DEVIATION_DEFAULT, T0_DEFAULT_K


@dataclass(frozen=True)
class FitOptions:
    """Fit settings of a study (see the module docstring); deviation as a fraction."""

    max_deviation: float = MAX_DEVIATION_DEFAULT
    split: bool | float = False
    mechanism_form: str = "modified"
    T0_K: float = T0_DEFAULT_K


def read_fit_options(table, study) -> FitOptions:
    t = table.table("fits")
    dev = t.get("max_deviation_percent", float, 100 * MAX_DEVIATION_DEFAULT)
    if dev <= 0:
        raise t.error("max_deviation_percent", "must be positive")
    split = t.get("split", (bool, float), False)
    if not isinstance(split, bool) and split <= 0:
        raise t.error("split", "a break temperature must be positive (K)")
    form = t.get("mechanism_form", str, "modified")
    if form not in ("modified", "arrhenius"):
        raise t.error("mechanism_form", f"unknown form {form!r}", hint="use modified or arrhenius")
    t0 = t.get("T0_K", float, T0_DEFAULT_K)
    if t0 <= 0:
        raise t.error("T0_K", "must be positive (K)")
    t.reject_unknown()
    return FitOptions(max_deviation=dev / 100, split=split, mechanism_form=form, T0_K=t0)
