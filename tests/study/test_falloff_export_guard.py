"""Small molecules in the falloff: k_inf against canonical TST, and the export guard (tstrate.study).

HNC -> HCN has too few vibrational states per grain for an RRKM k(E) with an adiabatic 2-D rotor:
with the rough harmonic data below (illustrative numbers of the size of semi-empirical ones, not a
source) k_inf / k_TST was about 0.2 at 200-500 K. With the 2-D rotor counted as active it must
reproduce canonical TST (the outside reference: the same partition functions summed in closed
form) within a few per cent; and a falloff that still missed TST by more than 10 % must not be
exported to the mechanism.
"""

import numpy as np

from tstrate.io.species import build_species
from tstrate.model import Channel, Conditions, Study
from tstrate.study.run import FALLOFF_EXPORT_MAX_MISMATCH, compute_study, high_pressure_mismatch


def _study():
    lj = (3.6, 370.0)
    hnc = build_species("HNC", ["H", "N", "C"], [[0, 0, -0.99], [0, 0, 0], [0, 0, 1.17]],
                        frequencies_cm1=[477, 477, 2029, 3653], energy_J_per_mol=0.0, lennard_jones=lj)
    hcn = build_species("HCN", ["H", "C", "N"], [[0, 0, -1.07], [0, 0, 0], [0, 0, 1.15]],
                        frequencies_cm1=[712, 712, 2097, 3311], energy_J_per_mol=-60e3, lennard_jones=lj)
    ts = build_species("TS", ["H", "N", "C"], [[1.05, 0, 0.55], [0, 0, 0], [0, 0, 1.18]], kind="transition_state",
                       frequencies_cm1=[-1150, 2050, 2600], energy_J_per_mol=125e3)
    return Study(file=None, title="HNC isomerisation", species={"HNC": hnc, "HCN": hcn, "TS": ts},
                 channels=(Channel("iso", ("HNC",), "TS", ("HCN",)),),
                 conditions=Conditions(np.array([200.0, 250.0, 300.0, 400.0, 500.0]),
                                       pressure_Pa=np.array([1e2, 1e4, 1e6]), bath_gas="N2"))


def test_a_triatomic_reproduces_canonical_tst_in_the_high_pressure_limit():
    result = compute_study(_study())
    (cf,) = result.falloff.channels
    assert cf.model.external_rotation == "active"
    np.testing.assert_allclose(cf.k_high_pressure_per_s, cf.canonical_tst_per_s, rtol=0.02)
    assert high_pressure_mismatch(cf) < 0.02
    assert result.fits.channel_fit("iso").troe is not None             # and its falloff is exported


def test_falloff_that_misses_tst_is_not_exported(monkeypatch):
    """Make canonical TST twice what k(E) gives (as a broken k(E) would): the guard must act."""
    import tstrate.study.falloff as falloff_step

    real = falloff_step.canonical_tst
    monkeypatch.setattr(falloff_step, "canonical_tst", lambda *a, **k: 2.0 * real(*a, **k))
    result = compute_study(_study())
    (cf,) = result.falloff.channels
    assert high_pressure_mismatch(cf) > FALLOFF_EXPORT_MAX_MISMATCH
    fit = result.fits.channel_fit("iso")
    assert fit.troe is None and fit.mechanism_kind != "troe"
    assert any("is not exported" in w and "canonical TST" in w for w in result.warnings)
    assert "iso" not in result.pressure_fits
