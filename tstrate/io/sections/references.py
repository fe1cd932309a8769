"""The optional ``[[reference_rate]]`` tables of a study file: evaluated or measured rate expressions
to put beside the computed ones (plots, and a computed/reference ratio table in the report).

    [[reference_rate]]
    channel = "OH+SO2"
    source = "JPL Publication 19-5, Table 2-1"
    kind = "evaluated"                       # or "measured"
    form = "jpl_falloff"                     # "arrhenius", "jpl_falloff" or "iupac_falloff"
    temperature_range_K = [200, 300]
    pressure_range_bar = [1e-3, 1]           # falloff forms, optional
    k0_300K = 2.9e-31                        # in k0_unit (one order above the channel)
    n = 4.1
    kinf_300K = 1.7e-12                      # in unit (the channel's order)
    m = -0.2

    [[reference_rate]]
    channel = "bare"
    source = "a measurement"
    form = "arrhenius"
    A = 1.2e-11                              # in unit
    E_over_R_K = 300
    temperature_range_K = [220, 300]
"""

from __future__ import annotations

from tstrate.expressions.evaluation_forms import FORMS, EvaluationArrhenius, IUPACFalloff, JPLFalloff
from tstrate.io.keys import Key, Keys
from tstrate.study.references import REFERENCE_KINDS, ReferenceRate
from tstrate.units import DEFAULT_RATE_UNIT, RATE_UNITS

_UNITS = tuple(RATE_UNITS)


def rate_to_SI(value: float, order: int, unit: str) -> float:
    """A rate constant (or factor) in ``unit`` to SI per molecule of ``order``."""
    return float(value) / RATE_UNITS[unit][1]

KEYS = Keys(("reference_rate", "[]"), "[[reference_rate]]",
            "Evaluated or measured rate expressions of a channel, drawn on the Arrhenius and falloff plots "
            "and compared with the computed rate constants (ratio table in the report, "
            "tables/reference_ratios.csv) over the study's grid points inside their range. Forms: `arrhenius`, "
            "k = A (T/T0)^n exp(-(E/R)/T); `jpl_falloff`, the NASA/JPL termolecular form k0(300 K) (T/300)^-n, "
            "k_inf(300 K) (T/300)^-m with F_c = 0.6; `iupac_falloff`, the IUPAC form with k0, k_inf and F_c "
            "(limits optionally with exp(-E/RT)).", (
                Key("channel", "string", "the channel it is compared with", required=True),
                Key("source", "string", "where the expression comes from (evaluation, paper, table)",
                    required=True),
                Key("form", "string", "the form of the expression", required=True, choices=tuple(FORMS)),
                Key("temperature_range_K", "list of numbers", "[lowest, highest] temperature of validity",
                    required=True, unit="K"),
                Key("kind", "string", "evaluated (a data evaluation) or measured (an experiment)",
                    default="evaluated", choices=REFERENCE_KINDS),
                Key("label", "string", "its name in plots and tables", default_text="the source"),
                Key("bath_gas", "string", "the collision partner of a falloff expression (text)"),
                Key("pressure_range_bar", "list of numbers", "[lowest, highest] pressure of validity of a "
                    "falloff form", default_text="any pressure", unit="bar"),
                Key("unit", "string", "unit of A, or of k_inf of a falloff form", choices=_UNITS,
                    default_text="by the channel's order: " + ", ".join(DEFAULT_RATE_UNIT.values())),
                Key("k0_unit", "string", "unit of k0 of a falloff form (one order above the channel)",
                    choices=_UNITS, default_text="by the order above the channel's"),
                Key("A", "number", "pre-exponential factor (arrhenius)", required="form arrhenius",
                    unit="@unit"),
                Key("E_over_R_K", "number", "E/R (arrhenius)", default=0.0, unit="K"),
                Key("T0_K", "number", "reference temperature of (T/T0)^n (arrhenius)", default=300.0, unit="K"),
                Key("n", "number", "arrhenius: exponent of (T/T0)^n; falloff forms: k0 ~ (T/300)^-n",
                    default=0.0, unit="1"),
                Key("k0_300K", "number", "k0 at 300 K (falloff forms); with `k0_E_over_R_K` the prefactor of "
                    "k0_300K (T/300)^-n exp(-k0_E_over_R_K/T)", required="falloff forms",
                    unit="@k0_unit"),
                Key("kinf_300K", "number", "k_inf at 300 K (falloff forms); with `kinf_E_over_R_K` the prefactor, "
                    "as for k0", required="falloff forms",
                    unit="@unit"),
                Key("m", "number", "k_inf ~ (T/300)^-m (falloff forms)", default=0.0, unit="1"),
                Key("Fc", "number", "broadening factor (iupac_falloff; jpl_falloff is 0.6)", default=0.6,
                    unit="1"),
                Key("N", "number", "width parameter (iupac_falloff)", default_text="0.75 - 1.27 log10 Fc",
                    unit="1"),
                Key("k0_E_over_R_K", "number", "E/R of exp(-E/RT) in k0 (iupac_falloff)", default=0.0, unit="K"),
                Key("kinf_E_over_R_K", "number", "E/R of exp(-E/RT) in k_inf (iupac_falloff)", default=0.0,
                    unit="K"),
            ))

