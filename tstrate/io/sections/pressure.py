"""Study-file sections for pressure dependence: ``[falloff]`` and ``[[excitation]]``.

Registered in :data:`tstrate.io.study.SECTION_READERS`; each reader gets the whole
parsed study file (a :class:`~tstrate.io.tables.Table`) and the study read so far.
Pressures and the bath gas come from ``[conditions]`` (``pressure_bar`` ...,
``bath_gas``).

``[falloff]`` (optional; every key optional)::

    [falloff]
    grain_cm1 = 10                    # energy grain [cm-1] (refined if coarser than 1/3 of the lowest mode)
    energy_above_barrier_cm1 = 40000  # grid length above E0 [cm-1] (default: automatic)
    delta_E_down_cm1 = 200            # <dE>down [cm-1] -> beta_c(T) by Troe's relation, or
    # delta_E_all_cm1 = -30           # <dE> over all collisions [cm-1] (negative), or
    # collision_efficiency = 0.2      # beta_c directly; none of the three: strong collisions
    delta_E_temperature_exponent = 0  # <dE>(T) = <dE>(300 K) (T / 300 K)^n
    collision_integral = "neufeld"    # or "troe"
    fit_T2 = false                    # also fit Troe's T**
    pressure_method = "master_equation"  # or "strong_collision" (default)
    master_equation_grain_cm1 = 30    # grain of the master equation [cm-1] (default: automatic)

    [falloff.channels.bare]           # per-channel overrides, same keys
    delta_E_down_cm1 = 300

``[[excitation]]`` (one table per excitation)::

    [[excitation]]
    name = "OH overtone"              # optional label
    channel = "bare"                  # a unimolecular channel (optional when there is only one)
    wavenumber_cm1 = 7200             # one of wavenumber_cm1, wavelength_nm, energy = { value, unit }
    temperature_K = [220]             # parent temperature(s) of the pressure scan (default: [conditions])
    delta_E_down_cm1 = 200            # stepwise model (default: the channel's [falloff] value)
    collision_efficiency = 0.3        # Stern-Volmer beta_c (default: from [falloff])
    pressures = true                  # scan the [conditions] pressures (default: when there are any)
    profile = "us-standard-1976"      # or a CSV file relative to this study file
    altitude_km = [0, 86]             # altitude range along the profile [km]
    altitude_step_km = 1              # step of the built-in profile [km]
"""

from __future__ import annotations

from pathlib import Path

from tstrate.errors import InputError
from tstrate.io.keys import Key, Keys, field_default
from tstrate.io.profiles import read_profile_csv, resolve_profile
from tstrate.io.tables import Table, energy_keys
from tstrate.model import Study
from tstrate.model.settings import (DELTA_E_REFERENCE_T_K, PRESSURE_METHODS, US_STANDARD_1976, ExcitationSpec,
                                    FalloffSection, FalloffSettings)
from tstrate.physics.activation import photon_energy_J_per_mol
from tstrate.physics.collisions import COLLISION_INTEGRALS as _COLLISION_INTEGRALS
from tstrate.physics.unimolecular import MIN_SPAN_CM1, SPAN_IN_KT
from tstrate.units import PRESSURE_UNITS_PA, energy_to_J_per_mol

_SETTING_KEYS = ("grain_cm1", "energy_above_barrier_cm1", "collision_efficiency", "delta_E_down_cm1",
                 "delta_E_all_cm1", "delta_E_temperature_exponent", "collision_integral", "fit_T2",
                 "pressure_method", "master_equation_grain_cm1")
_TRANSFER_KEYS = ("collision_efficiency", "delta_E_down_cm1", "delta_E_all_cm1")

# ---- the keys of [falloff] and [[excitation]] (docs/study-file.md is generated from these)

_ONE_TRANSFER = "at most one of the three; none: strong collisions"


def _setting(name: str) -> object:
    return field_default(FalloffSettings, name)


