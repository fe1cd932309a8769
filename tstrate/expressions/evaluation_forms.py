"""Rate expressions in the forms that data evaluations publish, fitted to computed rate constants.

Three forms, each a class that evaluates itself (``rate``), fits itself (the ``fit_*``
functions below) and converts to and from a plain record in SI:

:class:`EvaluationArrhenius`
    k = A exp(-(E/R) / T), with A and E/R [K] as the NASA/JPL and IUPAC tables give them
    (a reference expression may carry a temperature exponent, A (T/T0)^n exp(-(E/R)/T)).
:class:`JPLFalloff`
    the termolecular form of the NASA/JPL evaluations (JPL Publication 19-5, section 2,
    "Termolecular reactions")::

        k0(T) = k0(300) (T/300)^-n,   k_inf(T) = k_inf(300) (T/300)^-m
        k(T, [M]) = k0[M] / (1 + k0[M]/k_inf) * 0.6^{ [1 + (log10(k0[M]/k_inf))^2]^-1 }

    with the broadening factor fixed at F_c = 0.6.
:class:`IUPACFalloff`
    the form of the IUPAC evaluations (Atkinson et al., Atmos. Chem. Phys. 4, 1461 (2004),
    introduction, "pressure dependence")::

        k = k0 k_inf / (k0 + k_inf) * F,   k0 = k0(300) (T/300)^-n exp(-E0/RT) [M]
        log10 F = log10 F_c / (1 + [log10(k0/k_inf) / N]^2),   N = 0.75 - 1.27 log10 F_c

    (k0 here includes [M], as IUPAC writes it); E0/R and E_inf/R are 0 for the association
    form and fitted for decompositions whose limits carry a barrier.

Units: SI per molecule inside (k_inf in s^-1, m^3 s^-1, m^6 s^-1 for orders 1, 2, 3; k0 one
order higher so that k0 [M] has the unit of k_inf; [M] in m^-3); temperatures in K.
Deviations are fractions |k_form / k - 1|.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from tstrate.errors import InputError

#: reference temperature of the evaluations' power laws [K]
T_REF_K = 300.0
#: the broadening factor of the NASA/JPL termolecular form (fixed)
JPL_FC = 0.6
_SI_RATE_UNIT = {1: "s-1", 2: "m3 molecule-1 s-1", 3: "m6 molecule-2 s-1", 4: "m9 molecule-3 s-1"}


def _as_float_array(x):
    return np.asarray(x, dtype=float)


def _scalar_or_array(v):
    return float(v) if np.ndim(v) == 0 else v


def iupac_N(Fc: float) -> float:
    """IUPAC's width parameter N = 0.75 - 1.27 log10 F_c (dimensionless)."""
    return 0.75 - 1.27 * math.log10(Fc)


def broadened_falloff(k0M, kinf, Fc, N):
    """k0[M] / (1 + k0[M]/k_inf) * Fc^{1 / (1 + (log10(k0[M]/k_inf) / N)^2)}, the common core of
    the JPL (N = 1, Fc = 0.6) and IUPAC forms; k0M and kinf in the same unit, arrays broadcast."""
    k0M, kinf = np.broadcast_arrays(_as_float_array(k0M), _as_float_array(kinf))
    x = k0M / kinf
    exponent = 1.0 / (1.0 + (np.log10(x) / N) ** 2)
    return k0M / (1.0 + x) * np.power(Fc, exponent)


