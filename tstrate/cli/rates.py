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
reverse_rate_constant(_unit), Kc (Kc_unit), Kp_1bar, barrier_classical_kJ_per_mol,
barrier_zpe_kJ_per_mol, barrier_from_complex_*_kJ_per_mol,
reaction_energy_zpe_kJ_per_mol, imaginary_frequency_cm1, tunnelling_*_kJ_per_mol,
delta_H_activation_kJ_per_mol, delta_S_activation_J_per_mol_K,
delta_G_activation_kJ_per_mol, reaction_path_degeneracy. Every key with its
unit: docs/outputs/command-json.md.
"""


def add_arguments(parser) -> None:
    parser.add_argument("study", metavar="STUDY", help="study file (TOML)")
    parser.add_argument("--temperature", "-T", nargs="+", type=float, metavar="K",
                        help="temperatures in K (default: the study's [conditions] temperature_K)")
    parser.add_argument("--low-modes", choices=["harmonic", "grimme", "truhlar"], default="harmonic",
                        help="treatment of low real modes (default harmonic)")
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")
    parser.add_argument("--plot", metavar="FILE",
                        help="write an Arrhenius plot (log10 k against 1000/T); format from the suffix")


def compute(study_path, temperatures=None, low_modes="harmonic"):
    from tstrate.errors import InputError
    from tstrate.io.study import read_study
    from tstrate.output.records import channel_rates_record
    from tstrate.physics.thermo import LowModes
    from tstrate.study.rates import study_rates

    study = read_study(study_path)
    if not study.channels:
        raise InputError("the study has no [[channel]] to compute", file=study.file, field="channel")
    if temperatures is not None:
        import numpy as np

        t = np.asarray(temperatures, dtype=float)
        if np.any(t <= 0) or not np.all(np.isfinite(t)):
            raise InputError("temperatures must be positive (kelvin)", field="--temperature")
    results = study_rates(study, low_modes=LowModes(low_modes), temperature_K=temperatures)
    return study, [channel_rates_record(r, study.conditions.rate_units) for r in results]


def run(args) -> int:
    from tstrate.cli.common import format_table, print_json

    written = []
    if args.plot:
        from tstrate.output.plots import plot_format

        plot_format(args.plot)  # an unwritable format fails before any work
    study, records = compute(args.study, args.temperature, args.low_modes)
    if args.plot:
        from tstrate.output.plots import arrhenius_figure, save_figure

        written = save_figure(arrhenius_figure(records, study.title), args.plot)
    if args.json:
        from tstrate.output.records import rates_document

        print_json(rates_document(study, records))
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
    for path in written:
        print(f"\nplot written to {path}")
    print("\nEstimates bounded by the electronic-structure inputs; check against experiment and "
          "evaluated data before use.")
    return 0
