"""Every expression written is read back from the file and measured again.

After ``tstrate run`` writes mechanism.yaml and fits.json, each channel's expression is rebuilt
from the numbers in the file alone - the Cantera YAML rate blocks (in the file's molecule-cm-s
units, Ea/R in K, pressures in Pa) or the SI records of fits.json - evaluated by the form's own
evaluator (:mod:`tstrate.expressions`) at the channel's check points (the computed grid and the
points between grid points), and its deviation compared with the one the file states. A
difference means the file does not hold what was measured: that is a bug, and
:func:`check_written` raises instead of leaving such a file unflagged.

The tests do the same with Cantera as the independent reader.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from tstrate.expressions.arrhenius import ArrheniusFit
from tstrate.expressions.chebyshev import CHEBYSHEV_ANY_PRESSURE_PA, ChebyshevFit
from tstrate.expressions.choice import Deviation, measure
from tstrate.expressions.pressure_table import PressureTableFit
from tstrate.expressions.troe import TroeFit
from tstrate.units import R, rate_from_SI

#: Largest relative difference between a stated and a re-measured deviation (round-off of the
#: unit conversions; the numbers themselves are written with every digit).
CHECK_RTOL = 1e-6


def _per_SI(order: int) -> float:
    """The factor from SI per molecule to the file's molecule-cm-s units for ``order``."""
    return float(rate_from_SI(1.0, order))


def _arrhenius_from_yaml(rate: dict, order: int) -> ArrheniusFit:
    nan = float("nan")
    return ArrheniusFit(A=float(rate["A"]) / _per_SI(order), n=float(rate["b"]), Ea_J_per_mol=float(rate["Ea"]) * R,
                        T0_K=1.0, order=order, modified=float(rate["b"]) != 0.0, Tmin_K=nan, Tmax_K=nan,
                        max_rel_deviation=nan, rms_rel_deviation=nan, n_points=0)


def _pascal(value) -> float:
    text = str(value).split()
    if len(text) != 2 or text[1] != "Pa":
        raise ValueError(f"pressure {value!r} in mechanism.yaml is not 'number Pa'")
    return float(text[0])


def expression_from_yaml(reaction: dict, order: int):
    """The rate expression of one reaction of a tstrate mechanism file (parsed YAML mapping)."""
    kind = reaction.get("type")
    if kind == "elementary":
        return _arrhenius_from_yaml(reaction["rate-constant"], order)
    if kind == "falloff":
        troe = reaction["Troe"]
        return TroeFit(a=float(troe["A"]), T3_K=float(troe["T3"]), T1_K=float(troe["T1"]),
                       T2_K=None if "T2" not in troe else float(troe["T2"]),
                       k0=_arrhenius_from_yaml(reaction["low-P-rate-constant"], order + 1),
                       kinf=_arrhenius_from_yaml(reaction["high-P-rate-constant"], order))
    if kind == "pressure-dependent-Arrhenius":
        rows = reaction["rate-constants"]
        return PressureTableFit(pressure_Pa=np.array([_pascal(r["P"]) for r in rows]),
                                number_density_m3=np.full(len(rows), math.nan),
                                fits=tuple(_arrhenius_from_yaml(r, order) for r in rows))
    if kind == "Chebyshev":
        data = np.array(reaction["data"], dtype=float)
        data[0, 0] -= math.log10(_per_SI(order))
        lo, hi = (_pascal(p) for p in reaction["pressure-range"])
        any_p = data.shape[1] == 1 and (lo, hi) == CHEBYSHEV_ANY_PRESSURE_PA
        t_lo, t_hi = (float(t) for t in reaction["temperature-range"])
        nan = float("nan")
        return ChebyshevFit(coefficients=data, order=order, Tmin_K=t_lo, Tmax_K=t_hi,
                            Pmin_Pa=None if any_p else lo, Pmax_Pa=None if any_p else hi,
                            max_rel_deviation=nan, rms_rel_deviation=nan, n_points=0)
    raise ValueError(f"reaction type {kind!r} is not one tstrate writes")


def _arrhenius_from_record(rec: dict) -> ArrheniusFit:
    nan = float("nan")
    return ArrheniusFit(A=float(rec["A_SI"]), n=float(rec["n"]), Ea_J_per_mol=float(rec["Ea_kJ_per_mol"]) * 1e3,
                        T0_K=float(rec["T0_K"]), order=int(rec["order"]), modified=float(rec["n"]) != 0.0,
                        Tmin_K=nan, Tmax_K=nan, max_rel_deviation=nan, rms_rel_deviation=nan, n_points=0)


