"""Species from quantum-chemistry output files (through cclib), QCSchema JSON results (through
qcelemental) and geometry files (through ASE).

Each file is read right or refused with the reason; nothing is guessed. What is taken from an
output file that cclib parses (``cclib.io.ccread``):

- the job must have ended normally where cclib's parser can tell (``metadata["success"]``): an
  aborted or cut file is refused; a file cut in its header or geometry (no atoms) is refused;
- geometry: the last set of coordinates (``atomcoords[-1]``) [Angstrom], the frequency job's;
- energy: the total energy at the frequency job's reference geometry, at the highest correlated
  level the file holds (``ccenergies``, else ``mpenergies``, else ``scfenergies``); cclib 1.x
  stores these in eV, converted back with cclib's own factor. Energies beyond the last printed
  geometry (displaced points of a numerical or anharmonic frequency job) are not used; a program's
  own final total is preferred where cclib leaves out part of it (ORCA's gCP), an embedded
  multi-layer job gives its extrapolated total or is refused (:mod:`tstrate.io.qcprinted`). A file
  that holds several levels of theory is read with a warning naming them; a file without any
  energy is refused at read time unless a single point is given;
- frequencies: ``vibfreqs`` [cm^-1]; translations and rotations printed as near-zero modes are
  dropped (3N-6, or 3N-5, remain); fewer vibrations than that (a partial or cut frequency job) are
  refused;
- Hessian: ``hessian`` where the file has one, hartree/bohr^2, unpacked from a triangle where the
  file holds one. It must reproduce the file's own frequencies within 2 %; when it does not (or is
  not finite, or not symmetric), the printed frequencies are used with a warning, and isotopes,
  which need a Hessian, are refused. A separate Hessian file of numbers only (xtb's ``hessian``
  file, hartree/bohr^2; the full 3N x 3N matrix or its lower triangle) may be given instead, and a
  geometry file may be paired with an output that holds a Hessian but no coordinates.
- charge and multiplicity: from the file; when the file has none, they must be given.

QCSchema JSON results (:mod:`tstrate.io.qcschema`) and any geometry or trajectory ASE reads (last
frame, which then needs a Hessian file) are accepted too. When cclib raises on a file, its message
is shown together with these other routes.

A separate high-level single-point energy overrides the geometry-level energy: a number with a
unit (``"-264.12 hartree"``; units in any case, ``Eh`` and ``au`` included), a value already in
J/mol, or another output file whose last energy is used; that file must hold the same atoms in the
same order, and a geometry more than 0.05 Angstrom (RMSD after alignment) from the frequency
job's is warned about.

Files are checked before they are read (:func:`tstrate.io.files.checked_input_file`): only
regular files up to :data:`MAX_OUTPUT_BYTES` (``max_file_bytes`` / ``--max-file-mib`` raise it).
"""

from __future__ import annotations

import logging
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.model import Species
from tstrate.geometry import expected_mode_count
from tstrate.physics.vibrations import HESSIAN_UNITS_J_PER_M2
from tstrate.units import ENERGY_UNITS_J_PER_MOL, energy_to_J_per_mol, energy_unit

log = logging.getLogger(__name__)

#: largest |wavenumber| of a translation/rotation mode that is dropped from a file's list [cm^-1]
RIGID_MODE_LIMIT_CM1 = 60.0
#: agreement needed between a file's frequencies and those of its Hessian (relative)
HESSIAN_CHECK_RTOL = 0.02
#: an output file larger than this is refused before it is read [bytes]; ``max_file_bytes`` raises it
MAX_OUTPUT_BYTES = 512 * 2**20
#: a Hessian file of plain numbers larger than this is refused before it is read [bytes]
MAX_HESSIAN_BYTES = 256 * 2**20
#: RMSD after alignment above which a single-point file's geometry is warned about [Angstrom]
SINGLE_POINT_RMSD_WARN_A = 0.05
#: cclib parsers that mark a normal end (``metadata["success"] = True``); for the others the
#: flag says nothing and is not used
CCLIB_SUCCESS_AWARE = ("ADF", "DALTON", "GAMESS", "GAMESS-UK", "Gaussian", "Jaguar", "Molpro",
                       "MOPAC", "NWChem", "ORCA", "Psi4", "QChem", "Turbomole", "XTB")


