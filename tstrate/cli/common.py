"""Small helpers shared by the subcommands: the parser, shared options, printing, JSON, atomic writes.

This module is imported while the parser is built (``tstrate --help``), so it imports
nothing heavy at the top; numpy and the library come in inside the functions.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose usage errors are one line on stderr with exit status 2.

    ``prog: error: message``, e.g. ``tstrate rates: error: argument --plot: expected one
    argument``, instead of argparse's usage block. Subparsers made by ``add_subparsers`` are of
    the same class (argparse's default), so every command and the actions of ``tstrate compute``
    behave alike. ``--help`` is untouched. Each parser records its ``prog`` as the default
    ``_prog``, so that arguments nobody recognised are reported by the deepest command given.
    """

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.set_defaults(_prog=self.prog)

    def error(self, message: str):
        self.exit_with(self.prog, message)

    def exit_with(self, prog: str, message: str):
        text = " ".join(str(message).split())
        sys.stderr.write(f"{prog}: error: {text}\n")
        sys.exit(2)

    def parse_args(self, args=None, namespace=None):
        parsed, extras = self.parse_known_args(args, namespace)
        if extras:
            self.exit_with(getattr(parsed, "_prog", self.prog),
                           "unrecognized arguments: " + " ".join(extras))
        return parsed


def print_json(obj) -> None:
    from tstrate.output.records import to_jsonable

    json.dump(to_jsonable(obj), sys.stdout, indent=2)
    sys.stdout.write("\n")


def format_table(header: list[str], rows: list[list], floatfmt: str = "{:.5g}") -> str:
    """A plain aligned text table."""
    import numpy as np

    cells = [[h for h in header]] + [
        [floatfmt.format(v) if isinstance(v, (float, np.floating)) else str(v) for v in row]
        for row in rows
    ]
    widths = [max(len(r[i]) for r in cells) for i in range(len(header))]
    lines = ["  ".join(c.rjust(w) for c, w in zip(r, widths)) for r in cells]
    lines.insert(1, "  ".join("-" * w for w in widths))
    return "\n".join(lines)


# ---- options shared by several commands (each defined once, here) --------------------------

class _LowModeNames:
    """The names of the low-mode treatments, read from :mod:`tstrate.physics.thermo` on first use,
    so that building the parser (``tstrate --help``) does not import numpy."""

    def _names(self) -> tuple[str, ...]:
        from tstrate.physics.thermo import LOW_MODE_METHODS

        return LOW_MODE_METHODS

    def __iter__(self):
        return iter(self._names())

    def __contains__(self, value) -> bool:
        return value in self._names()


def _low_mode_name(text: str) -> str:
    """argparse type of --low-modes: a known treatment, else one line naming the known ones."""
    from tstrate.physics.thermo import LOW_MODE_METHODS, low_mode_choices_text

    if text not in LOW_MODE_METHODS:
        raise argparse.ArgumentTypeError(f"unknown treatment {text!r}; {low_mode_choices_text()}")
    return text


def add_low_mode_options(parser) -> None:
    """--low-modes and --low-mode-cutoff-cm1, for every command whose numbers depend on them;
    :func:`low_modes_from_args` turns them into a :class:`tstrate.physics.thermo.LowModes`."""
    parser.add_argument(
        "--low-modes", type=_low_mode_name, choices=_LowModeNames(), default="harmonic", metavar="METHOD",
        help="treatment of low real vibrational modes, one of %(choices)s (default %(default)s), "
             "in turn: every mode a harmonic oscillator; the entropy of each mode blended from its harmonic "
             "value towards that of a free rotor, weight 1/(1 + (nu0/nu)^4), enthalpy and heat "
             "capacity harmonic (Grimme 2012); or every mode below nu0 raised to nu0 except in the "
             "zero-point energy (Ribeiro, Marenich, Cramer and Truhlar 2011)")
    parser.add_argument(
        "--low-mode-cutoff-cm1", type=float, default=None, metavar="CM1",
        help="the cut-off nu0 of --low-modes in cm-1 (default 100, the value of both papers); "
             "no effect with harmonic")


def low_modes_from_args(args):
    """The LowModes of --low-modes and --low-mode-cutoff-cm1; a bad cut-off names the option."""
    from tstrate.errors import InputError
    from tstrate.physics.thermo import LowModes

    try:
        if args.low_mode_cutoff_cm1 is None:
            return LowModes(args.low_modes)
        return LowModes(args.low_modes, args.low_mode_cutoff_cm1)
    except InputError as exc:
        field = "--low-mode-cutoff-cm1" if "cutoff" in (exc.field or "") else "--low-modes"
        raise InputError(exc.problem, field=field, hint=exc.hint) from None


