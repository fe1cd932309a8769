"""Every rate and thermochemistry form: records that round-trip, and rates against an independent
evaluation - the closed form written out here, and Cantera's own evaluation of the mechanism
block the form writes, loaded in a minimal Cantera solution (Cantera, test-only dependency, is
the reference for Chebyshev, Troe, the per-pressure table and NASA-7).

Cantera's forward_rate_constants of a unimolecular reaction are in s^-1, as tstrate's; its
[M] is P / (R T) in kmol m^-3, tstrate's P / (k_B T) in m^-3.
"""

from __future__ import annotations

import functools
import json

import numpy as np
import pytest

from tstrate.errors import InputError
from tstrate.expressions.arrhenius import ArrheniusFit, fit_arrhenius
from tstrate.expressions.chebyshev import ChebyshevFit, fit_chebyshev
from tstrate.expressions.mechanism_text import UNITS_LINE
from tstrate.expressions.nasa7 import fit_nasa7
from tstrate.expressions.pressure_table import PressureTableFit, fit_pressure_table
from tstrate.expressions.troe import TroeFit, fit_troe
from tstrate.physics.falloff import troe_rate
from tstrate.units import K_B, R

T_GRID = np.linspace(150.0, 400.0, 11)
P_GRID = np.array([1e2, 1e3, 1e4, 1e5])                       # Pa


def _k_T(T):
    """An invented, strongly curved k(T) [s^-1] (tunnelling-like upturn at low T)."""
    return 1e13 * np.exp(-9000.0 / T) + 1e-2 * np.exp(-600.0 / T)


def _k_TP(T, P):
    """An invented falloff-like k(T, P) [s^-1]: Lindemann with k0 [M] against k_inf."""
    kinf = _k_T(T)
    k0m = 1e-10 * np.exp(-7000.0 / T) * P / (K_B * T)
    return kinf * k0m / (kinf + k0m)


def _round_trip(x):
    """from_record of the record, after a JSON round trip (plain data only)."""
    rec = x.to_record()
    again = type(x).from_record(json.loads(json.dumps(rec)))
    assert again.to_record() == rec
    return again


@functools.lru_cache(maxsize=None)
def _forms():
    mod = fit_arrhenius(T_GRID, _k_T(T_GRID), order=1, modified=True)
    two = fit_arrhenius(T_GRID, _k_T(T_GRID), order=1)
    cheb_t = fit_chebyshev(T_GRID, _k_T(T_GRID), order=1, n_temperature=5)
    TT, PP = np.meshgrid(T_GRID, P_GRID, indexing="ij")
    cheb_tp = fit_chebyshev(T_GRID, _k_TP(TT, PP), order=1, n_temperature=5, pressure_Pa=P_GRID, n_pressure=3)
    table = fit_pressure_table(T_GRID, _k_TP(TT, PP), order=1, pressure_Pa=P_GRID,
                               number_density_m3=P_GRID / (K_B * T_GRID[-1]))
    return {"modified": mod, "arrhenius": two, "chebyshev": cheb_t, "chebyshev_P": cheb_tp, "table": table,
            "troe": _troe()}


def _troe():
    """A Troe fit of exact Troe data with T** (invented parameters), joined to its limits."""
    k0 = fit_arrhenius(T_GRID, 1e-16 * (T_GRID / 300.0) ** -3 * np.exp(-8000.0 / T_GRID), order=2, modified=True)
    kinf = fit_arrhenius(T_GRID, 1e13 * np.exp(-9000.0 / T_GRID), order=1, modified=True)
    m = np.logspace(18, 27, 13)
    k = troe_rate(k0.rate(T_GRID)[:, None], kinf.rate(T_GRID)[:, None], m[None, :], T_GRID[:, None],
                  0.6, 200.0, 1500.0, 4000.0)
    fit = fit_troe(T_GRID, m, k, k0.rate(T_GRID), kinf.rate(T_GRID), fit_T2=True)
    return fit.with_limits(k0, kinf, bath_gas="CO2", source="invented test curve")


