"""Figures for catalysed-route comparisons. Functions return a Figure; save with plots.save_figure.

All take a :class:`tstrate.physics.catalysis.ComparisonResult`:

- :func:`energy_profile_figure`: the stationary points of every route on one energy axis
  (ZPE-corrected, relative to the substrate with its catalyst monomers at infinity);
- :func:`ratio_temperature_figure`: k'(route)/k'(bare) against temperature, per abundance;
- :func:`ratio_abundance_figure`: k'(route)/k'(bare) against the catalyst number density
  (log-log) at a few temperatures.

matplotlib is imported inside the functions (Agg backend) so importing tstrate stays fast.
"""

from __future__ import annotations

import numpy as np

from tstrate.output.plots import _plt

#: x positions of the stationary-point kinds on the energy profile
_SLOTS = {"reactants": 0.0, "complex": 1.0, "ts": 2.0, "products": 3.0}
_SLOT_NAMES = ["separated\nreactants", "pre-reactive\ncomplex", "transition\nstate", "products"]
_LINESTYLES = ["-", "--", ":", "-."]


def route_label(route, catalyst: str) -> str:
    """Legend text of a route, e.g. ``one_water (+1 H2O)``."""
    extra = {"bare": "", "one_catalyst": f" (+1 {catalyst})", "two_catalysts": f" (+2 {catalyst})",
             "dimer": f" (+({catalyst})₂)"}[route.kind]
    return f"{route.channel}{extra}"


def energy_profile_figure(result, title: str | None = None):
    """Energy profile of all routes of a comparison on one axis [kJ/mol].

    Horizontal bars at each stationary point (separated reactants, complex, TS, products), joined
    by dashed lines, one colour per route, each bar labelled with its energy; a level shared by
    several routes (e.g. the separated reactants) is drawn as one bar split into their colours.
    The zero is the substrate with the catalyst monomers at infinity (a dimer route starts at the
    dimer's binding energy).
    """
    plt = _plt()
    fig, ax = plt.subplots(figsize=(8.0, 5.4))
    half = 0.28
    comp = result.comparison
    energies = [lv.energy_J_per_mol / 1e3 for p in result.profiles for lv in p.levels]
    lo, hi = min(energies), max(energies)
    span = max(hi - lo, 1.0)
    # group levels: slot -> list of [energy, [route indices]]
    groups: dict[float, list[list]] = {}
    for i, prof in enumerate(result.profiles):
        for lv in prof.levels:
            x, y = _SLOTS[lv.role], lv.energy_J_per_mol / 1e3
            for g in groups.setdefault(x, []):
                if abs(g[0] - y) < 0.05:
                    g[1].append(i)
                    break
            else:
                groups[x].append([y, [i]])
    for x, items in groups.items():
        for y, members in items:
            width = 2 * half / len(members)
            for k, i in enumerate(members):
                x0 = x - half + k * width
                ax.plot([x0, x0 + width], [y, y], "-", color=f"C{i}", lw=2.8, solid_capstyle="butt")
    for i, (prof, route) in enumerate(zip(result.profiles, result.routes)):
        pts = [(_SLOTS[lv.role], lv.energy_J_per_mol / 1e3) for lv in prof.levels]
        for (x0, y0), (x1, y1) in zip(pts, pts[1:]):
            ax.plot([x0 + half, x1 - half], [y0, y1], "--", color=f"C{i}", lw=1.0, alpha=0.8)
        ax.plot([], [], "-", color=f"C{i}", lw=2.8, label=route_label(route, comp.catalyst))
    # energy labels: above the bar unless another level at the same slot is just above it
    gap = 0.06 * span
    for x, items in groups.items():
        ys = sorted(g[0] for g in items)
        for y, members in items:
            colour = f"C{members[0]}" if len(members) == 1 else "black"
            crowded_above = any(0 < other - y < gap for other in ys)
            if crowded_above:
                ax.text(x, y - 0.012 * span, f"{y:.1f}", ha="center", va="top", fontsize=8.5, color=colour)
            else:
                ax.text(x, y + 0.012 * span, f"{y:.1f}", ha="center", va="bottom", fontsize=8.5, color=colour)
    ax.set_xticks(list(_SLOTS.values()))
    ax.set_xticklabels(_SLOT_NAMES)
    ax.set_xlim(-0.6, 3.6)
    ax.set_ylim(lo - 0.1 * span, hi + 0.1 * span)
    ax.axhline(0.0, color="0.75", lw=0.6, zorder=0)
    ax.set_ylabel("E0 (ZPE-corrected)  [kJ/mol]")
    ax.set_title((title or f"{comp.name}: stationary points")
                 + f"\nzero: {comp.substrate} + {comp.catalyst} molecules at infinity", fontsize=10)
    ax.grid(axis="y", alpha=0.25)
    ax.legend(fontsize=8.5, loc="best", frameon=False)
    fig.tight_layout()
    return fig


