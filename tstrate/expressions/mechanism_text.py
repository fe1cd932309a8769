"""Numbers and units of the Cantera YAML blocks that each expression writes for its own rate.

Every ``mechanism_block`` of :mod:`tstrate.expressions` writes its numbers in the units of
:data:`UNITS_LINE` (molecule-cm-s, activation energies as Ea/R in K), the units block that
:mod:`tstrate.output.mechanism` puts at the top of every mechanism file; pressures carry their
unit (Pa) beside the number.
"""

from __future__ import annotations

import math

from tstrate.errors import InputError

#: The units block of every mechanism file; the blocks of the expressions are written in it.
UNITS_LINE = "units: {length: cm, time: s, quantity: molec, activation-energy: K}"


def yaml_number(x) -> str:
    """A float as a YAML number (always with a decimal point); InputError when not finite."""
    x = float(x)
    if not math.isfinite(x):
        raise InputError(f"cannot write the non-finite number {x!r} to a mechanism file",
                         field="mechanism")
    s = repr(x)
    mant, _, exp = s.partition("e")
    if "." not in mant:
        mant += ".0"
    return mant + ("e" + exp if exp else "")