def expression_from_record(kind: str, rec: dict):
    """The rate expression of a fits.json ``mechanism.expression`` record of ``kind``."""
    nan = float("nan")
    if kind in ("arrhenius", "modified_arrhenius"):
        return _arrhenius_from_record(rec)
    if kind == "troe":
        return TroeFit(a=float(rec["a"]), T3_K=float(rec["T3_K"]), T1_K=float(rec["T1_K"]),
                       T2_K=None if rec["T2_K"] is None else float(rec["T2_K"]),
                       k0=_arrhenius_from_record(rec["k0_low_pressure"]),
                       kinf=_arrhenius_from_record(rec["kinf_high_pressure"]))
    if kind == "pressure_table":
        rows = rec["entries"]
        return PressureTableFit(pressure_Pa=np.array([float(r["pressure_bar"]) * 1e5 for r in rows]),
                                number_density_m3=np.full(len(rows), math.nan),
                                fits=tuple(_arrhenius_from_record(r) for r in rows))
    if kind in ("chebyshev", "chebyshev_falloff"):
        pmin, pmax = rec["Pmin_bar"], rec["Pmax_bar"]
        return ChebyshevFit(coefficients=np.array(rec["coefficients_log10_k_SI"], dtype=float), order=int(rec["order"]),
                            Tmin_K=float(rec["Tmin_K"]), Tmax_K=float(rec["Tmax_K"]),
                            Pmin_Pa=None if pmin is None else float(pmin) * 1e5,
                            Pmax_Pa=None if pmax is None else float(pmax) * 1e5,
                            max_rel_deviation=nan, rms_rel_deviation=nan, n_points=0)
    raise ValueError(f"unknown expression kind {kind!r}")


def _compare(name: str, where: str, stated: float, measured: Deviation) -> None:
    if not math.isfinite(stated) and not math.isfinite(measured.max_rel):
        return
    if not math.isclose(stated, measured.max_rel, rel_tol=CHECK_RTOL, abs_tol=1e-12):
        raise RuntimeError(f"{where}: channel {name}: the expression written deviates by "
                           f"{100 * measured.max_rel:.6g} % from the computed rates, but "
                           f"{100 * stated:.6g} % was stated (a tstrate bug)")


def measure_mechanism_file(fits, path) -> dict[str, Deviation]:
    """Channel name -> deviation of the expression in the mechanism file at ``path``, rebuilt from
    the file's numbers and measured at the channel's check points (channels without any: left out)."""
    import yaml

    doc = yaml.safe_load(Path(path).read_text())
    reactions = doc.get("reactions") or []  # a study of associations only: species, no reactions
    if len(reactions) != len(fits.channels):
        raise RuntimeError(f"{path}: {len(reactions)} reactions for {len(fits.channels)} channels (a tstrate bug)")
    out = {}
    for c, reaction in zip(fits.channels, reactions):
        if c.check_points is None:
            continue
        out[c.name] = measure(expression_from_yaml(reaction, c.order), c.check_points)
    return out


def measure_fits_json(fits, doc: dict) -> dict[str, Deviation]:
    """Channel name -> deviation of the expression in a fits.json document (its ``mechanism`` record),
    rebuilt from the record's SI numbers and measured at the channel's check points."""
    out = {}
    for c, rec in zip(fits.channels, doc["channels"]):
        if c.check_points is None:
            continue
        m = rec["mechanism"]
        out[c.name] = measure(expression_from_record(m["kind"], m["expression"]), c.check_points)
    return out


def check_written(fits, mechanism_path=None, fits_json=None) -> dict[str, dict]:
    """Measure the expressions in the written mechanism file and/or fits.json document again and
    compare with the deviations stated (RuntimeError when they differ). Returns channel name ->
    {"mechanism_yaml": Deviation, "fits_json": Deviation} of what was measured."""
    out: dict[str, dict] = {c.name: {} for c in fits.channels}
    stated = {c.name: c.export.deviation.max_rel for c in fits.channels}
    if mechanism_path is not None:
        for name, dev in measure_mechanism_file(fits, mechanism_path).items():
            _compare(name, str(mechanism_path), stated[name], dev)
            out[name]["mechanism_yaml"] = dev
    if fits_json is not None:
        for name, dev in measure_fits_json(fits, fits_json).items():
            _compare(name, "fits.json", stated[name], dev)
            out[name]["fits_json"] = dev
    return out


__all__ = ["check_written", "measure_mechanism_file", "measure_fits_json", "expression_from_yaml",
           "expression_from_record", "CHECK_RTOL"]
