"""What a quantum-chemistry program prints beside what cclib parses: its own final totals, and the
job types whose energy cclib's lists do not give right.

cclib keeps, per program, the energies of its SCF, MP and CC sections. Three classes of job need
more than that:

- **corrections printed apart**: ORCA prints its "FINAL SINGLE POINT ENERGY" as the SCF energy plus
  every correction (dispersion, and the geometric counterpoise term gCP of the composite "-3c"
  methods); cclib adds only the dispersion. The printed final total is used.
- **embedded multi-layer jobs** (ONIOM, QM/MM, QM/QM2): cclib's energies are those of one layer's
  sub-calculation. The extrapolated total the program prints is used where it prints one
  (Gaussian's "ONIOM: extrapolated energy"); otherwise the file is refused.
- **displaced points** of numerical and anharmonic frequency jobs: energies beyond the last
  geometry printed belong to displaced geometries. The energy at the frequency job's reference
  geometry is used, with a warning.

The file has passed :func:`tstrate.io.files.checked_input_file` (a regular file under the size
cap) before it is scanned here, one line at a time.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

#: ORCA's final total: SCF plus every correction it applies (dispersion, gCP) [hartree]
_ORCA_FINAL = re.compile(r"^\s*FINAL SINGLE POINT ENERGY\s+(-?\d+\.\d+)")
#: Gaussian's ONIOM total [hartree]
_ONIOM_TOTAL = re.compile(r"ONIOM:\s+extrapolated energy\s*=\s*(-?\d+\.\d+)", re.IGNORECASE)
#: a Gaussian route line (it starts with '#')
_GAUSSIAN_ROUTE = re.compile(r"^\s*#[pPnNtT]?\s")
#: ORCA's echo of its input: '|  1> ! ...' (simple input) and '|  2> %qmmm' (blocks)
_ORCA_INPUT = re.compile(r"^\|\s*\d+>\s*(.*)$")
_ORCA_EMBEDDED = re.compile(r"(^|[\s!])(QMMM|QM/MM|QM/XTB|QM/QM2|QM/HF-3C|QM/PBEH-3C|ONIOM)\b|^%qmmm\b",
                            re.IGNORECASE)
_ANHARMONIC = re.compile(r"anharm", re.IGNORECASE)


@dataclass
class PrintedTotals:
    """What one scan of an output found.

    final_totals_hartree: ORCA's "FINAL SINGLE POINT ENERGY" values, in file order [hartree].
    oniom_totals_hartree: Gaussian's ONIOM extrapolated energies, in file order [hartree].
    embedded: the job is an embedded multi-layer one (ONIOM, QM/MM, QM/QM2).
    anharmonic: the route or input asks for an anharmonic frequency job.
    """

    final_totals_hartree: list = field(default_factory=list)
    oniom_totals_hartree: list = field(default_factory=list)
    embedded: bool = False
    anharmonic: bool = False


def scan(path: Path, package: str) -> PrintedTotals:
    """Scan the output of ``package`` (cclib's program name) for its printed totals and job type."""
    out = PrintedTotals()
    if package not in ("ORCA", "Gaussian"):
        return out
    route_open = False
    with open(path, encoding="utf-8", errors="replace") as fh:
        for line in fh:
            if package == "ORCA":
                m = _ORCA_FINAL.match(line)
                if m:
                    out.final_totals_hartree.append(float(m.group(1)))
                    continue
                m = _ORCA_INPUT.match(line)
                if m:
                    text = m.group(1).strip()
                    if _ORCA_EMBEDDED.search(text):
                        out.embedded = True
                    if text.startswith("!") and _ANHARMONIC.search(text):
                        out.anharmonic = True
            else:
                m = _ONIOM_TOTAL.search(line)
                if m:
                    out.oniom_totals_hartree.append(float(m.group(1)))
                    continue
                # the route section: '#' line and its continuation lines, ended by a dashed line
                if _GAUSSIAN_ROUTE.match(line):
                    route_open = True
                elif route_open and line.strip().startswith("---"):
                    route_open = False
                if route_open:
                    low = line.lower()
                    if "oniom" in low:
                        out.embedded = True
                    if "anharm" in low:
                        out.anharmonic = True
    return out


def reference_index(n_energies: int, n_geometries: int) -> int:
    """Index of the energy at the frequency job's reference geometry: the last one, unless the file
    holds more energies than geometries (displaced points of a numerical or anharmonic frequency
    job, whose geometries are not printed), then the one of the last geometry printed."""
    if n_geometries >= 1 and n_energies > n_geometries:
        return n_geometries - 1
    return n_energies - 1