def _route_style(i: int) -> dict:
    """Colour, marker and width of assisted route ``i`` (1-based); later routes are drawn thinner
    so that routes with identical ratios stay visible on top of each other."""
    return {"color": f"C{i}", "marker": "osv^Dp"[(i - 1) % 6], "lw": max(2.8 - 0.7 * (i - 1), 0.8)}


def _two_legends(ax, routes, catalyst, styles_title, style_labels):
    """Legends right of the axes: routes (colours), and line styles (abundances or temperatures).

    Needs a figure with ``layout="constrained"`` so the space is reserved.
    """
    from matplotlib.lines import Line2D

    fig = ax.figure
    route_handles = [Line2D([], [], **_route_style(i), ms=4) for i in range(1, len(routes) + 1)]
    fig.legend(route_handles, [route_label(r, catalyst) for r in routes], title="route", fontsize=8,
               title_fontsize=8, loc="outside right upper", frameon=False)
    if len(style_labels) > 1:
        handles = [Line2D([], [], color="0.3", ls=_LINESTYLES[k % 4]) for k in range(len(style_labels))]
        fig.legend(handles, style_labels, title=styles_title, fontsize=8, title_fontsize=8,
                   loc="outside right lower", frameon=False)


def ratio_temperature_figure(result, title: str | None = None, bands: dict | None = None):
    """k'(route)/k'(bare) against temperature [K] (log scale), one line per route and abundance.

    Colours mark routes, line styles abundances; the dotted line marks a ratio of 1 and the
    diamonds the interpolated temperatures where a route overtakes the bare one (or falls behind).
    ``bands``: channel -> (4, A, T) ratios at 2.5, 16, 84 and 97.5 %, drawn as shaded bands.
    """
    plt = _plt()
    fig, ax = plt.subplots(figsize=(9.0, 4.8), layout="constrained")
    T = result.temperature_K
    order = np.argsort(T)
    abundances = result.comparison.abundances
    for i, route in enumerate(result.assisted, start=1):
        style = _route_style(i)
        for a in range(len(abundances)):
            ax.semilogy(T[order], route.ratio_to_bare[a][order], ls=_LINESTYLES[a % 4], ms=3.5,
                        **style)
            if bands and route.channel in bands:
                b = bands[route.channel][:, a][:, order]
                ax.fill_between(T[order], b[0], b[3], color=style["color"], alpha=0.08, lw=0)
                ax.fill_between(T[order], b[1], b[2], color=style["color"], alpha=0.18, lw=0)
            for rng in route.faster_ranges[a]:
                for t_end, at_edge in ((rng.low_K, rng.low_at_grid_edge), (rng.high_K, rng.high_at_grid_edge)):
                    if not at_edge:
                        ax.plot([t_end], [1.0], marker="D", color=style["color"], ms=6, mec="black", mew=0.6)
    ax.axhline(1.0, color="0.3", ls=":", lw=1.0)
    ax.set_xlabel("T  [K]")
    ax.set_ylabel("k'(route) / k'(bare)")
    heading = title or f"{result.comparison.name}: pseudo-first-order loss of {result.comparison.substrate}"
    if len(abundances) == 1:
        heading += f"\n{abundances[0].describe()}"
    ax.set_title(heading, fontsize=10)
    ax.grid(alpha=0.3, which="major")
    _two_legends(ax, result.assisted, result.comparison.catalyst, f"{result.comparison.catalyst} abundance",
                 [ab.describe() for ab in abundances])
    return fig