_SETTINGS = (
    Key("grain_cm1", "number", "energy grain of the state counts; refined (with a warning) when too coarse "
        "for the lowest real wavenumbers", default=_setting("grain_cm1"), unit="cm-1"),
    Key("energy_above_barrier_cm1", "number", "how far the energy grid reaches above the barrier",
        default_text=f"the larger of {MIN_SPAN_CM1:g} cm-1 and {SPAN_IN_KT:g} k_B T at the highest temperature",
        unit="cm-1"),
    Key("delta_E_down_cm1", "number", "<dE>down, the mean energy removed in downward collisions (positive); "
        "gives the collision efficiency by Troe's weak-collision relation", required=_ONE_TRANSFER,
        unit="cm-1"),
    Key("delta_E_all_cm1", "number", "<dE>, the mean energy transferred over all collisions (negative)",
        required=_ONE_TRANSFER, unit="cm-1"),
    Key("collision_efficiency", "number", "the collision efficiency beta_c itself, 0 < beta_c <= 1",
        required=_ONE_TRANSFER, unit="1"),
    Key("delta_E_temperature_exponent", "number", f"n in <dE>(T) = <dE> (T / {DELTA_E_REFERENCE_T_K:g} K)^n",
        default=_setting("delta_E_temperature_exponent"), unit="1"),
    Key("collision_integral", "string", "the Lennard-Jones collision integral: Neufeld, Janzen and Aziz "
        "(1972) or Troe (1977)", default=_setting("collision_integral"), choices=tuple(_COLLISION_INTEGRALS)),
    Key("fit_T2", "true or false", "also fit Troe's T** (else the exp(-T**/T) term is left out)",
        default=_setting("fit_T2")),
    Key("pressure_method", "string", "how k(T, P) is computed: strong collisions scaled by the collision "
        "efficiency (closed form, quick), or the energy-grained master equation (exponential-down "
        "energy transfer with delta_E_down_cm1; strong-collider kernel without an energy-transfer key)",
        default=_setting("pressure_method"), choices=PRESSURE_METHODS),
    Key("master_equation_grain_cm1", "number", "grain of the master equation, rounded down to a multiple "
        "of grain_cm1", default_text="the coarsest multiple of grain_cm1 not above <dE>down / 8",
        unit="cm-1"),
)
FALLOFF_KEYS = Keys(("falloff",), "[falloff]",
                    "Pressure dependence of the unimolecular channels: RRKM k(E), then strong collisions scaled "
                    "by a collision efficiency or the energy-grained master equation (`pressure_method`), "
                    "Lindemann and fitted Troe parameters. Pressures and the bath "
                    "gas come from `[conditions]`; the reactant's species file needs `lennard_jones`. Every "
                    "key is optional.", _SETTINGS + (
                        Key("channels", "table", "per-channel overrides (`[falloff.channels.<channel>]` below)"),
                    ))
FALLOFF_CHANNELS_KEYS = Keys(("falloff", "channels"), "[falloff.channels]",
                             "Overrides by channel name.",
                             any_key=Key("<channel>", "table", "the settings of that channel "
                                         "(`[falloff.channels.<channel>]` below)"))
FALLOFF_CHANNEL_KEYS = Keys(("falloff", "channels", "*"), "[falloff.channels.<channel>]",
                            "The keys of `[falloff]` for one channel; each replaces the `[falloff]` value, "
                            "and any of the three energy-transfer keys replaces the `[falloff]` choice of "
                            "energy transfer.", _SETTINGS)
