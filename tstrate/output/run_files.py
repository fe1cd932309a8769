"""Everything ``tstrate run`` writes into its output folder.

Layout::

    report.md, report.html      the report (HTML self-contained, plots embedded)
    mechanism.yaml              Cantera-format mechanism (species NASA7 + fitted reactions)
    fits.json, fits.csv         fitted parameters with their quality and range
    results.json                every computed number, units in the keys
    inputs.json                 the input files with their SHA-256 hashes
    tables/*.csv                thermochemistry, rate constants, comparisons, falloff
    plots/*.png, plots/*.svg    figures (PNG always; SVG when asked for; none with --no-plots)

The caller (:func:`tstrate.output.folder.write_outputs`) gives a fresh temporary
folder and renames it into place, so this module writes plainly.
"""

from __future__ import annotations

import datetime as _dt
from pathlib import Path
from typing import Callable

import numpy as np

from tstrate.output import report as rp
from tstrate.physics.thermo import (DEFAULT_LOW_MODE_CUTOFF_CM1, LOW_MODES_FREQUENCY_FLOOR, LOW_MODES_HARMONIC,
                                    LOW_MODES_ROTOR_ENTROPY_BLEND)

CAUTION = ("Caution: every number here is an estimate bounded by the electronic-structure inputs "
           "(an error of 4 kJ/mol in a barrier changes k at 200 K about tenfold; semi-empirical "
           "barriers can be off by tens of kJ/mol). Check against experiment and established "
           "evaluations (e.g. NASA/JPL, IUPAC) before use in models or decisions that matter.")

METHODS = (
    "Thermochemistry: ideal gas, rigid rotor, harmonic oscillator, electronic levels; standard state "
    "1 bar unless the study asks for 1 atm (stated in results.json's conventions); symmetry numbers and optical isomers from the geometry unless overridden. Atomic masses "
    "are those of the most common isotope of each element (as quantum-chemistry programs use), not "
    "the natural-abundance average masses of thermochemical tables; the difference in S is small "
    "(about 0.005 J/(mol K) for H2O at 298 K) but isotopologues must be given explicitly.",
    "Rate constants: canonical transition-state theory (Eyring) from partition functions per unit "
    "volume and the zero-point-corrected barrier, in logarithms; reaction-path degeneracy carried by "
    "the symmetry numbers unless overridden; channels through a pre-reactive complex in the "
    "high-pressure limit (complex in equilibrium with the reactants).",
    "Tunnelling: Wigner (1932), Skodje-Truhlar (1981) or unsymmetrical Eckart (Eckart 1930; Johnston "
    "and Heicklen 1962) from the imaginary frequency and the zero-point-corrected barriers; Eckart "
    "integrated numerically, no tunnelling below the separated reactants by default.",
    "Reverse rate constants by detailed balance; Kc and Kp from the same partition functions.",
    "Catalysed routes: catalyst abundance from number density, pressure, mixing ratio or relative "
    "humidity (Murphy and Koop 2005 saturation pressures); complexes in equilibrium.",
    "Falloff: RRKM k(E) on an energy grain (Beyer-Swinehart counts), strong collisions scaled by a "
    "collision efficiency (Troe's weak-collision relation), Lennard-Jones collision rates; Troe "
    "parameters fitted to the computed curves.",
    "Fits: Arrhenius and modified Arrhenius by least squares on ln k, Chebyshev expansions of log10 k, "
    "per-pressure Arrhenius tables; per channel the mechanism holds the simplest form that meets the "
    "tolerance on the grid and between grid points (or the form asked for, flagged when it misses); NASA "
    "7-coefficient polynomials (two ranges) fitted to the thermochemistry, enthalpies shifted by "
    "per-element offsets (not enthalpies of formation).",
)


def low_modes_method_text(low_modes) -> str:
    """The report's methods entry on the low-mode treatment, with the sources of the options."""
    text = f"Low modes: {low_modes.description}."
    if low_modes.method == LOW_MODES_HARMONIC:
        text += (f" The quasi-harmonic alternatives are {LOW_MODES_ROTOR_ENTROPY_BLEND} (Grimme 2012) and "
                 f"{LOW_MODES_FREQUENCY_FLOOR} (Ribeiro, Marenich, Cramer and Truhlar 2011), option --low-modes.")
    return text