STANDARD_PRESSURE_CHOICES = {"bar": "1 bar", "atm": "1 atm"}


def add_standard_pressure_option(parser, *, study: bool = True) -> None:
    """--standard-pressure {bar,atm}: the standard state of S, G, Kp and activation quantities
    (rate constants do not depend on it); :func:`standard_pressure_from_args` gives it in Pa."""
    default = "the study's [conditions] standard_pressure, else 1 bar" if study else "1 bar"
    parser.add_argument("--standard-pressure", choices=tuple(STANDARD_PRESSURE_CHOICES), default=None,
                        help=f"standard pressure of entropies, Gibbs energies, Kp and activation quantities: "
                             f"1 bar or 1 atm (default: {default})")


def standard_pressure_from_args(args, study=None):
    """The standard pressure [Pa] of --standard-pressure; without it the study's, else 1 bar.
    With a study, returns the study with that standard pressure in its conditions."""
    import dataclasses

    from tstrate.units import P_STANDARD, STANDARD_PRESSURES_PA

    choice = getattr(args, "standard_pressure", None)
    if study is None:
        return P_STANDARD if choice is None else STANDARD_PRESSURES_PA[STANDARD_PRESSURE_CHOICES[choice]]
    if choice is None:
        return study
    p0 = STANDARD_PRESSURES_PA[STANDARD_PRESSURE_CHOICES[choice]]
    return dataclasses.replace(study, conditions=dataclasses.replace(study.conditions, standard_pressure_Pa=p0))


def add_quiet_option(parser) -> None:
    """--quiet/-q for every command that shows a progress bar (on stderr, only on a terminal)."""
    parser.add_argument("--quiet", "-q", action="store_true",
                        help="no progress bar (one is shown on stderr only when it is a terminal)")


def show_progress(args) -> bool:
    """Whether to draw a progress bar: not --quiet, and stderr is a terminal."""
    return not getattr(args, "quiet", False) and sys.stderr.isatty()


def progress_wrapper(args, desc: str):
    """A tqdm wrapper of an iterable on stderr when :func:`show_progress`, else None."""
    if not show_progress(args):
        return None
    from tqdm import tqdm

    return lambda it: tqdm(it, desc=desc, file=sys.stderr, leave=False)


def add_plot_formats_option(parser) -> None:
    """--plot-formats png,svg: the formats each figure is written in (default PNG only)."""
    parser.add_argument(
        "--plot-formats", metavar="LIST", default="png",
        help="comma-separated formats of each figure, from png and svg (default png; "
             "png,svg writes both, each figure drawn once)")


def plot_formats_from_args(args) -> tuple[str, ...]:
    from tstrate.output.plots import parse_formats

    return parse_formats(getattr(args, "plot_formats", "png") or "png")


def add_plot_option(parser, figures: str) -> None:
    """--plot DIR (and --plot-formats) for every command that draws figures."""
    parser.add_argument(
        "--plot", metavar="DIR",
        help=f"write {figures} into the folder DIR (made when missing), as PNG (see --plot-formats), "
             "under the file names tstrate run gives them in its plots/ folder")
    add_plot_formats_option(parser)


def check_plot_dir(path):
    """The --plot folder as a Path; InputError when it exists and is not a folder."""
    from tstrate.errors import InputError

    p = Path(path)
    if p.exists() and not p.is_dir():
        raise InputError("exists and is not a folder", file=str(p), field="--plot",
                         hint="--plot takes a folder; the plots are written into it")
    return p


def write_figure(fig, folder, stem: str, inputs=(), formats=("png",)) -> list:
    """Save ``fig`` as folder/stem in each of ``formats`` (atomic; drawn once), refusing to
    overwrite an input file.

    ``stem`` comes from :func:`tstrate.output.plots.figure_stem`. Returns the paths written.
    """
    from tstrate.errors import InputError
    from tstrate.output.plots import save_figure

    base = Path(folder) / stem
    resolved = {Path(p).resolve() for p in inputs if p}
    formats = tuple(formats)
    for fmt in formats:
        target = base.with_suffix("." + fmt)  # as save_figure names it
        if target.resolve() in resolved:
            raise InputError("would overwrite an input file", file=str(target), field="--plot")
    return save_figure(fig, base, formats=list(formats))
