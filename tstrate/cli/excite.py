"""``tstrate excite``: fraction of energised molecules that react before collisions deactivate them."""

from __future__ import annotations

HELP = "energised molecules: k(E) and the fraction reacting before deactivation, against pressure and altitude"
DESCRIPTION = """\
An excitation (photon or overtone) on top of the thermal energy of the
reactant of a unimolecular channel: RRKM k(E) there (same model as
`tstrate falloff`), the collision frequency Z [M], and the fraction that reacts
before deactivation - Stern-Volmer k(E) / (k(E) + beta_c Z [M]) and, when a
<dE>down is known, stepwise deactivation - at the pressures of [conditions]
and along an altitude profile (U.S. Standard Atmosphere 1976 or a CSV file
with altitude_km, temperature_K and pressure_<unit> columns).

The excitations are the study's [[excitation]] tables, or one given here with
--wavelength, --wavenumber or --energy (then --channel, --temperature,
--profile, --altitude, --delta-e-down and --collision-efficiency apply to it).
An excitation below the barrier gives fraction 0 and a warning.

JSON output (--json): "study", "title", "bath_gas" and "excitations", each with
name, channel, excitation, excitation_energy_kJ_per_mol/_cm1, below_threshold,
barrier_zpe_kJ_per_mol, grain_cm1, k_of_E {energy_kJ_per_mol, energy_cm1,
rate_constant_per_s}, pressure_scan and altitude_profile {temperature_K,
pressure_bar, number_density_per_cm3, energy_kJ_per_mol, rate_constant_per_s,
below_threshold, collision_rate_constant(_unit), collision_efficiency,
collision_frequency_per_s, fraction_stern_volmer, fraction_stepwise, ...;
altitude_km along a profile; half_quenching_pressure_bar for the scan}, warnings.
Every key with its unit: docs/outputs/command-json.md.

--plot DIR writes excitation_<name>_pressure, excitation_<name>_altitude,
excitation_<name>_populations (master-equation channels)
(the names tstrate run uses in its plots/ folder) and excitation_<name>_k_of_E,
each as PNG and SVG, into DIR. As in falloff, the state counts are harmonic:
the low-mode options do not apply.
"""

_CLI_ONLY = ("channel", "temperature", "profile", "altitude", "delta_e_down", "collision_efficiency",
             "no_pressures")


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_plot_option, add_quiet_option

    parser.add_argument("study", metavar="STUDY", help="study file (TOML)")
    g = parser.add_mutually_exclusive_group()
    g.add_argument("--wavelength", type=float, metavar="NM", help="excitation by a photon of this wavelength [nm]")
    g.add_argument("--wavenumber", type=float, metavar="CM1", help="excitation energy as a wavenumber [cm-1]")
    g.add_argument("--energy", nargs=2, metavar=("VALUE", "UNIT"),
                   help="excitation energy with its unit (kJ/mol, kcal/mol, eV, cm-1, ...)")
    parser.add_argument("--channel", metavar="NAME", help="unimolecular channel (default: the only one)")
    parser.add_argument("--temperature", "-T", nargs="+", type=float, metavar="K",
                        help="parent temperatures of the pressure scan [K] (default: [conditions])")
    parser.add_argument("--profile", metavar="NAME|CSV",
                        help="altitude profile: us-standard-1976 or a CSV file (default with --altitude: "
                             "us-standard-1976)")
    parser.add_argument("--altitude", nargs=2, type=float, metavar=("LOW", "HIGH"), help="altitude range [km]")
    parser.add_argument("--altitude-step", type=float, default=1.0, metavar="KM",
                        help="altitude step of the built-in profile [km] (default 1)")
    parser.add_argument("--delta-e-down", type=float, metavar="CM1",
                        help="<dE>down [cm-1] for stepwise deactivation (default: the channel's [falloff] value)")
    parser.add_argument("--collision-efficiency", type=float, metavar="BETA",
                        help="beta_c of the Stern-Volmer model (default: from [falloff])")
    parser.add_argument("--no-pressures", action="store_true",
                        help="skip the scan over the [conditions] pressures (profile only)")
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")
    add_plot_option(parser, "the fraction reacting against pressure and altitude, and k(E), of each excitation")
    add_quiet_option(parser)