@dataclass(frozen=True)
class EvaluationArrhenius:
    """k = A (T/T0)^n exp(-(E/R)/T) [SI per molecule of ``order``]; n = 0 for the evaluations'
    two-parameter form (A and E/R)."""

    A: float
    E_over_R_K: float
    order: int
    n: float = 0.0
    T0_K: float = T_REF_K

    form = "arrhenius"

    def __post_init__(self):
        if not (np.isfinite(self.A) and self.A > 0):
            raise InputError(f"A must be positive, got {self.A!r}", field="A")
        if self.order not in (1, 2, 3):
            raise InputError(f"reaction order must be 1, 2 or 3, got {self.order!r}", field="order")

    def rate(self, temperature_K, number_density_m3=None):
        """k [SI] at temperature(s) [K] ([M] accepted for the common signature; no effect)."""
        T = _as_float_array(temperature_K)
        k = self.A * (T / self.T0_K) ** self.n * np.exp(-self.E_over_R_K / T)
        if number_density_m3 is not None:
            k = np.broadcast_arrays(k, _as_float_array(number_density_m3))[0].copy()
        return _scalar_or_array(k)

    def high_pressure_rate(self, temperature_K):
        return self.rate(temperature_K)

    def to_record(self) -> dict:
        return {"form": self.form, "order": self.order, "A_SI": float(self.A),
                "A_SI_unit": _SI_RATE_UNIT[self.order], "E_over_R_K": float(self.E_over_R_K),
                "n": float(self.n), "T0_K": float(self.T0_K)}

    @classmethod
    def from_record(cls, r: dict) -> "EvaluationArrhenius":
        return cls(A=float(r["A_SI"]), E_over_R_K=float(r["E_over_R_K"]), order=int(r["order"]),
                   n=float(r.get("n", 0.0)), T0_K=float(r.get("T0_K", T_REF_K)))


@dataclass(frozen=True)
class _Falloff:
    """Shared part of the two falloff forms: the limits as power laws at 300 K (with optional
    Arrhenius factors), ``order`` the reaction's order at high pressure."""

    k0_300: float          # SI per molecule of order + 1
    n: float               # k0 ~ (T/300)^-n
    kinf_300: float        # SI per molecule of order
    m: float               # k_inf ~ (T/300)^-m
    order: int = 1

    def __post_init__(self):
        for name in ("k0_300", "kinf_300"):
            v = getattr(self, name)
            if not (np.isfinite(v) and v > 0):
                raise InputError(f"{name} must be positive, got {v!r}", field=name)
        if self.order not in (1, 2, 3):
            raise InputError(f"reaction order must be 1, 2 or 3, got {self.order!r}", field="order")

    # the exponentials of the IUPAC decomposition form (0 for JPL)
    k0_E_over_R_K = 0.0
    kinf_E_over_R_K = 0.0

    def k0(self, temperature_K):
        """Low-pressure limit k0(T) [SI, order + 1] (without [M])."""
        T = _as_float_array(temperature_K)
        return _scalar_or_array(self.k0_300 * (T / T_REF_K) ** (-self.n) * np.exp(-self.k0_E_over_R_K / T))

    def kinf(self, temperature_K):
        """High-pressure limit k_inf(T) [SI, order]."""
        T = _as_float_array(temperature_K)
        return _scalar_or_array(self.kinf_300 * (T / T_REF_K) ** (-self.m) * np.exp(-self.kinf_E_over_R_K / T))

    def high_pressure_rate(self, temperature_K):
        return self.kinf(temperature_K)

    def _shape(self):
        raise NotImplementedError

    def rate(self, temperature_K, number_density_m3):
        """k(T, [M]) [SI per molecule of ``order``]; T [K] and [M] [m^-3] broadcast."""
        T, M = np.broadcast_arrays(_as_float_array(temperature_K), _as_float_array(number_density_m3))
        Fc, N = self._shape()
        return _scalar_or_array(broadened_falloff(self.k0(T) * M, self.kinf(T), Fc, N))

    def _base_record(self) -> dict:
        return {"form": self.form, "order": self.order, "k0_300K_SI": float(self.k0_300),
                "k0_SI_unit": _SI_RATE_UNIT[self.order + 1], "n": float(self.n),
                "kinf_300K_SI": float(self.kinf_300), "kinf_SI_unit": _SI_RATE_UNIT[self.order],
                "m": float(self.m)}


@dataclass(frozen=True)
class JPLFalloff(_Falloff):
    """The NASA/JPL termolecular form, F_c = 0.6 and the exponent [1 + (log10(k0[M]/k_inf))^2]^-1."""

    form = "jpl_falloff"

    def _shape(self):
        return JPL_FC, 1.0

    @property
    def Fc(self) -> float:
        return JPL_FC

    def to_record(self) -> dict:
        return {**self._base_record(), "Fc": JPL_FC}

    @classmethod
    def from_record(cls, r: dict) -> "JPLFalloff":
        return cls(k0_300=float(r["k0_300K_SI"]), n=float(r["n"]), kinf_300=float(r["kinf_300K_SI"]),
                   m=float(r["m"]), order=int(r["order"]))


