"""CSV tables and JSON dumps of thermochemistry, rate constants and fits, written atomically.

Every numeric column name carries its unit in brackets, e.g. ``k [cm3 molecule-1 s-1]``
(``[1]`` for dimensionless numbers); a column whose unit changes from row to row
(``A`` in fits.csv) has its unit in the next column (``A unit``). Rate-constant
units follow the study's ``rate_units`` (else the trade's defaults), converted by
:mod:`tstrate.output.records`; pressures are in bar. Every column is listed in
:mod:`tstrate.output.schema` (docs/outputs/csv-tables.md). Files go through
:func:`tstrate.io.files.atomic_write_text` (temporary file + rename: an
interrupted or failed write leaves the previous file or none, never half a
file), and a writer refuses a path that is one of the given input files.
"""

from __future__ import annotations

import csv
import io
import json
import math
import re
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.io.files import atomic_write_text


def check_not_input(path, inputs=()) -> None:
    """Raise InputError when ``path`` is one of ``inputs`` (never overwrite an input)."""
    target = Path(path).resolve()
    for f in inputs or ():
        if f and Path(f).resolve() == target:
            raise InputError("refusing to overwrite an input file", file=str(path),
                             hint="choose another output name")


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, (float, np.floating)):
        f = float(v)
        return repr(f) if math.isfinite(f) else ""
    if isinstance(v, (np.integer,)):
        return str(int(v))
    return str(v)