_ARRHENIUS_ONLY = ("A", "E_over_R_K", "T0_K")
_FALLOFF_ONLY = ("k0_300K", "kinf_300K", "m", "k0_unit", "pressure_range_bar", "bath_gas")
_IUPAC_ONLY = ("Fc", "N", "k0_E_over_R_K", "kinf_E_over_R_K")


def _unit(t, key, order):
    unit = t.get(key, str, DEFAULT_RATE_UNIT.get(order))
    if unit is None or unit not in RATE_UNITS or RATE_UNITS[unit][0] != order:
        ok = [u for u, (o, _) in RATE_UNITS.items() if o == order]
        raise t.error(key, f"unit {unit!r} does not fit order {order}", hint="use " + " or ".join(ok))
    return unit


def _range(t, key, required):
    if key not in t and not required:
        return None
    v = t.number_list(key)
    if len(v) != 2 or not (0 < v[0] <= v[1]):
        raise t.error(key, "give [lowest, highest], both positive", hint=f"e.g. {key} = [200, 300]")
    return v


def read_reference_rates(table, study) -> tuple[ReferenceRate, ...]:
    out = []
    channels = {c.name: c for c in study.channels}
    for t in table.tables("reference_rate"):
        name = t.get("channel", str)
        if name not in channels:
            raise t.error("channel", f"unknown channel {name!r}", hint="use a name of [[channel]]")
        order = channels[name].order
        form = t.get("form", str)
        if form not in FORMS:
            raise t.error("form", f"unknown form {form!r}", hint="use one of " + ", ".join(FORMS))
        kind = t.get("kind", str, KEYS.default("kind"))
        if kind not in REFERENCE_KINDS:
            raise t.error("kind", f"unknown kind {kind!r}", hint="use evaluated or measured")
        source = t.get("source", str)
        T = _range(t, "temperature_range_K", True)
        wrong = [k for k in (_FALLOFF_ONLY + _IUPAC_ONLY if form == "arrhenius" else _ARRHENIUS_ONLY)
                 if k in t]
        if form == "jpl_falloff":
            wrong += [k for k in _IUPAC_ONLY if k in t]
        if wrong:
            raise t.error(wrong[0], f"not a key of form {form!r}")
        unit = _unit(t, "unit", order)
        pressure = None
        if form == "arrhenius":
            A = float(rate_to_SI(t.get("A", float), order, unit))
            expr = t.build(EvaluationArrhenius, A=A, E_over_R_K=t.get("E_over_R_K", float, 0.0), order=order,
                           n=t.get("n", float, 0.0), T0_K=t.get("T0_K", float, 300.0))
        else:
            if order + 1 not in DEFAULT_RATE_UNIT:
                raise t.error("form", f"a falloff form needs a k0 one order above the channel's ({order})")
            k0_unit = _unit(t, "k0_unit", order + 1)
            kw = dict(k0_300=float(rate_to_SI(t.get("k0_300K", float), order + 1, k0_unit)),
                      n=t.get("n", float, 0.0), kinf_300=float(rate_to_SI(t.get("kinf_300K", float), order, unit)),
                      m=t.get("m", float, 0.0), order=order)
            if form == "jpl_falloff":
                expr = t.build(JPLFalloff, **kw)
            else:
                expr = t.build(IUPACFalloff, **kw, Fc=t.get("Fc", float, 0.6), N=t.get("N", float, None),
                               k0_E_over_R_K=t.get("k0_E_over_R_K", float, 0.0),
                               kinf_E_over_R_K=t.get("kinf_E_over_R_K", float, 0.0))
            pressure = _range(t, "pressure_range_bar", False)
        t.reject_unknown(KEYS)
        out.append(ReferenceRate(channel=name, label=t.get("label", str, source), source=source, kind=kind,
                                 expression=expr, Tmin_K=T[0], Tmax_K=T[1],
                                 pressure_min_Pa=None if pressure is None else pressure[0] * 1e5,
                                 pressure_max_Pa=None if pressure is None else pressure[1] * 1e5,
                                 bath_gas=t.get("bath_gas", str, None)))
    return tuple(out)