@dataclass(frozen=True)
class IUPACFalloff(_Falloff):
    """The IUPAC form: k0 k_inf/(k0 + k_inf) F with log10 F = log10 F_c / (1 + [log10(k0/k_inf)/N]^2)."""

    Fc: float = 0.6
    N: float | None = None      # None: 0.75 - 1.27 log10 F_c
    k0_E_over_R_K: float = 0.0
    kinf_E_over_R_K: float = 0.0

    form = "iupac_falloff"

    def __post_init__(self):
        super().__post_init__()
        if not (0.0 < self.Fc <= 1.0):
            raise InputError(f"Fc must lie in (0, 1], got {self.Fc!r}", field="Fc")
        if self.N is not None and not (np.isfinite(self.N) and self.N > 0):
            raise InputError(f"N must be positive, got {self.N!r}", field="N")

    @property
    def width(self) -> float:
        """N in effect."""
        return iupac_N(self.Fc) if self.N is None else float(self.N)

    def _shape(self):
        return self.Fc, self.width

    def to_record(self) -> dict:
        return {**self._base_record(), "k0_E_over_R_K": float(self.k0_E_over_R_K),
                "kinf_E_over_R_K": float(self.kinf_E_over_R_K), "Fc": float(self.Fc),
                "N": None if self.N is None else float(self.N), "N_in_effect": self.width}

    @classmethod
    def from_record(cls, r: dict) -> "IUPACFalloff":
        return cls(k0_300=float(r["k0_300K_SI"]), n=float(r["n"]), kinf_300=float(r["kinf_300K_SI"]),
                   m=float(r["m"]), order=int(r["order"]), Fc=float(r["Fc"]),
                   N=None if r.get("N") is None else float(r["N"]),
                   k0_E_over_R_K=float(r.get("k0_E_over_R_K", 0.0)),
                   kinf_E_over_R_K=float(r.get("kinf_E_over_R_K", 0.0)))


FORMS = {"arrhenius": EvaluationArrhenius, "jpl_falloff": JPLFalloff, "iupac_falloff": IUPACFalloff}


def form_from_record(record: dict):
    """The expression of a ``to_record`` dict of any of :data:`FORMS`."""
    try:
        cls = FORMS[record["form"]]
    except KeyError:
        raise InputError(f"unknown evaluation form {record.get('form')!r}", field="form",
                         hint="use one of " + ", ".join(FORMS)) from None
    return cls.from_record(record)


# ---- fits ------------------------------------------------------------------------------------

@dataclass(frozen=True)
class EvaluationFit:
    """A fitted evaluation form with its range and its measured deviation.

    max_rel_deviation, rms_rel_deviation: |k_form/k - 1| over the fitted points and the check
    points between them (fractions); n_points, n_check_points: how many of each;
    k0_max_rel_deviation, kinf_max_rel_deviation: of the limits against the computed limits
    (falloff forms; None otherwise); Tmin_K, Tmax_K; number_density_min_m3/max_m3 (falloff).
    """

    expression: object
    Tmin_K: float
    Tmax_K: float
    max_rel_deviation: float
    rms_rel_deviation: float
    n_points: int
    n_check_points: int = 0
    k0_max_rel_deviation: float | None = None
    kinf_max_rel_deviation: float | None = None
    number_density_min_m3: float | None = None
    number_density_max_m3: float | None = None
    notes: tuple[str, ...] = field(default=())


def relative_deviation(model, data) -> np.ndarray:
    """|model/data - 1| elementwise (finite, positive data only)."""
    model, data = _as_float_array(model), _as_float_array(data)
    return np.abs(model / data - 1.0)


def _quality(dev_fit: np.ndarray, dev_check: np.ndarray | None):
    parts = [np.ravel(dev_fit)] + ([np.ravel(dev_check)] if dev_check is not None and np.size(dev_check) else [])
    d = np.concatenate(parts)
    return float(np.max(d)), float(np.sqrt(np.mean(d ** 2)))


def _positive(name, *arrays):
    for a in arrays:
        a = _as_float_array(a)
        if not np.all(np.isfinite(a)) or np.any(a <= 0):
            raise InputError(f"{name} must be positive and finite to fit an evaluation form", field=name)


