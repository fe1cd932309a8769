"""Figures of falloff and energised-molecule results. Functions return a Figure; saving is separate
(:func:`tstrate.output.plots.save_figure`). matplotlib is imported inside the functions."""

from __future__ import annotations

import numpy as np

from tstrate.physics.falloff import troe_rate
from tstrate.physics.states import CM1_J_PER_MOL
from tstrate.units import K_B

_BAR = 1e5
#: open markers of reference expressions, one per reference
_REF_MARKERS = ("o", "s", "^", "D", "v")


def _plt():
    from tstrate.output.plots import _plt as plt

    return plt()


def _pick(n: int, most: int) -> list[int]:
    """Up to ``most`` indices spread evenly over range(n), ends included."""
    if n <= most:
        return list(range(n))
    return sorted({int(round(x)) for x in np.linspace(0, n - 1, most)})


def falloff_figure(cf, title: str | None = None, max_curves: int = 5, bands=None, references=None):
    """Falloff curves of one channel (a ChannelFalloff), two panels against log10 p.

    Left: log10 k; right: log10 (k / k_inf), where the shapes can be compared. Solid: the
    strong-collision k(T, [M]) (beta_c-scaled) on a dense grid reaching two decades past
    the study's pressures; dots: the study's grid; dashed: k_inf (flat) and the
    Lindemann-Hinshelwood curve (with the k_0 of the Troe form: the low-pressure limit, or
    the effective k_0 of an Eckart channel); dotted black: the Troe fit over the range it was
    fitted on.
    Number-density studies are drawn against [M] instead of pressure.
    ``bands``: (4, T, P) k / k_inf at 2.5, 16, 84 and 97.5 % on the study's grid, shaded on the right
    panel (the uncertainty of the falloff's shape; that of k_inf is on the Arrhenius plot).
    ``references``: [(label, expression, Tmin_K, Tmax_K, pmin_Pa, pmax_Pa)] falloff expressions
    (:mod:`tstrate.expressions.evaluation_forms`) drawn dash-dotted with open markers at each plotted
    temperature inside their range, over their pressure range (the right panel divides them by the
    computed k_inf).
    """
    from matplotlib.lines import Line2D

    plt = _plt()
    fig, (ax, axr) = plt.subplots(1, 2, figsize=(11.0, 5.0))
    by_pressure = cf.pressure_Pa is not None
    rows = _pick(cf.temperature_K.size, max_curves)
    cmap = plt.get_cmap("viridis")
    lind_style = (0, (6, 2, 1.5, 2))
    handles = []
    for j, i in enumerate(rows):
        colour = cmap(0.9 * j / max(1, len(rows) - 1))
        t = cf.temperature_K[i]
        k_inf = cf.k_high_pressure_per_s[i]
        k0 = cf.troe_k0_m3_per_s[i]
        x_curve = np.log10(cf.curve_pressure_Pa / _BAR if by_pressure else cf.curve_number_density_m3[i] * 1e-6)
        x_grid = np.log10(cf.pressure_Pa / _BAR if by_pressure else cf.number_density_m3[i] * 1e-6)
        m_curve = cf.curve_number_density_m3[i]
        lind = k_inf * k0 * m_curve / (k_inf + k0 * m_curve)
        m_fit = cf.troe_fit_number_density_m3
        fit = cf.troe
        k_troe = troe_rate(cf.troe_k0_m3_per_s[i], k_inf, m_fit, t, fit.a, fit.T3_K, fit.T1_K, fit.T2_K)
        x_fit = np.log10(m_fit * K_B * t / _BAR if by_pressure else m_fit * 1e-6)
        if bands is not None:
            b = np.log10(bands[:, i, :])
            axr.fill_between(x_grid, b[0], b[3], color=colour, alpha=0.10, lw=0)
            axr.fill_between(x_grid, b[1], b[2], color=colour, alpha=0.22, lw=0)
        for axis, scale in ((ax, 1.0), (axr, k_inf)):
            line, = axis.plot(x_curve, np.log10(cf.curve_rate_per_s[i] / scale), "-", color=colour, lw=1.8)
            axis.plot(x_grid, np.log10(cf.rate_constant_per_s[i] / scale), "o", color=colour, ms=4)
            axis.plot(x_curve[[0, -1]], np.log10([k_inf / scale] * 2), "--", color=colour, lw=1.0)
            axis.plot(x_curve, np.log10(lind / scale), ls=lind_style, color=colour, lw=1.0)
            axis.plot(x_fit, np.log10(k_troe / scale), ":", color="k", lw=1.3, alpha=0.8)
        for r_i, (_label, expr, tlo, thi, plo, phi) in enumerate(references or ()):
            if not (tlo * (1 - 1e-12) <= t <= thi * (1 + 1e-12)):
                continue
            p_curve = m_curve * K_B * t
            inside = np.ones(p_curve.shape, dtype=bool)
            if plo is not None:
                inside &= (p_curve >= plo * (1 - 1e-12)) & (p_curve <= phi * (1 + 1e-12))
            if not inside.any():
                continue
            k_ref = np.asarray(expr.rate(t, m_curve[inside]), dtype=float)
            for axis, scale in ((ax, 1.0), (axr, k_inf)):
                axis.plot(x_curve[inside], np.log10(k_ref / scale), ls="-.", color=colour, lw=1.2,
                          marker=_REF_MARKERS[r_i % len(_REF_MARKERS)], mfc="none", ms=5,
                          markevery=max(1, int(inside.sum()) // 6))
        handles.append(Line2D([], [], color=colour, lw=1.8, label=f"{t:g} K"))
    xlabel = "log10 (p / bar)" if by_pressure else "log10 ([M] / molecule cm⁻³)"
    for axis in (ax, axr):
        axis.set_xlabel(xlabel)
        axis.grid(alpha=0.3)
    ax.set_ylabel("log10 (k / s⁻¹)")
    axr.set_ylabel("log10 (k / k∞)")
    lo = min(np.log10(np.min(cf.curve_rate_per_s[i] / cf.k_high_pressure_per_s[i])) for i in rows)
    bottom = max(lo, -8.0) - 0.3
    axr.set_ylim(bottom, -0.08 * bottom)
    k_lo = min(np.log10(np.min(cf.curve_rate_per_s[i])) for i in rows)
    k_hi = max(np.log10(cf.k_high_pressure_per_s[i]) for i in rows)
    ax.set_ylim(k_lo - 1.0, k_hi + 1.0)
    styles = [Line2D([], [], color="0.3", lw=1.8, label=f"strong collision, βc-scaled, in {cf.bath.name}"),
              Line2D([], [], color="0.3", ls="", marker="o", ms=4, label="study grid"),
              Line2D([], [], color="0.3", ls="--", lw=1.0, label="k∞"),
              Line2D([], [], color="0.3", ls=lind_style, lw=1.0,
                     label="Lindemann-Hinshelwood" + (" (effective k0)" if cf.model.tunnelling == "eckart"
                                                      else "")),
              Line2D([], [], color="k", ls=":", lw=1.3,
                     label=f"Troe fit (max dev. {100 * cf.troe.max_rel_deviation:.2g} %)")]
    styles += [Line2D([], [], color="0.3", ls="-.", lw=1.2, marker=_REF_MARKERS[i % len(_REF_MARKERS)], mfc="none",
                      label=f"reference: {r[0]}") for i, r in enumerate(references or ())]
    ncol = min(len(styles), 4)
    style_rows = -(-len(styles) // ncol)
    fig.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 0.045 * style_rows + 0.005),
               ncol=len(handles), fontsize=8, frameon=False)
    fig.legend(handles=styles, loc="lower center", bbox_to_anchor=(0.5, 0.0), ncol=ncol, fontsize=8,
               frameon=False)
    fig.suptitle(title or f"falloff of {cf.name}: {cf.model.reactant.name} in {cf.bath.name}", fontsize=11)
    fig.tight_layout(rect=(0, 0.045 * style_rows + 0.06, 1, 1))
    return fig


def _title(res, where: str = "") -> str:
    note = "  (below threshold: fraction 0)" if res.below_threshold else ""
    return (f"{res.spec.name}: {res.model.reactant.name} excited by {res.spec.description}, channel "
            f"{res.spec.channel}{where}{note}")


def _log_quenched(fraction):
    """log10 (1 - fraction); NaN below 1e-13, where 1 - fraction is rounding noise of doubles."""
    q = 1.0 - np.asarray(fraction, dtype=float)
    return np.where(q > 1e-13, np.log10(np.maximum(q, 1e-300)), np.nan)


def yield_pressure_figure(res, max_curves: int = 5):
    """Fraction reacting (left) and log10 of the fraction deactivated (right) against log10 p.

    One colour per temperature; solid: Stern-Volmer, dashed: stepwise, both on the dense
    grid of ``res.pressure_curve``; markers: the study's pressures.
    """
    from matplotlib.lines import Line2D

    plt = _plt()
    g, c = res.pressure, res.pressure_curve or res.pressure
    fig, (ax, axq) = plt.subplots(1, 2, figsize=(11.0, 4.8))
    by_pressure = g.pressure_Pa is not None
    rows = _pick(g.temperature_K.size, max_curves)
    cmap = plt.get_cmap("plasma")
    handles = []
    for j, i in enumerate(rows):
        colour = cmap(0.85 * j / max(1, len(rows) - 1))
        x = np.log10(g.pressure_Pa / _BAR) if by_pressure else np.log10(g.number_density_m3[i] * 1e-6)
        xc = np.log10(c.pressure_Pa / _BAR) if by_pressure else np.log10(c.number_density_m3[i] * 1e-6)
        ax.plot(xc, c.stern_volmer[i], "-", color=colour, lw=1.6)
        ax.plot(x, g.stern_volmer[i], "o", color=colour, ms=4)
        axq.plot(xc, _log_quenched(c.stern_volmer[i]), "-", color=colour, lw=1.6)
        axq.plot(x, _log_quenched(g.stern_volmer[i]), "o", color=colour, ms=4)
        if c.stepwise is not None:
            ax.plot(xc, c.stepwise[i], "--", color=colour, lw=1.2)
            axq.plot(xc, _log_quenched(c.stepwise[i]), "--", color=colour, lw=1.2)
        if c.master_equation is not None:
            ax.plot(xc, c.master_equation[i], ":", color=colour, lw=2.0)
            axq.plot(xc, _log_quenched(c.master_equation[i]), ":", color=colour, lw=2.0)
        handles.append(Line2D([], [], color=colour, lw=1.6, label=f"{g.temperature_K[i]:g} K"))
    xlabel = "log10 (p / bar)" if by_pressure else "log10 ([M] / molecule cm⁻³)"
    ax.set_ylim(-0.03, 1.03)
    ax.set_ylabel("fraction reacting before deactivation")
    axq.set_ylabel("log10 (fraction deactivated)")
    for axis in (ax, axq):
        axis.set_xlabel(xlabel)
        axis.grid(alpha=0.3)
    styles = [Line2D([], [], color="0.3", lw=1.6, label="Stern-Volmer, βc Z[M]"),
              Line2D([], [], color="0.3", ls="--", lw=1.2, label="stepwise <ΔE>down"),
              Line2D([], [], color="0.3", ls="", marker="o", ms=4, label="study pressures")]
    if c.master_equation is not None:
        styles.insert(2, Line2D([], [], color="0.3", ls=":", lw=2.0, label="master equation"))
    fig.legend(handles=handles + styles, loc="lower center", ncol=len(handles) + len(styles), fontsize=8,
               frameon=False)
    fig.suptitle(_title(res), fontsize=10)
    fig.tight_layout(rect=(0, 0.07, 1, 1))
    return fig


def yield_altitude_figure(res, bands: dict | None = None):
    """Altitude against the fraction reacting (linear), the fraction deactivated (log) and p, T.

    Every curve is in a legend: the two panels of fractions share one (Stern-Volmer, stepwise and
    the shaded bands), the right panel has its own (pressure, temperature).
    ``bands``: "stern_volmer" / "stepwise" -> (4, Z) fractions at 2.5, 16, 84 and 97.5 %, shaded."""
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    plt = _plt()
    g = res.profile
    z_km = res.altitude_m * 1e-3
    fig, (ax, axq, axp) = plt.subplots(1, 3, figsize=(11.0, 5.4), sharey=True,
                                       gridspec_kw={"width_ratios": [1.5, 1.5, 1]})
    shaded = []
    for key, colour in (("stern_volmer", "C0"), ("stepwise", "C3")):
        if bands and key in bands:
            ax.fill_betweenx(z_km, bands[key][0], bands[key][3], color=colour, alpha=0.10, lw=0)
            ax.fill_betweenx(z_km, bands[key][1], bands[key][2], color=colour, alpha=0.22, lw=0)
            name = "Stern-Volmer" if key == "stern_volmer" else "stepwise"
            shaded += [Patch(color=colour, alpha=0.22, lw=0, label=f"{name}, central 68 %"),
                       Patch(color=colour, alpha=0.10, lw=0, label=f"{name}, central 95 %")]
    ax.plot(g.stern_volmer, z_km, "-o", ms=3, color="C0")
    axq.plot(_log_quenched(g.stern_volmer), z_km, "-o", ms=3, color="C0")
    curves = [Line2D([], [], color="C0", marker="o", ms=3, label="Stern-Volmer, beta_c Z[M]")]
    if g.stepwise is not None:
        ax.plot(g.stepwise, z_km, "--s", ms=3, color="C3")
        axq.plot(_log_quenched(g.stepwise), z_km, "--s", ms=3, color="C3")
        curves.append(Line2D([], [], color="C3", ls="--", marker="s", ms=3, label="stepwise <dE>down"))
    if getattr(g, "master_equation", None) is not None:
        ax.plot(g.master_equation, z_km, ":^", ms=3, color="C2")
        axq.plot(_log_quenched(g.master_equation), z_km, ":^", ms=3, color="C2")
        curves.append(Line2D([], [], color="C2", ls=":", marker="^", ms=3, label="master equation"))
    ax.set_xlim(-0.03, 1.03)
    ax.set_xlabel("fraction reacting before deactivation")
    axq.set_xlabel("log10 (fraction deactivated)")
    ax.set_ylabel("altitude  [km]")
    for axis in (ax, axq, axp):
        axis.grid(alpha=0.3)
    line_p, = axp.plot(np.log10(g.pressure_Pa / _BAR), z_km, "-", color="0.3", label="pressure")
    axp.set_xlabel("log10 (p / bar)")
    twin = axp.twiny()
    line_t, = twin.plot(g.temperature_K, z_km, "-", color="C1", label="temperature")
    twin.set_xlabel("T  [K]", color="C1")
    twin.tick_params(axis="x", colors="C1")
    axp.legend(handles=[line_p, line_t], fontsize=8, loc="upper right")
    fig.legend(handles=curves + shaded, loc="lower center", ncol=min(4, len(curves + shaded)), fontsize=8,
               frameon=False)
    fig.suptitle(_title(res, f", along {res.profile_source}"), fontsize=10)
    fig.tight_layout(rect=(0, 0.09 if shaded else 0.06, 1, 1))
    return fig


def rate_energy_figure(res):
    """log10 k(E) against E with the barrier and the energies of the energised molecule marked."""
    plt = _plt()
    rate = res.model.rate
    e_cm1 = rate.energies_J_per_mol / CM1_J_PER_MOL
    k = np.asarray(rate.rate_per_s, dtype=float)
    top = float(np.log10(k.max()))
    lowest = float(np.log10(k[k > 0].min()))
    bottom = max(top - 20.0, lowest - 1.0)   # a deep-tunnelling tail: 20 decades shown
    # grains with k(E) = 0 (no state of the transition state within reach) break the line and are
    # marked along the bottom of the axis, not joined over
    log_k = np.where(k > 0, np.log10(np.where(k > 0, k, 1.0)), np.nan)
    fig, ax = plt.subplots(figsize=(6.4, 4.2))
    ax.plot(e_cm1, log_k, "-", color="C0", lw=1.2, label="RRKM k(E)")
    pos = k > 0
    first = float(e_cm1[pos].min()) if pos.any() else float(e_cm1.max())
    if first > float(e_cm1.min()):
        ax.axvspan(float(e_cm1.min()), first, color="0.85", alpha=0.6, lw=0,
                   label=f"k(E) = 0 below {first:.0f} cm-1")
    gaps = ~pos & (e_cm1 > first)
    if gaps.any():
        ax.plot(e_cm1[gaps], np.full(int(gaps.sum()), bottom + 0.3), "|", color="C0", ms=7, alpha=0.7,
                label=f"k(E) = 0 ({int(gaps.sum())} grains above it)")
    ax.set_ylim(bottom, top + 1.0)
    ax.axvline(rate.barrier_J_per_mol / CM1_J_PER_MOL, color="0.4", ls="--", lw=1.0, label="barrier E0")
    energies = [g.energy_J_per_mol for g in (res.pressure, res.profile) if g is not None]
    if energies:
        e = np.concatenate([np.atleast_1d(x) for x in energies]) / CM1_J_PER_MOL
        ax.axvspan(e.min() - 20, e.max() + 20, color="C3", alpha=0.25, label="energised molecule")
    ax.set_xlabel("E above the reactant zero-point level  [cm⁻¹]")
    ax.set_ylabel("log10 (k(E) / s⁻¹)")
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, loc="lower right")
    how = "with Eckart tunnelling" if res.model.tunnelling == "eckart" else "no tunnelling"
    ax.set_title(f"RRKM k(E) of channel {res.spec.channel} ({res.model.reactant.name}), {how}", fontsize=10)
    fig.tight_layout()
    return fig