def _pick_temperatures(T: np.ndarray, count: int = 3) -> list[int]:
    idx = sorted(set(np.linspace(0, len(T) - 1, min(count, len(T))).round().astype(int).tolist()))
    order = np.argsort(T)
    return [int(order[i]) for i in idx]


def ratio_abundance_figure(result, temperatures_K=None, title: str | None = None):
    """k'(route)/k'(bare) against the catalyst number density [molecule cm^-3], log-log.

    Lines for a few temperatures (default the lowest, middle and highest of the grid; given ones
    are matched to the nearest grid temperature); the points mark the comparison's abundances,
    the dotted line a ratio of 1 (its intersections are the crossover abundances).
    """
    plt = _plt()
    T = result.temperature_K
    if temperatures_K is None:
        picks = _pick_temperatures(T)
    else:
        picks = sorted({int(np.argmin(np.abs(T - t))) for t in np.atleast_1d(temperatures_K)})
    cat = result.comparison.catalyst
    given = result.catalyst_m3[:, picks]
    cross = np.array([r.crossover_catalyst_m3[picks] for r in result.assisted])
    pool = np.concatenate([given[given > 0].ravel(), cross[np.isfinite(cross) & (cross > 0)].ravel()])
    if pool.size == 0:
        pool = np.array([1e20])
    lo = max(np.log10(pool.min() * 1e-6) - 1.5, -10.0)
    hi = min(np.log10(pool.max() * 1e-6) + 1.5, 25.0)
    if hi - lo < 3:
        lo, hi = lo - 1.5, hi + 1.5
    n_cm3 = np.logspace(lo, hi, 200)
    fig, ax = plt.subplots(figsize=(9.0, 4.8), layout="constrained")
    ln_bare = result.bare.ln_prefactor_SI
    for i, route in enumerate(result.assisted, start=1):
        style = _route_style(i)
        for s, j in enumerate(picks):
            ln_ratio = route.ln_prefactor_SI[j] - ln_bare[j] + route.catalyst_power * np.log(n_cm3 * 1e6)
            ax.loglog(n_cm3, np.exp(ln_ratio), ls=_LINESTYLES[s % 4], color=style["color"], lw=style["lw"])
            for a in range(result.catalyst_m3.shape[0]):
                n = result.catalyst_m3[a, j]
                if n > 0:
                    ax.plot([n * 1e-6], [route.ratio_to_bare[a, j]], ls="none", marker=style["marker"],
                            color=style["color"], ms=5, mec="black", mew=0.5)
    ax.axhline(1.0, color="0.3", ls=":", lw=1.0)
    ax.set_xlabel(f"[{cat}]  [molecule cm⁻³]")
    ax.set_ylabel("k'(route) / k'(bare)")
    ax.set_title(title or f"{result.comparison.name}: dependence on the {cat} abundance\n"
                 "(markers: the comparison's abundances)", fontsize=10)
    ax.grid(alpha=0.3, which="major")
    _two_legends(ax, result.assisted, cat, "temperature", [f"{T[j]:g} K" for j in picks])
    return fig


def comparison_figures(result, ratio_bands: dict | None = None) -> dict[str, object]:
    """All three figures of a comparison, keyed by a file-name stem suffix (``ratio_bands``: see
    :func:`ratio_temperature_figure`)."""
    return {
        "energy_profile": energy_profile_figure(result),
        "ratio_vs_temperature": ratio_temperature_figure(result, bands=ratio_bands),
        "ratio_vs_abundance": ratio_abundance_figure(result),
    }
