"""QCSchema JSON results (the MolSSI open standard, ``qcschema_output``), read with qcelemental.

A result of driver ``hessian`` gives the geometry, the energy (``properties.return_energy``) and the
Cartesian Hessian (``return_result``, hartree/bohr^2, 3N x 3N, flat or nested); a result of driver
``energy`` gives a single-point energy. Geometries are in bohr, as the standard defines. Fields that
the installed qcelemental does not know (some programs add e.g. ``raw_output``) are set aside
before validation; a result marked ``success = false`` is refused.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.units import energy_to_J_per_mol

#: a QCSchema result larger than this is refused before it is read [bytes]
MAX_QCSCHEMA_BYTES = 256 * 2**20


@dataclass(frozen=True)
class QCSchemaResult:
    """What tstrate takes from one QCSchema result (SI inside; geometry in Angstrom)."""

    symbols: tuple[str, ...]
    positions_A: np.ndarray
    charge: int
    multiplicity: int
    driver: str
    energy_J_per_mol: float | None
    hessian_hartree_bohr2: np.ndarray | None
    provenance: dict = field(default_factory=dict)


def looks_like_json(path: Path) -> bool:
    """Whether the file's first non-blank character opens a JSON object."""
    with open(path, "rb") as fh:
        head = fh.read(256).lstrip()
    return head[:1] == b"{"


def read_qcschema(path, *, max_bytes: int = MAX_QCSCHEMA_BYTES) -> QCSchemaResult:
    """Read one QCSchema ``AtomicResult`` JSON file (see the module docstring)."""
    import qcelemental as qcel
    from scipy.constants import physical_constants

    from tstrate.io.files import checked_input_file

    path = checked_input_file(path, max_bytes=max_bytes, what="QCSchema JSON file")
    file = str(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except UnicodeDecodeError:
        raise InputError("not a text file (QCSchema JSON expected)", file=file) from None
    except json.JSONDecodeError as exc:
        raise InputError(f"not valid JSON: {exc}", file=file) from None
    if not isinstance(data, dict) or "molecule" not in data:
        raise InputError("not a QCSchema result (no 'molecule')", file=file)
    schema = data.get("schema_name", "")
    if schema == "qcschema_input" or "return_result" not in data:
        raise InputError("a QCSchema input, not a result: it holds no computed values", file=file,
                         field="return_result", hint="give the program's result file")
    if data.get("success") is False:
        err = data.get("error") or {}
        message = err.get("error_message", "") if isinstance(err, dict) else str(err)
        raise InputError("the program marked this result unsuccessful"
                         + (f": {message.strip().splitlines()[-1][:200]}" if message.strip() else ""),
                         file=file, field="success")
    known = set(qcel.models.AtomicResult.__fields__)
    extra = sorted(set(data) - known)
    try:
        result = qcel.models.AtomicResult(**{k: v for k, v in data.items() if k in known})
    except Exception as exc:  # pydantic's ValidationError, with the field in its text
        first = str(exc).splitlines()
        raise InputError("not a valid QCSchema result: " + " ".join(first[:3])[:300], file=file) from None
    mol = result.molecule
    driver = str(getattr(result.driver, "value", result.driver))
    bohr_A = physical_constants["Bohr radius"][0] * 1e10
    symbols = tuple(str(s).capitalize() for s in mol.symbols)
    positions = np.asarray(mol.geometry, dtype=float).reshape(-1, 3) * bohr_A
    energy = result.properties.return_energy
    if energy is None and driver == "energy":
        energy = float(result.return_result)
    energy_J = None if energy is None else float(energy_to_J_per_mol(float(energy), "hartree"))
    hess = None
    if driver == "hessian":
        n3 = 3 * len(symbols)
        values = np.asarray(result.return_result, dtype=float).ravel()
        if values.size != n3 * n3:
            raise InputError(f"the Hessian holds {values.size} numbers; {len(symbols)} atoms need "
                             f"{n3} x {n3}", file=file, field="return_result")
        hess = values.reshape(n3, n3)
    elif driver not in ("energy", "gradient"):
        raise InputError(f"driver {driver!r}: tstrate reads 'hessian' results (and 'energy' ones "
                         "as single points)", file=file, field="driver")
    prov = {
        "source": file,
        "program": f"{result.provenance.creator} {result.provenance.version}".strip(),
        "method": f"{result.model.method}/{result.model.basis}" if result.model.basis else str(result.model.method),
        "reader": f"tstrate.io.qcschema via qcelemental {qcel.__version__}",
    }
    if extra:
        prov["qcschema_fields_not_read"] = ", ".join(extra)
    return QCSchemaResult(symbols, positions, int(round(mol.molecular_charge)),
                          int(mol.molecular_multiplicity), driver, energy_J, hess, prov)
