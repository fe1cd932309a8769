"""Validated, immutable records: species, channels, studies and the settings of their steps.

Every check runs at construction; arrays are read-only. Units are SI except where a field
name says otherwise (``_A``, ``_amu``, ``_cm1``).
"""

from tstrate.model.species import (KINDS, TUNNELLING_FLOORS, TUNNELLING_MODELS, Channel,  # noqa: F401
                                   ElectronicLevel, FreeRotor, HinderedRotor, Species)
from tstrate.model.study import Conditions, Study  # noqa: F401
