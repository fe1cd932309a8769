"""Settings of a study's steps, as validated records that know nothing of files.

Each record checks its values at construction and names its own fields in errors; the
readers in :mod:`tstrate.io` place those errors in the study file's sections.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from tstrate.errors import InputError

#: Default reference temperature T0 of the modified Arrhenius form [K].
T0_DEFAULT_K = 298.15
#: Default threshold of the max relative deviation of a fitted k that triggers a warning (fraction).
MAX_DEVIATION_DEFAULT = 0.05
#: Default numbers of Chebyshev terms in 1/T and in log P.
CHEBYSHEV_TEMPERATURE_TERMS_DEFAULT = 6
CHEBYSHEV_PRESSURE_TERMS_DEFAULT = 4
#: The rate expressions a mechanism may hold for each channel.
MECHANISM_FORMS = ("modified", "arrhenius", "chebyshev")


@dataclass(frozen=True)
class FitOptions:
    """How a study's rate constants are fitted and exported.

    max_deviation: warning threshold of the max relative deviation of k (a fraction, > 0).
    split: False (no split fit), True (break searched) or a break temperature [K] (> 0).
    mechanism_form: one of :data:`MECHANISM_FORMS`.
    T0_K: reference temperature of the modified Arrhenius form [K] (> 0).
    chebyshev_temperature_terms, chebyshev_pressure_terms: numbers of Chebyshev terms in
        1/T and log P (>= 1), or None for the defaults (6 and 4, lowered to the number of
        temperatures or pressures when there are fewer); only with the chebyshev form.
    """

    max_deviation: float = MAX_DEVIATION_DEFAULT
    split: bool | float = False
    mechanism_form: str = "modified"
    T0_K: float = T0_DEFAULT_K
    chebyshev_temperature_terms: int | None = None
    chebyshev_pressure_terms: int | None = None

    def __post_init__(self):
        if not (isinstance(self.max_deviation, (int, float)) and self.max_deviation > 0
                and math.isfinite(self.max_deviation)):
            raise InputError(f"max_deviation must be a positive fraction, got {self.max_deviation!r}",
                             field="max_deviation")
        if not isinstance(self.split, bool) and not (isinstance(self.split, (int, float)) and self.split > 0):
            raise InputError("a break temperature must be positive (K)", field="split")
        if self.mechanism_form not in MECHANISM_FORMS:
            raise InputError(f"unknown form {self.mechanism_form!r}", field="mechanism_form",
                             hint="use " + ", ".join(MECHANISM_FORMS))
        if not (isinstance(self.T0_K, (int, float)) and self.T0_K > 0 and math.isfinite(self.T0_K)):
            raise InputError("must be positive (K)", field="T0_K")
        for key in ("chebyshev_temperature_terms", "chebyshev_pressure_terms"):
            n = getattr(self, key)
            if n is None:
                continue
            if self.mechanism_form != "chebyshev":
                raise InputError(f"is used only with mechanism_form = \"chebyshev\" (the form is "
                                 f"{self.mechanism_form!r})", field=key,
                                 hint="remove it or set mechanism_form = \"chebyshev\"")
            if isinstance(n, bool) or not isinstance(n, int) or n < 1:
                raise InputError(f"must be at least 1, got {n}", field=key)