EXCITATION_KEYS = Keys(
    ("excitation", "[]"), "[[excitation]]",
    "One table per excitation: molecules of a unimolecular channel's reactant energised by a given "
    "energy (plus their mean thermal energy) react or are deactivated by collisions; followed against "
    "pressure (Stern-Volmer and a stepwise deactivation model) and along an altitude profile.", (
        Key("name", "string", "label of the excitation (unique)", default_text="`\"excitation <n>\"`"),
        Key("channel", "string", "a unimolecular channel", required="when the study has more than one "
            "unimolecular channel", default_text="the study's only unimolecular channel"),
        Key("wavenumber_cm1", "number", "the excitation energy as a photon wavenumber",
            required="one of `wavenumber_cm1` / `wavelength_nm` / `energy`", unit="cm-1"),
        Key("wavelength_nm", "number", "the excitation energy as a photon wavelength",
            required="one of `wavenumber_cm1` / `wavelength_nm` / `energy`", unit="nm"),
        Key("energy", "table", "the excitation energy `{ value = ..., unit = \"...\" }` (below)",
            required="one of `wavenumber_cm1` / `wavelength_nm` / `energy`"),
        Key("temperature_K", "number or list of numbers", "parent temperatures of the pressure scan",
            default_text="`[conditions] temperature_K`", unit="K"),
        Key("delta_E_down_cm1", "number", "<dE>down of the stepwise deactivation model",
            default_text="the channel's `[falloff]` value", unit="cm-1"),
        Key("collision_efficiency", "number", "beta_c of the Stern-Volmer model",
            default_text="from `[falloff]`", unit="1"),
        Key("pressures", "true or false", "scan the `[conditions]` pressures",
            default_text="true when `[conditions]` gives pressures"),
        Key("profile", "string", "an altitude profile", choices=(US_STANDARD_1976,),
            choices_note="or a CSV file, relative to the study file, with columns `altitude_km` (or "
            "`altitude_m`), `temperature_K` and `pressure_<unit>` (unit one of "
            + ", ".join(PRESSURE_UNITS_PA) + ")"),
        Key("altitude_km", "list of numbers", "[lowest, highest] altitude along the profile (needs `profile`)",
            default_text="the whole profile", unit="km"),
        Key("altitude_step_km", "number", "altitude step along the built-in profile",
            default=field_default(ExcitationSpec, "altitude_step_km"), unit="km"),
    ))
EXCITATION_ENERGY_KEYS = energy_keys(("excitation", "[]", "energy"), "[[excitation]] energy = { value, unit }",
                                     "The excitation energy, added to the mean thermal energy of the reactant.")


def _settings_values(t: Table) -> dict:
    out = {}
    for key in _SETTING_KEYS:
        if key in t:
            kind = {"collision_integral": str, "fit_T2": bool, "pressure_method": str}.get(key, float)
            out[key] = t.get(key, kind)
    return out


def read_falloff(t: Table, study: Study) -> FalloffSection:
    """Read ``[falloff]`` with its optional ``[falloff.channels.<name>]`` overrides."""
    ft = t.table("falloff")
    values = _settings_values(ft)
    default = ft.build(FalloffSettings, **values)
    channels = {}
    if "channels" in ft:
        ct = ft.table("channels")
        ct.reject_unknown(FALLOFF_CHANNELS_KEYS)
        names = {c.name for c in study.channels}
        for name in list(ct.data):
            if name not in names:
                raise ct.error(name, f"unknown channel {name!r}", hint="use one of " + ", ".join(sorted(names)))
            sub = ct.table(name)
            own = _settings_values(sub)
            sub.reject_unknown(FALLOFF_CHANNEL_KEYS)
            merged = dict(values)
            if any(k in own for k in _TRANSFER_KEYS):  # an override replaces the energy-transfer choice
                for k in _TRANSFER_KEYS:
                    merged.pop(k, None)
            merged.update(own)
            channels[name] = sub.build(FalloffSettings, **merged)
    ft.reject_unknown(FALLOFF_KEYS)
    return FalloffSection(default, channels)


