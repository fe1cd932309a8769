"""Species from quantum-chemistry output files (through cclib) and geometry files (through ASE).

What is taken from an output file that cclib parses (``cclib.io.ccread``):

- geometry: the last set of coordinates (``atomcoords[-1]``) [Angstrom];
- energy: the last total energy at the highest correlated level the file
  holds (``ccenergies``, else ``mpenergies``, else ``scfenergies``). cclib 1.x
  stores these in eV (it converts from hartree while parsing; checked against
  the hartree value an xtb output prints), so they are converted here
  explicitly from eV to J/mol. Other cclib major versions are refused rather
  than guessed;
- frequencies: ``vibfreqs`` [cm^-1]; programs that print translations and
  rotations as near-zero modes (xtb does) have those dropped, keeping the
  3N-6 (3N-5) modes of largest magnitude;
- Hessian: ``hessian`` where the file has one, taken as hartree/bohr^2 (the
  atomic units the programs write and cclib keeps); it must reproduce the
  file's own frequencies within 2 %, else the unit is wrong and reading stops.
  A separate Hessian file of numbers only (xtb's ``hessian`` file, hartree/bohr^2)
  may be given instead.

Any geometry or trajectory ASE reads is accepted too (last frame; its energy
[eV] when the file carries one); it then needs a Hessian file for the modes.

A separate high-level single-point energy overrides the geometry-level energy:
a number with a unit (``"-264.12 hartree"``), a value already in J/mol, or
another output file whose last energy is used.
"""

from __future__ import annotations

import logging
from pathlib import Path

import numpy as np

from tstrate.errors import InputError
from tstrate.model import Species
from tstrate.geometry import expected_mode_count
from tstrate.physics.vibrations import HESSIAN_UNITS_J_PER_M2
from tstrate.units import ENERGY_UNITS_J_PER_MOL, energy_to_J_per_mol

log = logging.getLogger(__name__)

#: largest |wavenumber| of a translation/rotation mode that is dropped from a file's list [cm^-1]
RIGID_MODE_LIMIT_CM1 = 60.0
#: agreement needed between a file's frequencies and those of its Hessian (relative)
HESSIAN_CHECK_RTOL = 0.02


def cclib_energy_unit() -> str:
    """Unit of cclib's energy attributes for the installed cclib (eV for 1.x)."""
    import cclib

    major = int(str(cclib.__version__).split(".")[0])
    if major == 1:
        return "eV"
    raise InputError(f"cclib {cclib.__version__}: the energy unit of this cclib version has not been "
                     "checked by tstrate", hint="install cclib 1.8 (pip install 'cclib>=1.8,<2')")


def _ccread(path: Path):
    """cclib's parse of ``path``, or None when cclib does not know the file (kept quiet)."""
    import contextlib
    import io

    import cclib

    quiet = io.StringIO()
    cclog = logging.getLogger("cclib")
    level = cclog.level
    cclog.setLevel(logging.CRITICAL)
    try:
        with contextlib.redirect_stdout(quiet), contextlib.redirect_stderr(quiet):
            data = cclib.io.ccread(str(path), loglevel=logging.CRITICAL)
    except Exception as exc:  # cclib raises many kinds on unexpected text
        log.debug("cclib failed on %s: %s", path, exc)
        return None
    finally:
        cclog.setLevel(level)
    if data is None or getattr(data, "atomcoords", None) is None:
        return None
    return data


def last_energy_J_per_mol(data, *, file=None) -> float | None:
    """Last total energy of parsed cclib ``data`` [J/mol] (highest correlated level present)."""
    unit = cclib_energy_unit()
    for attr in ("ccenergies", "mpenergies", "scfenergies"):
        values = getattr(data, attr, None)
        if values is not None and np.size(values):
            last = np.asarray(values, dtype=float)[-1]
            value = float(np.ravel(last)[-1])  # mpenergies: rows of orders; take the highest
            if not np.isfinite(value):
                raise InputError(f"the {attr} in the file are not finite", file=file)
            return float(energy_to_J_per_mol(value, unit))
    return None


def read_hessian_file(path, natoms: int) -> np.ndarray:
    """A Cartesian Hessian written as plain numbers [hartree/bohr^2] (xtb's ``hessian`` file).

    Lines starting with ``$`` (section markers) are skipped. Returns J/m^2.
    """
    path = Path(path)
    if not path.exists():
        raise InputError("Hessian file does not exist", file=str(path))
    if path.is_dir():
        raise InputError("is a folder, not a Hessian file", file=str(path))
    try:
        text = path.read_text()
    except UnicodeDecodeError:
        raise InputError("not a text file (a plain-number Hessian expected)", file=str(path)) from None
    values = []
    for lineno, line in enumerate(text.splitlines(), 1):
        if not line.strip() or line.lstrip().startswith("$"):
            continue
        try:
            values += [float(v) for v in line.split()]
        except ValueError:
            raise InputError(f"line {lineno}: not a list of numbers", file=str(path)) from None
    n3 = 3 * natoms
    if len(values) != n3 * n3:
        raise InputError(f"{len(values)} numbers; {natoms} atoms need {n3} x {n3} = {n3 * n3}",
                         file=str(path))
    h = np.array(values).reshape(n3, n3)
    return 0.5 * (h + h.T) * HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]


