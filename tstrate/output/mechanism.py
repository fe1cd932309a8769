"""Mechanism files in Cantera's YAML input format (an open format read by a general-purpose
kinetics library), written from :class:`tstrate.study.fits.StudyFits`.

What the file holds
-------------------
- a header comment: source study, date, tstrate version, the caution that the
  numbers are estimates, the units, the enthalpy zero, renamed species and
  the fit warnings;
- ``units: {length: cm, time: s, quantity: molec, activation-energy: K}``:
  pre-exponential factors in molecule-cm-s units (s^-1, cm^3 molecule^-1 s^-1,
  cm^6 molecule^-2 s^-1; low-pressure limits one order higher) and activation
  energies as Ea/R in K, the conventions of atmospheric kinetics tables;
- one phase of kind ``ideal-gas`` with all elements and species, gas kinetics
  and all reactions;
- the species with their fitted NASA 7-coefficient polynomials
  (``reference-pressure`` 1 bar, the standard state tstrate uses);
- one reversible reaction (``<=>``) per channel, so Cantera computes the
  reverse rate constant from the polynomials: ``type: elementary`` with the
  channel's fitted (modified) Arrhenius expression, or ``type: falloff`` with
  ``(+M)``, low- and high-pressure limits and ``Troe`` parameters when Troe
  data were given. Cantera's form is k = A T^b exp(-Ea/RT) with T in K, so the
  modified Arrhenius A (T/T0)^n becomes A T0^-n T^n;
- with the ``chebyshev`` mechanism form, ``type: Chebyshev`` reactions
  (Venkatesh, Chang, Dean, Cohen and Carr, AIChE J. 43, 1331 (1997); see
  :mod:`tstrate.expressions.chebyshev`): ``temperature-range`` [K], ``pressure-range``
  with the unit written out (Pa) and ``data``, the coefficient matrix of
  log10 k with k in the file's molecule-cm-s units (rows: 1/T terms, columns:
  log P terms). A falloff channel with a k(T, P) grid gets its
  two-dimensional fit over the study's pressures; the pressure is Cantera's
  total pressure, and k(T, P) was computed for the study's bath gas. The
  other channels get one pressure column; since the single pressure term is
  the constant T_0(P~) = 1, k does not depend on P, and the pressure range is
  written as 1e-30 to 1e30 Pa so that it covers any pressure (Cantera 3.2
  accepts one pressure column with any positive range and does not clip P;
  checked in the tests). Outside the temperature range Cantera extrapolates
  the polynomial: do not use the expressions there. Cantera 3.2 reads a
  Chebyshev channel with a species on both sides (``H2CO3 + H2O <=> CO2 + 2
  H2O``) as ``three-body-Chebyshev`` with that species as the named third
  body; its rates of progress are the same mass-action k [H2CO3] [H2O]
  forward and k_r [CO2] [H2O]^2 backward (checked in the tests).

``type: elementary`` is written explicitly: without it Cantera would read a
channel such as ``H2CO3 + H2O <=> CO2 + 2 H2O`` (one species on both sides,
three products) as a three-body reaction.

Falloff reactions use the generic collider M with all efficiencies 1: the
Troe k0 belongs to the study's bath gas, which is added as a species (see
:mod:`tstrate.study.fits`), so a mixture of that bath gas reproduces it;
other colliders count as if they were the bath gas (a limitation).

Species names: Cantera reads species names out of the equation strings, so
names with spaces, ``+``, ``=``, ``<``, ``>``, non-ASCII characters, a
leading digit, or the reserved ``M`` are written under a safe name (listed in
the header and returned by :func:`cantera_names`).

The YAML is written by hand (flow-style mappings and lists, quoted strings);
Cantera is not needed to write it.
"""

from __future__ import annotations

import json
import math
import re
from collections import Counter
from pathlib import Path