# ---------------------------------------------------------------- master equation
def population_figure(populations, well_names, product_names, *, collision_frequency_per_s: float | None = None,
                      title: str | None = None):
    """Populations of each well and the products formed against time (log axis), from a
    :class:`tstrate.physics.master_equation.Populations`; with ``collision_frequency_per_s`` the top
    axis counts collisions (omega t)."""
    plt = _plt()
    fig, ax = plt.subplots(figsize=(7.0, 4.6))
    t = np.asarray(populations.times_s, dtype=float)
    for i, name in enumerate(well_names):
        ax.plot(t, populations.well_populations[:, i], "-", lw=1.8, label=f"well {name}")
    for p, name in enumerate(product_names):
        ax.plot(t, populations.products[:, p], "--", lw=1.6, label=f"products {name}")
    ax.set_xscale("log")
    ax.set_xlabel("time  [s]")
    ax.set_ylabel("fraction of the initial molecules")
    ax.set_ylim(-0.02, 1.02)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=8, frameon=False)
    if collision_frequency_per_s:
        om = float(collision_frequency_per_s)
        top = ax.secondary_xaxis("top", functions=(lambda x: x * om, lambda n: n / om))
        top.set_xlabel("collisions")
    ax.set_title(title or "energised molecules: populations against time", fontsize=10)
    fig.tight_layout()
    return fig


