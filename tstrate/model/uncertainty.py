"""Uncertain inputs of a study, as validated records that know nothing of files.

Per species: the standard uncertainty (one sigma) of its electronic energy, of its frequency
scale factor and of its imaginary frequency. Per study: <Delta E>down, the Lennard-Jones pair
parameters and the catalyst abundance of comparisons. Energies are normal; factors and
fractions are log-normal (a fraction p means sigma(ln x) = ln(1 + p); a factor f means
sigma(ln x) = ln f). Units: J/mol; fractions and factors are dimensionless.

Defaults by electronic-structure method (:data:`METHOD_DEFAULTS`) are **common practice** with
no single source behind them, stated as the one-sigma uncertainty of a barrier height; each
species gets that value divided by sqrt(2), so that the difference of two species computed
independently has the stated sigma. A study can switch them off (``method_defaults = false``)
or give its own values species by species.

Correlation: ``energy_correlation`` rho in [0, 1] is the share of each energy's variance that
all species computed with the same method have in common (a systematic error of the method):
E_i = E_i0 + sigma_i (sqrt(rho) z_method + sqrt(1 - rho) z_i). The scale factor of one method is
a property of that method, so the frequency scales of its species are drawn together.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from tstrate.errors import InputError

#: names of the sampling designs (scrambled Sobol sequence, Latin hypercube)
SAMPLING_METHODS = ("sobol", "latin-hypercube")


@dataclass(frozen=True)
class MethodDefault:
    """The default uncertainties of one class of electronic-structure methods.

    label: the class. patterns: lower-case pieces of a ``[provenance] method`` string that select it.
    barrier_J_per_mol: one-sigma uncertainty of a barrier height [J/mol].
    frequency_scale_fraction: one-sigma uncertainty of the frequency scale factor (fraction).
    imaginary_frequency_fraction: one-sigma uncertainty of the imaginary frequency (fraction).
    basis: where the numbers come from.
    """

    label: str
    patterns: tuple[str, ...]
    barrier_J_per_mol: float
    frequency_scale_fraction: float
    imaginary_frequency_fraction: float
    basis: str = "common practice (no single source)"


#: defaults by method class, searched in this order (the first class with a matching pattern wins,
#: so "CCSD(T)/cc-pVTZ//B3LYP-D3BJ/def2-SVP" counts as coupled cluster)
METHOD_DEFAULTS: tuple[MethodDefault, ...] = (
    MethodDefault("coupled cluster, large basis", ("ccsd(t)", "ccsd", "dlpno", "cbs", "w1", "w2", "heat"),
                  3.0e3, 0.02, 0.10),
    MethodDefault("double-hybrid DFT", ("b2plyp", "dsd-", "pwpb95", "revdsd"), 5.0e3, 0.03, 0.15),
    MethodDefault("hybrid DFT", ("b3lyp", "wb97", "ωb97", "m06", "m05", "m08", "mn15", "pbe0", "pbeh", "b97",
                                 "tpssh", "bmk", "cam-", "b3pw91", "bhandhlyp", "r2scan0", "x3lyp"),
                  9.0e3, 0.03, 0.20),
    MethodDefault("GGA / meta-GGA DFT", ("pbe", "blyp", "bp86", "tpss", "r2scan", "scan", "b97-d", "revpbe"),
                  15.0e3, 0.04, 0.25),
    MethodDefault("semi-empirical / tight binding", ("gfn", "xtb", "pm3", "pm6", "pm7", "am1", "mndo", "dftb",
                                                     "om2", "om3"),
                  30.0e3, 0.10, 0.30),
)


def method_default(method: str | None) -> MethodDefault | None:
    """The :data:`METHOD_DEFAULTS` class of a ``[provenance] method`` string, or None."""
    if not method:
        return None
    m = str(method).lower()
    for d in METHOD_DEFAULTS:
        if any(p in m for p in d.patterns):
            return d
    return None


def _fraction(value, key, *, upper=None):
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) or value < 0:
        raise InputError(f"must be a non-negative number, got {value!r}", field=key)
    if upper is not None and value > upper:
        raise InputError(f"must be at most {upper:g}, got {value!r}", field=key)
    return float(value)


@dataclass(frozen=True)
class SpeciesUncertainty:
    """One-sigma uncertainties of one species (None: not given here).

    energy_J_per_mol [J/mol] (>= 0); frequency_scale_fraction and imaginary_frequency_fraction
    (>= 0, at most 1: a relative sigma of 100 % is beyond any harmonic model).
    """

    energy_J_per_mol: float | None = None
    frequency_scale_fraction: float | None = None
    imaginary_frequency_fraction: float | None = None

    def __post_init__(self):
        _fraction(self.energy_J_per_mol, "energy")
        _fraction(self.frequency_scale_fraction, "frequency_scale_percent", upper=1.0)
        _fraction(self.imaginary_frequency_fraction, "imaginary_frequency_percent", upper=1.0)


@dataclass(frozen=True)
class UncertaintySettings:
    """What a study's uncertainty step samples, and how.

    samples: number of quasi-Monte Carlo samples (>= 16). seed: integer seed of the draw.
    sampling: "sobol" or "latin-hypercube". run: compute it within ``tstrate run``.
    method_defaults: fill species not given in ``species`` from :data:`METHOD_DEFAULTS`.
    species: species name -> :class:`SpeciesUncertainty` (overrides the defaults key by key).
    energy_correlation: rho in [0, 1], the shared share of the energy variance within a method.
    delta_E_down_factor: one-sigma factor of <Delta E>down (>= 1; None or 1: certain).
    lennard_jones_sigma_fraction, lennard_jones_epsilon_fraction: one-sigma relative uncertainty
        of the collision diameter and well depth of the reactant-bath pair (>= 0).
    catalyst_abundance_factor: one-sigma factor of the catalyst abundance of every comparison (>= 1).
    sensitivity_step: step of the central differences of the sensitivities, in units of each
        input's sigma (inputs with sigma 0 use a nominal step; > 0).
    """

    samples: int = 1000
    seed: int = 1
    sampling: str = "sobol"
    run: bool = True
    method_defaults: bool = True
    species: dict = field(default_factory=dict)
    energy_correlation: float = 0.0
    delta_E_down_factor: float | None = None
    lennard_jones_sigma_fraction: float | None = None
    lennard_jones_epsilon_fraction: float | None = None
    catalyst_abundance_factor: float | None = None
    sensitivity_step: float = 0.01

    def __post_init__(self):
        if isinstance(self.samples, bool) or not isinstance(self.samples, int) or self.samples < 16:
            raise InputError(f"need at least 16 samples, got {self.samples!r}", field="samples")
        if self.samples > 1_000_000:
            raise InputError(f"at most 1000000 samples, got {self.samples}", field="samples",
                             hint="a few thousand quasi-random samples settle percentiles to a few per cent")
        if isinstance(self.seed, bool) or not isinstance(self.seed, int) or self.seed < 0:
            raise InputError(f"seed must be a non-negative integer, got {self.seed!r}", field="seed")
        if self.sampling not in SAMPLING_METHODS:
            raise InputError(f"unknown sampling {self.sampling!r}", field="sampling",
                             hint="use " + " or ".join(SAMPLING_METHODS))
        _fraction(self.energy_correlation, "energy_correlation", upper=1.0)
        for key in ("delta_E_down_factor", "catalyst_abundance_factor"):
            v = getattr(self, key)
            if v is not None and not (isinstance(v, (int, float)) and math.isfinite(v) and v >= 1.0):
                raise InputError(f"a one-sigma factor must be at least 1, got {v!r}", field=key)
        _fraction(self.lennard_jones_sigma_fraction, "lennard_jones_sigma_percent", upper=1.0)
        _fraction(self.lennard_jones_epsilon_fraction, "lennard_jones_epsilon_percent", upper=1.0)
        for name, value in self.species.items():
            if not isinstance(value, SpeciesUncertainty):
                raise InputError(f"species {name!r}: expected a SpeciesUncertainty", field="species")
        if not (isinstance(self.sensitivity_step, (int, float)) and 0 < self.sensitivity_step <= 1):
            raise InputError("must lie in (0, 1]", field="sensitivity_step")
