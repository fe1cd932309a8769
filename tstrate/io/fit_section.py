"""The optional ``[fits]`` table of a study file: how rate constants are fitted.

    [fits]
    max_deviation_percent = 5          # warn when a fit misses a point by more than this
    split = true                       # also fit two temperature ranges (true: break searched;
                                       # or a break temperature in K, e.g. split = 220)
    mechanism_form = "modified"        # "modified" (A (T/T0)^n exp(-Ea/RT)), "arrhenius" or
                                       # "chebyshev" (log10 k as a Chebyshev polynomial in 1/T,
                                       # and in log P for falloff channels)
    T0_K = 298.15                      # reference temperature of the modified form
    chebyshev_temperature_terms = 6    # number of Chebyshev terms in 1/T (chebyshev form only)
    chebyshev_pressure_terms = 4       # number of Chebyshev terms in log P (falloff channels)

The Chebyshev term counts may be given only with ``mechanism_form = "chebyshev"``;
each must be a whole number of at least 1 and at most the number of study
temperatures (pressures), which the fit checks. Left out, they are 6 and 4, or
the number of temperatures (pressures) when that is smaller.
"""

from __future__ import annotations

from dataclasses import dataclass

from tstrate.physics.fitting import MAX_DEVIATION_DEFAULT, T0_DEFAULT_K

#: Default numbers of Chebyshev terms in 1/T and in log P.
CHEBYSHEV_TEMPERATURE_TERMS_DEFAULT = 6
CHEBYSHEV_PRESSURE_TERMS_DEFAULT = 4
#: The mechanism forms a study may choose.
MECHANISM_FORMS = ("modified", "arrhenius", "chebyshev")


@dataclass(frozen=True)
class FitOptions:
    """Fit settings of a study (see the module docstring); deviation as a fraction.

    Chebyshev term counts None mean the defaults (6 in 1/T, 4 in log P), lowered
    to the number of temperatures (pressures) when there are fewer.
    """

    max_deviation: float = MAX_DEVIATION_DEFAULT
    split: bool | float = False
    mechanism_form: str = "modified"
    T0_K: float = T0_DEFAULT_K
    chebyshev_temperature_terms: int | None = None
    chebyshev_pressure_terms: int | None = None


def read_fit_options(table, study) -> FitOptions:
    t = table.table("fits")
    dev = t.get("max_deviation_percent", float, 100 * MAX_DEVIATION_DEFAULT)
    if dev <= 0:
        raise t.error("max_deviation_percent", "must be positive")
    split = t.get("split", (bool, float), False)
    if not isinstance(split, bool) and split <= 0:
        raise t.error("split", "a break temperature must be positive (K)")
    form = t.get("mechanism_form", str, "modified")
    if form not in MECHANISM_FORMS:
        raise t.error("mechanism_form", f"unknown form {form!r}",
                      hint="use modified, arrhenius or chebyshev")
    t0 = t.get("T0_K", float, T0_DEFAULT_K)
    if t0 <= 0:
        raise t.error("T0_K", "must be positive (K)")
    terms = {}
    for key in ("chebyshev_temperature_terms", "chebyshev_pressure_terms"):
        if key in t and form != "chebyshev":
            raise t.error(key, f"is used only with mechanism_form = \"chebyshev\" (the form is {form!r})",
                          hint="remove it or set mechanism_form = \"chebyshev\"")
        n = t.get(key, int, None)
        if n is not None and n < 1:
            raise t.error(key, f"must be at least 1, got {n}")
        terms[key] = n
    t.reject_unknown()
    return FitOptions(max_deviation=dev / 100, split=split, mechanism_form=form, T0_K=t0, **terms)