@pytest.mark.parametrize("name", ["modified", "arrhenius", "chebyshev", "chebyshev_P", "table", "troe"])
def test_records_round_trip_and_evaluate_identically(name):
    form = _forms()[name]
    again = _round_trip(form)
    if name == "troe":
        m = np.logspace(18, 27, 7)
        np.testing.assert_array_equal(again.rate(T_GRID[:, None], m[None, :]), form.rate(T_GRID[:, None], m[None, :]))
        np.testing.assert_array_equal(again.fcent(T_GRID), form.fcent(T_GRID))
        assert again == form
    else:
        P = np.logspace(1, 6, 9)
        np.testing.assert_array_equal(again.rate(T_GRID[:, None], P[None, :]), form.rate(T_GRID[:, None], P[None, :]))
    assert again.mechanism_block() == form.mechanism_block()


def test_nasa7_record_round_trips():
    T = np.linspace(200.0, 3000.0, 60)
    cp = R * (3.5 + 1e-3 * T - 2e-7 * T**2)                 # invented smooth Cp(T)
    h = np.concatenate([[0.0], np.cumsum(0.5 * (cp[1:] + cp[:-1]) * np.diff(T))])
    s = np.concatenate([[200.0], 200.0 + np.cumsum(0.5 * (cp[1:] / T[1:] + cp[:-1] / T[:-1]) * np.diff(T))])
    fit = fit_nasa7(T, cp, h, s)
    again = _round_trip(fit)
    assert again == fit
    for f in ("cp_J_per_mol_K", "h_J_per_mol", "s_J_per_mol_K"):
        np.testing.assert_array_equal(getattr(again, f)(T), getattr(fit, f)(T))


def test_troe_without_limits_round_trips_but_cannot_be_evaluated():
    fit = TroeFit(a=0.3, T3_K=100.0, T1_K=900.0, max_rel_deviation=0.01, rms_rel_deviation=0.005,
                  at_bound=(("a", 0.0),))
    assert _round_trip(fit) == fit
    with pytest.raises(InputError, match="no limit expressions"):
        fit.rate(300.0, 1e24)
    with pytest.raises(InputError, match="without limit expressions"):
        fit.mechanism_block()


def test_table_at_number_densities_round_trips_but_has_no_pressure():
    k = _k_TP(T_GRID[:, None], P_GRID[None, :])
    table = fit_pressure_table(T_GRID, k, order=1, number_density_m3=P_GRID / (K_B * 300.0))
    again = _round_trip(table)
    assert again.pressure_Pa is None and [r[0] for r in again.rows()] == [None] * P_GRID.size
    with pytest.raises(InputError, match="number densities"):
        table.rate(300.0, 1e4)
    with pytest.raises(InputError, match="number densities"):
        table.mechanism_block()


# ----------------------------------------------------------------------------- against the closed forms

def test_arrhenius_rate_is_the_closed_form():
    fit = _forms()["modified"]
    T = np.linspace(120.0, 500.0, 17)
    ref = fit.A * (T / fit.T0_K) ** fit.n * np.exp(-fit.Ea_J_per_mol / (R * T))
    np.testing.assert_allclose(fit.rate(T), ref, rtol=1e-12)
    np.testing.assert_allclose(fit.rate(T, 1e5), ref, rtol=1e-12)          # P does not change k


def test_table_interpolates_ln_k_linearly_in_ln_p():
    table = _forms()["table"]
    T = 250.0
    k_tab = np.array([f.rate(T) for f in table.fits])
    P = np.sqrt(P_GRID[1] * P_GRID[2])                                    # half way in ln P
    assert table.rate(T, P) == pytest.approx(np.sqrt(k_tab[1] * k_tab[2]), rel=1e-12)
    assert table.rate(T, P_GRID[3]) == pytest.approx(k_tab[3], rel=1e-12)
    assert table.rate(T, 1.0) == pytest.approx(k_tab[0], rel=1e-12)        # below the table: its first row
    assert table.rate(T, 1e9) == pytest.approx(k_tab[3], rel=1e-12)        # above: its last row


def test_troe_rate_and_fcent_are_troes_formula():
    troe = _forms()["troe"]
    for T, M in ((160.0, 1e19), (250.0, 1e23), (390.0, 1e26)):
        fc = ((1 - troe.a) * np.exp(-T / troe.T3_K) + troe.a * np.exp(-T / troe.T1_K) + np.exp(-troe.T2_K / T))
        k0, kinf = troe.k0.rate(T), troe.kinf.rate(T)
        pr = k0 * M / kinf
        c, n = -0.4 - 0.67 * np.log10(fc), 0.75 - 1.27 * np.log10(fc)
        x = np.log10(pr) + c
        ref = kinf * pr / (1 + pr) * 10 ** (np.log10(fc) / (1 + (x / (n - 0.14 * x)) ** 2))
        assert troe.fcent(T) == pytest.approx(fc, rel=1e-12)
        assert troe.rate(T, M) == pytest.approx(ref, rel=1e-12)