from tstrate.errors import InputError
from tstrate.expressions.chebyshev import CHEBYSHEV_ANY_PRESSURE_PA
from tstrate.expressions.mechanism_text import UNITS_LINE
from tstrate.expressions.mechanism_text import yaml_number as _num
from tstrate.io.files import atomic_write_text
from tstrate.output.tables import check_not_input
from tstrate.units import P_STANDARD
CAUTION = ("CAUTION: these rate constants and thermochemical data are estimates from "
           "transition-state theory on computed stationary points, not measurements; check "
           "them against experiments before relying on them.")

_UNSAFE = re.compile(r"[^A-Za-z0-9_\-.*'()\[\]]")
_RESERVED = {"M"}


# ============================================================================
# names and numbers
# ============================================================================

def _safe(name: str) -> str:
    safe = _UNSAFE.sub("_", name.replace("(+", "_"))
    if not _balanced(safe):
        safe = safe.replace("(", "_").replace(")", "_")
    if not safe or safe[0].isdigit() or safe[0] in "-.(":
        safe = "S_" + safe
    if safe in _RESERVED:
        safe = safe + "_"
    return safe


def cantera_names(names) -> dict[str, str]:
    """tstrate species name -> a unique name Cantera can read in equations.

    Names that are safe already keep themselves; the others get unsafe
    characters replaced by ``_`` (``S_`` in front of a leading digit, ``_``
    after the reserved ``M``) and a numeric suffix when that clashes.
    """
    names = list(dict.fromkeys(names))
    out = {n: n for n in names if _safe(n) == n}
    used = set(out)
    for name in names:
        if name in out:
            continue
        base = _safe(name)
        safe, i = base, 2
        while safe in used:
            safe = f"{base}_{i}"
            i += 1
        used.add(safe)
        out[name] = safe
    return {n: out[n] for n in names}


def _balanced(s: str) -> bool:
    depth = 0
    for ch in s:
        depth += {"(": 1, ")": -1}.get(ch, 0)
        if depth < 0:
            return False
    return depth == 0


def _q(s: str) -> str:
    """A YAML double-quoted string (JSON escapes are valid YAML escapes)."""
    return json.dumps(str(s), ensure_ascii=True)


def _side(names, cn) -> str:
    counts = Counter(names)
    parts = []
    for n in dict.fromkeys(names):
        c = counts[n]
        parts.append(f"{c} {cn[n]}" if c > 1 else cn[n])
    return " + ".join(parts)


# ============================================================================
# text
# ============================================================================