#: programs whose cclib parse keeps a geometry per energy it keeps (so that more energies than
#: geometries means displaced points); cclib keeps only the final geometry of an xtb optimisation
GEOMETRY_PER_ENERGY = ("ADF", "DALTON", "GAMESS", "GAMESS-UK", "Gaussian", "Jaguar", "Molpro", "NWChem",
                       "ORCA", "Psi4", "QChem", "Turbomole")


def cclib_energy_unit() -> str:
    """Unit of cclib's energy attributes for the installed cclib (eV for 1.x)."""
    import cclib

    major = int(str(cclib.__version__).split(".")[0])
    if major == 1:
        return "eV"
    raise InputError(f"cclib {cclib.__version__}: the energy unit of this cclib version has not been "
                     "checked by tstrate", hint="install cclib 1.8 (pip install 'cclib>=1.8,<2')")


def _cclib_eV_to_J_per_mol(value_eV: float) -> float:
    """Undo cclib's hartree -> eV conversion with cclib's own factor, then hartree -> J/mol."""
    from cclib.parser.utils import convertor

    return float(energy_to_J_per_mol(value_eV / convertor(1.0, "hartree", "eV"), "hartree"))


class _CclibResult:
    """cclib's parse of a file: ``data`` (None when cclib does not know the file) and ``error``
    (cclib's own message when it raised)."""

    def __init__(self, data, error: str | None):
        self.data, self.error = data, error


def _ccread(path: Path) -> _CclibResult:
    import contextlib
    import io
    import warnings

    import cclib

    quiet = io.StringIO()
    cclog = logging.getLogger("cclib")
    level = cclog.level
    cclog.setLevel(logging.CRITICAL)
    try:
        with contextlib.redirect_stdout(quiet), contextlib.redirect_stderr(quiet), \
                warnings.catch_warnings(), np.errstate(all="ignore"):
            warnings.simplefilter("ignore")
            data = cclib.io.ccread(str(path), loglevel=logging.CRITICAL)
    except Exception as exc:  # cclib raises many kinds on unexpected text
        text = " ".join(str(exc).split()) or type(exc).__name__
        log.debug("cclib failed on %s: %s", path, exc)
        return _CclibResult(None, f"{type(exc).__name__}: {text}"[:240])
    finally:
        cclog.setLevel(level)
    return _CclibResult(data, None)


def last_energy_J_per_mol(data, *, file=None) -> float | None:
    """Last total energy of parsed cclib ``data`` [J/mol] (highest correlated level present)."""
    found = _reference_energy(data, file=file, reference=False)
    return None if found is None else found[0]


def _reference_energy(data, *, file=None, reference: bool = True):
    """(energy [J/mol], cclib attribute, index, count) of the highest correlated level present: the
    last energy, or with ``reference`` the energy at the last geometry printed when the file holds
    more energies than geometries (displaced points; :func:`tstrate.io.qcprinted.reference_index`)."""
    from tstrate.io.qcprinted import reference_index

    cclib_energy_unit()
    coords = getattr(data, "atomcoords", None)
    n_geom = 0 if coords is None else len(coords)
    package = str((getattr(data, "metadata", {}) or {}).get("package", ""))
    reference = reference and package in GEOMETRY_PER_ENERGY
    for attr in ("ccenergies", "mpenergies", "scfenergies"):
        values = getattr(data, attr, None)
        if values is not None and np.size(values):
            rows = np.asarray(values, dtype=float)
            i = reference_index(len(rows), n_geom) if reference else len(rows) - 1
            value = float(np.ravel(rows[i])[-1])  # mpenergies: rows of orders; take the highest
            if not np.isfinite(value):
                raise InputError(f"the {attr} in the file are not finite", file=file)
            return _cclib_eV_to_J_per_mol(value), attr, i, len(rows)
    return None


