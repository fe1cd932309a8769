"""Figure of the isotopologue results: kinetic isotope effects against temperature."""

from __future__ import annotations

import numpy as np


def kie_figure(record: dict, title: str | None = None):
    """KIE = k_light / k_heavy against T, one panel per isotope, one colour per channel; dashed
    without tunnelling. ``record`` is :func:`tstrate.output.isotope_records.isotopes_record`."""
    from tstrate.output.plots import _plt

    plt = _plt()
    subs = [s for s in record["substitutions"] if s["kie"]]
    n = max(len(subs), 1)
    fig, axes = plt.subplots(1, n, figsize=(4.4 * n, 3.9), squeeze=False)
    T = np.asarray(record["temperature_K"], dtype=float)
    for ax, s in zip(axes[0], subs):
        for i, k in enumerate(s["kie"]):
            ax.plot(T, k["kie"], "-", color=f"C{i}", label=k["channel"])
            ax.plot(T, k["kie_no_tunnelling"], "--", color=f"C{i}", label=f"{k['channel']} (no tunnelling)")
        ax.axhline(1.0, color="0.6", lw=0.8)
        ax.set_xlabel("T  [K]")
        ax.set_ylabel(f"KIE ({s['label']})  k_light / k_heavy  [1]")
        if max(np.nanmax(np.asarray(k["kie"], dtype=float)) for k in s["kie"]) > 10:
            ax.set_yscale("log")
        ax.grid(alpha=0.3)
        ax.legend(fontsize=7)
        ax.set_title(s["label"])
    if title:
        fig.suptitle(title)
    fig.tight_layout()
    return fig