def _cli_spec(args, study):
    """The excitation given on the command line, or None."""
    import math

    from tstrate.arrays import MAX_TEMPERATURE_K, temperatures_K
    from tstrate.errors import InputError
    from tstrate.physics.activation import photon_energy_J_per_mol
    from tstrate.io.profiles import read_profile_csv, resolve_profile
    from tstrate.model.settings import US_STANDARD_1976, ExcitationSpec
    from tstrate.units import energy_to_J_per_mol

    given = {"--wavelength": args.wavelength, "--wavenumber": args.wavenumber, "--energy": args.energy}
    option = next((k for k, v in given.items() if v is not None), None)
    if option is None:
        extra = [k for k in _CLI_ONLY if getattr(args, k) not in (None, False)]
        if extra:
            opt = "--" + extra[0].replace("_", "-")
            raise InputError(f"{opt} applies to an excitation given on the command line", field=opt,
                             hint="add --wavelength, --wavenumber or --energy (or edit [[excitation]] in the study)")
        return None
    if option == "--energy":
        value, unit = args.energy
        try:
            v = float(value)
        except ValueError:
            raise InputError(f"not a number: {value!r}", field="--energy") from None
        if not (math.isfinite(v) and v > 0):
            raise InputError(f"excitation energy must be positive, got {value}", field="--energy")
        energy = float(energy_to_J_per_mol(v, unit, field="--energy"))
        description = f"{v:g} {unit}"
    else:
        v = given[option]
        if not (math.isfinite(v) and v > 0):
            raise InputError(f"must be positive, got {v:g}", field=option)
        key = "wavelength_nm" if option == "--wavelength" else "wavenumber_cm1"
        energy = photon_energy_J_per_mol(**{key: v})
        description = f"wavelength {v:g} nm" if option == "--wavelength" else f"wavenumber {v:g} cm-1"
    uni = [c.name for c in study.channels if c.order == 1]
    channel = args.channel
    if channel is None:
        if len(uni) != 1:
            raise InputError("say which unimolecular channel" if uni else "the study has no unimolecular channel",
                             field="--channel", hint=", ".join(uni) or None)
        channel = uni[0]
    elif channel not in {c.name for c in study.channels}:
        raise InputError(f"unknown channel {channel!r}", field="--channel",
                         hint="use one of " + ", ".join(c.name for c in study.channels))
    if args.temperature is not None:
        temperatures_K(args.temperature, name="--temperature", ndim=1, upper_K=MAX_TEMPERATURE_K)
    profile = args.profile
    if profile is None and args.altitude is not None:
        profile = US_STANDARD_1976
    if profile is not None:
        profile = resolve_profile(profile, None)
        from pathlib import Path

        if profile != US_STANDARD_1976 and Path(profile).is_dir():
            raise InputError("is a folder, not a profile file", file=profile, field="--profile",
                             hint=f"give {US_STANDARD_1976} or a CSV file")
        if profile != US_STANDARD_1976 and not Path(profile).is_file():
            raise InputError("profile file does not exist", file=profile, field="--profile",
                             hint=f"give {US_STANDARD_1976} or a CSV file")
    if args.altitude is not None and not (0 <= args.altitude[0] <= args.altitude[1]):
        raise InputError(f"altitude range must be LOW HIGH in km with 0 <= LOW <= HIGH, got "
                         f"{args.altitude[0]:g} {args.altitude[1]:g}", field="--altitude")
    table = None if profile in (None, US_STANDARD_1976) else read_profile_csv(profile)
    try:
        return ExcitationSpec(
            name=description, channel=channel, energy_J_per_mol=energy, description=description,
            temperature_K=tuple(args.temperature) if args.temperature else None,
            delta_E_down_cm1=args.delta_e_down, collision_efficiency=args.collision_efficiency,
            pressure_scan=False if args.no_pressures else None, profile=profile,
            altitude_range_km=tuple(args.altitude) if args.altitude else None,
            altitude_step_km=args.altitude_step,
            profile_table=table)
    except InputError as exc:
        # name the option instead of the spec's field
        opt = {"delta_E_down_cm1": "--delta-e-down", "collision_efficiency": "--collision-efficiency",
               "altitude_km": "--altitude", "altitude_step_km": "--altitude-step",
               "temperature_K": "--temperature", "energy": option}.get((exc.field or "").split(".")[-1], option)
        raise InputError(exc.problem, field=opt, hint=exc.hint) from None


def _f(x) -> str:
    return f"{x:.4g}"