def _frequency_job_energy(data, path: Path, out: "_Parsed") -> float | None:
    """The energy of the frequency job's reference geometry with all the corrections the program
    applies [J/mol] (see :mod:`tstrate.io.qcprinted`); warnings and provenance go to ``out``."""
    from tstrate.io.qcprinted import reference_index, scan

    file = str(path)
    meta = getattr(data, "metadata", {}) or {}
    package = str(meta.get("package", ""))
    printed = scan(path, package)
    coords = getattr(data, "atomcoords", None)
    n_geom = 0 if coords is None else len(coords)
    if package not in GEOMETRY_PER_ENERGY:
        n_geom = 0  # only the final geometry is kept: the last energy is the reference
    found = _reference_energy(data, file=file)
    energy = None if found is None else found[0]
    if found is not None and found[2] != found[3] - 1:
        out.warnings.append(
            f"the file holds {found[3]} energies for {n_geom} printed geometr{'y' if n_geom == 1 else 'ies'}: "
            "the later ones are displaced points of a numerical or anharmonic frequency job; the energy at "
            f"the frequency job's reference geometry (number {found[2] + 1}) is used, not the file's last")
        out.prov["energy"] = f"{found[1]}[{found[2]}], the frequency job's reference point"
    if printed.embedded:
        if not printed.oniom_totals_hartree:
            raise InputError("an embedded multi-layer job (ONIOM or QM/MM): the energies in the file are "
                             "those of its layers' sub-calculations, and no extrapolated total is printed",
                             file=file, field="energy",
                             hint="give the total energy with --single-point (a number with its unit)")
        totals = printed.oniom_totals_hartree
        value = totals[reference_index(len(totals), n_geom)]
        energy = energy_to_J_per_mol(value, "hartree")
        out.prov["energy"] = "the program's ONIOM extrapolated energy"
    elif printed.final_totals_hartree:
        totals = printed.final_totals_hartree
        value = totals[reference_index(len(totals), n_geom)]
        final = energy_to_J_per_mol(value, "hartree")
        if energy is not None and abs(final - energy) > 0.01:  # J/mol: more than rounding
            out.prov["energy_correction_kJ_per_mol"] = (final - energy) / 1e3
        out.prov["energy"] = ("the program's FINAL SINGLE POINT ENERGY (SCF plus every correction it "
                              "applies: dispersion, gCP)")
        energy = final
    if printed.anharmonic:
        out.warnings.append("an anharmonic frequency job: the harmonic frequencies are used, and the energy "
                            "of the reference geometry, not of the displaced points")
    return energy


def square_hessian(values, natoms: int, *, file=None, field="hessian") -> np.ndarray:
    """A 3N x 3N matrix from the full matrix (any shape of 9N^2 numbers) or from its lower triangle
    written row by row (3N(3N+1)/2 numbers), as programs print them. Units are unchanged."""
    n3 = 3 * natoms
    arr = np.asarray(values, dtype=float)
    if arr.size == n3 * n3:
        return arr.reshape(n3, n3)
    if arr.size == n3 * (n3 + 1) // 2:
        h = np.zeros((n3, n3))
        rows, cols = np.tril_indices(n3)
        h[rows, cols] = arr.ravel()
        return h + np.tril(h, -1).T
    raise InputError(f"{arr.size} Hessian numbers; {natoms} atoms need {n3} x {n3} = {n3 * n3} "
                     f"(or {n3 * (n3 + 1) // 2} for a lower triangle)", file=file, field=field)