def _header(fits, cn) -> list[str]:
    lines = [
        f"# Mechanism in Cantera's YAML format, written by tstrate {fits.version} on {fits.created}",
        f"# Source study: {fits.study_file or '(built in Python)'}",
        f"# Title: {fits.title}",
        "#",
        f"# {CAUTION}",
        "#",
        "# Units: A in s-1 (unimolecular), cm3 molecule-1 s-1 (bimolecular), cm6 molecule-2 s-1",
        "# (termolecular; falloff low-pressure limits one order higher); b is the temperature",
        "# exponent with T in K (k = A T^b exp(-Ea/RT)); Ea is given as Ea/R in K.",
        f"# Rate constants fitted over {float(min(fits.temperature_K)):g}-{float(max(fits.temperature_K)):g} K; "
        "each reaction's note says how its rates were computed",
        "# (method, tunnelling), which form it holds and how far that form is from the computed rates",
        "# (measured from the numbers in this file, on the grid and between grid points); reverse rates",
        "# follow from the NASA polynomials (reversible reactions).",
        *([] if not any(c.mechanism_kind.startswith("chebyshev") for c in fits.channels) else [
            "# Chebyshev reactions: log10 k = sum a[t][p] T_t(x) T_p(y) with k in the units above,",
            "# x = (2/T - 1/Tmin - 1/Tmax)/(1/Tmax - 1/Tmin), y = (2 ln P - ln Pmin - ln Pmax)/"
            "(ln Pmax - ln Pmin), P in Pa;",
            "# one pressure column: k independent of pressure (range 1e-30 to 1e30 Pa). Valid only "
            "inside the temperature range."]),
        *([] if not any(c.mechanism_kind == "pressure_table" for c in fits.channels) else [
            "# pressure-dependent-Arrhenius reactions: one expression per pressure (P in Pa), ln k linear "
            "in ln P between them,",
            "# the nearest pressure's expression outside the tabulated range."]),
        "# Thermochemistry: NASA 7-coefficient polynomials fitted to tstrate's ideal-gas "
        f"thermochemistry (low modes: {fits.low_modes.label}),",
        "# standard state 1 bar.",
        "# Enthalpy zero: H = E + ZPE + [H(T) - H(0)] - sum_j n_j c_j with per-element offsets "
        "c_j [kJ/mol per atom]:",
        "#   " + ", ".join(f"{e}: {_num(c * 1e-3)}" for e, c in fits.element_offsets_J_per_mol.items()),
        "# (reaction energies and equilibrium constants are unchanged; these are not enthalpies "
        "of formation).",
    ]
    renamed = [(n, c) for n, c in cn.items() if n != c]
    if renamed:
        lines.append("# Species renamed for Cantera: "
                     + "; ".join(f"{n!r} -> {c!r}" for n, c in renamed))
    missed = [c.name for c in fits.channels
              if not c.export.meets_tolerance and math.isfinite(c.export.deviation.max_rel)]
    if missed:
        lines.append("# TOLERANCE MISSED: the expressions of " + ", ".join(missed) + " deviate from the "
                     "computed rates by more than the tolerance (see their notes).")
    warnings = list(fits.warnings) + [w for c in fits.channels for w in c.warnings]
    if warnings:
        lines.append("# Warnings:")
        lines += [f"#   - {w}" for w in warnings]
    return [ln.replace("\n", " ") for ln in lines]


def _species_block(s, cn) -> list[str]:
    n = s.nasa7
    comp = ", ".join(f"{e}: {c}" for e, c in s.composition.items())
    note = f"tstrate species {s.name} ({s.role}); source: {s.source}"
    if s.note:
        note += f"; {s.note}"
    note += (f"; max fit deviations: Cp {100 * n.max_rel_error_cp:.3f} %, "
             f"H {1e-3 * n.max_abs_error_h_J_per_mol:.3g} kJ/mol, S {100 * n.max_rel_error_s:.3f} %")
    return ([f"- name: {_q(cn[s.name])}", f"  composition: {{{comp}}}"]
            + n.mechanism_block(P_STANDARD) + [f"  note: {_q(note)}"])


def deviation_text(c) -> str:
    """The measured deviation of a channel's exported expression, in words (as the file says it)."""
    d = c.export.deviation
    if not math.isfinite(d.max_rel):
        return "deviation not measured (no computed k(T, P) given)"
    text = (f"max deviation {100 * d.max_rel:.3g} % from the computed rates at {d.n_grid} grid points"
            + (f" and {d.n_between} points between them" if d.n_between else ""))
    text += (f" (tolerance {100 * c.export.tolerance:g} %"
             + ("" if c.export.meets_tolerance else ", MISSED") + ")")
    return text


