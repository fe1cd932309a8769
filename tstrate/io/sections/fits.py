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

from tstrate.io.keys import Key, Keys, field_default
from tstrate.model.settings import (CHEBYSHEV_PRESSURE_TERMS_DEFAULT, CHEBYSHEV_TEMPERATURE_TERMS_DEFAULT,
                                    MAX_DEVIATION_DEFAULT, MECHANISM_FORMS, T0_DEFAULT_K, FitOptions)

#: the keys of [fits] (the documentation is generated from this)
KEYS = Keys(("fits",), "[fits]", "How rate constants are fitted and written to the mechanism.", (
    Key("max_deviation_percent", "number", "warn when a fit misses a computed k by more than this",
        default=100 * MAX_DEVIATION_DEFAULT, unit="%"),
    Key("split", "true or false, or a number", "also fit two temperature ranges: true searches the break, "
        "a number gives the break temperature", default=field_default(FitOptions, "split"), unit="K"),
    Key("mechanism_form", "string", "the expression of each channel in the mechanism: modified Arrhenius "
        "A (T/T0)^n exp(-Ea/RT), Arrhenius, or Chebyshev polynomials of log10 k in 1/T (and log P for "
        "falloff channels)", default=field_default(FitOptions, "mechanism_form"), choices=MECHANISM_FORMS),
    Key("T0_K", "number", "reference temperature of the modified Arrhenius form", default=T0_DEFAULT_K,
        unit="K"),
    Key("chebyshev_temperature_terms", "integer", "number of Chebyshev terms in 1/T, at most the number of "
        "temperatures (chebyshev form only)", default_text=f"{CHEBYSHEV_TEMPERATURE_TERMS_DEFAULT}, or the "
        "number of temperatures when smaller", unit="1"),
    Key("chebyshev_pressure_terms", "integer", "number of Chebyshev terms in log P of falloff channels, at "
        "most the number of pressures (chebyshev form only)", default_text=f"{CHEBYSHEV_PRESSURE_TERMS_DEFAULT}, "
        "or the number of pressures when smaller", unit="1"),
))


def read_fit_options(table, study) -> FitOptions:
    t = table.table("fits")
    dev = t.get("max_deviation_percent", float, KEYS.default("max_deviation_percent"))
    if dev <= 0:
        raise t.error("max_deviation_percent", "must be positive")
    options = t.build(FitOptions, max_deviation=dev / 100,
                      split=t.get("split", (bool, float), KEYS.default("split")),
                      mechanism_form=t.get("mechanism_form", str, KEYS.default("mechanism_form")),
                      T0_K=t.get("T0_K", float, KEYS.default("T0_K")),
                      chebyshev_temperature_terms=t.get("chebyshev_temperature_terms", int, None),
                      chebyshev_pressure_terms=t.get("chebyshev_pressure_terms", int, None))
    t.reject_unknown(KEYS)
    return options
