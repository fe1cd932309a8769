"""Figure drawing for ``tstrate run``: formats, the cap on channels per figure, process pools."""

from __future__ import annotations

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.output import plots


def _records(n: int) -> list[dict]:
    # channel records as tstrate.output.records.channel_rates_record writes them (only the keys
    # the Arrhenius plot reads); k = 10^i s-1, so channel i is the i-th slowest
    T = np.array([200.0, 250.0, 300.0])
    return [{"name": f"c{i}", "order": 1, "tunnelling": "none", "temperature_K": T,
             "rate_constant": 10.0 ** i * T / 250.0, "rate_constant_unit": "s-1"} for i in range(n)]


def test_top_by_rate_keeps_the_fastest_in_given_order():
    assert plots.top_by_rate(["a", "b", "c", "d"], [3.0, 1.0, np.nan, 2.0], 2) == ["a", "d"]
    assert plots.top_by_rate(["a", "b"], [1.0, 2.0], 5) == ["a", "b"]


def test_arrhenius_plot_carries_at_most_the_cap():
    fig = plots.arrhenius_figure(_records(25), max_channels=4)
    (ax,) = fig.axes[:1]
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert labels == [f"c{i} (none)" for i in (21, 22, 23, 24)]
    assert plots.fastest_channels(_records(25), 4) == ["c21", "c22", "c23", "c24"]
    plots._plt().close(fig)


def test_labels_are_plain_text():
    # mathtext is parsed only for strings with a pair of "$"; the figures use plain labels
    fig = plots.arrhenius_figure(_records(2))
    texts = [fig.axes[0].get_xlabel(), fig.axes[0].get_ylabel()]
    assert all("$" not in t for t in texts)
    plots._plt().close(fig)


def test_figures_drawn_in_a_pool_are_the_serial_ones(tmp_path):
    jobs = [plots.FigureJob(f"fig{i}", plots.arrhenius_figure, (_records(3 + i),)) for i in range(3)]
    serial = plots.draw_figures(jobs, tmp_path / "a" if (tmp_path / "a").mkdir() is None else None,
                                ("png", "svg"))
    (tmp_path / "b").mkdir()
    pooled = plots.draw_figures(jobs, tmp_path / "b", ("png", "svg"), workers=2)
    assert [[p.name for p in ps] for ps in serial] == [[p.name for p in ps] for ps in pooled] == \
        [[f"fig{i}.png", f"fig{i}.svg"] for i in range(3)]
    for a, b in zip(serial, pooled):
        assert a[0].read_bytes() == b[0].read_bytes()           # PNG: the same pixels and metadata


@pytest.mark.parametrize("kwargs, key", [({"formats": ("png", "tiff")}, "--plot-formats"),
                                         ({"formats": ()}, "--plot-formats"),
                                         ({"workers": 0}, "--plot-workers"),
                                         ({"max_channels": 0}, "--plot-max-channels")])
def test_bad_plot_settings_name_their_option(kwargs, key):
    with pytest.raises(InputError, match="plot|channels") as err:
        plots.PlotSettings(**kwargs)
    assert err.value.field == key


def test_parse_formats():
    assert plots.parse_formats("SVG, png,svg") == ("svg", "png")
