"""``tstrate falloff``: pressure-dependent rate constants of a study's unimolecular channels."""

from __future__ import annotations

HELP = "falloff k(T, p) of the unimolecular channels: RRKM k(E), strong collisions, Lindemann and Troe"
DESCRIPTION = """\
Pressure dependence of every unimolecular [[channel]] of a study: RRKM k(E)
from the reactant and transition-state wavenumbers and rotational constants
(Eckart-corrected sum of states for channels with tunnelling = "eckart"),
then k(T, p) in the strong-collision picture scaled by the collision
efficiency beta_c, at the temperatures and pressures of [conditions] in the
bath gas of [conditions] (bath_gas = "N2", "O2", "air", "CO2", "Ar", "He",
"H2O", or a study species with lennard_jones). The reactant's species file
needs lennard_jones = { sigma_A = ..., epsilon_K = ... }. Grain, energy
transfer (delta_E_down_cm1, delta_E_all_cm1 or collision_efficiency) and
per-channel overrides come from the optional [falloff] section. Channels of
higher order are listed as not computed.

Also given: the limits k_inf(T) and k_0(T), the Lindemann-Hinshelwood curve,
a Troe fit (a, T***, T*, optionally T**, Fcent(T)) with its error, and
k_inf / canonical TST as a check. The Troe labels are canonical: T*** < T*
(a and 1 - a swapped with them when needed, which leaves Fcent unchanged);
a fit with one decaying term has a = 0 and T* = T***, and terms below 1e-4
of Fcent at every temperature are written at the bound where they vanish.
Parameters at a bound of the fit are named in parameters_at_bound and in a
warning.

JSON output (--json): "study", "title", "bath_gas", "bath_gas_lennard_jones",
"channels" (each: name, order, temperature_K, pressure_bar (a list over pressure, or
over temperature of lists when the study gives number densities), number_density_per_cm3,
rate_constant [T][p], rate_constant_unit, k_high_pressure(_unit), k_low_pressure(_unit),
lindemann_rate_constant, canonical_tst_rate_constant, k_high_pressure_over_canonical_tst,
troe {a, T3_K, T1_K, T2_K, parameters_at_bound (names of the parameters at a bound of the fit),
Fcent, k_low_pressure(_unit, _kind), max_deviation_percent,
rms_deviation_percent, fitted_on, rate_constant, max_deviation_on_study_grid_percent},
bath_gas, collision_efficiency, collisions {...}, grain_cm1, requested_grain_cm1,
barrier_zpe_kJ_per_mol, reaction_path_degeneracy, centrifugal_factor, external_rotation, rotors,
warnings),
"not_computed" (name, order, reason) and "warnings". Every key with its unit:
docs/outputs/command-json.md.

The state counts are those of harmonic oscillators (and the free rotors a
species file declares), so the low-mode options of thermo, rates, compare and
run do not apply here; k_inf / canonical TST compares with harmonic TST.

--plot DIR writes falloff_<channel>.png and .svg into DIR, the names tstrate
run uses in its plots/ folder.
"""


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_plot_option, add_quiet_option

    parser.add_argument("study", metavar="STUDY", help="study file (TOML)")
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")
    add_plot_option(parser, "the falloff curves of each channel")
    add_quiet_option(parser)


def _energy_transfer_text(settings) -> str:
    kind = settings.energy_transfer
    if kind == "strong":
        return "strong collisions"
    if kind == "efficiency":
        return "given in [falloff]"
    value = settings.delta_E_down_cm1 if kind == "down" else settings.delta_E_all_cm1
    text = f"{'<dE>down' if kind == 'down' else '<dE>'} = {value:g} cm-1"
    if settings.delta_E_temperature_exponent:
        text += f" (T/300 K)^{settings.delta_E_temperature_exponent:g}"
    return text + ", Troe's relation"


def _fmt(x) -> str:
    return f"{x:.4g}"


