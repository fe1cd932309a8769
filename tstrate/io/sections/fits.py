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

from tstrate.model.settings import MAX_DEVIATION_DEFAULT, T0_DEFAULT_K, FitOptions

#: the keys of [fits], each with its type, default and meaning (documentation is generated from this)
KEYS = {
    "max_deviation_percent": ("number", 100 * MAX_DEVIATION_DEFAULT,
                              "warn when a fit misses a computed k by more than this [%]"),
    "split": ("true/false or number", False,
              "also fit two temperature ranges: true searches the break, a number gives it [K]"),
    "mechanism_form": ("string", "modified", "expression in the mechanism: modified, arrhenius or chebyshev"),
    "T0_K": ("number", T0_DEFAULT_K, "reference temperature of the modified Arrhenius form [K]"),
    "chebyshev_temperature_terms": ("integer", 6, "Chebyshev terms in 1/T (chebyshev form only)"),
    "chebyshev_pressure_terms": ("integer", 4, "Chebyshev terms in log P, falloff channels (chebyshev form only)"),
}


def read_fit_options(table, study) -> FitOptions:
    t = table.table("fits")
    dev = t.get("max_deviation_percent", float, 100 * MAX_DEVIATION_DEFAULT)
    if dev <= 0:
        raise t.error("max_deviation_percent", "must be positive")
    options = t.build(FitOptions, max_deviation=dev / 100, split=t.get("split", (bool, float), False),
                      mechanism_form=t.get("mechanism_form", str, "modified"),
                      T0_K=t.get("T0_K", float, T0_DEFAULT_K),
                      chebyshev_temperature_terms=t.get("chebyshev_temperature_terms", int, None),
                      chebyshev_pressure_terms=t.get("chebyshev_pressure_terms", int, None))
    t.reject_unknown(set(KEYS))
    return options