def single_point_J_per_mol(value) -> float:
    """A single-point energy [J/mol] from a number (J/mol), ``"VALUE UNIT"`` or an output file."""
    if isinstance(value, (int, float, np.floating)):
        return float(value)
    text = str(value).strip()
    parts = text.split()
    if len(parts) == 2 and parts[1] in ENERGY_UNITS_J_PER_MOL:
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
    data = _ccread(path)
    energy = None if data is None else last_energy_J_per_mol(data, file=str(path))
    if energy is None:
        raise InputError("no energy found in the single-point file", file=str(path),
                         field="single_point")
    return energy


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


def read_output(path, *, name: str | None = None, kind: str | None = None,
                charge: int | None = None, multiplicity: int | None = None,
                single_point=None, hessian_file=None, frequency_scale: float = 1.0,
                **species_options) -> Species:
    """Species from a quantum-chemistry output (cclib) or a geometry file (ASE).

    kind: "minimum"/"transition_state"; default from the count of imaginary modes.
    single_point: high-level energy overriding the file's (see :func:`single_point_J_per_mol`).
    hessian_file: plain-number Hessian [hartree/bohr^2] used instead of the file's frequencies.
    Other keywords go to :func:`tstrate.io.species.build_species`.
    """
    from tstrate.io.species import build_species
    from tstrate.geometry import is_linear
    from tstrate.physics.vibrations import default_masses_amu, vibrational_analysis

    path = Path(path)
    file = str(path)
    if not path.exists():
        raise InputError("output file does not exist", file=file)
    data = _ccread(path)
    prov = {"source": file}
    freqs = hess = None
    if data is not None:
        from ase.data import chemical_symbols

        symbols = [chemical_symbols[int(z)] for z in data.atomnos]
        positions = np.asarray(data.atomcoords[-1], dtype=float)
        energy = last_energy_J_per_mol(data, file=file)
        if getattr(data, "vibfreqs", None) is not None:
            freqs = np.asarray(data.vibfreqs, dtype=float)
        if getattr(data, "hessian", None) is not None:
            hess = np.asarray(data.hessian, dtype=float) * HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]
        charge = int(getattr(data, "charge", 0)) if charge is None else charge
        multiplicity = int(getattr(data, "mult", 1)) if multiplicity is None else multiplicity
        meta = getattr(data, "metadata", {}) or {}
        import cclib

        prov.update({
            "program": f"{meta.get('package', 'unknown')} {meta.get('package_version', '')}".strip(),
            "method": ", ".join(str(m) for m in meta.get("methods", [])) or "unknown",
            "reader": f"tstrate.io.qcout via cclib {cclib.__version__}",
        })
    else:
        import ase.io

        try:
            atoms = ase.io.read(file, index=-1)
        except Exception as exc:  # neither cclib nor ASE knows the file
            raise InputError(f"neither cclib nor ASE can read this file ({exc})"[:300],
                             file=file) from None
        symbols, positions = list(atoms.get_chemical_symbols()), atoms.positions.copy()
        energy = None
        if atoms.calc is not None:
            try:
                energy = float(energy_to_J_per_mol(atoms.get_potential_energy(), "eV"))
            except Exception:  # the file has no energy
                energy = None
        prov.update({"reader": "tstrate.io.qcout via ASE"})
    if hessian_file is not None:
        hess = read_hessian_file(hessian_file, len(symbols))
        prov["hessian"] = f"read from {hessian_file}"

    masses = default_masses_amu(symbols)
    linear = species_options.pop("linear", None)
    lin = is_linear(positions, masses) if linear is None else bool(linear)
    nmodes = expected_mode_count(len(symbols), lin)
    if freqs is not None:
        freqs = _drop_rigid_modes(freqs, nmodes, file)
    if hess is not None and freqs is not None and len(freqs) == nmodes and nmodes:
        from_h = vibrational_analysis(hess, positions, masses, lin).frequencies_cm1
        scale = np.maximum(np.abs(freqs), 100.0)
        if np.max(np.abs(np.sort(from_h) - np.sort(freqs)) / scale) > HESSIAN_CHECK_RTOL:
            raise InputError("the Hessian does not reproduce the file's frequencies (wrong unit "
                             "or a Hessian of another geometry)", file=file, field="hessian")
    if freqs is not None and hess is not None:
        freqs = None  # the Hessian gives them (and allows isotopes)
    if freqs is None and hess is None:
        raise InputError("the file holds no vibrational frequencies or Hessian", file=file,
                         field="frequencies_cm1",
                         hint="give a plain-number Hessian file: tstrate compute read --hessian FILE "
                              "(hessian_file= in Python)")
    sp = None if single_point is None else single_point_J_per_mol(single_point)
    if sp is not None:
        prov["single_point"] = str(single_point)
    if kind is None:
        f = freqs if freqs is not None else (
            vibrational_analysis(hess, positions, masses, lin).frequencies_cm1
            if hess is not None else np.array([]))
        kind = "transition_state" if np.sum(np.asarray(f) < 0) == 1 else "minimum"
    return build_species(
        name or Path(file).stem, symbols, positions, kind=kind,
        charge=0 if charge is None else charge, multiplicity=1 if multiplicity is None else multiplicity,
        frequencies_cm1=freqs, hessian_J_per_m2=hess,
        energy_J_per_mol=sp if sp is not None else energy, geometry_energy_J_per_mol=energy,
        frequency_scale=frequency_scale, linear=linear, provenance=prov, source=file,
        **species_options)