# ----------------------------------------------------------------------------- against Cantera

ct = None


def _cantera():
    global ct
    ct = pytest.importorskip("cantera")
    return ct


def _solution(reaction_lines, equation, thermo=None):
    """A minimal Cantera solution: species A and B (one C atom each) and one reaction."""
    thermo = thermo or ["  thermo: {model: constant-cp}"]
    lines = [UNITS_LINE, "phases:", "- name: gas", "  thermo: ideal-gas", "  elements: [C]",
             "  species: [A, B]", "  kinetics: gas", "  reactions: all", "species:",
             "- name: A", "  composition: {C: 1}", *thermo,
             "- name: B", "  composition: {C: 1}", *thermo,
             "reactions:", f"- equation: {equation}", *reaction_lines]
    return _cantera().Solution(yaml="\n".join(lines) + "\n")


@pytest.mark.parametrize("name", ["modified", "arrhenius", "chebyshev", "chebyshev_P", "table"])
def test_rate_against_cantera(name):
    form = _forms()[name]
    gas = _solution(form.mechanism_block(), "A => B")
    # inside the fitted ranges, and for the table also beyond its pressures
    for T in (150.0, 210.0, 333.0, 400.0):
        for P in ((1e2, 3e2, 1e4, 1e5) if name != "table" else (10.0, 1e2, 3e2, 5e3, 1e5, 1e7)):
            gas.TPX = T, P, "A:1"
            assert gas.forward_rate_constants[0] == pytest.approx(form.rate(T, P), rel=1e-9), (T, P)


def test_troe_rate_against_cantera():
    troe = _forms()["troe"]
    gas = _solution(troe.mechanism_block(), "A (+M) => B (+M)")
    assert gas.reaction(0).reaction_type.startswith("falloff")
    for T in (150.0, 210.0, 333.0, 400.0):
        for P in (1e-2, 1.0, 1e2, 1e4, 1e6, 1e8):                   # Pa, across the falloff region
            gas.TPX = T, P, "A:1"
            assert gas.forward_rate_constants[0] == pytest.approx(troe.rate(T, P / (K_B * T)), rel=1e-9), (T, P)


def test_nasa7_against_cantera():
    T = np.linspace(200.0, 3000.0, 60)
    cp = R * (3.5 + 1e-3 * T - 2e-7 * T**2)
    h = -5e4 + np.concatenate([[0.0], np.cumsum(0.5 * (cp[1:] + cp[:-1]) * np.diff(T))])
    s = np.concatenate([[200.0], 200.0 + np.cumsum(0.5 * (cp[1:] / T[1:] + cp[:-1] / T[:-1]) * np.diff(T))])
    fit = fit_nasa7(T, cp, h, s, T_mid_K=1000.0)
    gas = _solution(_forms()["modified"].mechanism_block(), "A => B", thermo=fit.mechanism_block())
    i = gas.species_index("A")
    for t in (250.0, 800.0, 1000.0, 1700.0, 2900.0):
        gas.TP = t, 1e5
        assert gas.standard_cp_R[i] == pytest.approx(fit.cp_J_per_mol_K(t) / R, rel=1e-12)
        assert gas.standard_enthalpies_RT[i] == pytest.approx(fit.h_J_per_mol(t) / (R * t), rel=1e-12)
        assert gas.standard_entropies_R[i] == pytest.approx(fit.s_J_per_mol_K(t) / R, rel=1e-12)


def test_every_form_writes_its_own_block_type():
    forms = _forms()
    assert forms["modified"].mechanism_block()[0] == "  type: elementary"
    assert forms["chebyshev"].mechanism_block()[0] == "  type: Chebyshev"
    assert forms["troe"].mechanism_block()[0] == "  type: falloff"
    assert forms["table"].mechanism_block()[:2] == ["  type: pressure-dependent-Arrhenius", "  rate-constants:"]
    assert isinstance(forms["table"], PressureTableFit) and isinstance(forms["troe"], TroeFit)
    assert isinstance(forms["chebyshev"], ChebyshevFit) and isinstance(forms["modified"], ArrheniusFit)