def run(args) -> int:
    import sys

    import numpy as np

    from tstrate.cli.common import check_plot_dir, format_table, print_json, progress_wrapper, write_figure
    from tstrate.io.study import read_study
    from tstrate.output.pressure_records import study_falloff_record
    from tstrate.study.falloff import study_falloff

    from tstrate.cli.common import plot_formats_from_args

    formats = plot_formats_from_args(args)
    folder = check_plot_dir(args.plot) if args.plot else None
    study = read_study(args.study)
    result = study_falloff(study, progress=progress_wrapper(args, "falloff"))
    for w in result.warnings:
        print(f"tstrate falloff: warning: {w}", file=sys.stderr)
    written = []
    if folder is not None:
        from tstrate.output.plots import figure_stem
        from tstrate.output.pressure_plots import falloff_figure

        inputs = [study.file, *study.species_files.values()]
        for cf in result.channels:
            written += write_figure(falloff_figure(cf), folder, figure_stem("falloff", cf.name), inputs,
                                    formats)
    record = study_falloff_record(result, study.conditions.rate_units)
    if args.json:
        record["plots"] = [str(p) for p in written]
        print_json(record)
        return 0

    print(study.title)
    print(f"bath gas {result.bath.name} (sigma {result.bath.sigma_A:g} A, epsilon/k {result.bath.epsilon_K:g} K)")
    for cf, rec in zip(result.channels, record["channels"]):
        m = cf.model
        eff = cf.efficiency
        print(f"\n{cf.name}: {m.reactant.name} -> {m.transition_state.name}; E0 = {m.barrier_J_per_mol / 1e3:.2f} "
              f"kJ/mol (ZPE-corrected); grain {m.grain_cm1:.4g} cm-1; path degeneracy {m.path_degeneracy:g}; "
              f"tunnelling in k(E): {m.tunnelling}")
        how = _energy_transfer_text(cf.settings)
        print(f"collisions with {cf.bath.name}: Z_LJ {_fmt(rec['collisions']['collision_rate_constant'][0])}"
              f"..{_fmt(rec['collisions']['collision_rate_constant'][-1])} {rec['k_low_pressure_unit']}; "
              f"beta_c {_fmt(eff.beta.min())}..{_fmt(eff.beta.max())} ({how})")
        p_head = ([f"{p:.3g} bar" for p in rec["pressure_bar"]] if cf.pressure_Pa is not None
                  else [f"{x:.3g} cm-3" for x in rec["number_density_per_cm3"][0]])
        rows = [[f"{t:g}"] + [_fmt(v) for v in rec["rate_constant"][i]]
                + [_fmt(rec["k_high_pressure"][i]), _fmt(rec["k_low_pressure"][i]),
                   f"{rec['k_high_pressure_over_canonical_tst'][i]:.5f}"]
                for i, t in enumerate(cf.temperature_K)]
        print(f"k(T, p) / {rec['rate_constant_unit']}:")
        print(format_table(["T/K"] + p_head + [f"k_inf/{rec['k_high_pressure_unit']}",
                                                f"k_0/({rec['k_low_pressure_unit']})", "k_inf/TST"], rows))
        fit = cf.troe
        t2 = "" if fit.T2_K is None else f", T** = {fit.T2_K:.4g} K"
        print(f"Troe: a = {fit.a:.4g}, T*** = {fit.T3_K:.4g} K, T* = {fit.T1_K:.4g} K{t2}; Fcent = "
              + ", ".join(f"{f:.3g}" for f in cf.troe_Fcent)
              + f" at T = {', '.join(f'{t:g}' for t in cf.temperature_K)} K")
        print(f"Troe fit error: max {100 * fit.max_rel_deviation:.2g} %, rms "
              f"{100 * fit.rms_rel_deviation:.2g} % over {cf.troe_fit_number_density_m3.size} densities per "
              f"temperature ({rec['troe']['k_low_pressure_kind']})")
        if np.any(cf.troe_k0_m3_per_s != cf.k_low_pressure_m3_per_s):
            print("  effective k_0 of the fit / " + rec["k_low_pressure_unit"] + ": "
                  + ", ".join(_fmt(v) for v in rec["troe"]["k_low_pressure"]))
    for s in result.skipped:
        print(f"\n{s.name} (order {s.order}): {s.reason}")
    for path in written:
        print(f"plot written to {path}")
    print("\nStrong-collision falloff scaled by beta_c; estimates bounded by the electronic-structure and "
          "energy-transfer inputs.")
    return 0
