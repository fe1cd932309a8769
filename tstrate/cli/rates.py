"""``tstrate rates``: canonical TST rate constants of a study's channels."""

from __future__ import annotations

HELP = "transition-state-theory k(T) with tunnelling for each channel of a study"
DESCRIPTION = """\
Canonical transition-state theory (Eyring) for every [[channel]] of a study
file, with the channel's tunnelling model, the reverse rate constant by
detailed balance, equilibrium constants and activation quantities.

JSON output (--json): one object with "study", "temperature_K" and a list
"channels"; each has name, order, temperature_K, rate_constant,
rate_constant_unit, rate_constant_no_tunnelling, kappa, tunnelling,
reverse_rate_constant(_unit), Kc (Kc_unit), Kp_1bar (Kp_1atm at a 1 atm standard
pressure), standard_pressure_bar, barrier_classical_kJ_per_mol,
barrier_zpe_kJ_per_mol, barrier_from_complex_*_kJ_per_mol,
reaction_energy_zpe_kJ_per_mol, imaginary_frequency_cm1, tunnelling_*_kJ_per_mol,
delta_H_activation_kJ_per_mol, delta_S_activation_J_per_mol_K,
delta_G_activation_kJ_per_mol, reaction_path_degeneracy; "low_modes"
(method, cutoff_cm1) and "plots" (the files --plot wrote). Every key with its
unit: docs/outputs/command-json.md.

With --plot DIR: the Arrhenius plot (log10 k against 1000/T, dashed without
tunnelling) as DIR/arrhenius.png and .svg, the names tstrate run uses.
"""


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_low_mode_options, add_plot_option, add_standard_pressure_option

    parser.add_argument("study", metavar="STUDY", help="study file (TOML)")
    parser.add_argument("--temperature", "-T", nargs="+", type=float, metavar="K",
                        help="temperatures in K (default: the study's [conditions] temperature_K)")
    add_low_mode_options(parser)
    add_standard_pressure_option(parser)
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")
    add_plot_option(parser, "the Arrhenius plot (log10 k against 1000/T)")


def compute(study_path, temperatures=None, low_modes="harmonic", args=None):
    """The study and one record per channel; ``low_modes`` a LowModes or the name of one."""
    from tstrate.errors import InputError
    from tstrate.io.study import read_study
    from tstrate.output.records import channel_rates_record
    from tstrate.physics.thermo import LowModes
    import sys

    from tstrate.arrays import MAX_TEMPERATURE_K, temperatures_K
    from tstrate.study.rates import capture_limits, study_rates

    if not isinstance(low_modes, LowModes):
        low_modes = LowModes(low_modes)
    study = read_study(study_path)
    if args is not None:
        from tstrate.cli.common import standard_pressure_from_args

        study = standard_pressure_from_args(args, study)
    if not study.channels:
        raise InputError("the study has no [[channel]] to compute", file=study.file, field="channel")
    if temperatures is not None:
        temperatures_K(temperatures, name="--temperature", ndim=1, upper_K=MAX_TEMPERATURE_K)
    results = study_rates(study, low_modes=low_modes, temperature_K=temperatures)
    for w in capture_limits(study, results)[1]:
        print(f"tstrate rates: warning: {w}", file=sys.stderr)
    return study, [channel_rates_record(r, study.conditions.rate_units) for r in results]


def run(args) -> int:
    from tstrate.cli.common import (check_plot_dir, format_table, low_modes_from_args,
                                    print_json, write_figure)

    written = []
    from tstrate.cli.common import plot_formats_from_args

    formats = plot_formats_from_args(args)
    folder = check_plot_dir(args.plot) if args.plot else None  # fails before any work
    low_modes = low_modes_from_args(args)
    study, records = compute(args.study, args.temperature, low_modes, args)
    if folder is not None:
        from tstrate.output.plots import arrhenius_figure, figure_stem

        written = write_figure(arrhenius_figure(records, study.title), folder, figure_stem("arrhenius"),
                               [study.file, *study.species_files.values()], formats)
    if args.json:
        from tstrate.output.records import rates_document

        print_json(rates_document(study, records, low_modes, plots=written))
        return 0
    print(study.title)
    for r in records:
        print(f"\n{r['name']}: barrier {r['barrier_zpe_kJ_per_mol']:.2f} kJ/mol (ZPE-corrected), "
              f"{r['barrier_classical_kJ_per_mol']:.2f} kJ/mol (classical); imaginary frequency "
              f"{r['imaginary_frequency_cm1']:.0f}i cm-1; tunnelling {r['tunnelling']}; "
              f"path degeneracy {r['reaction_path_degeneracy']:g}")
        rows = [[t, k, kap, k0, dg] for t, k, kap, k0, dg in zip(
            r["temperature_K"], r["rate_constant"], r["kappa"], r["rate_constant_no_tunnelling"],
            r["delta_G_activation_kJ_per_mol"])]
        print(format_table(["T/K", f"k/({r['rate_constant_unit']})", "kappa", "k(no tunnelling)",
                            "dG‡/(kJ mol-1)"], rows, "{:.4g}"))
    if written:
        print()
    for path in written:
        print(f"plot written to {path}")
    print(f"\nLow modes: {low_modes.label}. Estimates bounded by the electronic-structure inputs; check "
          "against experiment and evaluated data before use.")
    return 0