def _results_json(result) -> dict:
    from tstrate.output.records import (capture_limit_record, channel_rates_record, conventions_record,
                                        thermo_record)

    study = result.study
    units = study.conditions.rate_units
    doc = {
        "study": study.file,
        "title": study.title,
        "low_modes": {"method": result.low_modes.method, "cutoff_cm1": result.low_modes.cutoff_cm1},
        "conventions": conventions_record(study.conditions.standard_pressure_Pa),
        "thermochemistry": [thermo_record(t, study.species[t.species]) for t in result.thermo],
        "channels": [channel_rates_record(r, units) for r in result.rates],
        "capture_limits": [capture_limit_record(c, units) for c in result.capture],
        "warnings": list(result.warnings),
    }
    if result.comparisons is not None:
        from tstrate.output.compare_records import comparison_records

        doc["comparisons"] = comparison_records(result.comparisons, units)
    if result.falloff is not None:
        from tstrate.output.pressure_records import study_falloff_record

        doc["falloff"] = study_falloff_record(result.falloff, units)
    if result.excitations is not None:
        from tstrate.output.pressure_records import excitation_record

        doc["excitations"] = [excitation_record(e, units) for e in result.excitations]
    if getattr(result, "isotopes", None) is not None:
        from tstrate.output.isotope_records import isotopes_record

        doc["isotopes"] = isotopes_record(result.isotopes)
    if getattr(result, "conformers", None):
        from tstrate.output.conformer_records import conformer_effect_records, conformer_records

        doc["conformers"] = conformer_records(result)
        doc["conformer_effects"] = conformer_effect_records(result)
    if getattr(result, "uncertainty", None) is not None:
        from tstrate.output.uncertainty_records import uncertainty_record

        doc["uncertainty"] = uncertainty_record(result.uncertainty, units)
    if getattr(result, "references", ()):
        from tstrate.output.evaluation_records import references_record

        doc["references"] = references_record(result)
    return doc


def fits_document(result) -> dict:
    """fits.json: the study's fits plus modified Arrhenius fits at each tabulated pressure."""
    from tstrate.output.fit_records import arrhenius_record, fits_to_json

    units = result.study.conditions.rate_units
    doc = fits_to_json(result.fits, units)
    if result.pressure_fits:
        doc["fits_at_each_pressure"] = {
            name: [{"pressure_bar": None if p is None else p / 1e5,
                    "number_density_at_highest_T_per_cm3": n * 1e-6,
                    **arrhenius_record(fit)} for p, n, fit in table.rows()]
            for name, table in result.pressure_fits.items()}
    if getattr(result, "uncertainty", None) is not None:
        from tstrate.output.uncertainty_records import fits_uncertainty_record

        doc["uncertainty"] = fits_uncertainty_record(result.uncertainty)
    return doc


def run_summary(result, output_dir, files) -> dict:
    """The ``tstrate run --json`` summary: the folder, the files written, and per channel the
    expression mechanism.yaml holds (its kind, record and measured deviation), its method and warnings."""
    from tstrate.output.fit_records import export_record

    units = result.study.conditions.rate_units
    fits = result.fits
    return {
        "study": result.study.file, "output_dir": str(output_dir), "files": [str(f) for f in files],
        "channels": [{"name": c.name, "mechanism_kind": c.mechanism_kind, "method": c.method,
                      "tunnelling": c.tunnelling, "includes_tunnelling": c.includes_tunnelling,
                      "mechanism_fit": export_record(c, units),
                      "warnings": list(c.warnings)} for c in fits.channels],
        "tolerance_missed": [c.name for c in fits.channels
                             if not c.export.meets_tolerance and np.isfinite(c.export.deviation.max_rel)],
        "warnings": list(result.warnings),
    }


def export_summary(cf, rate_units=None) -> str:
    """One line on what mechanism.yaml holds for a channel and how far it is from the computed rates."""
    from tstrate.output.mechanism import deviation_text

    e = cf.export
    text = e.label
    if e.kind in ("arrhenius", "modified_arrhenius"):
        from tstrate.output.records import rate_unit

        f = e.expression
        unit = rate_unit(f.order, rate_units)
        text += (f": A = {f.A_in(unit):.3e} {unit}" + (f", n = {f.n:.3g} (T0 = {f.T0_K:g} K)" if f.modified else "")
                 + f", Ea = {f.Ea_J_per_mol / 1e3:.2f} kJ/mol")
    elif e.kind == "troe":
        t = e.expression
        text += (f": a = {t.a:.4g}, T*** = {t.T3_K:.4g} K, T* = {t.T1_K:.4g} K"
                 + ("" if t.T2_K is None else f", T** = {t.T2_K:.4g} K")
                 + ("" if t.max_rel_deviation is None else
                    f"; Troe fit with tabulated limits {100 * t.max_rel_deviation:.3g} %"))
    return f"{text}; {deviation_text(cf)}"


def pressure_fit_rows(result):
    header = ["channel", "pressure [bar]", "A [s-1]", "n [1]", "T0 [K]", "Ea [kJ mol-1]", "Tmin [K]",
              "Tmax [K]", "max deviation [%]", "rms deviation [%]"]
    rows = [[name, None if p is None else p / 1e5, f.A, f.n, f.T0_K, f.Ea_J_per_mol / 1e3, f.Tmin_K,
             f.Tmax_K, 100 * f.max_rel_deviation, 100 * f.rms_rel_deviation]
            for name, table in result.pressure_fits.items() for p, _, f in table.rows()]
    return header, rows


