"""Matplotlib figures built from results. Functions return a Figure; saving is separate.

matplotlib is imported inside the functions (with the non-interactive Agg
backend) so that importing tstrate stays fast.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

#: File stems (without suffix) of every figure tstrate draws. ``tstrate run`` writes them into
#: its plots/ folder and each command's ``--plot DIR`` into DIR, under the same names, in each
#: of :data:`FIGURE_FORMATS`. ``{name}`` is the comparison, channel or excitation, made safe for
#: a file name (:func:`figure_stem`); ``{panel}`` the kind of figure.
FIGURE_STEMS = {
    "arrhenius": "arrhenius",
    # panels: energy_profile, ratio_vs_temperature, ratio_vs_abundance (compare_plots.comparison_figures)
    "comparison": "compare_{name}_{panel}",
    "falloff": "falloff_{name}",
    # panels: pressure, altitude, k_of_E, populations (master equation)
    "excitation": "excitation_{name}_{panel}",
    "isotopes": "isotopes_kie",
    # {name}: species, {panel}: the rotor's bond (C1-O3)
    "rotor": "rotor_{name}_{panel}",
    "association": "association_{name}",
}
#: the formats a figure can be written in
FIGURE_FORMATS = ("png", "svg")
#: resolution of PNG figures [dots per inch]: about 1100 x 500 pixels for a two-panel figure, enough
#: for a screen and the report (common practice), and half the drawing time of 150 dpi
FIGURE_DPI = 100
#: the formats written when none are asked for (the report embeds the PNG)
DEFAULT_FIGURE_FORMATS = ("png",)
#: at most this many channels (lines and legend entries) in one figure, and at most this many
#: falloff figures in a run: the fastest by rate constant; the full data are in the tables
#: (common practice for legibility: more lines than colours in the default cycle blur together)
MAX_CHANNELS_PER_FIGURE = 10


@dataclass(frozen=True)
class PlotSettings:
    """What ``tstrate run`` draws.

    formats: file formats, a non-empty subset of :data:`FIGURE_FORMATS` (PNG is always written
    for the report). draw: False writes no figure at all. workers: processes that draw
    (1: draw in this process). max_channels: the cap of :data:`MAX_CHANNELS_PER_FIGURE`.
    """

    formats: tuple[str, ...] = DEFAULT_FIGURE_FORMATS
    draw: bool = True
    workers: int = 1
    max_channels: int = MAX_CHANNELS_PER_FIGURE

    def __post_init__(self):
        from tstrate.errors import InputError

        fmts = tuple(dict.fromkeys(str(f).lower().lstrip(".") for f in self.formats))
        bad = [f for f in fmts if f not in FIGURE_FORMATS]
        if bad or not fmts:
            raise InputError(f"unknown plot format(s) {', '.join(bad) or '(none)'}", field="--plot-formats",
                             hint="use a comma-separated list of " + ", ".join(FIGURE_FORMATS))
        object.__setattr__(self, "formats", fmts)
        if int(self.workers) != self.workers or self.workers < 1:
            raise InputError(f"plot workers must be a positive whole number, got {self.workers!r}",
                             field="--plot-workers")
        if int(self.max_channels) != self.max_channels or self.max_channels < 1:
            raise InputError(f"the cap on channels per figure must be a positive whole number, got "
                             f"{self.max_channels!r}", field="--plot-max-channels")


def parse_formats(text: str) -> tuple[str, ...]:
    """``"png,svg"`` -> ("png", "svg"), checked against :data:`FIGURE_FORMATS` (InputError)."""
    return PlotSettings(formats=tuple(f.strip() for f in str(text).split(",") if f.strip())).formats


def top_by_rate(names, rates, most: int) -> list:
    """The ``most`` names with the largest rates (in their given order), and all when fewer.

    ``rates`` is one representative rate constant per name (e.g. k at the middle temperature of
    the grid); NaN counts as the slowest.
    """
    names = list(names)
    if len(names) <= most:
        return names
    r = np.nan_to_num(np.asarray(rates, dtype=float), nan=-np.inf)
    keep = set(np.argsort(-r, kind="stable")[:most].tolist())
    return [n for i, n in enumerate(names) if i in keep]


def figure_stem(figure: str, name: str = "", panel: str = "") -> str:
    """The file stem of a figure of :data:`FIGURE_STEMS`, e.g. ``figure_stem("falloff", "bare")``.

    The name goes through :func:`tstrate.output.tables.safe_file_stem`, and its dots become
    ``_`` too (a dot would be taken for the start of the suffix when the formats are added).
    """
    from tstrate.output.tables import safe_file_stem

    safe = safe_file_stem(name).replace(".", "_") if name else ""
    return FIGURE_STEMS[figure].format(name=safe, panel=panel)


def _plt():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


_ORDER_WORDS = {1: "unimolecular", 2: "bimolecular", 3: "termolecular"}


def fastest_channels(records: list[dict], most: int = MAX_CHANNELS_PER_FIGURE) -> list[str]:
    """Names of the channel records drawn in the Arrhenius plot: for each molecularity the
    ``most`` fastest by k at the middle temperature of the grid (:func:`top_by_rate`)."""
    kept: list[str] = []
    for order in sorted({r["order"] for r in records}):
        group = [r for r in records if r["order"] == order]
        mid = [float(np.asarray(r["rate_constant"])[len(r["rate_constant"]) // 2]) for r in group]
        kept += top_by_rate([r["name"] for r in group], mid, most)
    return kept


def arrhenius_figure(records: list[dict], title: str | None = None, bands: dict | None = None,
                     references: dict | None = None, max_channels: int = MAX_CHANNELS_PER_FIGURE):
    """log10 k against 1000/T, one colour per channel; dashed without tunnelling.

    ``records`` are channel records from :func:`tstrate.output.records.channel_rates_record`.
    Channels of different molecularity get separate panels (their units differ), at most two
    side by side, each titled with its molecularity and unit, its legend below it; each panel
    carries at most ``max_channels`` channels, the fastest (:func:`fastest_channels`).
    ``bands``: channel -> (4, T) k at 2.5, 16, 84 and 97.5 % in the record's unit, drawn as
    shaded 95 % and 68 % bands (:mod:`tstrate.output.uncertainty_records`).
    ``references``: channel -> [(label, T [K], k in the record's unit)], drawn dash-dotted with
    open markers in the channel's colour over their own range
    (:func:`tstrate.output.evaluation_records.arrhenius_overlays`).
    """
    plt = _plt()
    keep = set(fastest_channels(records, max_channels))
    records = [r for r in records if r["name"] in keep]
    orders = sorted({r["order"] for r in records})
    ncols = min(2, len(orders))
    nrows = -(-len(orders) // ncols)
    with plt.rc_context({"font.size": 11, "axes.titlesize": 11, "axes.labelsize": 11, "legend.fontsize": 9}):
        fig, axes = plt.subplots(nrows, ncols, figsize=(6.6 * ncols, 5.6 * nrows), squeeze=False)
        for ax in axes.ravel()[len(orders):]:
            ax.set_visible(False)
        for ax, order in zip(axes.ravel(), orders):
            unit = None
            for i, r in enumerate(x for x in records if x["order"] == order):
                colour = f"C{i % 10}"
                inv_t = 1000.0 / np.asarray(r["temperature_K"])
                ax.plot(inv_t, np.log10(r["rate_constant"]), "-", color=colour, lw=1.8,
                        label=f"{r['name']} ({r['tunnelling']})")
                if bands and r["name"] in bands:
                    b = np.log10(bands[r["name"]])
                    ax.fill_between(inv_t, b[0], b[3], color=colour, alpha=0.12, lw=0,
                                    label=f"{r['name']}: central 95 %")
                    ax.fill_between(inv_t, b[1], b[2], color=colour, alpha=0.25, lw=0,
                                    label=f"{r['name']}: central 68 %")
                if r["tunnelling"] != "none":
                    ax.plot(inv_t, np.log10(r["rate_constant_no_tunnelling"]), "--", color=colour, lw=1.2,
                            label=f"{r['name']} (no tunnelling)")
                for label, t_ref, k_ref in (references or {}).get(r["name"], ()):
                    ax.plot(1000.0 / np.asarray(t_ref), np.log10(k_ref), "-.", color=colour, lw=1.3,
                            marker="o", mfc="none", markevery=max(1, len(t_ref) // 6),
                            label=f"{r['name']}: {label}")
                unit = r["rate_constant_unit"]
            word = _ORDER_WORDS.get(order, f"order {order}")
            ax.set_title(f"{word} channels, k in {unit}", y=1.16)
            ax.set_xlabel("1000 / T  [1/K]")
            ax.set_ylabel(f"log10 (k / {unit})")
            ax.grid(alpha=0.3)
            handles, _ = ax.get_legend_handles_labels()
            ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.14), ncol=2 if len(handles) > 3 else 1,
                      frameon=False)
            top = ax.secondary_xaxis("top", functions=(lambda x: 1000.0 / np.maximum(x, 1e-9),
                                                        lambda t: 1000.0 / np.maximum(t, 1e-9)))
            top.set_xticks(_nice_temperatures(ax.get_xlim()))
            top.set_xlabel("T  [K]")
        if title:
            fig.suptitle(title, fontsize=12)
        fig.tight_layout()
    return fig


def _nice_temperatures(inv_limits) -> list[float]:
    """A few round temperatures [K] inside an axis range given in 1000/T."""
    lo, hi = sorted(1000.0 / max(v, 1e-9) for v in inv_limits)
    candidates = [50, 100, 150, 200, 250, 300, 400, 500, 700, 1000, 1500, 2000, 3000]
    inside = [t for t in candidates if lo <= t <= hi]
    # keep ticks at least 8 % of the axis apart
    span = abs(inv_limits[1] - inv_limits[0]) or 1.0
    kept: list[float] = []
    for t in sorted(inside):
        if all(abs(1000.0 / t - 1000.0 / k) > 0.08 * span for k in kept):
            kept.append(t)
    return kept


def plot_format(path) -> str:
    """The file format ``path`` asks for: its suffix, or ``png`` without one.

    Raises InputError (naming the file) when matplotlib cannot write that format,
    so that callers can check an output name before doing any work.
    """
    from matplotlib.backend_bases import FigureCanvasBase

    from tstrate.errors import InputError

    fmt = Path(path).suffix.lstrip(".").lower() or "png"
    supported = FigureCanvasBase.get_supported_filetypes()
    if fmt not in supported:
        raise InputError(f"cannot write a plot in format {fmt!r}", file=str(path),
                         hint="use a suffix such as .png, .svg or .pdf")
    return fmt


def figure_bytes(fig, formats) -> dict[str, bytes]:
    """``fig`` rendered once per format (format -> file contents), then closed."""
    import io

    out = {}
    for fmt in formats:
        buf = io.BytesIO()
        fig.savefig(buf, format=fmt, dpi=FIGURE_DPI)
        out[fmt] = buf.getvalue()
    _plt().close(fig)
    return out


@dataclass(frozen=True)
class FigureJob:
    """A figure to draw: ``builder(*args, **kwargs)`` returns it (a module-level function, so that
    the job can be sent to a worker process), saved as ``stem`` plus each format's suffix."""

    stem: str
    builder: object
    args: tuple = ()
    kwargs: tuple = ()      # (name, value) pairs

    def draw(self, formats) -> dict[str, bytes]:
        return figure_bytes(self.builder(*self.args, **dict(self.kwargs)), formats)


def _draw_job(job: FigureJob, formats) -> dict[str, bytes]:
    return job.draw(formats)


def draw_figures(jobs, folder, formats=DEFAULT_FIGURE_FORMATS, workers: int = 1) -> list[list[Path]]:
    """Draw each :class:`FigureJob` once, write it in every one of ``formats`` into ``folder``
    (atomically), and return the paths written per job, in the order of ``formats``.

    With ``workers > 1`` the figures are drawn in a pool of that many processes (the files are
    written here, so the result is the same as a serial run).
    """
    from tstrate.io.files import atomic_write_bytes

    jobs = list(jobs)
    formats = tuple(formats)
    if workers > 1 and len(jobs) > 1:
        import multiprocessing as mp
        from concurrent.futures import ProcessPoolExecutor

        # a fork server, not a plain fork: the caller may hold threads (BLAS, JAX) that a forked
        # child would inherit half-way; the workers import the figure functions themselves
        method = "forkserver" if "forkserver" in mp.get_all_start_methods() else "spawn"
        with ProcessPoolExecutor(min(workers, len(jobs)), mp_context=mp.get_context(method)) as pool:
            rendered = list(pool.map(_draw_job, jobs, [formats] * len(jobs)))
    else:
        rendered = [job.draw(formats) for job in jobs]
    out = []
    for job, data in zip(jobs, rendered):
        paths = []
        for fmt in formats:
            target = Path(folder) / f"{job.stem}.{fmt}"
            atomic_write_bytes(target, data[fmt])
            paths.append(target)
        out.append(paths)
    return out


def save_figure(fig, path, formats=None) -> list[Path]:
    """Save ``fig`` atomically to ``path`` (its suffix) or to each of ``formats`` beside it.

    Returns the paths written (a path without a suffix gets ``.png``).
    """
    from tstrate.io.files import atomic_write_bytes

    path = Path(path)
    if formats:
        targets = [(fmt, path.with_suffix("." + fmt)) for fmt in formats]
    else:  # the name as given (a name without a suffix gets .png)
        targets = [(plot_format(path), path if path.suffix else path.with_suffix(".png"))]
    data = figure_bytes(fig, [fmt for fmt, _ in targets])
    written = []
    for fmt, target in targets:
        atomic_write_bytes(target, data[fmt])
        written.append(target)
    return written


def rotor_figure(record: dict, species: str):
    """A hindered rotor's potential V(phi) (the Fourier fit, the points it was fitted to) with its
    levels as horizontal lines, energies in kJ/mol. ``record`` is one entry of
    :func:`tstrate.output.records.hindered_rotor_records`."""
    from tstrate.units import CM1_J, N_A

    plt = _plt()
    fig, ax = plt.subplots(figsize=(6.4, 4.4))
    cm1_kj = CM1_J * N_A / 1e3
    phi = np.linspace(0.0, 2 * np.pi, 721)
    k = np.arange(1, len(record["cos_terms_cm1"]) + 1)
    a = np.array(record["cos_terms_cm1"]) * cm1_kj
    b = np.array(record["sin_terms_cm1"]) * cm1_kj
    v = np.cos(np.outer(phi, k)) @ a + np.sin(np.outer(phi, k)) @ b - a.sum()
    ax.plot(np.rad2deg(phi), v, color="C0", label="Fourier series")
    if record["points_deg"]:
        ax.plot(record["points_deg"], record["points_kJ_per_mol"], "o", color="C1", ms=4,
                label="points" + (f" (fit RMS {record['fit_rms_kJ_per_mol']:.3g} kJ/mol)"
                                  if record["fit_rms_kJ_per_mol"] is not None else ""))
    ground = record["zpe_cm1"] * cm1_kj
    top = v.max() + 0.3 * (v.max() - v.min() + 1.0)
    for i, lv in enumerate(record["levels_cm1"]):
        e = ground + lv * cm1_kj
        if e > top:
            break
        ax.axhline(e, color="0.6", lw=0.7, label="levels" if i == 0 else None)
    ax.set_xlim(0, 360)
    ax.set_ylim(min(v.min(), 0.0) - 0.05 * (top - v.min()), top)
    ax.set_xlabel("torsion angle phi from the geometry [degree]")
    ax.set_ylabel("V(phi) [kJ/mol]")
    ax.set_title(f"{species}: rotor {record['bond']} (sigma = {record['symmetry_number']}, "
                 f"I = {record['reduced_moment_amu_A2']:.3g} u A^2)")
    ax.legend(loc="upper right", fontsize=8)
    fig.tight_layout()
    return fig