def read_hessian_file(path, natoms: int, *, max_bytes: int = MAX_HESSIAN_BYTES) -> np.ndarray:
    """A Cartesian Hessian written as plain numbers [hartree/bohr^2] (xtb's ``hessian`` file):
    the full matrix or its lower triangle. Lines starting with ``$`` (section markers) are
    skipped. The atom count is checked against the file's size before it is read. Returns J/m^2
    (not symmetrised: an asymmetric matrix is refused later, with its asymmetry)."""
    from tstrate.io.files import checked_input_file

    path = checked_input_file(path, max_bytes=max_bytes, what="Hessian file")
    n3 = 3 * natoms
    # a number takes at least 2 bytes with its separator: a file too small for a triangle is cut
    if path.stat().st_size < n3 * (n3 + 1):
        raise InputError(f"too small for the Hessian of {natoms} atoms ({n3} x {n3} numbers)",
                         file=str(path))
    try:
        text = path.read_text()
    except UnicodeDecodeError:
        raise InputError("not a text file (a plain-number Hessian expected)", file=str(path)) from None
    values = []
    for lineno, line in enumerate(text.splitlines(), 1):
        if not line.strip() or line.lstrip().startswith("$"):
            continue
        try:
            values += [float(v.replace("D", "E").replace("d", "e")) for v in line.split()]
        except ValueError:
            raise InputError(f"line {lineno}: not a list of numbers", file=str(path)) from None
    h = square_hessian(values, natoms, file=str(path))
    if not np.all(np.isfinite(h)):
        raise InputError("the Hessian holds NaN or infinite values", file=str(path))
    return h * HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]


def _energy_file(path: Path):
    """(symbols, positions [Angstrom], energy [J/mol] or None) of a single-point output file."""
    from tstrate.io.qcschema import looks_like_json, read_qcschema

    if looks_like_json(path):
        res = read_qcschema(path)
        return res.symbols, res.positions_A, res.energy_J_per_mol
    parsed = _ccread(path)
    data = parsed.data
    if data is None or getattr(data, "atomnos", None) is None:
        why = f" (cclib: {parsed.error})" if parsed.error else ""
        raise InputError(f"cclib cannot read the single-point file{why}", file=str(path),
                         field="single_point",
                         hint="give the energy as 'VALUE UNIT', or a QCSchema JSON result")
    _check_finished(data, str(path))
    from ase.data import chemical_symbols

    symbols = tuple(chemical_symbols[int(z)] for z in data.atomnos)
    coords = getattr(data, "atomcoords", None)
    positions = None if coords is None or not len(coords) else np.asarray(coords[-1], dtype=float)
    return symbols, positions, last_energy_J_per_mol(data, file=str(path))


def single_point_J_per_mol(value, *, symbols=None, positions_A=None) -> float:
    """A single-point energy [J/mol] from a number (J/mol), ``"VALUE UNIT"`` (unit in any case) or
    an output file. With ``symbols`` the file must hold the same atoms in the same order; with
    ``positions_A`` too, a geometry further than :data:`SINGLE_POINT_RMSD_WARN_A` is warned about."""
    if isinstance(value, (int, float, np.floating)):
        return float(value)
    text = str(value).strip()
    parts = text.split()
    if len(parts) == 2 and energy_unit(parts[1]) in ENERGY_UNITS_J_PER_MOL:
        try:
            return float(energy_to_J_per_mol(float(parts[0]), parts[1], field="single_point"))
        except ValueError:
            raise InputError(f"single point {text!r} is not 'VALUE UNIT'",
                             field="single_point") from None
    path = Path(text)
    if not path.exists():
        raise InputError(f"single point {text!r} is neither 'VALUE UNIT' (units: "
                         f"{', '.join(ENERGY_UNITS_J_PER_MOL)}) nor an existing file",
                         field="single_point")
    from tstrate.io.files import checked_input_file

    path = checked_input_file(path, max_bytes=MAX_OUTPUT_BYTES, what="single-point file")
    sp_symbols, sp_positions, energy = _energy_file(path)
    if energy is None:
        raise InputError("no energy found in the single-point file", file=str(path),
                         field="single_point")
    if symbols is not None and tuple(sp_symbols) != tuple(symbols):
        raise InputError(f"the single-point file holds {_formula(sp_symbols)} ({len(sp_symbols)} atoms), "
                         f"the frequency job {_formula(symbols)} ({len(symbols)} atoms); the atoms must be "
                         "the same, in the same order", file=str(path), field="single_point")
    if positions_A is not None and sp_positions is not None and len(symbols or ()) > 1:
        from tstrate.geometry import kabsch_rmsd

        rmsd = kabsch_rmsd(np.asarray(positions_A), sp_positions)
        if rmsd > SINGLE_POINT_RMSD_WARN_A:
            log.warning("%s: the single point's geometry is %.3f Angstrom (RMSD) from the frequency job's",
                        path, rmsd)
    return energy


