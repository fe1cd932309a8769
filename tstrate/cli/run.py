"""``tstrate run``: the main job - everything a study asks for, written to one folder."""

from __future__ import annotations

HELP = "compute everything a study asks for and write mechanism, fits, tables, plots and a report"
DESCRIPTION = """\
Reads a study, computes thermochemistry, rate constants (with tunnelling),
catalysed-route comparisons, falloff and energised-molecule yields where the
study asks for them, fits Arrhenius/Troe/NASA parameters, and writes an output
folder with mechanism.yaml (Cantera format), fits.json, fits.csv, results.json,
inputs.json (input files with SHA-256 hashes), tables/*.csv, plots/*.png
(and .svg with --plot-formats png,svg; none with --no-plots), report.md and
report.html (self-contained, PNG figures embedded).

Figures carry at most --plot-max-channels channels each (the fastest by rate
constant; the Arrhenius plot per molecularity, comparisons by their largest
ratio to the bare route), and falloff figures are drawn for that many channels
at most (the fastest by k_inf); every channel is in the tables.

Without --output the folder is tstrate-output/<study name>, or a new
<name>-2, -3, ... when that exists. An explicit --output that exists is
replaced only with --force. Outputs are written atomically: an interrupted run
leaves nothing half-written. Inputs are never overwritten.

With --json, a summary (output folder, files, fitted expressions, warnings) is
printed on stdout. Every key of every file, with its unit: docs/outputs/.
"""


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_low_mode_options, add_quiet_option, add_standard_pressure_option

    parser.add_argument("study", metavar="STUDY", help="study file (TOML)")
    parser.add_argument("--output", "-o", metavar="DIR",
                        help="output folder (default tstrate-output/<study name>, never reused)")
    parser.add_argument("--force", action="store_true", help="replace an existing --output folder")
    from tstrate.cli.common import add_plot_formats_option
    from tstrate.output.plots import MAX_CHANNELS_PER_FIGURE

    add_low_mode_options(parser)
    add_standard_pressure_option(parser)
    add_plot_formats_option(parser)
    parser.add_argument("--no-plots", action="store_true",
                        help="draw no figures (tables, fits and the report are written as usual)")
    parser.add_argument("--plot-workers", type=int, default=1, metavar="N",
                        help="draw the figures in N processes (default 1: in this process)")
    parser.add_argument("--plot-max-channels", type=int, default=MAX_CHANNELS_PER_FIGURE, metavar="N",
                        help=f"at most N channels per figure and N falloff figures, the fastest "
                             f"(default {MAX_CHANNELS_PER_FIGURE})")
    add_quiet_option(parser)
    parser.add_argument("--json", action="store_true", help="machine-readable summary on stdout")


def run(args) -> int:
    import sys
    from pathlib import Path

    from tstrate.cli.common import low_modes_from_args, print_json, show_progress, standard_pressure_from_args
    from tstrate.io.study import read_study
    from tstrate.output.folder import default_output_dir, write_outputs
    from tstrate.study.run import compute_study, steps

    from tstrate.cli.common import plot_formats_from_args
    from tstrate.output.plots import PlotSettings

    low_modes = low_modes_from_args(args)
    plots = PlotSettings(formats=plot_formats_from_args(args), draw=not args.no_plots,
                         workers=args.plot_workers, max_channels=args.plot_max_channels)
    study = standard_pressure_from_args(args, read_study(args.study))
    out = Path(args.output) if args.output else default_output_dir(study)
    if out.exists() and not args.force:
        from tstrate.errors import InputError

        raise InputError("output folder exists", file=str(out),
                         hint="pass --force to replace it, or choose another --output")
    names = steps(study) + ["tables", "plots", "report"]
    bar = None
    if show_progress(args):
        from tqdm import tqdm

        bar = tqdm(total=len(names), desc="tstrate run", unit="step", file=sys.stderr)

    def progress(name):
        if bar is not None:
            bar.set_postfix_str(name)
            bar.update(1)

    def uncertainty_progress(stage, done, total):
        if bar is not None:
            bar.set_postfix_str(f"uncertainty: {stage} {done}/{total}")

    try:
        result = compute_study(study, low_modes=low_modes, progress=progress,
                               uncertainty_progress=uncertainty_progress)
        files = write_outputs(result, out, force=args.force, progress=progress, plots=plots)
    finally:
        if bar is not None:
            bar.close()
    if args.json:
        from tstrate.output.run_files import run_summary

        print_json(run_summary(result, out, files))
        return 0
    from tstrate.output.run_files import export_summary

    print(f"{study.title}\nwrote {len(files)} files to {out}/ (report: {out / 'report.html'})")
    for ar in result.associations or ():
        ratio = ar.k0_ratio
        t = ar.temperature_K
        line = (f"  {ar.name} (barrierless, {ar.falloff.method}): k0 = {ar.falloff.k0_m6_per_s[0] * 1e12:.3g} "
                f"to {ar.falloff.k0_m6_per_s[-1] * 1e12:.3g} cm6 molecule-2 s-1 over {t[0]:g}-{t[-1]:g} K")
        if ratio is not None:
            line += f", {ratio.min():.2f}-{ratio.max():.2f} x the evaluated k0"
        print(line + " (tables/association_*.csv)")
    for cf in result.fits.channels:
        print(f"  {cf.name}: {export_summary(cf, study.conditions.rate_units)}")
    for w in result.warnings:
        print(f"warning: {w}", file=sys.stderr)
    print("Estimates bounded by the electronic-structure inputs; check against experiment and "
          "evaluated data before use.")
    return 0
