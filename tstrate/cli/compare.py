"""``tstrate compare``: bare against catalysed routes of a study's [[comparison]] sections."""

from __future__ import annotations

HELP = "compare bare and catalysed routes (one or two catalyst molecules, or the dimer)"
DESCRIPTION = """\
For every [[comparison]] of a study file: the pseudo-first-order loss rate of
the substrate by the bare route (k_uni) and by each assisted route (k2 [X],
k3 [X]^2, or k2' [X2] with the dimer from 2 X <=> X2), their ratios to the
bare route, the catalyst abundance at which each route overtakes the bare one,
the temperature ranges where it does at the given abundances, the
complex-formation equilibrium constants and a barrier table. Rate constants
are canonical TST in the high-pressure limit, per free substrate molecule.

JSON output (--json): one object with "study", "title" and a list
"comparisons" with one entry per comparison and abundance (a scenario). Each
has name, abundance (kind, value, unit, label, phase, total_pressure_bar,
text), reference, substrate, catalyst, catalyst_dimer, temperature_K,
catalyst_number_density_per_cm3, dimer_number_density_per_cm3,
dimer_Kp_per_bar, free_substrate_fraction, barriers (per channel:
barrier_classical_kJ_per_mol, barrier_zpe_kJ_per_mol,
barrier_from_complex_classical_kJ_per_mol, barrier_from_complex_zpe_kJ_per_mol,
complex_binding_zpe_kJ_per_mol, delta_G_activation_kJ_per_mol (1 bar),
delta_G_activation_from_complex_kJ_per_mol) and routes (per channel: kind,
catalyst_power, rate_constant with rate_constant_unit, complex, complex_Kc with
complex_Kc_unit, complex_Kp with complex_Kp_unit, k_unimolecular_from_complex_per_s,
complex_per_free_substrate, pseudo_first_order_per_s, ratio_to_bare,
crossover_number_density_per_cm3, crossover_abundance with
crossover_abundance_unit, faster_than_bare_K: a list of {low_K, high_K,
low_at_grid_edge, high_at_grid_edge}). Arrays run over temperature_K. Also
"low_modes" (method, cutoff_cm1) and "plots". Every
key with its unit: docs/outputs/command-json.md.

With --plot DIR: for each comparison, an energy profile, the ratio against
temperature and the ratio against the catalyst abundance, as PNG and SVG,
named compare_<comparison>_energy_profile, _ratio_vs_temperature and
_ratio_vs_abundance as in the plots/ folder of tstrate run (JSON: "plots",
the files written).
"""


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_low_mode_options, add_plot_option, add_quiet_option

    parser.add_argument("study", metavar="STUDY", help="study file (TOML) with [[comparison]] sections")
    add_low_mode_options(parser)
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")
    add_plot_option(parser, "the three figures of each comparison")
    add_quiet_option(parser)


def compute(study_path, low_modes="harmonic"):
    """The study and its comparison results; ``low_modes`` a LowModes or the name of one."""
    from tstrate.errors import InputError
    from tstrate.io.study import read_study
    from tstrate.study.routes import study_comparisons
    from tstrate.physics.thermo import LowModes

    if not isinstance(low_modes, LowModes):
        low_modes = LowModes(low_modes)
    study = read_study(study_path)
    if not study.sections.get("comparison"):
        raise InputError("the study has no [[comparison]] section", file=study.file,
                         hint="add one, see docs/study-file.md")
    return study, study_comparisons(study, low_modes=low_modes)


def write_plots(results, directory, inputs=(), progress=None, formats=("png",)) -> list:
    """Write the figures of every comparison into ``directory`` (in each of ``formats``); returns the paths.

    ``inputs`` are never overwritten; ``progress`` wraps the loop over the comparisons.
    """
    from tstrate.cli.common import write_figure
    from tstrate.output.compare_plots import comparison_figures
    from tstrate.output.plots import figure_stem

    written = []
    for res in (progress or (lambda it: it))(results):
        for panel, fig in comparison_figures(res).items():
            written += write_figure(fig, directory, figure_stem("comparison", res.comparison.name, panel), inputs,
                                    formats)
    return written


