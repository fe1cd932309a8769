"""Tables and figures of a study's barrierless associations (``[[association]]``).

``tables/association_<name>.csv``: one row per temperature and pressure, with the limits and the
comparison with an evaluated k0 (units in the headers: cm3 molecule-1 s-1, cm6 molecule-2 s-1).
The figure ``plots/association_<name>``: log10 k against log10 p per temperature, with k_inf, k0 [M]
and, when the study gives an evaluated k0, the evaluation's falloff curve (JPL form, Fc = 0.6,
with the same k_inf).
"""

from __future__ import annotations

import numpy as np

_BAR = 1e5

#: the header of tables/association_<name>.csv
HEADER = ["association", "T [K]", "pressure [bar]", "[M] [molecule cm-3]", "k [cm3 molecule-1 s-1]",
          "k_inf [cm3 molecule-1 s-1]", "k0 [cm6 molecule-2 s-1]", "k0_reference [cm6 molecule-2 s-1]",
          "k0 / k0_reference [1]", "pressure_method", "adduct_rotation"]


def association_rows(ar) -> list[list]:
    """Rows of tables/association_<name>.csv for one AssociationResult."""
    fo = ar.falloff
    ref = ar.reference_k0_m6_per_s
    rows = []
    for i, t in enumerate(fo.temperature_K):
        for j in range(fo.number_density_m3.shape[1]):
            p = None if ar.pressure_Pa is None else float(ar.pressure_Pa[j]) / _BAR
            rows.append([ar.name, float(t), p, float(fo.number_density_m3[i, j]) * 1e-6,
                         float(fo.rate_m3_per_s[i, j]) * 1e6, float(fo.k_inf_m3_per_s[i]) * 1e6,
                         float(fo.k0_m6_per_s[i]) * 1e12, None if ref is None else float(ref[i]) * 1e12,
                         None if ref is None else float(fo.k0_m6_per_s[i] / ref[i]), fo.method,
                         ar.spec.adduct_rotation])
    return rows


def association_figure(ar, max_curves: int = 4):
    """log10 k [cm3 molecule-1 s-1] against log10 p [bar] (or [M]) of one association."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from tstrate.physics.falloff import jpl_termolecular_rate

    fo = ar.falloff
    fig, ax = plt.subplots(figsize=(6.4, 4.8))
    n = fo.temperature_K.size
    rows = sorted({int(round(x)) for x in np.linspace(0, n - 1, min(n, max_curves))})
    cmap = plt.get_cmap("viridis")
    by_p = ar.pressure_Pa is not None
    for j, i in enumerate(rows):
        colour = cmap(0.9 * j / max(1, len(rows) - 1))
        t = fo.temperature_K[i]
        m = fo.number_density_m3[i]
        x = np.log10(ar.pressure_Pa / _BAR) if by_p else np.log10(m * 1e-6)
        ax.plot(x, np.log10(fo.rate_m3_per_s[i] * 1e6), "o-", color=colour, lw=1.6, ms=3,
                label=f"{t:g} K ({fo.method})")
        ax.plot(x, np.log10(np.full(x.size, fo.k_inf_m3_per_s[i] * 1e6)), ":", color=colour, lw=1)
        ax.plot(x, np.log10(fo.k0_m6_per_s[i] * m * 1e6), "--", color=colour, lw=1)
        if ar.reference_k0_m6_per_s is not None:
            # k0 and k_inf already at this T: exponents 0
            ref = jpl_termolecular_rate(t, m, ar.reference_k0_m6_per_s[i], 0.0, fo.k_inf_m3_per_s[i], 0.0)
            ax.plot(x, np.log10(ref * 1e6), "-", color=colour, lw=4, alpha=0.25)
    ax.set_xlabel("log10 (p / bar)" if by_p else "log10 ([M] / molecule cm-3)")
    ax.set_ylabel("log10 (k / cm3 molecule-1 s-1)")
    title = f"{ar.name}: dotted k_inf, dashed k0 [M]"
    if ar.reference_k0_m6_per_s is not None:
        title += "; broad: evaluated k0 in the JPL form"
    ax.set_title(title, fontsize=9)
    ax.legend(fontsize=8)
    fig.tight_layout()
    return fig


def association_summary(ar) -> list[str]:
    """Report sentences for one association."""
    fo = ar.falloff
    out = [f"{ar.name}: {ar.spec.reactants[0]} + {ar.spec.reactants[1]} -> {ar.spec.adduct}, well depth "
           f"{ar.model.well_depth_J_per_mol / 1e3:.1f} kJ/mol (ZPE-corrected); k(E) by inverse Laplace transform "
           f"of k_inf = {ar.spec.k_inf_A_m3_per_s * 1e6:.3g} (T/{ar.spec.k_inf_reference_temperature_K:g} K)^"
           f"{ar.spec.k_inf_temperature_exponent:g} exp(-{ar.spec.k_inf_activation_energy_J_per_mol / 1e3:g} kJ/mol "
           f"/ RT) cm3 molecule-1 s-1 (adduct rotation {ar.spec.adduct_rotation}); k(T, p) by {fo.method}."]
    ratio = ar.k0_ratio
    for i, t in enumerate(fo.temperature_K):
        line = f"{t:g} K: k0 = {fo.k0_m6_per_s[i] * 1e12:.3g} cm6 molecule-2 s-1"
        if ratio is not None:
            line += f", {ratio[i]:.2f} x the evaluated {ar.reference_k0_m6_per_s[i] * 1e12:.3g}"
        out.append(line + f"; k_inf on the grain {fo.k_inf_m3_per_s[i] * 1e6:.3g} cm3 molecule-1 s-1.")
    return out
