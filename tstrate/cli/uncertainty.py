"""``tstrate uncertainty``: how sure each number of a study is (bands, f(T), f298 and g, what matters most)."""

from __future__ import annotations

HELP = "uncertainty and sensitivity of every result of a study (quasi-Monte Carlo)"
DESCRIPTION = """\
Samples the uncertain inputs of a study (species energies, frequency scale
factors, imaginary frequencies, <Delta E>down, Lennard-Jones parameters,
catalyst abundances) with a scrambled Sobol sequence or a Latin hypercube and
propagates them through every step the study asks for: rate constants with
tunnelling, equilibria, route comparisons and crossover abundances (exact for
each sample), falloff (first order in ln(k/k_inf)) and energised-molecule
fractions (first order in logit). Prints, per channel, the one-sigma
uncertainty factor f(T) at the ends of the grid, the evaluation pair f298 and
g of f(T) = f298 exp|g (1/T - 1/298 K)| (JPL Publication 19-5), and the input
that matters most.

The inputs come from the study's [uncertainty] section (docs/study-file.md);
without one, every species gets the defaults of the method named in its
[provenance] (common practice). --samples, --seed and --sampling override
the section. `tstrate run` computes the same when the study has the section.

With --json: the record results.json holds under "uncertainty", with "study"
and "title" (docs/outputs/command-json.md).
"""


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_low_mode_options, add_quiet_option

    parser.add_argument("study", metavar="STUDY", help="study file (TOML)")
    parser.add_argument("--samples", "-n", type=int, metavar="N", help="number of samples (default: the study's, "
                        "else 1000)")
    parser.add_argument("--seed", type=int, metavar="S", help="seed of the sampling (default: the study's, else 1)")
    parser.add_argument("--sampling", choices=("sobol", "latin-hypercube"),
                        help="sampling design (default: the study's, else sobol)")
    add_low_mode_options(parser)
    add_quiet_option(parser)
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")


def compute(study_path, *, samples=None, seed=None, sampling=None, low_modes=None, progress=None):
    """(study result, StudyUncertainty) of a study file with optional overrides of its settings."""
    from dataclasses import replace

    from tstrate.io.study import read_study
    from tstrate.model.uncertainty import UncertaintySettings
    from tstrate.physics.thermo import HARMONIC
    from tstrate.study.run import compute_study
    from tstrate.study.uncertainty import study_uncertainty

    study = read_study(study_path)
    settings = study.sections.get("uncertainty") or UncertaintySettings()
    changes = {k: v for k, v in (("samples", samples), ("seed", seed), ("sampling", sampling)) if v is not None}
    if changes:
        from tstrate.errors import InputError

        try:
            settings = replace(settings, **changes)
        except InputError as exc:
            raise InputError(exc.problem, field="--" + (exc.field or "samples"), hint=exc.hint) from None
    sections = {k: v for k, v in study.sections.items() if k != "uncertainty"}
    result = compute_study(replace(study, sections=sections), low_modes=low_modes or HARMONIC)
    return result, study_uncertainty(result, settings, progress=progress)


def run(args) -> int:
    import sys

    from tstrate.cli.common import format_table, low_modes_from_args, print_json, show_progress

    bar = None
    if show_progress(args):
        from tqdm import tqdm

        bar = tqdm(total=1, desc="tstrate uncertainty", unit="", file=sys.stderr)

    def progress(stage, done, total):
        if bar is not None:
            bar.total = total
            bar.desc = stage
            bar.n = done
            bar.refresh()

    try:
        result, unc = compute(args.study, samples=args.samples, seed=args.seed, sampling=args.sampling,
                              low_modes=low_modes_from_args(args), progress=progress)
    finally:
        if bar is not None:
            bar.close()
    if args.json:
        from tstrate.output.uncertainty_records import uncertainty_record

        print_json({"study": result.study.file, "title": result.study.title,
                    **uncertainty_record(unc, result.study.conditions.rate_units)})
        return 0
    print(f"{result.study.title}\n{unc.samples} samples ({unc.settings.sampling}, seed {unc.settings.seed}); "
          f"f: one-sigma factor, k/f .. k f holds 68 % of the samples")
    rows = []
    for c in unc.channels:
        top = c.k.ranking[0] if c.k.ranking else None
        rows.append([c.name, f"{c.temperature_K[0]:g}", c.k.factor[0], f"{c.temperature_K[-1]:g}", c.k.factor[-1],
                     c.f298, c.g_K, "-" if top is None else f"{top.factor} ({100 * top.share:.0f} %)"])
    print(format_table(["channel", "T1 [K]", "f(T1)", "T2 [K]", "f(T2)", "f298", "g [K]", "matters most"], rows))
    for cu in unc.comparisons:
        for r in cu.routes:
            top = r.ratio.ranking[0] if r.ratio.ranking else None
            print(f"{cu.name}: {r.channel}/bare ({cu.abundance_labels[0]}): f = {r.ratio.factor[0, 0]:.3g} at "
                  f"{cu.temperature_K[0]:g} K" + ("" if top is None else f"; matters most: {top.factor}"))
    for w in unc.warnings:
        print(f"warning: {w}", file=sys.stderr)
    return 0