def _print_scenario(rec) -> None:
    from tstrate.cli.common import format_table

    print(f"\n== {rec['name']}: {rec['abundance']['text']}")
    routes = rec["routes"]
    dimer = rec["dimer_number_density_per_cm3"]
    header = ["T/K", f"[{rec['catalyst']}]/cm-3"] + ([f"[{rec['catalyst_dimer']}]/cm-3"] if dimer is not None else [])
    header += [f"k'({r['channel']})/s-1" for r in routes] + [f"{r['channel']}/bare" for r in routes[1:]]
    rows = []
    for i, t in enumerate(rec["temperature_K"]):
        row = [f"{t:g}", f"{rec['catalyst_number_density_per_cm3'][i]:.3g}"]
        row += [f"{dimer[i]:.3g}"] if dimer is not None else []
        row += [f"{r['pseudo_first_order_per_s'][i]:.3g}" for r in routes]
        row += [f"{r['ratio_to_bare'][i]:.3g}" for r in routes[1:]]
        rows.append(row)
    print(format_table(header, rows))
    free = rec["free_substrate_fraction"]
    print(f"free {rec['substrate']} (not held in the complexes): {min(free):.3g} to {max(free):.3g} "
          "of the total; rates above are per free molecule")
    print(f"\ncrossover abundance (route = bare), {rec['catalyst']} molecule cm-3"
          + ("" if rec["abundance"]["kind"] == "number_density"
             else f" and {routes[1]['crossover_abundance_unit']}") + ":")
    header = ["T/K"] + [r["channel"] for r in routes[1:]]
    rows = []
    for i, t in enumerate(rec["temperature_K"]):
        row = [f"{t:g}"]
        for r in routes[1:]:
            text = f"{r['crossover_number_density_per_cm3'][i]:.3g}"
            if rec["abundance"]["kind"] != "number_density":
                text += f" ({r['crossover_abundance'][i]:.3g})"
            row.append(text)
        rows.append(row)
    print(format_table(header, rows))
    for r in routes[1:]:
        ranges = r["faster_than_bare_K"]
        if not ranges:
            text = "never, on this temperature grid"
        else:
            parts = []
            for x in ranges:
                if x["low_at_grid_edge"] and x["high_at_grid_edge"]:
                    parts.append(f"over the whole grid, {x['low_K']:g}-{x['high_K']:g} K")
                    continue
                lo = f"{x['low_K']:.1f} K" + (" (grid start)" if x["low_at_grid_edge"] else "")
                hi = f"{x['high_K']:.1f} K" + (" (grid end)" if x["high_at_grid_edge"] else "")
                parts.append(f"{lo} to {hi}")
            text = "; ".join(parts)
        print(f"{r['channel']} faster than bare: {text}")


def _print_barriers(rec) -> None:
    from tstrate.cli.common import format_table

    def f(v):
        return "-" if v is None else f"{v:.1f}"

    print(f"\n== {rec['name']}: barriers (kJ/mol; from the separated reactants and from the complex)")
    rows = [[b["channel"], f(b["barrier_classical_kJ_per_mol"]), f(b["barrier_zpe_kJ_per_mol"]),
             f(b["barrier_from_complex_classical_kJ_per_mol"]), f(b["barrier_from_complex_zpe_kJ_per_mol"]),
             f(b["complex_binding_zpe_kJ_per_mol"])] for b in rec["barriers"]]
    print(format_table(["channel", "classical", "ZPE", "classical(cx)", "ZPE(cx)", "complex"], rows))
    T = rec["temperature_K"]
    header = ["T/K"] + [f"dG‡({b['channel']})" for b in rec["barriers"]]
    rows = [[f"{t:g}"] + [f"{b['delta_G_activation_kJ_per_mol'][i]:.1f}" for b in rec["barriers"]]
            for i, t in enumerate(T)]
    print("\nactivation Gibbs energy from the separated reactants, 1 bar standard state (kJ/mol):")
    print(format_table(header, rows))


def run(args) -> int:
    import sys

    from tstrate.cli.common import (check_plot_dir, low_modes_from_args, print_json,
                                    progress_wrapper)

    from tstrate.cli.common import plot_formats_from_args

    formats = plot_formats_from_args(args)
    folder = check_plot_dir(args.plot) if args.plot else None
    low_modes = low_modes_from_args(args)
    study, results = compute(args.study, low_modes)
    from tstrate.output.compare_records import comparison_records

    for res in results:
        for w in res.warnings:
            print(f"tstrate compare: warning: {w}", file=sys.stderr)

    records = comparison_records(results, study.conditions.rate_units)
    written = [] if folder is None else write_plots(
        results, folder, [study.file, *study.species_files.values()], progress_wrapper(args, "compare plots"),
        formats)
    if args.json:
        from tstrate.output.compare_records import comparison_document

        print_json(comparison_document(study, records, low_modes, plots=written))
        return 0
    print(study.title)
    shown = set()
    for rec in records:
        if rec["name"] not in shown:
            shown.add(rec["name"])
            _print_barriers(rec)
        _print_scenario(rec)
    if written:
        print(f"\n{len(written)} plot files written to {args.plot}")
    print(f"\nHigh-pressure-limit TST rates per free substrate molecule; low modes: {low_modes.label}; "
          "estimates bounded by the electronic-structure inputs.")
    return 0