def _excitation_energy(t: Table) -> tuple[float, str]:
    given = [k for k in ("wavelength_nm", "wavenumber_cm1", "energy") if k in t]
    if len(given) != 1:
        problem = "no excitation energy" if not given else f"give one of them only (found {', '.join(given)})"
        raise t.error(given[1] if len(given) > 1 else None, problem,
                      hint="give wavelength_nm, wavenumber_cm1 or energy = { value = ..., unit = \"kJ/mol\" }")
    key = given[0]
    if key == "energy":
        sub = t.table("energy")
        value, unit = sub.get("value", float), sub.get("unit", str)
        sub.reject_unknown(EXCITATION_ENERGY_KEYS)
        energy = energy_to_J_per_mol(value, unit, file=t.file, field=t.key("energy.unit"))
        if not energy > 0:
            raise t.error("energy.value", "excitation energy must be positive")
        return float(energy), f"{value:g} {unit}"
    value = t.get(key, float)
    try:
        energy = photon_energy_J_per_mol(**{key: value})
    except InputError as exc:
        raise t.error(key, exc.problem) from None
    return energy, (f"wavelength {value:g} nm" if key == "wavelength_nm" else f"wavenumber {value:g} cm-1")


def read_excitations(t: Table, study: Study) -> tuple[ExcitationSpec, ...]:
    """Read every ``[[excitation]]`` table."""
    uni = [c.name for c in study.channels if c.order == 1]
    base = Path(study.file).parent if study.file else None
    out = []
    for i, et in enumerate(t.tables("excitation")):
        name = et.get("name", str, f"excitation {i + 1}")
        if "channel" in et:
            channel = et.get("channel", str)
            known = {c.name: c for c in study.channels}
            if channel not in known:
                raise et.error("channel", f"unknown channel {channel!r}",
                               hint="use one of " + ", ".join(known))
            if known[channel].order != 1:
                raise et.error("channel", f"channel {channel!r} has {known[channel].order} reactants; an "
                                          "energised molecule needs a unimolecular channel")
        elif len(uni) == 1:
            channel = uni[0]
        else:
            raise et.error("channel", "missing: say which unimolecular channel" if uni else
                           "the study has no unimolecular channel", hint=", ".join(uni) or None)
        energy, description = _excitation_energy(et)
        temps = None
        if "temperature_K" in et:
            raw = et.data["temperature_K"]
            temps = tuple([et.get("temperature_K", float)] if not isinstance(raw, list)
                          else et.number_list("temperature_K", min_length=1))
        profile = et.get("profile", str, None)
        if profile is not None:
            profile = resolve_profile(profile, base)
            if profile != US_STANDARD_1976 and not Path(profile).is_file():
                raise et.error("profile", f"profile file {et.data['profile']!r} does not exist",
                               hint=f"give \"{US_STANDARD_1976}\" or a CSV file relative to the study file")
        rng = None
        if "altitude_km" in et:
            vals = et.number_list("altitude_km")
            if len(vals) != 2:
                raise et.error("altitude_km", f"expected [lowest, highest] in km, got {len(vals)} values")
            if profile is None:
                raise et.error("altitude_km", "an altitude range needs a profile",
                               hint=f"add profile = \"{US_STANDARD_1976}\"")
            rng = (vals[0], vals[1])
        table = None
        if profile is not None and profile != US_STANDARD_1976:
            table = read_profile_csv(profile)
        spec = et.build(
            ExcitationSpec, name=name, channel=channel, energy_J_per_mol=energy, description=description,
            temperature_K=temps, delta_E_down_cm1=et.get("delta_E_down_cm1", float, None),
            collision_efficiency=et.get("collision_efficiency", float, None),
            pressure_scan=et.get("pressures", bool, None), profile=profile, altitude_range_km=rng,
            altitude_step_km=et.get("altitude_step_km", float, field_default(ExcitationSpec, "altitude_step_km")),
            profile_table=table)
        et.reject_unknown(EXCITATION_KEYS)
        if spec.pressure_scan and not (study.conditions.pressure_Pa.size or study.conditions.number_density_m3.size):
            raise et.error("pressures", "a pressure scan needs pressures in [conditions], and the study gives none")
        out.append(spec)
    names = [s.name for s in out]
    dup = sorted({n for n in names if names.count(n) > 1})
    if dup:
        raise t.error("excitation", f"excitation name {dup[0]!r} used twice")
    return tuple(out)