def csv_text(header: list[str], rows) -> str:
    """CSV text (comma separated, header line first; None and non-finite numbers empty)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(header)
    for row in rows:
        if len(row) != len(header):
            raise ValueError(f"row has {len(row)} cells for {len(header)} columns")
        w.writerow([_cell(v) for v in row])
    return buf.getvalue()


def safe_file_stem(name: str) -> str:
    """A file-name-safe version of a channel or species name."""
    stem = re.sub(r"[^A-Za-z0-9_.-]", "_", name).strip(".")
    return stem or "unnamed"


# ============================================================================
# thermochemistry
# ============================================================================

THERMO_COLUMNS = ["species", "T [K]", "Cp [J mol-1 K-1]", "S [J mol-1 K-1]",
                  "H(T)-H(0) [kJ mol-1]", "G(T)-H(0) [kJ mol-1]", "ZPE [kJ mol-1]",
                  "E_electronic [kJ mol-1]", "H(T) [kJ mol-1]", "G(T) [kJ mol-1]",
                  "p_standard [bar]"]


def thermo_csv_text(thermos) -> str:
    """One row per species and temperature from :class:`tstrate.physics.thermo.Thermo` records.

    H(T) and G(T) include the electronic energy and ZPE (empty when the
    species has no electronic energy).
    """
    rows = []
    for th in thermos:
        has_e = th.energy_J_per_mol is not None
        h = th.enthalpy_J_per_mol if has_e else None
        g = th.gibbs_J_per_mol if has_e else None
        for i, T in enumerate(th.temperature_K):
            rows.append([th.species, T, th.heat_capacity_J_per_mol_K[i], th.entropy_J_per_mol_K[i],
                         th.enthalpy_increment_J_per_mol[i] / 1e3,
                         th.gibbs_increment_J_per_mol[i] / 1e3, th.zpe_J_per_mol / 1e3,
                         th.energy_J_per_mol / 1e3 if has_e else None,
                         h[i] / 1e3 if has_e else None, g[i] / 1e3 if has_e else None,
                         th.pressure_Pa / 1e5])
    return csv_text(THERMO_COLUMNS, rows)


def write_thermo_csv(path, thermos, *, inputs=()) -> Path:
    """Write :func:`thermo_csv_text` to ``path`` atomically. Returns the path."""
    check_not_input(path, inputs)
    atomic_write_text(path, thermo_csv_text(thermos))
    return Path(path)


# ============================================================================
# rate constants
# ============================================================================

def rates_csv_text(cr, rate_units=None) -> str:
    """One channel's TST results per temperature, units in the column names.

    ``cr`` is a :class:`tstrate.physics.tst.ChannelRates`; ``rate_units`` maps
    order -> output unit (default s-1, cm3 molecule-1 s-1, cm6 molecule-2 s-1).
    """
    from tstrate.output.records import channel_rates_record
    from tstrate.units import standard_pressure_name, standard_pressure_tag

    rec = channel_rates_record(cr, rate_units)
    u, ru = rec["rate_constant_unit"], rec["reverse_rate_constant_unit"]
    dn = cr.reverse_order - cr.order
    p0 = standard_pressure_name(cr.standard_pressure_Pa)
    kp_key = f"Kp_{standard_pressure_tag(cr.standard_pressure_Pa)}"
    header = ["channel", "T [K]", f"k [{u}]", f"k_no_tunnelling [{u}]", "kappa [1]",
              f"k_reverse [{ru}]", f"Kc [(molecule cm-3)^{dn}]", f"Kp({p0}) [1]",
              "dH_activation [kJ mol-1]", "dS_activation [J mol-1 K-1]",
              "dG_activation [kJ mol-1]", "kappa_other_floor [1]"]
    rows = []
    other = rec["kappa_other_floor"]
    for i, T in enumerate(rec["temperature_K"]):
        rows.append([cr.channel, T, rec["rate_constant"][i], rec["rate_constant_no_tunnelling"][i],
                     rec["kappa"][i], rec["reverse_rate_constant"][i], rec["Kc"][i],
                     rec[kp_key][i], rec["delta_H_activation_kJ_per_mol"][i],
                     rec["delta_S_activation_J_per_mol_K"][i],
                     rec["delta_G_activation_kJ_per_mol"][i], None if other is None else other[i]])
    return csv_text(header, rows)


def write_rates_csv(path, cr, rate_units=None, *, inputs=()) -> Path:
    """Write :func:`rates_csv_text` for one channel to ``path`` atomically."""
    check_not_input(path, inputs)
    atomic_write_text(path, rates_csv_text(cr, rate_units))
    return Path(path)


def write_rate_tables(folder, rates, rate_units=None, *, inputs=(), prefix: str = "rates_") -> list[Path]:
    """One CSV per channel, ``<folder>/<prefix><channel>.csv``. Returns the paths.

    All tables are built before the first file is written, so a failing
    channel leaves no new files.
    """
    folder = Path(folder)
    texts = []
    seen = set()
    for cr in rates:
        stem = safe_file_stem(cr.channel)
        if stem in seen:
            raise InputError(f"two channels map to the same file name {stem!r}", field="channel")
        seen.add(stem)
        path = folder / f"{prefix}{stem}.csv"
        check_not_input(path, inputs)
        texts.append((path, rates_csv_text(cr, rate_units)))
    for path, text in texts:
        atomic_write_text(path, text)
    return [p for p, _ in texts]


# ============================================================================
# fits
# ============================================================================

FIT_COLUMNS = ["channel", "expression", "range", "order [1]", "A", "A unit", "n [1]", "T0 [K]",
               "Ea [kJ mol-1]", "Ea/R [K]", "Tmin [K]", "Tmax [K]", "max deviation [%]",
               "rms deviation [%]", "Pmin [bar]", "Pmax [bar]", "Chebyshev coefficients [1]"]


def fits_csv_text(fits, rate_units=None) -> str:
    """One row per channel and fitted expression (Arrhenius, modified, split ranges, Troe limits,
    Chebyshev k(T) and k(T, P)). Chebyshev rows leave the Arrhenius columns empty and give the
    coefficient matrix as a JSON list of rows."""
    from tstrate.output.fit_records import arrhenius_record, chebyshev_record

    units = dict(rate_units or {})
    rows = []

    def add(channel, label, rng, fit):
        r = arrhenius_record(fit, units.get(fit.order))
        rows.append([channel, label, rng, fit.order, r["A"], r["A_unit"], r["n"], r["T0_K"],
                     r["Ea_kJ_per_mol"], r["Ea_over_R_K"], r["Tmin_K"], r["Tmax_K"],
                     r["max_deviation_percent"], r["rms_deviation_percent"], None, None, None])

    def add_cheb(channel, label, fit):
        r = chebyshev_record(fit, units.get(fit.order))
        rng = "all T" + (", P range" if fit.pressure_dependent else ", any P")
        rows.append([channel, label, rng, fit.order, None, r["k_unit"], None, None, None, None,
                     r["Tmin_K"], r["Tmax_K"], r["max_deviation_percent"],
                     r["rms_deviation_percent"], r["Pmin_bar"], r["Pmax_bar"],
                     json.dumps(r["coefficients_log10_k"])])

    for c in fits.channels:
        add(c.name, "arrhenius", "all", c.arrhenius)
        add(c.name, "modified_arrhenius", "all", c.modified)
        if c.split is not None:
            form = "modified_arrhenius" if c.split.low.modified else "arrhenius"
            add(c.name, form, f"T <= {c.split.break_K:g} K", c.split.low)
            add(c.name, form, f"T >= {c.split.break_K:g} K", c.split.high)
        if c.troe is not None:
            add(c.name, "troe_k0", "low-pressure limit", c.troe.k0)
            add(c.name, "troe_kinf", "high-pressure limit", c.troe.kinf)
        if c.chebyshev is not None:
            add_cheb(c.name, "chebyshev", c.chebyshev)
        if c.chebyshev_falloff is not None:
            add_cheb(c.name, "chebyshev_falloff", c.chebyshev_falloff)
    return csv_text(FIT_COLUMNS, rows)


def write_fits_csv(path, fits, rate_units=None) -> Path:
    """Write :func:`fits_csv_text` atomically (never over the study's inputs)."""
    check_not_input(path, fits.input_files)
    atomic_write_text(path, fits_csv_text(fits, rate_units))
    return Path(path)


# ============================================================================
# JSON
# ============================================================================

def json_text(obj) -> str:
    """Indented JSON of ``obj`` (numpy arrays and scalars converted; NaN/inf become null)."""
    from tstrate.output.records import to_jsonable

    return json.dumps(to_jsonable(obj), indent=2, allow_nan=False) + "\n"


def write_json(path, obj, *, inputs=()) -> Path:
    """Write :func:`json_text` of ``obj`` to ``path`` atomically."""
    check_not_input(path, inputs)
    atomic_write_text(path, json_text(obj))
    return Path(path)


def write_fits_json(path, fits, rate_units=None) -> Path:
    """Write :func:`tstrate.output.fit_records.fits_to_json` atomically (never over the study's inputs)."""
    from tstrate.output.fit_records import fits_to_json

    return write_json(path, fits_to_json(fits, rate_units), inputs=fits.input_files)


__all__ = ["thermo_csv_text", "write_thermo_csv", "rates_csv_text", "write_rates_csv",
           "write_rate_tables", "fits_csv_text", "write_fits_csv", "json_text", "write_json",
           "write_fits_json", "check_not_input", "csv_text", "safe_file_stem"]