def fit_evaluation_arrhenius(temperature_K, k_SI, *, order: int, check_temperature_K=None,
                             check_k_SI=None) -> EvaluationFit:
    """A and E/R of k = A exp(-(E/R)/T) by least squares on ln k; the deviation is measured on the
    fitted points and on ``check_*`` points (e.g. between the grid temperatures)."""
    T, k = _as_float_array(temperature_K).ravel(), _as_float_array(k_SI).ravel()
    if T.shape != k.shape or np.unique(T).size < 2:
        raise InputError("an Arrhenius fit needs rate constants at two or more temperatures", field="temperature_K")
    _positive("k_SI", k)
    design = np.column_stack([np.ones_like(T), -1.0 / T])
    coef, *_ = np.linalg.lstsq(design, np.log(k), rcond=None)
    expr = EvaluationArrhenius(A=math.exp(float(coef[0])), E_over_R_K=float(coef[1]), order=order)
    check = None
    n_check = 0
    if check_temperature_K is not None and np.size(check_temperature_K):
        tc, kc = _as_float_array(check_temperature_K).ravel(), _as_float_array(check_k_SI).ravel()
        check = relative_deviation(expr.rate(tc), kc)
        n_check = tc.size
    mx, rms = _quality(relative_deviation(expr.rate(T), k), check)
    return EvaluationFit(expr, float(T.min()), float(T.max()), mx, rms, int(T.size), n_check)


#: shapes of the falloff limits: power laws (T/300)^-n, Arrhenius factors exp(-E/RT), or both
LIMIT_SHAPES = ("power", "arrhenius", "both")


def _limit_start(T, k, shape: str):
    """ln A(300), exponent (k ~ (T/300)^-x) and E/R [K] of a limit by linear least squares."""
    cols = [np.ones_like(T)]
    if shape in ("power", "both"):
        cols.append(-np.log(T / T_REF_K))
    if shape in ("arrhenius", "both"):
        cols.append(-1.0 / T + 1.0 / T_REF_K)      # exp(-E/R (1/T - 1/300)): A stays k(300 K)
    coef, *_ = np.linalg.lstsq(np.column_stack(cols), np.log(k), rcond=None)
    coef = list(coef)
    a = coef.pop(0)
    x = coef.pop(0) if shape in ("power", "both") else 0.0
    b = coef.pop(0) if shape in ("arrhenius", "both") else 0.0
    return a + b / T_REF_K, x, b       # ln of the prefactor of exp(-E/RT) at 300 K, exponent, E/R


def _fit_falloff(kind, T, M, k, k0_T, kinf_T, order, *, shape="power", check=None):
    from scipy.optimize import least_squares

    T = _as_float_array(T).ravel()
    M, k = _as_float_array(M), _as_float_array(k)
    if M.ndim == 1:
        M = np.broadcast_to(M, (T.size, M.size))
    if k.shape != M.shape or k.shape[0] != T.size:
        raise InputError(f"k has shape {k.shape}, expected (temperatures, number densities) = {M.shape}",
                         field="k_SI")
    _positive("k_SI", k)
    _positive("number_density_m3", M)
    k0_T, kinf_T = _as_float_array(k0_T).ravel(), _as_float_array(kinf_T).ravel()
    _positive("k0_SI", k0_T)
    _positive("kinf_SI", kinf_T)
    TT = np.broadcast_to(T[:, None], M.shape)
    ln_k, ln_k0, ln_kinf = np.log(k), np.log(k0_T), np.log(kinf_T)
    a0, n0, b0 = _limit_start(T, k0_T, shape)
    ai, mi, bi = _limit_start(T, kinf_T, shape)
    iupac = kind is IUPACFalloff
    # the full vector: ln k0(300) prefactor, n, ln k_inf(300) prefactor, m, logit Fc, E0/R, E_inf/R
    full = np.array([a0, n0, ai, mi, math.log(0.6 / 0.4), b0, bi], dtype=float)
    free = [0, 2] + ([1, 3] if shape in ("power", "both") else []) + ([4] if iupac else []) \
        + ([5, 6] if iupac and shape in ("arrhenius", "both") else [])

    def build(q):
        p = full.copy()
        p[free] = q
        # prefactors kept inside the float range while the optimiser explores
        kw = dict(k0_300=math.exp(min(max(p[0], -700.0), 700.0)), n=float(p[1]),
                  kinf_300=math.exp(min(max(p[2], -700.0), 700.0)), m=float(p[3]), order=order)
        if not iupac:
            return JPLFalloff(**kw)
        fc = 1.0 / (1.0 + math.exp(-min(max(p[4], -700.0), 700.0)))
        return IUPACFalloff(**kw, Fc=min(max(fc, 1e-6), 1.0), k0_E_over_R_K=float(p[5]),
                            kinf_E_over_R_K=float(p[6]))

    def residuals(q):
        e = build(q)
        # the computed k(T, [M]) and its two limits, all on ln k with equal weight per point
        return np.concatenate([(np.log(e.rate(TT, M)) - ln_k).ravel(),
                               np.log(e.k0(T)) - ln_k0, np.log(e.kinf(T)) - ln_kinf])

    sol = least_squares(residuals, full[free], method="lm", x_scale="jac", max_nfev=4000)
    expr = build(sol.x)
    dev_fit = relative_deviation(expr.rate(TT, M), k)
    dev_check = None
    n_check = 0
    if check is not None:
        tc, mc, kc = (_as_float_array(a) for a in check)
        dev_check = relative_deviation(expr.rate(tc, mc), kc)
        n_check = int(np.size(kc))
    mx, rms = _quality(dev_fit, dev_check)
    return EvaluationFit(expr, float(T.min()), float(T.max()), mx, rms, int(k.size), n_check,
                         k0_max_rel_deviation=float(np.max(relative_deviation(expr.k0(T), k0_T))),
                         kinf_max_rel_deviation=float(np.max(relative_deviation(expr.kinf(T), kinf_T))),
                         number_density_min_m3=float(M.min()), number_density_max_m3=float(M.max()))


