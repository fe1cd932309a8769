"""The optional ``[fits]`` table of a study file: how rate constants are fitted and exported.

    [fits]
    max_deviation_percent = 5          # the tolerance: exported expressions meet it or say so
    split = true                       # also fit two temperature ranges (true: break searched;
                                       # or a break temperature in K, e.g. split = 220); in
                                       # fits.json only (one mechanism reaction holds one range)
    mechanism_form = "auto"            # "auto": per channel the simplest form meeting the
                                       # tolerance (Arrhenius, modified Arrhenius, Troe, a
                                       # per-pressure table, Chebyshev with the smallest basis);
                                       # or one of "arrhenius", "modified", "troe",
                                       # "pressure_table", "chebyshev" for every channel
    T0_K = 298.15                      # reference temperature of the modified form
    chebyshev_temperature_terms = 6    # fixed number of Chebyshev terms in 1/T (chebyshev form only)
    chebyshev_pressure_terms = 4       # fixed number of Chebyshev terms in log P (falloff channels)

The Chebyshev term counts may be given only with ``mechanism_form = "chebyshev"``;
each must be a whole number of at least 1 and at most the number of study
temperatures (pressures), which the fit checks. Left out, the smallest basis that
meets the tolerance on the grid and between grid points is taken.
"""

from __future__ import annotations

from tstrate.io.keys import Key, Keys, field_default
from tstrate.model.settings import MAX_DEVIATION_DEFAULT, MECHANISM_FORMS, T0_DEFAULT_K, FitOptions

#: the keys of [fits] (the documentation is generated from this)
KEYS = Keys(("fits",), "[fits]", "How rate constants are fitted and written to the mechanism.", (
    Key("max_deviation_percent", "number", "tolerance of the exported expressions: the largest deviation "
        "from the computed k, on the grid and between grid points, that needs no warning",
        default=100 * MAX_DEVIATION_DEFAULT, unit="%"),
    Key("split", "true or false, or a number", "also fit two temperature ranges: true searches the break, "
        "a number gives the break temperature", default=field_default(FitOptions, "split"), unit="K"),
    Key("mechanism_form", "string", "the expression of each channel in the mechanism: auto (the simplest "
        "form meeting max_deviation_percent), or for every channel Arrhenius, modified Arrhenius "
        "A (T/T0)^n exp(-Ea/RT), Troe (falloff channels), a per-pressure Arrhenius table (falloff channels) "
        "or Chebyshev polynomials of log10 k in 1/T (and log P for falloff channels); a form that misses "
        "the tolerance is flagged", default=field_default(FitOptions, "mechanism_form"), choices=MECHANISM_FORMS),
    Key("T0_K", "number", "reference temperature of the modified Arrhenius form", default=T0_DEFAULT_K,
        unit="K"),
    Key("chebyshev_temperature_terms", "integer", "number of Chebyshev terms in 1/T, at most the number of "
        "temperatures (chebyshev form only)", default_text="the smallest basis meeting the tolerance",
        unit="1"),
    Key("chebyshev_pressure_terms", "integer", "number of Chebyshev terms in log P of falloff channels, at "
        "most the number of pressures (chebyshev form only)",
        default_text="the smallest basis meeting the tolerance", unit="1"),
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