def _print_result(res, rec) -> None:
    from tstrate.cli.common import format_table
    from tstrate.physics.states import CM1_J_PER_MOL

    m = res.model
    print(f"\n{res.spec.name}: {m.reactant.name} excited by {res.spec.description} "
          f"({rec['excitation_energy_kJ_per_mol']:.2f} kJ/mol, {rec['excitation_energy_cm1']:.0f} cm-1) plus its "
          f"thermal energy; channel {res.spec.channel}, E0 = {m.barrier_J_per_mol / 1e3:.2f} kJ/mol "
          f"({m.barrier_J_per_mol / CM1_J_PER_MOL:.0f} cm-1), tunnelling in k(E): {m.tunnelling}, "
          f"grain {m.grain_cm1:.4g} cm-1")
    if res.below_threshold:
        print("  below threshold everywhere: the fraction reacting is 0")
    scan = rec["pressure_scan"]
    if scan is not None:
        print("pressure scan (Stern-Volmer / stepwise fraction reacting):")
        by_p = scan["pressure_bar"] is not None
        head = ["T/K", "E/(kJ mol-1)", "k(E)/s-1", "beta_c", "p/bar" if by_p else "[M]/cm-3", "Z[M]/s-1",
                "Stern-Volmer", "stepwise"]
        rows = []
        for i, t in enumerate(scan["temperature_K"]):
            for j in range(len(scan["fraction_stern_volmer"][i])):
                x = scan["pressure_bar"][j] if by_p else scan["number_density_per_cm3"][i][j]
                step = scan["fraction_stepwise"]
                rows.append([f"{t:g}", f"{scan['energy_kJ_per_mol'][i]:.2f}", _f(scan["rate_constant_per_s"][i]),
                             f"{scan['collision_efficiency'][i]:.3g}", _f(x),
                             _f(scan["collision_frequency_per_s"][i][j]), _f(scan["fraction_stern_volmer"][i][j]),
                             "-" if step is None else _f(step[i][j])])
        print(format_table(head, rows))
        half = [f"{t:g} K: {p:.3g} bar" for t, p in zip(scan["temperature_K"], scan["half_quenching_pressure_bar"])
                if p == p]
        if half:
            print("pressure where half react (Stern-Volmer): " + "; ".join(half))
    prof = rec["altitude_profile"]
    if prof is not None:
        print(f"along {prof['source']}:")
        step = prof["fraction_stepwise"]
        rows = [[f"{z:g}", f"{t:.1f}", _f(p), _f(k), _f(zm), _f(sv), "-" if step is None else _f(step[i])]
                for i, (z, t, p, k, zm, sv) in enumerate(zip(
                    prof["altitude_km"], prof["temperature_K"], prof["pressure_bar"], prof["rate_constant_per_s"],
                    prof["collision_frequency_per_s"], prof["fraction_stern_volmer"]))]
        print(format_table(["z/km", "T/K", "p/bar", "k(E)/s-1", "Z[M]/s-1", "Stern-Volmer", "stepwise"], rows))


def run(args) -> int:
    import sys

    from tstrate.cli.common import check_plot_dir, print_json, progress_wrapper, write_figure
    from tstrate.errors import InputError
    from tstrate.io.study import read_study
    from tstrate.output.pressure_records import excitation_record
    from tstrate.study.excitations import study_excitations

    from tstrate.cli.common import plot_formats_from_args

    formats = plot_formats_from_args(args)
    folder = check_plot_dir(args.plot) if args.plot else None
    study = read_study(args.study)
    spec = _cli_spec(args, study)
    try:
        results = study_excitations(study, None if spec is None else [spec], progress=progress_wrapper(args, "excite"))
    except InputError as exc:
        if spec is None or exc.file is not None:
            raise
        # an error about the command-line excitation names its key: name the option instead
        key = exc.field or ""
        opt = {"channel": "--channel", "altitude_km": "--altitude", "profile": "--profile",
               "temperature_K": "--temperature", "delta_E_down_cm1": "--delta-e-down",
               "collision_efficiency": "--collision-efficiency"}.get(key)
        if opt is None:  # what the study lacks (pressures in [conditions])
            raise InputError(exc.problem, file=study.file, field="conditions", hint=exc.hint) from None
        raise InputError(exc.problem, file=exc.file, field=opt, hint=exc.hint) from None
    for res in results:
        for w in res.warnings:
            print(f"tstrate excite: warning: {w}", file=sys.stderr)
    written = []
    if folder is not None:
        from tstrate.output.plots import figure_stem
        from tstrate.output.pressure_plots import (excitation_populations_figure, rate_energy_figure,
                                                   yield_altitude_figure, yield_pressure_figure)

        inputs = [study.file, *study.species_files.values()]
        for res in results:
            name = res.spec.name
            if res.pressure is not None:
                written += write_figure(yield_pressure_figure(res), folder,
                                        figure_stem("excitation", name, "pressure"), inputs, formats)
            if res.profile is not None:
                written += write_figure(yield_altitude_figure(res), folder,
                                        figure_stem("excitation", name, "altitude"), inputs, formats)
            written += write_figure(rate_energy_figure(res), folder, figure_stem("excitation", name, "k_of_E"),
                                    inputs, formats)
            fig = excitation_populations_figure(res)
            if fig is not None:
                written += write_figure(fig, folder, figure_stem("excitation", name, "populations"), inputs,
                                         formats)
    records = [excitation_record(r, study.conditions.rate_units) for r in results]
    if args.json:
        from tstrate.output.pressure_records import excitation_document
        from tstrate.study.falloff import bath_parameters

        print_json(excitation_document(study, records, bath_parameters(study).name, written))
        return 0
    print(study.title)
    for res, rec in zip(results, records):
        _print_result(res, rec)
    for path in written:
        print(f"plot written to {path}")
    return 0
