"""Figures of master-equation results: populations against time and branching against pressure
(on the three-well test model of tests/physics/test_master_equation.py)."""

import numpy as np
import pytest

from tstrate.output.pressure_plots import branching_figure, population_figure
from tstrate.physics import master_equation as me

pytest.importorskip("matplotlib")


def _model(omega):
    import importlib.util
    from pathlib import Path

    spec = importlib.util.spec_from_file_location(
        "me_tests", Path(__file__).resolve().parents[1] / "physics" / "test_master_equation.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod.three_well_model(omega=omega)


def test_population_and_branching_figures(tmp_path):
    system = _model(1e9)
    rm = me.rate_matrix(system, 500.0)
    n0 = np.zeros(system.n_grains)
    n0[62] = 1.0
    pops = me.populations(rm, me.initial_vector(system, rm, "A", n0), np.logspace(-11, -3, 30))
    fig = population_figure(pops, [w.name for w in system.wells], [r.name for r in system.losses],
                            collision_frequency_per_s=1e9)
    # what is drawn is the populations: wells plus products stay at one
    lines = fig.axes[0].get_lines()
    total = sum(line.get_ydata() for line in lines)
    np.testing.assert_allclose(total, 1.0, atol=1e-8)
    fig.savefig(tmp_path / "pop.png")

    pressures = np.array([1e3, 1e4, 1e5])
    k = np.array([me.rate_coefficients(_model(om), 500.0).product_per_s[:, 0] for om in (1e7, 1e8, 1e9)])
    fig = branching_figure(pressures, k, ["A->P1", "C->P2"], temperature_K=500.0)
    shares = [line.get_ydata() for line in fig.axes[0].get_lines()]
    np.testing.assert_allclose(sum(shares), 1.0)
    fig.savefig(tmp_path / "branch.png")