def branching_figure(pressure_Pa, product_per_s, product_names, *, temperature_K: float | None = None,
                     title: str | None = None):
    """Branching fractions k_p / sum_p k_p of the product channels of one well against pressure,
    ``product_per_s`` (n_P, n_products) [s^-1] at ``pressure_Pa`` (n_P,) [Pa]."""
    plt = _plt()
    k = np.asarray(product_per_s, dtype=float)
    p = np.asarray(pressure_Pa, dtype=float)
    share = k / k.sum(axis=1, keepdims=True)
    fig, (ax, axk) = plt.subplots(1, 2, figsize=(10.0, 4.4))
    for j, name in enumerate(product_names):
        ax.plot(p / _BAR, share[:, j], "-o", ms=3, label=name)
        axk.plot(p / _BAR, k[:, j], "-o", ms=3, label=name)
    for axis in (ax, axk):
        axis.set_xscale("log")
        axis.set_xlabel("p  [bar]")
        axis.grid(alpha=0.3)
    axk.set_yscale("log")
    ax.set_ylabel("branching fraction")
    ax.set_ylim(-0.02, 1.02)
    axk.set_ylabel("k(T, p)  [s$^{-1}$]")
    ax.legend(fontsize=8, frameon=False)
    at = f" at {temperature_K:g} K" if temperature_K is not None else ""
    fig.suptitle(title or f"branching against pressure{at}", fontsize=10)
    fig.tight_layout()
    return fig


def excitation_populations_figure(res):
    """The master-equation populations of an excitation's energised molecule (``res.populations``)
    against time and collisions, or None when it has none."""
    if res.populations is None:
        return None
    t_pop, m_pop, om_pop, pops = res.populations
    return population_figure(pops, ["energised"], ["reacted", "stabilised"], collision_frequency_per_s=om_pop,
                             title=f"{res.spec.name}: master equation at {t_pop:g} K, "
                                   f"[M] = {m_pop * 1e-6:.3g} cm-3")