def _reaction_block(c, cn, duplicate: bool) -> list[str]:
    lhs, rhs = _side(c.reactants, cn), _side(c.products, cn)
    kind = c.mechanism_kind
    e = c.expression
    note = f"channel {c.name}; {c.method}; "
    if kind.startswith("chebyshev"):
        note += (f"Chebyshev fit ({e.n_temperature} x {e.n_pressure} terms) of "
                 f"{'k(T, P)' if e.pressure_dependent else 'k(T)'} over {e.Tmin_K:g}-{e.Tmax_K:g} K")
        if e.pressure_dependent:
            note += f" and {e.Pmin_Pa / 1e5:g}-{e.Pmax_Pa / 1e5:g} bar"
        lines = [f"- equation: {_q(f'{lhs} <=> {rhs}')}"] + e.mechanism_block()
    elif kind in ("arrhenius", "modified_arrhenius"):
        note += (f"{'modified ' if e.modified else ''}Arrhenius fit over {e.Tmin_K:g}-{e.Tmax_K:g} K")
        lines = [f"- equation: {_q(f'{lhs} <=> {rhs}')}"] + e.mechanism_block()
    elif kind == "pressure_table":
        p = e.pressure_Pa
        note += (f"modified Arrhenius expressions at {len(e.fits)} pressures ({p.min() / 1e5:g}-{p.max() / 1e5:g} "
                 "bar, ln k linear in ln P between them)")
        lines = [f"- equation: {_q(f'{lhs} <=> {rhs}')}"] + e.mechanism_block()
    else:
        if c.order + 1 > 3:
            raise InputError(f"channel {c.name!r}: a falloff reaction with {c.order} reactants "
                             "would need a low-pressure limit of order 4", field="troe")
        note += "Troe falloff"
        if e.source:
            note += f" ({e.source})"
        lines = [f"- equation: {_q(f'{lhs} (+M) <=> {rhs} (+M)')}"] + e.mechanism_block()
    bath = c.troe.bath_gas if c.troe is not None else None
    if bath and kind in ("troe", "pressure_table", "chebyshev_falloff"):
        note += f", computed for bath gas {bath}"
    note += f"; {deviation_text(c)}"
    if c.export.notes:
        note += "; " + "; ".join(c.export.notes)
    if duplicate:
        lines.append("  duplicate: true")
    lines.append(f"  note: {_q(note)}")
    return lines


def _duplicates(channels) -> set[str]:
    """Channels sharing stoichiometry (either direction) and reaction type with another."""
    keys: dict = {}
    for c in channels:
        r, p = tuple(sorted(c.reactants)), tuple(sorted(c.products))
        kind = c.mechanism_kind
        written = ("Chebyshev" if kind.startswith("chebyshev")
                   else "falloff" if kind == "troe" else "plog" if kind == "pressure_table" else "elementary")
        key = (frozenset([r, p]) if r != p else frozenset([r]), written)
        keys.setdefault(key, []).append(c.name)
    return {n for names in keys.values() if len(names) > 1 for n in names}


def mechanism_yaml(fits, *, phase_name: str = "gas") -> str:
    """The text of a Cantera YAML mechanism for ``fits`` (see the module docstring)."""
    cn = cantera_names([s.name for s in fits.species])
    dups = _duplicates(fits.channels)
    elements = fits.elements
    t_state = min(max(298.15, min(s.nasa7.Tmin_K for s in fits.species)),
                  max(s.nasa7.Tmax_K for s in fits.species))
    lines = _header(fits, cn)
    lines += [
        "",
        "generator: tstrate",
        f"date: {_q(fits.created)}",
        "",
        UNITS_LINE,
        "",
        "phases:",
        f"- name: {_q(phase_name)}",
        "  thermo: ideal-gas",
        "  elements: [" + ", ".join(_q(e) for e in elements) + "]",
        "  species: [" + ", ".join(_q(cn[s.name]) for s in fits.species) + "]",
        "  kinetics: gas",
        "  reactions: all",
        f"  state: {{T: {_num(t_state)}, P: {_num(P_STANDARD)}}}",
        "",
        "species:",
    ]
    for s in fits.species:
        lines += _species_block(s, cn)
    lines += ["", "reactions:"]
    for c in fits.channels:
        lines += _reaction_block(c, cn, c.name in dups)
    return "\n".join(lines) + "\n"


def write_mechanism(fits, path, *, phase_name: str = "gas") -> Path:
    """Write :func:`mechanism_yaml` to ``path`` atomically; never over an input file.

    Raises InputError when ``path`` is one of the study's input files or the
    folder cannot be written. Returns the path written.
    """
    path = Path(path)
    check_not_input(path, fits.input_files)
    atomic_write_text(path, mechanism_yaml(fits, phase_name=phase_name))
    return path


__all__ = ["mechanism_yaml", "write_mechanism", "cantera_names", "UNITS_LINE", "CAUTION",
           "CHEBYSHEV_ANY_PRESSURE_PA"]
