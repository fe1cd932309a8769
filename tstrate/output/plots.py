"""Matplotlib figures built from results. Functions return a Figure; saving is separate.

matplotlib is imported inside the functions (with the non-interactive Agg
backend) so that importing tstrate stays fast.
"""

from __future__ import annotations

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
}
#: the formats each figure is written in
FIGURE_FORMATS = ("png", "svg")


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


def arrhenius_figure(records: list[dict], title: str | None = None, bands: dict | None = None):
    """log10 k against 1000/T, one colour per channel; dashed without tunnelling.

    ``records`` are channel records from :func:`tstrate.output.records.channel_rates_record`.
    Channels of different molecularity get separate panels (their units differ).
    ``bands``: channel -> (4, T) k at 2.5, 16, 84 and 97.5 % in the record's unit, drawn as
    shaded 95 % and 68 % bands (:mod:`tstrate.output.uncertainty_records`).
    """
    plt = _plt()
    orders = sorted({r["order"] for r in records})
    fig, axes = plt.subplots(1, len(orders), figsize=(5.2 * len(orders), 4.2), squeeze=False)
    for ax, order in zip(axes[0], orders):
        for i, r in enumerate(x for x in records if x["order"] == order):
            colour = f"C{i}"
            inv_t = 1000.0 / np.asarray(r["temperature_K"])
            ax.plot(inv_t, np.log10(r["rate_constant"]), "-", color=colour,
                    label=f"{r['name']} ({r['tunnelling']})")
            if bands and r["name"] in bands:
                b = np.log10(bands[r["name"]])
                ax.fill_between(inv_t, b[0], b[3], color=colour, alpha=0.12, lw=0)
                ax.fill_between(inv_t, b[1], b[2], color=colour, alpha=0.25, lw=0)
            if r["tunnelling"] != "none":
                ax.plot(inv_t, np.log10(r["rate_constant_no_tunnelling"]), "--", color=colour,
                        label=f"{r['name']} (no tunnelling)")
            unit = r["rate_constant_unit"]
        ax.set_xlabel("1000 / T  [K$^{-1}$]")
        ax.set_ylabel(f"log$_{{10}}$ (k / {unit})")
        ax.grid(alpha=0.3)
        ax.legend(fontsize=8)
        top = ax.secondary_xaxis("top", functions=(lambda x: 1000.0 / np.maximum(x, 1e-9),
                                                    lambda t: 1000.0 / np.maximum(t, 1e-9)))
        top.set_xticks(_nice_temperatures(ax.get_xlim()))
        top.set_xlabel("T  [K]")
    if title:
        fig.suptitle(title)
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


def save_figure(fig, path, formats=None) -> list[Path]:
    """Save ``fig`` atomically to ``path`` (its suffix) or to each of ``formats`` beside it.

    Returns the paths written (a path without a suffix gets ``.png``).
    """
    import io

    from tstrate.io.files import atomic_write_bytes

    path = Path(path)
    if formats:
        targets = [(fmt, path.with_suffix("." + fmt)) for fmt in formats]
    else:  # the name as given (a name without a suffix gets .png)
        targets = [(plot_format(path), path if path.suffix else path.with_suffix(".png"))]
    written = []
    for fmt, target in targets:
        buf = io.BytesIO()
        fig.savefig(buf, format=fmt, dpi=150)
        atomic_write_bytes(target, buf.getvalue())
        written.append(target)
    _plt().close(fig)
    return written