def write_all(result, folder: Path, *, progress: Callable[[str], None] | None = None,
              plots=None) -> list[Path]:
    """Write every output file into ``folder``; returns the paths written.

    ``plots``: a :class:`tstrate.output.plots.PlotSettings` (default: PNG only, in this process).
    """
    from tstrate.output.plots import PlotSettings

    plots = PlotSettings() if plots is None else plots
    from tstrate.io.files import atomic_write_text
    from tstrate.output.mechanism import write_mechanism
    from tstrate.output.tables import (csv_text, json_text, write_fits_csv, write_json, write_rate_tables,
                                       write_thermo_csv)
    from tstrate.io.files import file_sha256
    from tstrate.output.folder import input_files

    def step(name):
        if progress:
            progress(name)

    folder = Path(folder)
    (folder / "tables").mkdir()
    if plots.draw:
        (folder / "plots").mkdir()
    study = result.study
    units = study.conditions.rate_units
    written: list[Path] = []
    figures: list[tuple[str, Path, str]] = []  # (section, png, caption)
    unc = getattr(result, "uncertainty", None)

    step("tables")
    written.append(write_mechanism(result.fits, folder / "mechanism.yaml"))
    # every expression written is read back from the file and measured again
    from tstrate.output.mechanism_check import check_written

    checked = check_written(result.fits, mechanism_path=folder / "mechanism.yaml")
    fits_doc = fits_document(result)
    for rec in fits_doc["channels"]:
        dev = checked[rec["name"]].get("mechanism_yaml")
        rec["mechanism"]["checked_from_mechanism_yaml_max_deviation_percent"] = (
            None if dev is None or not np.isfinite(dev.max_rel) else 100.0 * dev.max_rel)
    written.append(write_json(folder / "fits.json", fits_doc))
    import json as _json

    check_written(result.fits, fits_json=_json.loads((folder / "fits.json").read_text()))
    written.append(write_fits_csv(folder / "fits.csv", result.fits, units))
    written.append(write_thermo_csv(folder / "tables" / "thermochemistry.csv", result.thermo))
    written += write_rate_tables(folder / "tables", result.rates, units)
    if result.pressure_fits:
        atomic_write_text(folder / "tables" / "fits_at_each_pressure.csv", csv_text(*pressure_fit_rows(result)))
        written.append(folder / "tables" / "fits_at_each_pressure.csv")
    if result.isotopes is not None:
        from tstrate.output.isotope_records import CSV_TABLES

        for name, rows in CSV_TABLES.items():
            atomic_write_text(folder / "tables" / name, csv_text(*rows(result.isotopes)))
            written.append(folder / "tables" / name)
    if getattr(result, "conformers", None):
        from tstrate.output.conformer_records import conformer_rows

        atomic_write_text(folder / "tables" / "conformers.csv", csv_text(*conformer_rows(result)))
        written.append(folder / "tables" / "conformers.csv")
    if getattr(result, "associations", None):
        from tstrate.output.association_records import HEADER, association_rows
        from tstrate.output.tables import safe_file_stem

        for ar in result.associations:
            path = folder / "tables" / f"association_{safe_file_stem(ar.name)}.csv"
            atomic_write_text(path, csv_text(HEADER, association_rows(ar)))
            written.append(path)
    unc = getattr(result, "uncertainty", None)
    if unc is not None:
        from tstrate.output import uncertainty_records as ur

        for stem, (header, rows) in (("uncertainty", ur.uncertainty_table(unc, units)),
                                     ("uncertainty_ranking", ur.sensitivity_table(unc))):
            atomic_write_text(folder / "tables" / f"{stem}.csv", csv_text(header, rows))
            written.append(folder / "tables" / f"{stem}.csv")
    from tstrate.output import evaluation_records as er

    evaluation = None
    if getattr(result, "evaluation_forms", None) is not None:
        evaluation = er.evaluation_forms_record(result)
        written.append(write_json(folder / "evaluation_forms.json", evaluation))
        atomic_write_text(folder / "tables" / "evaluation_forms.csv", csv_text(*er.evaluation_forms_table(evaluation)))
        written.append(folder / "tables" / "evaluation_forms.csv")
    doc = _results_json(result)
    if "references" in doc:
        atomic_write_text(folder / "tables" / "reference_ratios.csv", csv_text(*er.reference_ratio_table(doc["references"])))
        written.append(folder / "tables" / "reference_ratios.csv")
    atomic_write_text(folder / "results.json", json_text(doc))
    written.append(folder / "results.json")
    inputs = [{"file": f, "sha256": file_sha256(f)} for f in input_files(study)]
    atomic_write_text(folder / "inputs.json", json_text({"inputs": inputs}))
    written.append(folder / "inputs.json")

    step("plots")
    if plots.draw:
        figures = _draw_all(result, doc, folder / "plots", plots)
        written += [p for _, paths, _ in figures for p in paths]
        figures = [(section, paths[0], caption) for section, paths, caption in figures]

    step("report")
    blocks = build_report(result, doc, inputs, [(s, p.relative_to(folder), c) for s, p, c in figures],
                          evaluation=evaluation)
    atomic_write_text(folder / "report.md", rp.to_markdown(blocks))
    atomic_write_text(folder / "report.html", rp.to_html(blocks, folder, study.title))
    written += [folder / "report.md", folder / "report.html"]
    return written


def _capped_comparison(cr, most: int):
    """``cr`` with at most ``most`` assisted routes, the fastest against the bare one (largest
    ratio anywhere on the grid), and a note of how many were left out (None when none)."""
    from dataclasses import replace

    from tstrate.output.plots import top_by_rate

    assisted = list(range(1, len(cr.routes)))
    if len(assisted) <= most:
        return cr, None
    peak = [float(np.nanmax(cr.routes[i].ratio_to_bare)) for i in assisted]
    keep = [0] + top_by_rate(assisted, peak, most)
    pick = lambda seq: tuple(seq[i] for i in keep) if len(seq) == len(cr.routes) else seq  # noqa: E731
    note = (f" The {most} fastest of {len(assisted)} assisted routes (largest ratio to the bare route); "
            "every route is in tables/ and results.json.")
    return replace(cr, routes=pick(cr.routes), barriers=pick(cr.barriers), profiles=pick(cr.profiles)), note


