"""Checks of numbers and grids, written once: temperatures, positive values, read-only arrays.

Every check raises :class:`~tstrate.errors.InputError` naming the parameter it was given
(``name``); readers and the study layer add the file and key.
"""

from __future__ import annotations

import math

import numpy as np

from tstrate.errors import InputError


#: highest temperature accepted [K] (molecules dissociate long before)
MAX_TEMPERATURE_K = 1.0e5


def temperatures_K(values, *, name: str = "temperature_K", ndim: int | None = None,
                   upper_K: float | None = None) -> np.ndarray:
    """``values`` as a float array of temperatures [K]: non-empty, finite and positive.

    ``ndim=1`` also turns a scalar into a 1-element array and refuses anything deeper.
    ``upper_K``: refuse temperatures above it (inputs pass :data:`MAX_TEMPERATURE_K`; the physics
    functions take any positive temperature, limits included).
    """
    try:
        T = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"temperatures must be numbers (kelvin), got {values!r}"[:200], field=name) from None
    if ndim == 1:
        T = np.atleast_1d(T)
        if T.ndim != 1:
            raise InputError(f"temperatures must be a flat list, got shape {T.shape}", field=name)
    if T.size == 0:
        raise InputError("no temperature given", field=name)
    ok = np.isfinite(T) & (T > 0.0)
    if not np.all(ok):
        bad = T[~ok].ravel()[0]
        raise InputError(f"temperatures must be positive and finite (kelvin), got {bad:g}", field=name)
    if upper_K is not None and np.max(T) > upper_K:
        raise InputError(f"temperature {np.max(T):g} K is above {upper_K:g} K, where no molecule "
                         "survives", field=name)
    return T


def per_temperature(value, temperature_K: np.ndarray, name: str) -> np.ndarray:
    """``value`` (one number or one per temperature) as an array of the shape of ``temperature_K``;
    finite and non-negative."""
    v = np.asarray(value, dtype=float)
    if v.ndim == 0:
        v = np.full(np.shape(temperature_K), float(v))
    if v.shape != np.shape(temperature_K):
        raise InputError(f"{name} must be one number or one per temperature ({np.size(temperature_K)}), "
                         f"got shape {v.shape}", field=name)
    if np.any(~np.isfinite(v)) or np.any(v < 0):
        raise InputError(f"{name} must be non-negative", field=name)
    return v


def positive_array(values, name: str, *, hint: str | None = None) -> np.ndarray:
    """A flat float array of finite, positive numbers (a scalar becomes one element)."""
    try:
        arr = np.atleast_1d(np.asarray(values, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"{name} must be numbers, got {values!r}"[:200], field=name) from None
    if arr.ndim != 1:
        raise InputError(f"{name} must be a flat list of numbers, got shape {arr.shape}", field=name)
    if not np.all(np.isfinite(arr)):
        raise InputError(f"{name} contains a value that is not a finite number", field=name)
    if np.any(arr <= 0.0):
        raise InputError(f"{name} must all be positive, got {arr[arr <= 0.0].tolist()}", field=name, hint=hint)
    return arr


def positive(value, name: str) -> float:
    """``value`` as a finite positive float."""
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a number, got {value!r}", field=name) from None
    if not math.isfinite(v) or v <= 0.0:
        raise InputError(f"{name} must be positive, got {value!r}", field=name)
    return v


def finite_or_nan(x) -> float:
    """``x`` as a float, NaN when it is not a finite number (so every comparison with it fails)."""
    try:
        v = float(x)
    except (TypeError, ValueError):
        return math.nan
    return v if math.isfinite(v) else math.nan


def read_only(values, dtype=float) -> np.ndarray:
    """A read-only copy of ``values`` (records never share a writable array with their caller)."""
    arr = np.array(values, dtype=dtype)
    arr.setflags(write=False)
    return arr