def _formula(symbols) -> str:
    from collections import Counter

    counts = Counter(symbols)
    return "".join(f"{el}{counts[el] if counts[el] > 1 else ''}" for el in sorted(counts))


def _check_finished(data, file: str) -> None:
    """Refuse a job that cclib's parser marks as not ended normally, and a file without atoms."""
    meta = getattr(data, "metadata", {}) or {}
    atomnos = getattr(data, "atomnos", None)
    if atomnos is None or not np.size(atomnos):
        raise InputError("cclib finds no atoms: the file is cut in its header or geometry, or is not "
                         "a complete output", file=file)
    package = str(meta.get("package", ""))
    if package in CCLIB_SUCCESS_AWARE and meta.get("success") is False:
        raise InputError(f"the {package} job did not end normally (cut, aborted or failed; cclib finds "
                         "no normal termination)", file=file,
                         hint="rerun the job to completion; an unfinished job's numbers are not used")


def _drop_rigid_modes(freqs: np.ndarray, nmodes: int, file: str) -> np.ndarray:
    if len(freqs) <= nmodes:
        return freqs
    order = np.argsort(np.abs(freqs))
    dropped = freqs[order[:len(freqs) - nmodes]]
    if np.any(np.abs(dropped) > RIGID_MODE_LIMIT_CM1):
        raise InputError(f"{len(freqs)} frequencies for {nmodes} vibrations, and the extra ones "
                         f"({np.round(dropped, 1).tolist()} cm-1) are not near zero", file=file,
                         field="frequencies")
    return np.sort(freqs[np.sort(order[len(freqs) - nmodes:])])


def _levels_warning(data) -> str | None:
    meta = getattr(data, "metadata", {}) or {}
    methods = [str(m) for m in meta.get("methods", []) or []]
    distinct = list(dict.fromkeys(methods))
    if (len(distinct) == 2 and distinct[0] in ("HF", "DFT")
            and methods.count(distinct[0]) == methods.count(distinct[1])):
        return None  # every correlated calculation on its own reference (MP2 on HF): one level
    if len(distinct) > 1:
        return (f"the file holds jobs at several levels ({', '.join(distinct)}); geometry and frequencies "
                "are the frequency job's, the energy is the file's last; give --single-point when that is "
                "not the level wanted")
    return None


class _Parsed:
    """What one file gives, before the species is built."""

    def __init__(self):
        self.symbols = self.positions = self.energy = self.freqs = self.hess = None
        self.charge = self.multiplicity = None
        self.prov: dict = {}
        self.warnings: list[str] = []


