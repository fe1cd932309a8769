"""Settings of a study's steps, as validated records that know nothing of files.

Each record checks its values at construction and names its own fields in errors; the
readers in :mod:`tstrate.io` place those errors in the study file's sections.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from tstrate.errors import InputError
from tstrate.units import CM1_J, N_A

#: one wavenumber as a molar energy [J/mol per cm^-1]
CM1_J_PER_MOL = CM1_J * N_A
#: Reference temperature [K] of a temperature-dependent <dE>down = value (T / 300 K)^n.
DELTA_E_REFERENCE_T_K = 300.0

#: the ways pressure dependence is computed ([falloff] pressure_method)
PRESSURE_METHODS = ("strong_collision", "master_equation")
#: Name of the built-in altitude profile.
US_STANDARD_1976 = "us-standard-1976"
#: Default altitude range [km] of the built-in profile (its whole range).
US_STANDARD_RANGE_KM = (0.0, 86.0)

#: Default reference temperature T0 of the modified Arrhenius form [K].
T0_DEFAULT_K = 298.15
#: Default threshold of the max relative deviation of a fitted k that triggers a warning (fraction).
MAX_DEVIATION_DEFAULT = 0.05
#: The rate expressions a mechanism may hold for each channel: "auto" (the simplest form that meets
#: max_deviation), or one form for every channel (pressure-dependent forms apply to falloff channels).
MECHANISM_FORMS = ("auto", "arrhenius", "modified", "troe", "pressure_table", "chebyshev")


@dataclass(frozen=True)
class FitOptions:
    """How a study's rate constants are fitted and exported.

    max_deviation: warning threshold of the max relative deviation of k (a fraction, > 0).
    split: False (no split fit), True (break searched) or a break temperature [K] (> 0).
    mechanism_form: one of :data:`MECHANISM_FORMS` ("auto": the simplest form meeting max_deviation).
    T0_K: reference temperature of the modified Arrhenius form [K] (> 0).
    chebyshev_temperature_terms, chebyshev_pressure_terms: numbers of Chebyshev terms in
        1/T and log P (>= 1), or None to take the smallest basis that meets max_deviation;
        only with the chebyshev form.
    """

    max_deviation: float = MAX_DEVIATION_DEFAULT
    split: bool | float = False
    mechanism_form: str = "auto"
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


@dataclass(frozen=True)
class FalloffSettings:
    """How to compute falloff for a channel (one ``[falloff]`` table, or a per-channel override).

    grain_cm1: energy grain [cm^-1] (refined when too coarse, see module docstring).
    energy_above_barrier_cm1: how far the grid reaches above E0 [cm^-1]; None = automatic
        (the larger of 20,000 cm^-1 and 80 k_B T at the highest temperature).
    collision_efficiency: beta_c given directly (0 < beta_c <= 1), or
    delta_E_down_cm1: <dE>down [cm^-1] (> 0), average energy removed in downward collisions, or
    delta_E_all_cm1: <dE> [cm^-1] (< 0), average energy transferred over all collisions;
        the last two give beta_c(T) by Troe's weak-collision relation (Troe 1977).
        None of the three: strong collisions (beta_c = 1, an upper bound, with a warning).
    delta_E_temperature_exponent: n in <dE>(T) = <dE>(300 K) (T / 300 K)^n (default 0).
    collision_integral: "neufeld" (Neufeld, Janzen and Aziz 1972) or "troe" (Troe 1977).
    fit_T2: also fit Troe's T** (else the exp(-T**/T) term is left out).
    pressure_method: "strong_collision" (strong collisions scaled by beta_c, closed form) or
        "master_equation" (energy-grained master equation with exponential-down energy transfer,
        <dE>down from delta_E_down_cm1; without any energy-transfer key, the strong-collider kernel).
    master_equation_grain_cm1: grain of the master equation [cm^-1], a multiple of the state-count
        grain (None: automatic, the coarsest multiple not above <dE>down / 8).
    """

    grain_cm1: float = 10.0
    energy_above_barrier_cm1: float | None = None
    collision_efficiency: float | None = None
    delta_E_down_cm1: float | None = None
    delta_E_all_cm1: float | None = None
    delta_E_temperature_exponent: float = 0.0
    collision_integral: str = "neufeld"
    fit_T2: bool = False
    pressure_method: str = "strong_collision"
    master_equation_grain_cm1: float | None = None

    def __post_init__(self):
        def bad(key, problem, hint=None):
            return InputError(problem, field=key, hint=hint)

        if not (math.isfinite(self.grain_cm1) and self.grain_cm1 > 0):
            raise bad("grain_cm1", f"grain must be a positive wavenumber, got {self.grain_cm1!r}")
        span = self.energy_above_barrier_cm1
        if span is not None and not (math.isfinite(span) and span > 0):
            raise bad("energy_above_barrier_cm1", f"must be positive, got {span!r}")
        given = [k for k in ("collision_efficiency", "delta_E_down_cm1", "delta_E_all_cm1")
                 if getattr(self, k) is not None]
        if len(given) > 1:
            raise bad(given[1], f"give one of collision_efficiency, delta_E_down_cm1, delta_E_all_cm1 "
                                f"(also found {given[0]})")
        if self.collision_efficiency is not None and not 0 < self.collision_efficiency <= 1:
            raise bad("collision_efficiency", f"beta_c must lie in (0, 1], got {self.collision_efficiency!r}")
        if self.delta_E_down_cm1 is not None and not self.delta_E_down_cm1 > 0:
            raise bad("delta_E_down_cm1", f"<dE>down must be positive (energy removed), got "
                                          f"{self.delta_E_down_cm1!r}")
        if self.delta_E_all_cm1 is not None and not self.delta_E_all_cm1 < 0:
            raise bad("delta_E_all_cm1", f"<dE> over all collisions must be negative (energy lost), got "
                                         f"{self.delta_E_all_cm1!r}", hint="or give delta_E_down_cm1 > 0")
        if not math.isfinite(self.delta_E_temperature_exponent):
            raise bad("delta_E_temperature_exponent", "must be a finite number")
        if self.pressure_method not in PRESSURE_METHODS:
            raise bad("pressure_method", f"unknown pressure method {self.pressure_method!r}",
                      hint="use " + " or ".join(PRESSURE_METHODS))
        if self.pressure_method == "master_equation" and self.energy_transfer in ("efficiency", "all"):
            given = "collision_efficiency" if self.energy_transfer == "efficiency" else "delta_E_all_cm1"
            raise bad(given, f"the master equation needs <dE>down, not {given}",
                      hint="give delta_E_down_cm1 (or no energy-transfer key for strong collisions)")
        g = self.master_equation_grain_cm1
        if g is not None and not (math.isfinite(g) and g > 0):
            raise bad("master_equation_grain_cm1", f"must be a positive wavenumber, got {g!r}")
        if self.collision_integral not in ("neufeld", "troe"):
            raise bad("collision_integral", f"unknown collision integral {self.collision_integral!r}",
                      hint="use neufeld or troe")

    @property
    def energy_transfer(self) -> str:
        """"efficiency", "down", "all" or "strong" (nothing given)."""
        if self.collision_efficiency is not None:
            return "efficiency"
        if self.delta_E_down_cm1 is not None:
            return "down"
        if self.delta_E_all_cm1 is not None:
            return "all"
        return "strong"

    def delta_E_J_per_mol(self, temperature_K) -> np.ndarray | None:
        """<dE>down (positive) or <dE> (negative) at each temperature [J/mol]; None when not given."""
        value = self.delta_E_down_cm1 if self.delta_E_down_cm1 is not None else self.delta_E_all_cm1
        if value is None:
            return None
        t = np.atleast_1d(np.asarray(temperature_K, dtype=float))
        return value * CM1_J_PER_MOL * (t / DELTA_E_REFERENCE_T_K) ** self.delta_E_temperature_exponent


@dataclass(frozen=True)
class FalloffSection:
    """The validated ``[falloff]`` section: default settings and per-channel overrides."""

    default: FalloffSettings = field(default_factory=FalloffSettings)
    channels: dict = field(default_factory=dict)   # channel name -> FalloffSettings

    def for_channel(self, name: str) -> FalloffSettings:
        return self.channels.get(name, self.default)


@dataclass(frozen=True)
class ExcitationSpec:
    """One excitation to follow.

    name: label. channel: a unimolecular channel of the study.
    energy_J_per_mol: excitation energy added to the thermal energy [J/mol].
    description: how it was given (e.g. "wavenumber 7200 cm-1"), for output.
    temperature_K: parent temperatures [K] of the pressure scan (None: the study's).
    delta_E_down_cm1: <dE>down [cm^-1] for the stepwise model (None: the channel's [falloff]
        delta_E_down_cm1, with its temperature exponent, if any).
    collision_efficiency: beta_c of the Stern-Volmer model (None: from [falloff]).
    pressure_scan: use the study's pressures (None: when the study gives any).
    profile: None, "us-standard-1976" or the path of a CSV profile (its name, for output).
    profile_table: the profile read from that CSV file (an
        :class:`tstrate.physics.atmosphere.AtmosphereProfile`; None for the built-in one).
    altitude_range_km: (lowest, highest) altitude [km] along the profile (None: all of it).
    altitude_step_km: altitude step [km] of the built-in profile.
    """

    name: str
    channel: str
    energy_J_per_mol: float
    description: str
    temperature_K: tuple[float, ...] | None = None
    delta_E_down_cm1: float | None = None
    collision_efficiency: float | None = None
    pressure_scan: bool | None = None
    profile: str | None = None
    altitude_range_km: tuple[float, float] | None = None
    altitude_step_km: float = 1.0
    profile_table: object = field(default=None, repr=False, compare=False)

    def __post_init__(self):
        def bad(key, problem, hint=None):
            return InputError(problem, field=key, hint=hint)

        if not (math.isfinite(self.energy_J_per_mol) and self.energy_J_per_mol > 0):
            raise bad("energy", f"excitation energy must be positive, got {self.energy_J_per_mol!r} J/mol")
        if self.temperature_K is not None:
            if not self.temperature_K or any(not (math.isfinite(x) and x > 0) for x in self.temperature_K):
                raise bad("temperature_K", "temperatures must be positive and finite (kelvin)")
        if self.delta_E_down_cm1 is not None and not (math.isfinite(self.delta_E_down_cm1)
                                                      and self.delta_E_down_cm1 > 0):
            raise bad("delta_E_down_cm1", f"<dE>down must be positive, got {self.delta_E_down_cm1!r}")
        if self.collision_efficiency is not None and not 0 < self.collision_efficiency <= 1:
            raise bad("collision_efficiency", f"beta_c must lie in (0, 1], got {self.collision_efficiency!r}")
        if self.altitude_range_km is not None:
            lo, hi = self.altitude_range_km
            if not (math.isfinite(lo) and math.isfinite(hi) and 0 <= lo <= hi):
                raise bad("altitude_km", f"altitude range must be [lowest, highest] in km with 0 <= lowest <= "
                                         f"highest, got {list(self.altitude_range_km)}")
            if self.profile == US_STANDARD_1976 and hi > US_STANDARD_RANGE_KM[1]:
                raise bad("altitude_km", f"the 1976 standard atmosphere ends at {US_STANDARD_RANGE_KM[1]:g} km")
        if not (math.isfinite(self.altitude_step_km) and self.altitude_step_km > 0):
            raise bad("altitude_step_km", f"altitude step must be positive, got {self.altitude_step_km!r}")


#: how a barrierless association's k(T, [M]) is found (see :mod:`tstrate.physics.association`)
ASSOCIATION_PRESSURE_METHODS = ("master_equation", "strong_collision")
#: how the adduct's overall rotation enters its density of states (see
#: :mod:`tstrate.physics.inverse_laplace`)
ADDUCT_ROTATIONS = ("active", "k_active", "spectator")


@dataclass(frozen=True)
class AssociationSpec:
    """One barrierless association A + B (+ M) -> AB (+ M) with its high-pressure k_inf(T).

    name; reactants: the two fragments (species names); adduct: the well (species name).
    k_inf_A_m3_per_s: A of k_inf = A (T/T0)^n exp(-Ea/RT) [m^3 molecule^-1 s^-1];
    k_inf_temperature_exponent: n (dimensionless, above -2.5); k_inf_reference_temperature_K: T0 [K];
    k_inf_activation_energy_J_per_mol: Ea [J/mol] (>= 0).
    pressure_method: one of :data:`ASSOCIATION_PRESSURE_METHODS`; adduct_rotation: one of
    :data:`ADDUCT_ROTATIONS`. delta_E_down_cm1: <Delta E>down at 300 K [cm^-1] (> 0), or None for
    strong collisions (strong-collision method only); delta_E_temperature_exponent: n of
    <Delta E>down (T / 300 K)^n. grain_cm1 [cm^-1] (> 0); energy_above_threshold_cm1: grid above D0
    [cm^-1] (> 0). temperature_K: temperatures [K] or None (the study's).
    reference_k0_m6_per_s, reference_k0_temperature_exponent: an evaluated k0 = k0_ref (T/300 K)^m
    [m^6 molecule^-2 s^-1] to compare with (both or neither); reference: its source in words.
    """

    name: str
    reactants: tuple[str, str]
    adduct: str
    k_inf_A_m3_per_s: float
    k_inf_temperature_exponent: float = 0.0
    k_inf_reference_temperature_K: float = 300.0
    k_inf_activation_energy_J_per_mol: float = 0.0
    pressure_method: str = "master_equation"
    adduct_rotation: str = "active"
    delta_E_down_cm1: float | None = None
    delta_E_temperature_exponent: float = 0.0
    grain_cm1: float = 20.0
    energy_above_threshold_cm1: float = 10000.0
    temperature_K: tuple[float, ...] | None = None
    reference_k0_m6_per_s: float | None = None
    reference_k0_temperature_exponent: float | None = None
    reference: str | None = None

    def __post_init__(self):
        def bad(key, problem, hint=None):
            return InputError(problem, field=key, hint=hint)

        if not isinstance(self.name, str) or not self.name:
            raise bad("name", "an association needs a name")
        object.__setattr__(self, "reactants", tuple(self.reactants))
        if len(self.reactants) != 2:
            raise bad("reactants", f"{len(self.reactants)} reactants; a barrierless association joins two")
        if self.adduct in self.reactants:
            raise bad("adduct", f"the adduct {self.adduct!r} is also a reactant")
        for key in ("k_inf_A_m3_per_s", "k_inf_reference_temperature_K", "grain_cm1",
                    "energy_above_threshold_cm1"):
            v = getattr(self, key)
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise bad(key, f"{key} must be a positive number, got {v!r}")
        n = self.k_inf_temperature_exponent
        if not (isinstance(n, (int, float)) and math.isfinite(n) and -2.5 < n <= 10):
            raise bad("k_inf_temperature_exponent", f"temperature exponent {n!r} is outside (-2.5, 10]",
                      hint="the inverse Laplace transform of T^n needs n above -2.5 here")
        ea = self.k_inf_activation_energy_J_per_mol
        if not (isinstance(ea, (int, float)) and math.isfinite(ea) and ea >= 0):
            raise bad("k_inf_activation_energy_J_per_mol", f"activation energy must be >= 0, got {ea!r}",
                      hint="a negative activation energy of k_inf is written with a negative temperature "
                           "exponent")
        if self.pressure_method not in ASSOCIATION_PRESSURE_METHODS:
            raise bad("pressure_method", f"unknown pressure method {self.pressure_method!r}",
                      hint="use one of " + ", ".join(ASSOCIATION_PRESSURE_METHODS))
        if self.adduct_rotation not in ADDUCT_ROTATIONS:
            raise bad("adduct_rotation", f"unknown rotation treatment {self.adduct_rotation!r}",
                      hint="use one of " + ", ".join(ADDUCT_ROTATIONS))
        if self.delta_E_down_cm1 is not None and not (math.isfinite(self.delta_E_down_cm1)
                                                       and self.delta_E_down_cm1 > 0):
            raise bad("delta_E_down_cm1", f"<dE>down must be positive, got {self.delta_E_down_cm1!r}")
        if self.delta_E_down_cm1 is None and self.pressure_method == "master_equation":
            raise bad("delta_E_down_cm1", "the master equation needs <dE>down",
                      hint="give delta_E_down_cm1 or pressure_method = \"strong_collision\"")
        if not math.isfinite(self.delta_E_temperature_exponent):
            raise bad("delta_E_temperature_exponent", "must be a number")
        if self.temperature_K is not None:
            t = tuple(float(x) for x in self.temperature_K)
            if not t or any(not (math.isfinite(x) and x > 0) for x in t):
                raise bad("temperature_K", "temperatures must be positive numbers in K")
            object.__setattr__(self, "temperature_K", t)
        if (self.reference_k0_m6_per_s is None) != (self.reference_k0_temperature_exponent is None):
            raise bad("reference_k0_temperature_exponent" if self.reference_k0_m6_per_s is not None
                      else "reference_k0_cm6_per_molecule2_s",
                      "give the reference k0 and its temperature exponent together")
        if self.reference_k0_m6_per_s is not None and not (math.isfinite(self.reference_k0_m6_per_s)
                                                           and self.reference_k0_m6_per_s > 0):
            raise bad("reference_k0_cm6_per_molecule2_s", "the reference k0 must be positive")

    def delta_E_down_J_per_mol(self, temperature_K) -> np.ndarray | None:
        """<Delta E>down(T) [J/mol] on a temperature array, or None (strong collisions)."""
        if self.delta_E_down_cm1 is None:
            return None
        t = np.asarray(temperature_K, dtype=float)
        return self.delta_E_down_cm1 * CM1_J_PER_MOL * (t / DELTA_E_REFERENCE_T_K) ** self.delta_E_temperature_exponent

    def reference_k0(self, temperature_K) -> np.ndarray | None:
        """The evaluated k0(T) [m^6 molecule^-2 s^-1], or None."""
        if self.reference_k0_m6_per_s is None:
            return None
        t = np.asarray(temperature_K, dtype=float)
        return self.reference_k0_m6_per_s * (t / 300.0) ** self.reference_k0_temperature_exponent