def fit_jpl_falloff(temperature_K, number_density_m3, k_SI, k0_SI, kinf_SI, *, order: int = 1,
                    check=None) -> EvaluationFit:
    """k0(300), n, k_inf(300), m of the NASA/JPL form (F_c = 0.6) by least squares on ln k.

    The data are the computed k(T, [M]) (shape (T, [M]); [M] [m^-3] of the same shape or one
    row for all T) together with the computed limits k0(T) [SI, order + 1] and k_inf(T) [SI,
    order], so that the fitted limits stay limits. ``check``: (T, [M], k) arrays of further
    points (e.g. between the grid pressures) that enter the deviation, not the fit.
    """
    return _fit_falloff(JPLFalloff, temperature_K, number_density_m3, k_SI, k0_SI, kinf_SI, order, check=check)


def fit_iupac_falloff(temperature_K, number_density_m3, k_SI, k0_SI, kinf_SI, *, order: int = 1,
                      max_deviation: float = 0.05, check=None) -> EvaluationFit:
    """k0(300), n, k_inf(300), m and a constant F_c of the IUPAC form, as :func:`fit_jpl_falloff`.

    The limits take the simplest of three shapes that meets ``max_deviation`` (a fraction): the
    association form's power laws (T/300)^-n; Arrhenius factors exp(-E/RT) alone (the form IUPAC
    gives decompositions, n = m = 0); both (with three or more temperatures). When none meets it,
    the best is kept. A shape other than power laws is stated in ``notes``.
    """
    args = (temperature_K, number_density_m3, k_SI, k0_SI, kinf_SI, order)
    n_T = np.unique(np.ravel(temperature_K)).size
    tried = []
    for shape in LIMIT_SHAPES:
        if shape == "both" and n_T < 3:
            continue
        fit = _fit_falloff(IUPACFalloff, *args, shape=shape, check=check)
        tried.append((shape, fit))
        if fit.max_rel_deviation <= max_deviation:
            break
    shape, fit = tried[-1] if tried[-1][1].max_rel_deviation <= max_deviation else \
        min(tried, key=lambda sf: sf[1].max_rel_deviation)
    if shape == "power":
        return fit
    from dataclasses import replace

    what = {"arrhenius": "limits as Arrhenius expressions exp(-E/RT) (n = m = 0)",
            "both": "limits with power laws and Arrhenius factors (T/300)^-n exp(-E/RT)"}[shape]
    power = tried[0][1].max_rel_deviation
    return replace(fit, notes=(f"{what}: the power laws alone deviate by up to {100 * power:.3g} %",))