def _from_cclib(data, file: str) -> _Parsed:
    import cclib
    from ase.data import chemical_symbols

    _check_finished(data, file)
    out = _Parsed()
    out.symbols = [chemical_symbols[int(z)] for z in data.atomnos]
    coords = getattr(data, "atomcoords", None)
    if coords is not None and len(coords) and np.shape(coords[-1]) == (len(out.symbols), 3):
        out.positions = np.asarray(coords[-1], dtype=float)
    out.energy = _frequency_job_energy(data, Path(file), out)
    if getattr(data, "vibfreqs", None) is not None:
        out.freqs = np.asarray(data.vibfreqs, dtype=float).ravel()
        if not np.all(np.isfinite(out.freqs)):
            raise InputError("the file's frequencies are not finite numbers", file=file,
                             field="frequencies")
    meta = getattr(data, "metadata", {}) or {}
    if getattr(data, "hessian", None) is not None:
        out.hess = np.asarray(data.hessian, dtype=float)
        masses = getattr(data, "atommasses", None)
        if meta.get("package") == "NWChem" and masses is not None and len(masses) == len(out.symbols):
            # cclib 1.8 keeps NWChem's MASS-WEIGHTED NUCLEAR HESSIAN (hartree/bohr^2/kamu):
            # un-mass-weighted with the masses NWChem printed (u), then checked like any Hessian
            s = np.sqrt(np.repeat(np.asarray(masses, dtype=float), 3))
            if out.hess.shape == (s.size, s.size):
                out.hess = out.hess * np.outer(s, s) * 1e-3
                out.prov["hessian"] = ("NWChem's mass-weighted Hessian (hartree/bohr^2/kamu) multiplied "
                                       "by the square roots of its printed masses")
    if getattr(data, "charge", None) is not None:
        out.charge = int(data.charge)
    if getattr(data, "mult", None) is not None:
        out.multiplicity = int(data.mult)
    out.prov.update({
        "program": f"{meta.get('package', 'unknown')} {meta.get('package_version', '')}".strip(),
        "method": ", ".join(dict.fromkeys(str(m) for m in meta.get("methods", []))) or "unknown",
        "reader": f"tstrate.io.qcout via cclib {cclib.__version__}",
    })
    warning = _levels_warning(data)
    if warning:
        out.warnings.append(warning)
    return out


def _from_qcschema(path: Path) -> _Parsed:
    from tstrate.io.qcschema import read_qcschema

    res = read_qcschema(path)
    if res.driver != "hessian":
        raise InputError(f"a QCSchema {res.driver!r} result has no Hessian; a species needs one "
                         "(driver 'hessian')", file=str(path), field="driver",
                         hint="give it as --single-point instead")
    out = _Parsed()
    out.symbols, out.positions = list(res.symbols), res.positions_A
    out.energy, out.hess = res.energy_J_per_mol, res.hessian_hartree_bohr2
    out.charge, out.multiplicity = res.charge, res.multiplicity
    out.prov.update({k: v for k, v in res.provenance.items() if k != "source"})
    return out


def _from_ase(path: Path, cclib_error: str | None) -> _Parsed:
    import warnings

    import ase.io

    file = str(path)
    try:
        with warnings.catch_warnings(), np.errstate(all="ignore"):
            warnings.simplefilter("ignore")
            atoms = ase.io.read(file, index=-1)
    except Exception as exc:  # neither cclib nor ASE knows the file
        if cclib_error:
            raise InputError(f"cclib stopped on this file ({cclib_error}) and ASE cannot read it as a "
                             "geometry"[:400], file=file,
                             hint="other routes: a QCSchema JSON result of the job; or --geometry "
                                  "FILE with --hessian FILE (plain numbers, hartree/bohr^2)") from None
        raise InputError(f"neither cclib nor ASE can read this file ({' '.join(str(exc).split())})"[:300],
                         file=file) from None
    out = _Parsed()
    out.symbols, out.positions = list(atoms.get_chemical_symbols()), atoms.positions.copy()
    if atoms.calc is not None:
        try:
            out.energy = float(energy_to_J_per_mol(atoms.get_potential_energy(), "eV"))
        except Exception:  # the file has no energy
            out.energy = None
    out.prov["reader"] = "tstrate.io.qcout via ASE"
    if cclib_error:
        out.warnings.append(f"cclib stopped on this file ({cclib_error}); read as a geometry by ASE")
    return out


def _geometry_of(path, symbols, file: str):
    """Coordinates [Angstrom] from a geometry file ASE reads, with its atoms checked."""
    import ase.io

    from tstrate.io.files import checked_input_file

    gpath = checked_input_file(path, max_bytes=MAX_OUTPUT_BYTES, what="geometry file")
    try:
        atoms = ase.io.read(str(gpath), index=-1)
    except Exception as exc:
        raise InputError(f"ASE cannot read this geometry ({' '.join(str(exc).split())})"[:300],
                         file=str(gpath)) from None
    if symbols is not None and list(atoms.get_chemical_symbols()) != list(symbols):
        raise InputError(f"the geometry holds {_formula(atoms.get_chemical_symbols())}, the output "
                         f"{_formula(symbols)}; the atoms must be the same, in the same order",
                         file=str(gpath))
    return list(atoms.get_chemical_symbols()), atoms.positions.copy()


