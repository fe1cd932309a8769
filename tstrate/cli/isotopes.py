"""``tstrate isotopes``: quick isotope questions on one study."""

from __future__ import annotations

HELP = "kinetic isotope effects, beta factors, fractionation and three-isotope exponents of a study"
DESCRIPTION = """\
Isotopologues of a study: the kinetic isotope effect k_light / k_heavy of every
channel (with and without tunnelling, split into translational, rotational,
symmetry, zero-point, excited-state and tunnelling factors), the beta factor
(1000 ln beta, permil) of every minimum, equilibrium fractionation epsilon
(permil) between species pairs, and three-isotope exponents theta against
their mass-dependent references.

The substitutions come from the study's [isotopes] section, or from --isotope
(every atom of the element in every species of a channel, e.g. --isotope D
13C 18O), which replaces it. Every substituted species needs a [hessian].

JSON output (--json): "study", "title", "low_modes", "isotopes" (the record of
results.json, docs/outputs/command-json.md) and "plots".

With --plot DIR: the KIE against T as DIR/isotopes_kie.png and .svg.
"""


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_low_mode_options, add_plot_option

    parser.add_argument("study", metavar="STUDY", help="study file (TOML)")
    parser.add_argument("--isotope", nargs="+", metavar="ISOTOPE",
                        help="isotopes to substitute everywhere (D, 13C, 15N, 17O, 18O, 33S, 34S, 36S, ...), "
                             "instead of the study's [isotopes] substitutions")
    parser.add_argument("--temperature", "-T", nargs="+", type=float, metavar="K",
                        help="temperatures in K (default: [isotopes] temperature_K, else the study's)")
    parser.add_argument("--pair", nargs=2, action="append", metavar=("A", "B"),
                        help="a species pair for equilibrium fractionation alpha = beta_A / beta_B (repeatable; "
                             "adds to the study's)")
    add_low_mode_options(parser)
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")
    add_plot_option(parser, "the KIE against T")


def compute(study_path, isotopes=None, temperatures=None, pairs=None, low_modes="harmonic"):
    """(study, IsotopeResult) for a study file; ``isotopes`` (names) replace its substitutions."""
    from tstrate.arrays import temperatures_K
    from tstrate.errors import InputError
    from tstrate.io.study import read_study
    from tstrate.physics.isotopes import isotope_label, parse_isotope
    from tstrate.physics.thermo import LowModes
    from tstrate.study.isotopes import IsotopeSettings, Substitution, study_isotopes

    if not isinstance(low_modes, LowModes):
        low_modes = LowModes(low_modes)
    study = read_study(study_path)
    settings = study.sections.get("isotopes")
    if isotopes:
        subs = []
        for name in isotopes:
            try:
                el, a = parse_isotope(name)
            except InputError as exc:
                raise InputError(exc.problem, field="--isotope", hint=exc.hint) from None
            subs.append(Substitution(isotope_label(el, a), el, a))
        settings = IsotopeSettings(tuple(subs), settings.fractionation if settings else (),
                                   settings.temperature_K if settings else None,
                                   settings.pools if settings else {})
    if settings is None:
        raise InputError("the study has no [isotopes] section", file=study.file, field="isotopes",
                         hint="add one, or give --isotope D 13C ...")
    for a, b in pairs or ():
        for x in (a, b):
            if x not in study.species and x not in settings.pools:
                raise InputError(f"unknown species or pool {x!r}", field="--pair")
    if pairs:
        settings = IsotopeSettings(settings.substitutions, settings.fractionation + tuple(map(tuple, pairs)),
                                   settings.temperature_K, settings.pools)
    if temperatures is not None:
        temperatures_K(temperatures, name="--temperature", ndim=1)
    study.sections["isotopes"] = settings
    comparisons = None
    if study.sections.get("comparison"):
        from tstrate.study.routes import study_comparisons

        comparisons = study_comparisons(study, low_modes=low_modes)
    return study, study_isotopes(study, low_modes=low_modes, temperature_K=temperatures, comparisons=comparisons)


def run(args) -> int:
    from tstrate.cli.common import check_plot_dir, format_table, low_modes_from_args, print_json, write_figure
    from tstrate.output.isotope_records import isotopes_record
    from tstrate.physics.isotopes import KIE_FACTORS, MASS_DEPENDENCE_STATEMENT

    from tstrate.cli.common import plot_formats_from_args

    formats = plot_formats_from_args(args)
    folder = check_plot_dir(args.plot) if args.plot else None
    low_modes = low_modes_from_args(args)
    study, res = compute(args.study, args.isotope, args.temperature, args.pair, low_modes)
    record = isotopes_record(res)
    written = []
    if folder is not None:
        from tstrate.output.isotope_plots import kie_figure
        from tstrate.output.plots import figure_stem

        written = write_figure(kie_figure(record, study.title), folder, figure_stem("isotopes"),
                               [study.file, *study.species_files.values()], formats)
    if args.json:
        print_json({"study": study.file, "title": study.title,
                    "low_modes": {"method": low_modes.method, "cutoff_cm1": low_modes.cutoff_cm1},
                    "isotopes": record, "plots": [str(p) for p in written]})
        return 0
    T = res.temperature_K
    print(study.title)
    for s in res.substitutions:
        lab = s.substitution.label
        for k in s.kie:
            print(f"\n{lab}, channel {k.channel}: KIE = k_light / k_heavy (classical limit nu‡ ratio "
                  f"{k.imaginary_frequency_ratio:.4f})")
            rows = [[t, k.kie[i], k.kie_no_tunnelling[i], *[k.factors[n][i] for n in KIE_FACTORS]]
                    for i, t in enumerate(T)]
            print(format_table(["T/K", "KIE", "no tunnelling", "trans", "rot", "sym", "ZPE", "exc", "tunnel"],
                               rows, "{:.5g}"))
        if s.betas:
            print(f"\n{lab}: 1000 ln beta / permil")
            print(format_table(["T/K", *[b.species for b in s.betas]],
                               [[t, *[1000 * b.ln_beta[i] for b in s.betas]] for i, t in enumerate(T)], "{:.2f}"))
    if res.fractionation:
        print("\nequilibrium fractionation epsilon / permil")
        print(format_table(["T/K", *[f"{f.label} {f.species_a}/{f.species_b}" for f in res.fractionation]],
                           [[t, *[1000 * (f.alpha[i] - 1) for f in res.fractionation]] for i, t in enumerate(T)],
                           "{:.3f}"))
    for t in res.three_isotope:
        print(f"\ntheta {'/'.join(t.labels)} {t.kind} {t.name}: {t.theta[0]:.4f} to {t.theta[-1]:.4f} "
              f"(references: high-T {t.references.equilibrium_high_T:.4f}, low-T "
              f"{t.references.equilibrium_low_T:.4f}, kinetic classical {t.references.kinetic_classical:.4f})")
    for m in res.route_mix:
        print(f"\n{m.label}, route mix of {m.comparison!r} at {m.abundance}: KIE {m.kie[0]:.4g} "
              f"({m.temperature_K[0]:g} K) to {m.kie[-1]:.4g} ({m.temperature_K[-1]:g} K)")
    for path in written:
        print(f"plot written to {path}")
    print("\n" + MASS_DEPENDENCE_STATEMENT)
    return 0