def _draw_all(result, doc: dict, folder: Path, plots) -> list[tuple[str, list[Path], str]]:
    """Every figure of the run, each drawn once and written in each of ``plots.formats``
    (PNG first, for the report): (report section, paths, caption) per figure."""
    from tstrate.output.plots import FigureJob, arrhenius_figure, draw_figures, fastest_channels, figure_stem

    study = result.study
    unc = getattr(result, "uncertainty", None)
    most = plots.max_channels
    if unc is not None:
        from tstrate.output import uncertainty_records as ur
    jobs: list[tuple[str, FigureJob, str]] = []
    bands = ur.arrhenius_bands(unc, doc["channels"]) if unc is not None else None
    drawn = fastest_channels(doc["channels"], most)
    caption = ("Arrhenius plot: log10 k against 1000/T; dashed lines without tunnelling."
               + (" " + ur.BANDS_MEAN if unc is not None else ""))
    if len(drawn) < len(doc["channels"]):
        caption += (f" The {len(drawn)} fastest of {len(doc['channels'])} channels (k at the middle "
                    "temperature, per molecularity); every channel is in tables/ and results.json.")
    from tstrate.output import evaluation_records as er

    if doc["channels"]:
        jobs.append(("rates", FigureJob(figure_stem("arrhenius"), arrhenius_figure, (doc["channels"], study.title),
                                        (("bands", bands), ("references", er.arrhenius_overlays(result) or None),
                                         ("max_channels", most))), caption))
    if getattr(result, "associations", None):
        from tstrate.output.association_records import association_figure

        for ar in result.associations:
            jobs.append(("association", FigureJob(figure_stem("association", ar.name), association_figure, (ar,)),
                         f"{ar.name}: k(T, p) of the barrierless association against pressure."))
    if result.comparisons is not None:
        from tstrate.output import compare_plots as cp

        for cr in result.comparisons:
            rb = ur.ratio_bands(unc, cr.comparison.name) if unc is not None else None
            shown, note = _capped_comparison(cr, most)
            for key, builder, kwargs in (("energy_profile", cp.energy_profile_figure, ()),
                                         ("ratio_vs_temperature", cp.ratio_temperature_figure,
                                          (("bands", rb),)),
                                         ("ratio_vs_abundance", cp.ratio_abundance_figure, ())):
                jobs.append(("compare", FigureJob(figure_stem("comparison", cr.comparison.name, key), builder,
                                                  (shown,), kwargs),
                             f"{cr.comparison.name}: {key.replace('_', ' ')}" + ("." + note if note else "")))
    if result.falloff is not None:
        from tstrate.output.plots import top_by_rate
        from tstrate.output.pressure_plots import falloff_figure

        channels = list(result.falloff.channels)
        k_mid = [float(cf.k_high_pressure_per_s[cf.temperature_K.size // 2]) for cf in channels]
        keep = set(top_by_rate([cf.name for cf in channels], k_mid, most))
        note = ""
        if len(keep) < len(channels):
            note = (f" One of the {len(keep)} fastest of {len(channels)} falloff channels (k_inf at the middle "
                    "temperature); every channel's falloff is in tables/ and results.json.")
        for cf in channels:
            if cf.name not in keep:
                continue
            fb = ur.falloff_bands(unc, cf.name) if unc is not None else None
            jobs.append(("falloff", FigureJob(figure_stem("falloff", cf.name), falloff_figure, (cf,),
                                              (("bands", fb),
                                               ("references", er.falloff_overlays(result, cf.name) or None))),
                         f"Falloff of channel {cf.name}: log10 k against log10 p at several temperatures." + note))
    if result.excitations is not None:
        from tstrate.output import pressure_plots as pp

        for ex in result.excitations:
            if ex.pressure is not None:
                jobs.append(("excitation", FigureJob(figure_stem("excitation", ex.spec.name, "pressure"),
                                                     pp.yield_pressure_figure, (ex,)),
                             f"{ex.spec.name}: fraction reacting before deactivation against pressure."))
            if ex.profile is not None:
                ab = ur.altitude_bands(unc, ex.spec.name) if unc is not None else None
                jobs.append(("excitation", FigureJob(figure_stem("excitation", ex.spec.name, "altitude"),
                                                     pp.yield_altitude_figure, (ex,), (("bands", ab),)),
                             f"{ex.spec.name}: fraction reacting before deactivation against altitude."))
            if ex.populations is not None:
                jobs.append(("excitation", FigureJob(figure_stem("excitation", ex.spec.name, "populations"),
                                                     pp.excitation_populations_figure, (ex,)),
                             f"{ex.spec.name}: energised, reacted and stabilised fractions against time and "
                             "collisions (master equation)."))
    from tstrate.output.plots import rotor_figure

    for th in doc["thermochemistry"]:
        for rec in th.get("hindered_rotors", []):
            jobs.append(("rotors", FigureJob(figure_stem("rotor", th["name"], rec["bond"]), rotor_figure,
                                             (rec, th["name"])),
                         f"{th['name']}: potential of the hindered rotor {rec['bond']} (Fourier series and the "
                         "points it was fitted to) with its levels."))
    if result.isotopes is not None and any(s.kie for s in result.isotopes.substitutions):
        from tstrate.output.isotope_plots import kie_figure

        jobs.append(("isotopes", FigureJob(figure_stem("isotopes"), kie_figure, (doc["isotopes"],)),
                     "Kinetic isotope effects k_light / k_heavy against T; dashed lines without tunnelling."))
    formats = ("png",) + tuple(f for f in plots.formats if f != "png")
    paths = draw_figures([j for _, j, _ in jobs], folder, formats, workers=plots.workers)
    return [(section, p, caption) for (section, _, caption), p in zip(jobs, paths)]


def limits(result) -> list[str]:
    """Plain statements of what the results do not cover, drawn from the results themselves."""
    out = ["The accuracy is bounded by the electronic-structure inputs: barrier heights dominate, "
           "and rate constants at low temperature are exponentially sensitive to them."]
    for r in result.rates:
        big = float(np.max(r.kappa))
        if r.tunnelling == "eckart" and big > 1e3:
            t = float(r.temperature_K[int(np.argmax(r.kappa))])
            out.append(f"Channel {r.channel}: deep tunnelling (kappa up to {big:.2g} at {t:g} K). A "
                       "one-dimensional Eckart barrier is unreliable this far below the barrier top (it "
                       "usually overestimates); use a multidimensional tunnelling treatment if it matters.")
    with_complex = [c.name for c in result.study.channels if c.complex]
    if with_complex:
        out.append(f"Channels through a pre-reactive complex ({', '.join(with_complex)}) are treated in the "
                   "high-pressure limit (the complex in equilibrium with the reactants). At low pressure a "
                   "complex may not be stabilised; quantifying that needs a master-equation treatment.")
    if result.falloff is not None and any(cf.model.tunnelling == "eckart" for cf in result.falloff.channels):
        out.append("Falloff of channels with Eckart tunnelling: the Troe k0 is an effective value fitted "
                   "together with the broadening parameters, not the strong-collision low-pressure limit.")
    from tstrate.expressions.choice import large_exponent_notes

    for cf in result.fits.channels:
        for note in large_exponent_notes(cf.mechanism_kind, cf.expression):
            out.append(f"Channel {cf.name}: the exported {cf.export.label} expression: {note}.")
    if result.low_modes.method == LOW_MODES_HARMONIC:
        low = DEFAULT_LOW_MODE_CUTOFF_CM1
        soft = [n for n, sp in result.study.species.items()
                if sp.harmonic_frequencies_cm1.size and float(sp.harmonic_frequencies_cm1.min()) < low]
        if soft:
            out.append(f"Species with real modes below {low:g} cm-1 treated as harmonic ({', '.join(soft)}): "
                       f"their entropies are uncertain; compare with --low-modes {LOW_MODES_ROTOR_ENTROPY_BLEND} "
                       f"or {LOW_MODES_FREQUENCY_FLOOR}.")
    return out


def _fmt_cell(v):
    if v is None:
        return "-"
    if isinstance(v, float):
        return f"{v:.4g}"
    return v


def _pick_temperatures(T: np.ndarray, most: int = 6) -> list[int]:
    if len(T) <= most:
        return list(range(len(T)))
    return sorted(set(np.linspace(0, len(T) - 1, most).round().astype(int).tolist()))


def build_report(result, doc: dict, inputs: list[dict], figures, evaluation: dict | None = None) -> list:
    """The report's blocks (see :mod:`tstrate.output.report`)."""
    import tstrate

    study = result.study
    B: list = [rp.Heading(study.title, 1),
               rp.Paragraph(f"Made by tstrate {tstrate.__version__} on "
                            f"{_dt.datetime.now(_dt.timezone.utc).strftime('%Y-%m-%d %H:%M UTC')}."),
               rp.Paragraph(CAUTION)]

    missed = [cf for cf in result.fits.channels
              if not cf.export.meets_tolerance and np.isfinite(cf.export.deviation.max_rel)]
    if missed:
        B.append(rp.Paragraph("Tolerance missed: " + "; ".join(
            f"the mechanism's {cf.export.label} expression of {cf.name} deviates from the computed rates by up to "
            f"{100 * cf.export.deviation.max_rel:.3g} % (tolerance {100 * cf.export.tolerance:g} %)" for cf in missed)
            + ". See Fitted parameters."))
    B.append(rp.Heading("Inputs"))
    B.append(rp.Table(("file", "SHA-256"), tuple((i["file"], i["sha256"]) for i in inputs)))
    rows = []
    for name, sp in study.species.items():
        prov = sp.provenance.get("method", "") if sp.provenance else ""
        # the level of the energy used: a single point's own, else that of the geometry
        single = (sp.provenance or {}).get("single_point_method")
        level = ("-" if sp.energy_J_per_mol is None else
                 single if single and sp.energy_J_per_mol != sp.geometry_energy_J_per_mol else
                 prov or "as given")
        rows.append((name, sp.formula, sp.kind, prov, sp.symmetry_number, level))
    B.append(rp.Table(("species", "formula", "kind", "method", "symmetry number", "energy level"),
                      tuple(rows)))

    B.append(rp.Heading("Methods and assumptions"))
    skip = set()
    if result.comparisons is None:
        skip.add("Catalysed")
    if result.falloff is None and result.excitations is None:
        skip.add("Falloff")
    methods = tuple(m for m in METHODS if not any(m.startswith(k) for k in skip))
    B.append(rp.Bullets(methods + (low_modes_method_text(result.low_modes),)))

    p0 = doc["conventions"]["standard_pressure"]
    B.append(rp.Heading(f"Thermochemistry ({p0})"))
    rows = []
    for rec in doc["thermochemistry"]:
        j = int(np.argmin(np.abs(np.asarray(rec["temperature_K"]) - 298.15)))
        rows.append((rec["name"], rec["formula"], f"{rec['zpe_kJ_per_mol']:.2f}",
                     f"{rec['entropy_J_per_mol_K'][j]:.2f}", f"{rec['heat_capacity_J_per_mol_K'][j]:.2f}",
                     f"{rec['enthalpy_increment_kJ_per_mol'][j]:.3f}"))
    B.append(rp.Table(("species", "formula", "ZPE / kJ mol-1", "S(298.15 K) / J mol-1 K-1",
                       "Cp(298.15 K) / J mol-1 K-1", "H(298.15 K)-H(0) / kJ mol-1"), tuple(rows)))

    rotor_rows = [(rec["name"], h["bond"], h["symmetry_number"], f"{h['reduced_moment_amu_A2']:.4f}",
                   f"{h['barrier_kJ_per_mol']:.2f}",
                   "-" if h["fit_rms_kJ_per_mol"] is None else f"{h['fit_rms_kJ_per_mol']:.3f}",
                   f"{h['replaces_cm1']:.1f} ({h['mode_assignment']}"
                   + (f", overlap {h['mode_overlap']:.2f})" if h["mode_overlap"] is not None else ")"),
                   h["potential_source"])
                  for rec in doc["thermochemistry"] for h in rec.get("hindered_rotors", [])]
    if rotor_rows:
        B.append(rp.Heading("Hindered rotors", 3))
        B.append(rp.Table(("species", "bond", "sigma", "I / u A2", "barrier / kJ mol-1", "fit RMS / kJ mol-1",
                           "replaces / cm-1", "potential"), tuple(rotor_rows),
                          "Exact 1-D levels in a free-rotor basis; reduced moments by Pitzer's definition unless "
                          "given; each rotor replaces the harmonic mode named."))
        B += [rp.Figure(p, c) for s, p, c in figures if s == "rotors"]
    if doc.get("conformers"):
        from tstrate.output.conformer_records import conformer_report_blocks

        B += conformer_report_blocks(result, doc, _pick_temperatures)

    B.append(rp.Heading("Rate constants"))
    rows = []
    for r in doc["channels"]:
        rows.append((r["name"], r["order"], f"{r['barrier_classical_kJ_per_mol']:.2f}",
                     f"{r['barrier_zpe_kJ_per_mol']:.2f}", f"{r['imaginary_frequency_cm1']:.0f}i",
                     r["tunnelling"], f"{r['reaction_path_degeneracy']:g}",
                     f"{r['reaction_energy_zpe_kJ_per_mol']:.2f}"))
    B.append(rp.Table(("channel", "order", "barrier classical / kJ mol-1", "barrier ZPE / kJ mol-1",
                       "imaginary frequency / cm-1", "tunnelling", "path degeneracy",
                       "reaction energy ZPE / kJ mol-1"), tuple(rows),
                      "Barriers from the separated reactants."))
    for r in doc["channels"]:
        T = np.asarray(r["temperature_K"])
        idx = _pick_temperatures(T)
        other = r.get("kappa_other_floor")
        head = ("T / K", f"k / {r['rate_constant_unit']}", "kappa",
                f"k without tunnelling / {r['rate_constant_unit']}",
                "dG‡ / kJ mol-1", "dH‡ / kJ mol-1", "dS‡ / J mol-1 K-1")
        rows = [[f"{T[i]:g}", f"{r['rate_constant'][i]:.3e}", f"{r['kappa'][i]:.3g}",
                 f"{r['rate_constant_no_tunnelling'][i]:.3e}",
                 f"{r['delta_G_activation_kJ_per_mol'][i]:.2f}",
                 f"{r['delta_H_activation_kJ_per_mol'][i]:.2f}",
                 f"{r['delta_S_activation_J_per_mol_K'][i]:.2f}"] for i in idx]
        note = f"Channel {r['name']} (full table in tables/; activation quantities at {p0})."
        if other is not None:
            # the floor of the tunnelling integral for a channel through a complex: neither choice
            # is right at every pressure, so the other one is shown beside the rate
            head = head[:3] + (f"kappa, floor at the {r['other_tunnelling_floor']}",) + head[3:]
            for row, i in zip(rows, idx):
                row.insert(3, f"{other[i]:.3g}")
            note += (f" kappa counts tunnelling from the {r['tunnelling_floor']} up; with the floor at the "
                     f"{r['other_tunnelling_floor']} instead, k changes by the ratio of the two kappa columns "
                     "(the thermalised complex is there only where collisions stabilise it).")
        if r.get("tunnelling_well_conformer"):
            note += (f" Tunnelling forward barrier from the conformer {r['tunnelling_well_conformer']}, "
                     "which the transition state connects to.")
        if r.get("tunnelling_product_complex"):
            note += (f" Reverse tunnelling barrier from the product complex "
                     f"{r['tunnelling_product_complex']}.")
        B.append(rp.Table(head, tuple(tuple(row) for row in rows), note))
    B += [rp.Figure(p, c) for s, p, c in figures if s == "rates"]

    if getattr(result, "associations", None):
        from tstrate.output.association_records import association_summary

        B.append(rp.Heading("Barrierless associations"))
        for ar in result.associations:
            B.append(rp.Bullets(tuple(association_summary(ar))))
        B.append(rp.Paragraph("k(E) of each adduct is the inverse Laplace transform of the given k_inf(T) "
                              "(Davies, Green and Pilling 1986): no angular momentum, valid only as far as "
                              "k_inf(T) and its temperature exponent are; an active adduct rotation gives the "
                              "upper, a spectator one the lower bound of the low-pressure limit. Full tables: "
                              "tables/association_<name>.csv."))
        B += [rp.Figure(p, c) for s, p, c in figures if s == "association"]

    if result.comparisons is not None:
        from tstrate.output.compare_records import comparison_report_blocks

        B.append(rp.Heading("Catalysed and bare routes"))
        B += comparison_report_blocks(result.comparisons, doc["comparisons"])
        B += [rp.Figure(p, c) for s, p, c in figures if s == "compare"]

    if result.falloff is not None:
        B.append(rp.Heading("Pressure dependence"))
        fal = doc["falloff"]
        B.append(rp.Paragraph(f"Bath gas {fal['bath_gas']} (Lennard-Jones sigma "
                              f"{fal['bath_gas_lennard_jones']['sigma_A']:.3g} A, epsilon/k "
                              f"{fal['bath_gas_lennard_jones']['epsilon_K']:.3g} K; "
                              f"{fal['bath_gas_lennard_jones']['source']})."))
        rows = []
        for cf in result.falloff.channels:
            t = cf.troe
            ratio = cf.k_high_pressure_per_s / cf.canonical_tst_per_s
            rows.append((cf.name, f"{t.a:.3g}", f"{t.T3_K:.3g}", f"{t.T1_K:.3g}",
                         "-" if t.T2_K is None else f"{t.T2_K:.3g}",
                         f"{100 * t.max_rel_deviation:.2f}", f"{100 * t.rms_rel_deviation:.2f}",
                         f"{np.nanmin(ratio):.4g} - {np.nanmax(ratio):.4g}", cf.model.external_rotation))
        B.append(rp.Table(("channel", "a", "T*** / K", "T* / K", "T** / K", "max deviation / %",
                           "rms deviation / %", "k_inf / k_TST", "external rotation"), tuple(rows),
                          "Troe parameters fitted to the computed falloff curves, with the tabulated limits (an "
                          "effective k0 for tunnelling channels); the deviation of what mechanism.yaml holds is in "
                          "Fitted parameters. k_inf from the RRKM k(E) "
                          "against canonical TST over the study's temperatures (a falloff off by more than "
                          "10 % is not exported to the mechanism)."))
        if result.pressure_fits:
            header, rows = pressure_fit_rows(result)
            B.append(rp.Table(tuple(header), tuple(tuple(_fmt_cell(c) for c in r) for r in rows),
                              "Modified Arrhenius fits of k(T) at each tabulated pressure (also in "
                              "fits.json and tables/fits_at_each_pressure.csv)."))
        from tstrate.expressions.troe import troe_bound_notes

        exported = {c.name: c.export.label for c in result.fits.channels}
        for cf in result.falloff.channels:
            held = f"; mechanism.yaml holds {exported[cf.name]}" if cf.name in exported else ""
            for note in troe_bound_notes(cf.troe):
                B.append(rp.Paragraph(f"channel {cf.name!r}: {note} (Troe table above{held})."))
        for s in result.falloff.skipped:
            B.append(rp.Paragraph(f"Channel {s.name}: {s.reason}."))
        B += [rp.Figure(p, c) for s, p, c in figures if s == "falloff"]

    if result.excitations is not None:
        B.append(rp.Heading("Energised molecules"))
        for ex, rec in zip(result.excitations, doc["excitations"]):
            note = " Below threshold: no reaction." if rec["below_threshold"] else ""
            B.append(rp.Paragraph(f"{rec['name']} (channel {rec['channel']}): {rec['excitation']}, "
                                  f"{rec['excitation_energy_kJ_per_mol']:.1f} kJ/mol.{note}"))
        B += [rp.Figure(p, c) for s, p, c in figures if s == "excitation"]

    if result.isotopes is not None:
        from tstrate.output.isotope_records import report_blocks

        B.append(rp.Heading("Isotopologues"))
        B += report_blocks(result.isotopes, [(p, c) for s, p, c in figures if s == "isotopes"])

    B.append(rp.Heading("Fitted parameters"))
    from tstrate.output.records import rate_unit

    rows = []
    for cf in result.fits.channels:
        for label, fit in (("Arrhenius", cf.arrhenius), ("modified Arrhenius", cf.modified)):
            unit = rate_unit(fit.order, study.conditions.rate_units)
            rows.append((cf.name, label, f"{fit.A_in(unit):.4g}", unit, f"{fit.n:.3g}",
                         f"{fit.Ea_J_per_mol / 1e3:.3f}", f"{fit.Tmin_K:g}-{fit.Tmax_K:g}",
                         f"{100 * fit.max_rel_deviation:.2f}", f"{100 * fit.rms_rel_deviation:.2f}"))
    if result.fits.channels:
        B.append(rp.Table(("channel", "form", "A", "A unit", "n", "Ea / kJ mol-1", "range / K",
                           "max deviation / %", "rms deviation / %"), tuple(rows),
                          f"k = A (T/T0)^n exp(-Ea/RT), T0 = {result.fits.channels[0].modified.T0_K:g} K "
                          "for the modified form, fitted to the k(T) table; deviations at the table's temperatures "
                          "(the expression exported for each channel is in the next table)."))
    rows = []
    for cf in result.fits.channels:
        for label, fit in (("Chebyshev k(T)", cf.chebyshev), ("Chebyshev k(T, p)", cf.chebyshev_falloff)):
            if fit is None:
                continue
            p_range = "-" if fit.Pmin_Pa is None else f"{fit.Pmin_Pa / 1e5:.3g}-{fit.Pmax_Pa / 1e5:.3g}"
            d = cf.export.deviation if cf.expression is fit else None
            rows.append((cf.name, label, "x".join(str(n) for n in fit.coefficients.shape),
                         f"{fit.Tmin_K:g}-{fit.Tmax_K:g}", p_range, f"{100 * fit.max_rel_deviation:.3g}",
                         "-" if d is None or not d.n_between else f"{100 * d.max_rel_between:.3g}"))
    if rows:
        B.append(rp.Table(("channel", "form", "terms (T x p)", "range / K", "range / bar",
                           "max deviation on grid / %", "max deviation between grid points / %"), tuple(rows),
                          "Chebyshev expansions of log10 k in 1/T and log p (coefficients in fits.json)."))
    if result.fits.channels:
        rows = []
        for cf in result.fits.channels:
            e, d = cf.export, cf.export.deviation
            pc = (lambda x: "-" if not np.isfinite(x) else f"{100 * x:.3g}")
            rows.append((cf.name, e.label, e.requested, cf.method, pc(d.max_rel_grid), pc(d.max_rel_between),
                         f"{100 * e.tolerance:g}", "yes" if e.meets_tolerance else
                         ("not measured" if not np.isfinite(d.max_rel) else "NO")))
        B.append(rp.Table(("channel", "mechanism.yaml holds", "form asked", "rates computed by",
                           "max deviation on grid / %", "max deviation between grid points / %", "tolerance / %",
                           "meets tolerance"), tuple(rows),
                          "What mechanism.yaml holds per channel, measured from the numbers written against the "
                          "computed rates on the grid and between grid points (temperatures midway in 1/T, pressures "
                          "midway in ln p)."))
        notes = [f"{cf.name}: {n}" for cf in result.fits.channels for n in cf.export.notes]
        if notes:
            B.append(rp.Bullets(tuple(notes)))
    else:
        B.append(rp.Paragraph("The mechanism file holds the species only (barrierless associations are not "
                              "exported as reactions yet; their k(T, p) is in tables/association_<name>.csv)."))
    rows = [(s.name, f"{s.nasa7.Tmin_K:g}-{s.nasa7.Tmid_K:g}-{s.nasa7.Tmax_K:g}",
             f"{100 * s.nasa7.max_rel_error_cp:.3f}", f"{100 * s.nasa7.max_rel_error_h:.3f}",
             f"{100 * s.nasa7.max_rel_error_s:.3f}") for s in result.fits.species]
    B.append(rp.Table(("species", "NASA range / K", "max Cp error / %", "max H error / %",
                       "max S error / %"), tuple(rows), "NASA 7-coefficient polynomials."))
    from tstrate.output.evaluation_records import report_blocks as evaluation_blocks

    B += evaluation_blocks(result, evaluation)
    if getattr(result, "uncertainty", None) is not None:
        from tstrate.output.uncertainty_records import report_blocks

        B += report_blocks(result, figures)
    B.append(rp.Heading("Limits of these results"))
    B.append(rp.Bullets(tuple(limits(result))))
    if result.warnings:
        B.append(rp.Heading("Warnings"))
        B.append(rp.Bullets(tuple(result.warnings)))
    B.append(rp.Heading("Files"))
    B.append(rp.Bullets(("mechanism.yaml: Cantera-format mechanism", "fits.json, fits.csv: fitted "
                         "parameters", "results.json: every number computed", "tables/: CSV tables",
                         "plots/: figures (PNG, and SVG when asked for)", "inputs.json: input files and hashes",
                         "evaluation_forms.json, tables/evaluation_forms.csv: the rates in the forms of data "
                         "evaluations")))
    B.append(rp.Paragraph(CAUTION))
    return B