def read_output(path, *, name: str | None = None, kind: str | None = None,
                charge: int | None = None, multiplicity: int | None = None,
                single_point=None, hessian_file=None, geometry_file=None,
                frequency_scale: float = 1.0, allow_imaginary_below_cm1: float = 0.0,
                accept_unusual_wavenumbers: bool = False, max_file_bytes: int = MAX_OUTPUT_BYTES,
                **species_options) -> Species:
    """Species from a quantum-chemistry output (cclib), a QCSchema JSON result (qcelemental) or a
    geometry file (ASE); see the module docstring for what is read and what is refused.

    kind: "minimum"/"transition_state"; default from the count of imaginary modes larger than
    ``allow_imaginary_below_cm1`` [cm^-1] (smaller ones are tolerated in a minimum).
    single_point: high-level energy overriding the file's (see :func:`single_point_J_per_mol`).
    hessian_file: plain-number Hessian [hartree/bohr^2] used instead of the file's frequencies.
    geometry_file: coordinates for an output that has none (a Hessian-only output), or for a
    Hessian file.
    charge, multiplicity: required when the file gives none (a geometry file never does).
    max_file_bytes: files larger than this are refused before they are read.
    Other keywords go to :func:`tstrate.io.species.build_species`.
    """
    from tstrate.geometry import is_linear
    from tstrate.io.files import checked_input_file
    from tstrate.io.qcschema import looks_like_json
    from tstrate.io.species import build_species
    from tstrate.physics.vibrations import default_masses_amu, vibrational_analysis

    path = checked_input_file(path, max_bytes=max_file_bytes, what="output file",
                              raise_with="--max-file-mib (max_file_bytes= in Python)")
    file = str(path)
    if looks_like_json(path):
        parsed = _from_qcschema(path)
    else:
        cc = _ccread(path)
        if cc.data is not None:
            parsed = _from_cclib(cc.data, file)
        elif cc.error is not None and hessian_file is None:
            # cclib recognised the program and stopped: the file is an output, not a geometry
            raise InputError(f"cclib stopped on this file ({cc.error}): a cut or unfinished output, or "
                             "a program version cclib does not know", file=file,
                             hint="other routes: a QCSchema JSON result of the job (e.g. psi4 --json); "
                                  "or --geometry FILE with --hessian FILE (plain numbers, hartree/bohr^2)")
        else:
            parsed = _from_ase(path, cc.error)
    prov = {"source": file} | parsed.prov
    symbols, positions, hess, freqs = parsed.symbols, parsed.positions, parsed.hess, parsed.freqs
    if geometry_file is not None:
        symbols, positions = _geometry_of(geometry_file, symbols, file)
        prov["geometry"] = f"read from {geometry_file}"
    if positions is None:
        raise InputError("the file holds no coordinates", file=file, field="geometry",
                         hint="pair it with a geometry file: --geometry FILE (geometry_file= in Python)")
    if charge is None:
        charge = parsed.charge
    if multiplicity is None:
        multiplicity = parsed.multiplicity
    if charge is None or multiplicity is None:
        missing = " and ".join(w for w, v in (("charge", charge), ("multiplicity", multiplicity)) if v is None)
        raise InputError(f"the file gives no {missing}", file=file, field="charge" if charge is None else "multiplicity",
                         hint="give --charge and --multiplicity (charge=, multiplicity= in Python)")
    if hessian_file is not None:
        hess = read_hessian_file(hessian_file, len(symbols))
        prov["hessian"] = f"read from {hessian_file}"
    elif hess is not None:
        hess = square_hessian(hess, len(symbols), file=file) * HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]

    masses = default_masses_amu(symbols)
    linear = species_options.pop("linear", None)
    lin = is_linear(positions, masses) if linear is None else bool(linear)
    nmodes = expected_mode_count(len(symbols), lin)
    if freqs is not None:
        freqs = _drop_rigid_modes(freqs, nmodes, file)
        if len(freqs) < nmodes:
            raise InputError(f"the file lists {len(freqs)} vibrations; a {'linear' if lin else 'nonlinear'} "
                             f"species of {len(symbols)} atoms has {nmodes} (a partial or cut frequency job?)",
                             file=file, field="frequencies")
    hess_problem = None
    if hess is not None:
        from tstrate.model.species import hessian_problem

        hess_problem = hessian_problem(hess)
        if hess_problem is None and freqs is not None and len(freqs) == nmodes and nmodes:
            from_h = vibrational_analysis(hess, positions, masses, lin).frequencies_cm1
            scale = np.maximum(np.abs(freqs), 100.0)
            worst = float(np.max(np.abs(np.sort(from_h) - np.sort(freqs)) / scale))
            if worst > HESSIAN_CHECK_RTOL:
                hess_problem = (f"it does not reproduce the file's frequencies (off by up to {100 * worst:.0f} %: "
                                "another unit, coordinate system or geometry)")
        if hess_problem is not None:
            if freqs is None or hessian_file is not None:
                raise InputError(f"the Hessian cannot be used: {hess_problem}",
                                 file=str(hessian_file or file), field="hessian")
            if species_options.get("isotopes"):
                raise InputError(f"isotopes need a Hessian, and the file's cannot be used: {hess_problem}",
                                 file=file, field="hessian")
            parsed.warnings.append(f"the file's Hessian is not used ({hess_problem}); the printed "
                                   "frequencies are; isotopologues of this species need a Hessian")
            prov["hessian"] = "not used: " + hess_problem
            hess = None
    if freqs is not None and hess is not None:
        freqs = None  # the Hessian gives them (and allows isotopes)
    if freqs is None and hess is None:
        raise InputError("the file holds no vibrational frequencies or Hessian", file=file,
                         field="frequencies_cm1",
                         hint="give a plain-number Hessian file: tstrate compute read --hessian FILE "
                              "(hessian_file= in Python), or a QCSchema hessian result")
    sp = None
    if single_point is not None:
        sp = single_point_J_per_mol(single_point, symbols=symbols, positions_A=positions)
        prov["single_point"] = str(single_point)
    energy = parsed.energy
    if energy is None and sp is None:
        raise InputError("the file holds no electronic energy", file=file, field="energy",
                         hint="give one with --single-point 'VALUE UNIT' or FILE (single_point= in Python)")
    if kind is None:
        f = freqs if freqs is not None else vibrational_analysis(hess, positions, masses, lin).frequencies_cm1
        f = np.asarray(f)
        big_imag = int(np.sum(f < -float(allow_imaginary_below_cm1)))
        kind = "transition_state" if big_imag == 1 else "minimum"
    for w in parsed.warnings:
        log.warning("%s: %s", file, w)
    if parsed.warnings:
        prov["read_warnings"] = "; ".join(parsed.warnings)
    prov["conventions"] = ("masses: most common isotope of each element (RDKit periodic table); symmetry detected within "
                           f"{species_options.get('symmetry_tolerance_A', _default_tolerance()):g} Angstrom")
    return build_species(
        name or Path(file).stem, symbols, positions, kind=kind,
        charge=charge, multiplicity=multiplicity,
        frequencies_cm1=freqs, hessian_J_per_m2=hess,
        energy_J_per_mol=sp if sp is not None else energy, geometry_energy_J_per_mol=energy,
        frequency_scale=frequency_scale, linear=linear, provenance=prov, source=file,
        allow_imaginary_below_cm1=allow_imaginary_below_cm1,
        accept_unusual_wavenumbers=accept_unusual_wavenumbers, **species_options)


def _default_tolerance() -> float:
    from tstrate.geometry import DEFAULT_TOLERANCE_A

    return DEFAULT_TOLERANCE_A
