"""Refinement of stationary points with PySCF: DFT or HF single points, optional DFT
re-optimisation with geomeTRIC, Hessians, and frozen-core CCSD(T).

Levels
------
The default level is wB97X-D3(BJ)/def2-TZVP with density fitting: the range-separated
hybrid wB97X (J.-D. Chai, M. Head-Gordon, J. Chem. Phys. 128, 084106 (2008)) with the
D3 dispersion correction and Becke-Johnson damping (S. Grimme, S. Ehrlich, L. Goerigk,
J. Comput. Chem. 32, 1456 (2011); wB97X parameters: A. Najibi, L. Goerigk, J. Chem.
Theory Comput. 14, 5725 (2018)), computed through the ``pyscf-dispersion`` package, and
the def2-TZVP basis (F. Weigend, R. Ahlrichs, Phys. Chem. Chem. Phys. 7, 3297 (2005)).
(wB97X-D itself is not available in PySCF.) Any PySCF functional name (``B3LYP-D3BJ``,
``M06-2X``, ``wB97M-V``, ...) or ``HF`` and any basis PySCF knows may be chosen.
Open shells (multiplicity > 1) use UKS/UHF; closed shells RKS/RHF.

Coupled cluster: CCSD(T) with frozen core (PySCF's ``chemcore`` count) on an RHF/UHF
reference without density fitting, in one basis (``cc-pVTZ``) or extrapolated from two
(``cc-pVTZ:cc-pVQZ``): the HF energy of the larger basis, the correlation energy as
E_X = E_CBS + A X^-3 (T. Helgaker, W. Klopper, H. Koch, J. Noga, J. Chem. Phys. 106,
9639 (1997)). Its cost grows as o^3 v^4; the estimate printed before a run and the size
cap (basis functions) guard against runs that cannot finish.

Geometry and Hessian
--------------------
A Hessian belongs to its level's own stationary point: a DFT Hessian at a GFN2-xTB
geometry gets the soft modes wrong. So Hessians are computed only after a
re-optimisation at the same level. Analytic where PySCF has them, else central
finite differences of analytic gradients. A transition state is optimised with
geomeTRIC (L.-P. Wang, C. Song, J. Chem. Phys. 144, 214108 (2016); ``transition=True``)
seeded with the species' own (e.g. GFN2-xTB) Cartesian Hessian; the result must have
exactly one imaginary mode and is verified, like the semi-empirical route, by
minimising both ways along it at the same level: the two minima must differ in bonding,
and match the minima the species file records (``reactant_side_geometry`` /
``product_side_geometry``) when it records them.

Energies inside are hartree (PySCF's unit) and leave as J/mol; geometries in Angstrom;
Hessians hartree/bohr^2 inside, J/m^2 in species.
"""

from __future__ import annotations

import logging
import math
import os
import re
import time
import warnings
from dataclasses import asdict, dataclass, field

import numpy as np

from tstrate.compute import connectivity as conn
from tstrate.compute.cache import Cache, cache_key
from tstrate.errors import InputError
from tstrate.model import Species
from tstrate.physics.vibrations import HESSIAN_UNITS_J_PER_M2
from tstrate.units import ENERGY_UNITS_J_PER_MOL

log = logging.getLogger(__name__)

DEFAULT_METHOD = "wB97X-D3BJ"
DEFAULT_BASIS = "def2-TZVP"
#: most basis functions for a CCSD(T) run unless the user raises it (cc-pVTZ of a
#: 9-atom C/O/H system has 206: about 10 min and 4 GB on 2 cores)
DEFAULT_CC_MAX_BASIS = 220
#: largest atomic displacement along the imaginary mode before minimising downhill [Angstrom]
PUSH_A = 0.15
#: imaginary modes of a re-optimised minimum below this are numerical noise in flat
#: torsions (common practice; the semi-empirical route uses the same bound) [cm^-1]
TOLERATED_IMAGINARY_CM1 = 20.0
HARTREE_J_PER_MOL = ENERGY_UNITS_J_PER_MOL["hartree"]
_CC_METHODS = ("CCSD(T)", "CCSD")

# rough cost model, measured on this project's 2-core machine (see docs/refinement.md):
# a hybrid-DFT single point with density fitting of 222 basis functions took 16 s;
# frozen-core CCSD(T)/cc-pVTZ with o = 12 active occupied and v = 132 virtual orbitals 100 s
_DFT_SECONDS_AT_222 = 16.0
_CC_SECONDS_PER_O3V4 = 100.0 / (12 ** 3 * 132 ** 4)


@dataclass(frozen=True)
class Level:
    """A PySCF level of theory (everything here enters the cache key).

    method: PySCF functional (``wB97X-D3BJ``, ``B3LYP-D3BJ``, ``M06-2X`` ...), ``HF``,
        ``CCSD(T)`` or ``CCSD``.
    basis: basis set name; for coupled cluster also ``SMALL:LARGE`` (e.g. ``cc-pVTZ:cc-pVQZ``)
        for a two-point extrapolation of the correlation energy.
    density_fit: density fitting of the SCF (ignored for coupled cluster).
    conv_tol_hartree: SCF energy convergence [hartree].
    grid_level: PySCF DFT integration grid level (0-9).
    max_cycle: SCF iteration limit.
    frozen_core: freeze core orbitals in coupled cluster.
    """

    method: str = DEFAULT_METHOD
    basis: str = DEFAULT_BASIS
    density_fit: bool = True
    conv_tol_hartree: float = 1e-10
    grid_level: int = 3
    max_cycle: int = 200
    frozen_core: bool = True

    def __post_init__(self):
        if not self.method or not self.basis:
            raise InputError("a level needs a method and a basis", field="method")
        if ":" in self.basis and not self.coupled_cluster:
            raise InputError(f"basis {self.basis!r}: two-point extrapolation is for coupled "
                             "cluster only", field="basis")
        if self.coupled_cluster and ":" in self.basis:
            cardinals(self.basis)
        if not 0 < self.conv_tol_hartree <= 1e-5:
            raise InputError("SCF convergence must lie in (0, 1e-5] hartree",
                             field="conv_tol_hartree")
        if not 0 <= int(self.grid_level) <= 9:
            raise InputError("grid level must lie in 0-9", field="grid_level")
        if int(self.max_cycle) < 1:
            raise InputError("the SCF needs at least one cycle", field="max_cycle")

    @property
    def coupled_cluster(self) -> bool:
        return self.method.upper() in _CC_METHODS

    @property
    def is_hf(self) -> bool:
        return self.method.upper() == "HF"

    @property
    def label(self) -> str:
        """``method/basis`` as a level is usually written (``//`` geometries are added elsewhere)."""
        basis = self.basis.replace(":", "->CBS(") + ")" if ":" in self.basis else self.basis
        fc = " (frozen core)" if self.coupled_cluster and self.frozen_core else ""
        df = " (density fitting)" if self.density_fit and not self.coupled_cluster else ""
        return f"{self.method}/{basis}{fc}{df}"

    def as_dict(self) -> dict:
        return asdict(self)


def parse_level(text: str, *, field_name: str = "level", **kw) -> Level:
    """``METHOD/BASIS`` -> Level (``kw``: other Level fields)."""
    if "/" not in text:
        raise InputError(f"level {text!r} is not METHOD/BASIS", field=field_name,
                         hint=f"e.g. {DEFAULT_METHOD}/{DEFAULT_BASIS}")
    method, basis = text.split("/", 1)
    return Level(method=method.strip(), basis=basis.strip(), **kw)


def cardinals(basis: str) -> tuple[tuple[str, int], tuple[str, int]]:
    """The two bases of ``SMALL:LARGE`` with their cardinal numbers (D=2, T=3, Q=4, 5, 6)."""
    parts = [p.strip() for p in basis.split(":")]
    if len(parts) != 2:
        raise InputError(f"basis {basis!r}: give two bases as SMALL:LARGE", field="basis")
    out = []
    for p in parts:
        m = re.search(r"p?V([DTQ56])Z", p, re.IGNORECASE)
        if not m:
            raise InputError(f"basis {p!r}: no cardinal number (DZ, TZ, QZ, 5Z) found for the "
                             "extrapolation", field="basis", hint="use correlation-consistent "
                             "bases, e.g. cc-pVTZ:cc-pVQZ")
        out.append((p, {"D": 2, "T": 3, "Q": 4, "5": 5, "6": 6}[m.group(1).upper()]))
    if out[0][1] >= out[1][1]:
        raise InputError(f"basis {basis!r}: the second basis must be the larger", field="basis")
    return out[0], out[1]


def package_versions() -> dict[str, str]:
    from importlib.metadata import PackageNotFoundError, version

    out = {}
    for pkg in ("tstrate", "pyscf", "pyscf-dispersion", "geometric", "numpy"):
        try:
            out[pkg] = version(pkg)
        except PackageNotFoundError:
            out[pkg] = "not installed"
    return out


def _need_pyscf():
    from importlib.util import find_spec

    if find_spec("pyscf") is None:
        raise InputError("refinement needs PySCF", hint="pip install 'tstrate[compute]'") from None


def set_threads(n: int) -> None:
    """PySCF's OpenMP threads (one is best on a shared 2-core machine)."""
    from pyscf import lib

    lib.num_threads(int(n))


# ---- molecules and SCF ---------------------------------------------------------------

def build_mol(symbols, positions_A, *, charge: int, multiplicity: int, basis: str, label: str = ""):
    """A PySCF Mole in Angstrom (spin = multiplicity - 1); bad basis or charge is an InputError."""
    _need_pyscf()
    from pyscf import gto

    if int(multiplicity) < 1:
        raise InputError(f"multiplicity {multiplicity} of {label}: must be at least 1",
                         field="multiplicity")
    mol = gto.Mole()
    mol.atom = [(s, tuple(float(x) for x in p)) for s, p in zip(symbols, np.asarray(positions_A))]
    mol.unit = "Angstrom"
    mol.charge = int(charge)
    mol.spin = int(multiplicity) - 1
    mol.basis = basis
    mol.verbose = 0
    mol.symmetry = False
    try:
        with warnings.catch_warnings():  # PySCF suggests another package for unknown bases
            warnings.simplefilter("ignore", UserWarning)
            mol.build()
    except RuntimeError as exc:  # an unknown basis, or electron count and spin of different parity
        if "basis" in str(exc).lower():
            raise InputError(f"{label}: basis {basis!r} is unknown to PySCF for these elements",
                             field="basis") from None
        raise InputError(f"{label}: charge {charge} and multiplicity {multiplicity} do not fit "
                         f"its electrons ({exc})", field="multiplicity") from None
    except (KeyError, ValueError, OSError, NotImplementedError) as exc:
        raise InputError(f"{label}: basis {basis!r} is unknown to PySCF for these elements "
                         f"({type(exc).__name__}: {exc})", field="basis") from None
    return mol


def make_scf(mol, level: Level, *, reference_only: bool = False):
    """The SCF object of ``level`` (HF reference for coupled cluster)."""
    from pyscf import dft, scf

    open_shell = mol.spin != 0
    if level.is_hf or level.coupled_cluster or reference_only:
        mf = scf.UHF(mol) if open_shell else scf.RHF(mol)
    else:
        mf = dft.UKS(mol) if open_shell else dft.RKS(mol)
        try:
            mf.xc = level.method
            mf.grids.level = int(level.grid_level)
            dft.libxc.parse_xc(mf.xc)
        except (KeyError, ValueError, NotImplementedError) as exc:
            raise InputError(f"PySCF does not know the functional {level.method!r} ({exc})",
                             field="method", hint="use a PySCF/libxc name, e.g. wB97X-D3BJ, "
                             "B3LYP-D3BJ, M06-2X, wB97M-V") from None
    if level.density_fit and not level.coupled_cluster:
        mf = mf.density_fit()
    mf.conv_tol = float(level.conv_tol_hartree)
    mf.max_cycle = int(level.max_cycle)
    mf.verbose = 0
    return mf


def run_scf(mf, *, label: str) -> dict:
    """Run ``mf``; a second-order (Newton) SCF is tried when the first does not converge.
    Returns the convergence record; non-convergence is an InputError."""
    t0 = time.perf_counter()
    try:
        e = mf.kernel()
    except NotImplementedError as exc:
        raise InputError(f"{label}: PySCF cannot run this level ({exc})", field="method") from None
    except ImportError as exc:
        raise InputError(f"{label}: {exc}", field="method",
                         hint="dispersion corrections need pip install pyscf-dispersion") from None
    how = "DIIS"
    if not mf.converged:
        log.info("%s: SCF did not converge with DIIS; trying second-order SCF", label)
        mf2 = mf.newton()
        e = mf2.kernel(mf.make_rdm1())
        how = "DIIS, then second-order (Newton)"
        if not mf2.converged:
            raise InputError(f"the SCF of {label} did not converge in {mf.max_cycle} cycles "
                             f"(last energy {e:.8f} hartree)", field="max_cycle",
                             hint="check charge and multiplicity, or raise the cycle limit")
        for attr in ("mo_coeff", "mo_occ", "mo_energy", "e_tot", "converged"):
            setattr(mf, attr, getattr(mf2, attr))
    if hasattr(mf, "stability") and mf.mol.spin != 0:
        pass  # instabilities of open shells are not searched; noted in the documentation
    return {"energy_hartree": float(e), "converged": True, "scf": how,
            "seconds": time.perf_counter() - t0}


def n_basis_functions(symbols, basis: str, *, charge: int = 0, multiplicity: int = 1) -> int:
    """Number of basis functions of ``basis`` for the elements ``symbols`` (no SCF)."""
    pos = np.arange(3 * len(symbols), dtype=float).reshape(-1, 3) * 1.5
    return int(build_mol(symbols, pos, charge=charge, multiplicity=multiplicity,
                         basis=basis, label="basis count").nao_nr())


# ---- energies ----------------------------------------------------------------------

@dataclass(frozen=True)
class Energy:
    """An energy at one level: hartree, with its record (convergence, timing, parts)."""

    energy_hartree: float
    record: dict


def scf_energy(symbols, positions_A, *, charge: int, multiplicity: int, level: Level,
               label: str = "species") -> Energy:
    """DFT or HF energy [hartree] at ``level``."""
    mol = build_mol(symbols, positions_A, charge=charge, multiplicity=multiplicity,
                    basis=level.basis, label=label)
    mf = make_scf(mol, level)
    rec = run_scf(mf, label=label)
    rec.update(n_basis=int(mol.nao_nr()), reference="UKS/UHF" if mol.spin else "RKS/RHF")
    if not level.is_hf:
        rec["reference"] = "UKS" if mol.spin else "RKS"
    else:
        rec["reference"] = "UHF" if mol.spin else "RHF"
    return Energy(rec["energy_hartree"], rec)


@dataclass(frozen=True)
class CoupledClusterCost:
    """n_basis, active occupied and virtual orbitals (per spin, the larger count for open
    shells), estimated seconds and memory [GB] of the largest basis (rough, see the module)."""

    n_basis: int
    n_occupied_active: int
    n_virtual: int
    seconds: float
    memory_GB: float

    def text(self) -> str:
        return (f"{self.n_basis} basis functions, {self.n_occupied_active} active occupied and "
                f"{self.n_virtual} virtual orbitals: about {_human_seconds(self.seconds)} and "
                f"{self.memory_GB:.1f} GB (rough estimate)")


def _human_seconds(s: float) -> str:
    if s < 90:
        return f"{s:.0f} s"
    if s < 5400:
        return f"{s / 60:.0f} min"
    return f"{s / 3600:.1f} h"


def coupled_cluster_cost(symbols, *, charge: int, multiplicity: int, level: Level) -> CoupledClusterCost:
    """Estimated cost of a CCSD(T) run at ``level`` (sum over the bases of an extrapolation).

    Time o^3 v^4 scaled from a measured frozen-core CCSD(T)/cc-pVTZ run (100 s for o = 12,
    v = 132 on 2 cores); memory of the (mostly in-core) two-electron integrals
    2 nmo^4 bytes (3.7 GB measured for 206 orbitals). A rough guide, not a promise.
    """
    from pyscf.data import elements

    bases = [b for b, _ in cardinals(level.basis)] if ":" in level.basis else [level.basis]
    seconds, mem, last = 0.0, 0.0, None
    pos = np.arange(3 * len(symbols), dtype=float).reshape(-1, 3) * 1.5
    for b in bases:
        mol = build_mol(symbols, pos, charge=charge, multiplicity=multiplicity, basis=b,
                        label="cost estimate")
        nmo = mol.nao_nr()
        ncore = elements.chemcore(mol) if level.frozen_core else 0
        nocc = (mol.nelectron + mol.spin) // 2 - ncore
        nvir = nmo - nocc - ncore
        spin_factor = 3.0 if mol.spin else 1.0  # UCCSD(T) carries three spin blocks
        seconds += spin_factor * _CC_SECONDS_PER_O3V4 * nocc ** 3 * nvir ** 4
        mem = max(mem, spin_factor * 2.0 * nmo ** 4 / 1e9)
        last = (nmo, nocc, nvir)
    return CoupledClusterCost(last[0], last[1], last[2], seconds, mem)


def coupled_cluster_energy(symbols, positions_A, *, charge: int, multiplicity: int, level: Level,
                           max_basis_functions: int = DEFAULT_CC_MAX_BASIS,
                           label: str = "species") -> Energy:
    """Frozen-core CCSD(T) (or CCSD) energy [hartree]; two-point X^-3 extrapolation for
    ``SMALL:LARGE`` bases. Refused above ``max_basis_functions`` in the largest basis."""
    cost = coupled_cluster_cost(symbols, charge=charge, multiplicity=multiplicity, level=level)
    if cost.n_basis > max_basis_functions:
        raise InputError(f"{label}: {level.method}/{level.basis} needs {cost.text()}; the limit is "
                         f"{max_basis_functions} basis functions", field="max_basis_functions",
                         hint="raise --cc-max-basis-functions if the machine can take it")
    bases = cardinals(level.basis) if ":" in level.basis else ((level.basis, None),)
    parts = []
    t0 = time.perf_counter()
    for basis, card in bases:
        parts.append(_cc_one_basis(symbols, positions_A, charge, multiplicity, level, basis, label)
                     | {"cardinal": card})
    rec = {"seconds": time.perf_counter() - t0, "n_basis": parts[-1]["n_basis"],
           "converged": True, "parts": parts, "reference": parts[-1]["reference"],
           "estimate": cost.text()}
    if len(parts) == 1:
        e = parts[0]["energy_hartree"]
        rec["scf"] = "HF, then " + level.method
    else:
        (x, ex), (y, ey) = ((p["cardinal"], p["correlation_hartree"]) for p in parts)
        e_corr = (y ** 3 * ey - x ** 3 * ex) / (y ** 3 - x ** 3)
        e = parts[1]["hf_hartree"] + e_corr
        rec["extrapolation"] = (f"HF of {parts[1]['basis']}; correlation E_X = E_CBS + A X^-3 "
                                f"from X = {x}, {y} (Helgaker et al. 1997)")
        rec["correlation_cbs_hartree"] = e_corr
        rec["scf"] = "HF, then " + level.method
    rec["energy_hartree"] = float(e)
    return Energy(float(e), rec)


def _cc_one_basis(symbols, positions_A, charge, multiplicity, level, basis, label) -> dict:
    from pyscf import cc
    from pyscf.data import elements

    mol = build_mol(symbols, positions_A, charge=charge, multiplicity=multiplicity, basis=basis,
                    label=label)
    mf = make_scf(mol, level, reference_only=True)
    run_scf(mf, label=label)
    ncore = elements.chemcore(mol) if level.frozen_core else 0
    mycc = cc.CCSD(mf, frozen=ncore or None)
    mycc.verbose = 0
    mycc.conv_tol = 1e-8
    mycc.max_cycle = 200
    mycc.kernel()
    if not mycc.converged:
        raise InputError(f"the CCSD iterations of {label} ({basis}) did not converge",
                         hint="check the reference (charge, multiplicity)")
    e_t = float(mycc.ccsd_t()) if level.method.upper() == "CCSD(T)" else 0.0
    corr = float(mycc.e_corr) + e_t
    return {"basis": basis, "n_basis": int(mol.nao_nr()), "frozen_orbitals": int(ncore),
            "hf_hartree": float(mf.e_tot), "correlation_hartree": corr, "triples_hartree": e_t,
            "energy_hartree": float(mf.e_tot) + corr,
            "reference": "UHF" if mol.spin else "RHF"}


def energy_at_level(symbols, positions_A, *, charge: int, multiplicity: int, level: Level,
                    max_basis_functions: int = DEFAULT_CC_MAX_BASIS, label: str = "species") -> Energy:
    """The energy [hartree] of one geometry at any level of this module."""
    if level.coupled_cluster:
        return coupled_cluster_energy(symbols, positions_A, charge=charge, multiplicity=multiplicity,
                                      level=level, max_basis_functions=max_basis_functions,
                                      label=label)
    return scf_energy(symbols, positions_A, charge=charge, multiplicity=multiplicity, level=level,
                      label=label)


# ---- Hessians and optimisation -----------------------------------------------------

def hessian_hartree_bohr2(symbols, positions_A, *, charge: int, multiplicity: int, level: Level,
                          analytic: bool | None = None, step_bohr: float = 5e-3,
                          label: str = "species") -> tuple[np.ndarray, str, float]:
    """(3N, 3N) Cartesian Hessian [hartree/bohr^2], how it was made, and the energy [hartree].

    analytic: True (PySCF's analytic Hessian; an InputError where there is none), False
    (central differences of analytic gradients, step ``step_bohr``), None (analytic where
    PySCF has it, else finite differences).
    """
    if level.coupled_cluster:
        raise InputError("Hessians are computed at DFT or HF levels only", field="method")
    mol = build_mol(symbols, positions_A, charge=charge, multiplicity=multiplicity,
                    basis=level.basis, label=label)
    mf = make_scf(mol, level)
    rec = run_scf(mf, label=label)
    n = mol.natm
    if analytic is not False:
        try:
            h4 = mf.Hessian().kernel()
            h = np.asarray(h4).transpose(0, 2, 1, 3).reshape(3 * n, 3 * n)
            return 0.5 * (h + h.T), "analytic (PySCF)", rec["energy_hartree"]
        except (NotImplementedError, AttributeError, KeyError) as exc:
            if analytic:
                raise InputError(f"PySCF has no analytic Hessian for {level.label} ({exc})",
                                 field="method") from None
            log.info("%s: no analytic Hessian (%s); finite differences of gradients", label, exc)
    grad = mf.nuc_grad_method().as_scanner()
    x0 = mol.atom_coords(unit="Bohr").copy()
    h = np.empty((3 * n, 3 * n))
    for i in range(3 * n):
        g = []
        for sign in (1.0, -1.0):
            x = x0.copy()
            x.reshape(-1)[i] += sign * step_bohr
            e, gr = grad(mol.set_geom_(x, unit="Bohr", inplace=False))
            if not grad.converged:
                raise InputError(f"an SCF of the finite-difference Hessian of {label} did not "
                                 "converge", field="max_cycle")
            g.append(np.asarray(gr).reshape(-1))
        h[i] = (g[0] - g[1]) / (2.0 * step_bohr)
    return (0.5 * (h + h.T), f"central finite differences of analytic gradients, step "
            f"{step_bohr:g} bohr", rec["energy_hartree"])


_QUIET_LOG_INI = """[loggers]
keys=root

[handlers]
keys=null

[formatters]
keys=plain

[logger_root]
level=WARNING
handlers=null

[handler_null]
class=logging.NullHandler
level=WARNING
formatter=plain
args=()

[formatter_plain]
format=%(message)s
"""


class _quiet_log_ini:
    """A temporary logging configuration that silences geomeTRIC's step log."""

    def __enter__(self):
        import tempfile

        self.dir = tempfile.TemporaryDirectory()
        path = os.path.join(self.dir.name, "log.ini")
        with open(path, "w") as fh:
            fh.write(_QUIET_LOG_INI)
        return path

    def __exit__(self, *exc):
        self.dir.cleanup()
        return False


#: geomeTRIC's default convergence criteria (the same as PySCF's, stated for provenance)
GEOMETRIC_CONVERGENCE = {"convergence_energy": 1e-6, "convergence_grms": 3e-4,
                         "convergence_gmax": 4.5e-4, "convergence_drms": 1.2e-3,
                         "convergence_dmax": 1.8e-3}


def optimise_geometry(symbols, positions_A, *, charge: int, multiplicity: int, level: Level,
                      transition: bool = False, seed_hessian_hartree_bohr2=None,
                      max_steps: int = 100, label: str = "species") -> tuple[np.ndarray, dict]:
    """Minimum (or first-order saddle with ``transition``) at ``level`` with geomeTRIC.

    Returns the geometry [Angstrom] and a record (steps, convergence, seconds).
    ``seed_hessian_hartree_bohr2``: a Cartesian Hessian used as the first one (for a TS;
    without it geomeTRIC computes one at this level).
    """
    if level.coupled_cluster:
        raise InputError("geometry optimisation runs at DFT or HF levels only", field="method")
    try:
        from pyscf.geomopt.geometric_solver import kernel as geometric_kernel
    except ImportError:
        raise InputError("DFT optimisation needs geomeTRIC", hint="pip install geometric") from None
    import logging as _logging

    mol = build_mol(symbols, positions_A, charge=charge, multiplicity=multiplicity,
                    basis=level.basis, label=label)
    mf = make_scf(mol, level)
    run_scf(mf, label=label)  # a failing first SCF is reported as such
    steps = []
    kw = dict(GEOMETRIC_CONVERGENCE)
    if transition:
        kw["transition"] = True
        if seed_hessian_hartree_bohr2 is not None:
            kw["hess_data"] = np.asarray(seed_hessian_hartree_bohr2, dtype=float).tolist()
        else:
            kw["hessian"] = True
    t0 = time.perf_counter()
    root = _logging.getLogger()
    saved = (root.handlers[:], root.level)
    try:
        with _quiet_log_ini() as ini:
            conv, newmol = geometric_kernel(mf, maxsteps=max_steps, logIni=ini,
                                            callback=lambda env: steps.append(1), **kw)
    except (RuntimeError, ValueError, np.linalg.LinAlgError) as exc:
        raise InputError(f"the {level.label} {'saddle search' if transition else 'minimisation'} "
                         f"of {label} failed ({exc})") from None
    finally:  # geomeTRIC configures the root logger; give it back as it was
        root.handlers[:] = saved[0]
        root.setLevel(saved[1])
    if not conv:
        raise InputError(f"the {level.label} {'saddle search' if transition else 'minimisation'} "
                         f"of {label} did not converge in {max_steps} steps",
                         hint="raise --max-steps or start from a better geometry")
    pos = newmol.atom_coords(unit="Angstrom")
    return pos, {"steps": len(steps), "seconds": time.perf_counter() - t0,
                 "convergence": "geomeTRIC: " + ", ".join(f"{k.split('_')[1]} {v:g}"
                                                          for k, v in GEOMETRIC_CONVERGENCE.items())
                 + " (hartree, hartree/bohr, Angstrom)"}


# ---- refining a species ------------------------------------------------------------

@dataclass(frozen=True)
class RefineOptions:
    """What to do besides the single point.

    optimise: re-optimise the geometry at ``geometry_level`` (a transition state as a
        saddle point, seeded with the species' own Hessian) and compute the Hessian there.
    geometry_level: level of the optimisation and Hessian (default: the energy level,
        which must then be DFT or HF).
    verify: minimise both ways along a re-optimised TS's imaginary mode.
    analytic_hessian: None (analytic where available), True, False (finite differences).
    max_steps: geomeTRIC step limit.
    cc_max_basis_functions: size cap of coupled-cluster runs.
    """

    optimise: bool = False
    geometry_level: Level | None = None
    verify: bool = True
    analytic_hessian: bool | None = None
    max_steps: int = 100
    cc_max_basis_functions: int = DEFAULT_CC_MAX_BASIS

    def key(self) -> dict:
        d = {"optimise": self.optimise, "verify": self.verify, "max_steps": self.max_steps,
             "analytic_hessian": self.analytic_hessian,
             "geometry_level": self.geometry_level.as_dict() if self.geometry_level else None}
        return d


@dataclass(frozen=True)
class RefineResult:
    """species: the refined species; energy_hartree: its energy at the energy level;
    record: the cached record (timings, convergence); from_cache: a cache hit."""

    species: Species
    energy_hartree: float
    record: dict
    from_cache: bool = False
    details: dict = field(default_factory=dict)


def estimate_seconds(species: Species, level: Level, options: RefineOptions = RefineOptions()) -> float:
    """A rough wall time [s] of refining ``species`` (see the module's cost model)."""
    if level.coupled_cluster:
        t = coupled_cluster_cost(species.symbols, charge=species.charge,
                                 multiplicity=species.multiplicity, level=level).seconds
    else:
        nbf = n_basis_functions(species.symbols, level.basis, charge=species.charge,
                                multiplicity=species.multiplicity)
        t = _DFT_SECONDS_AT_222 * (nbf / 222.0) ** 3
    if options.optimise:
        g = options.geometry_level or level
        nbf = n_basis_functions(species.symbols, g.basis, charge=species.charge,
                                multiplicity=species.multiplicity)
        sp = _DFT_SECONDS_AT_222 * (nbf / 222.0) ** 3
        opt = 15 * 2 * sp + 3 * len(species.symbols) * sp  # ~15 gradients and a Hessian
        if species.kind == "transition_state" and options.verify:
            opt += 2 * 20 * 2 * sp
        t += opt
    return float(t)


def _side_graphs(species: Species):
    """Bonding graphs of the minima the species file records for a TS (or None)."""
    from tstrate.io.species import parse_xyz_body

    out = []
    for key in ("reactant_side_geometry", "product_side_geometry"):
        text = species.provenance.get(key)
        if not text:
            return None
        syms, pos = parse_xyz_body(text)
        out.append(conn.bonds(syms, pos))
    return out


def _vibrations(symbols, positions_A, h_hartree_bohr2, masses):
    from tstrate.physics.vibrations import vibrational_analysis

    return vibrational_analysis(np.asarray(h_hartree_bohr2) * HESSIAN_UNITS_J_PER_M2["hartree/bohr2"],
                                np.asarray(positions_A), np.asarray(masses))


def _compute(species: Species, level: Level, options: RefineOptions, bar) -> dict:
    sym, pos0 = list(species.symbols), np.asarray(species.positions_A, dtype=float)
    q, m, name = species.charge, species.multiplicity, species.name
    rec: dict = {"level": level.as_dict(), "label": level.label}
    pos = pos0
    t_start = time.perf_counter()
    if options.optimise:
        glev = options.geometry_level or level
        if glev.coupled_cluster:
            raise InputError("optimisation needs a DFT or HF geometry level; give "
                             "--geometry-level with CCSD(T) energies", field="geometry_level")
        is_ts = species.kind == "transition_state"
        seed = None
        if is_ts and species.hessian_J_per_m2 is not None:
            seed = species.hessian_J_per_m2 / HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]
        pos, orec = optimise_geometry(sym, pos0, charge=q, multiplicity=m, level=glev,
                                      transition=is_ts, seed_hessian_hartree_bohr2=seed,
                                      max_steps=options.max_steps, label=name)
        bar.update(1)
        h, how, e_geo = hessian_hartree_bohr2(sym, pos, charge=q, multiplicity=m, level=glev,
                                              analytic=options.analytic_hessian, label=name)
        bar.update(1)
        nm = _vibrations(sym, pos, h, species.masses_amu)
        n_imag = int(np.sum(nm.frequencies_cm1 < 0))
        rec["optimisation"] = orec | {"level": glev.as_dict(), "label": glev.label}
        rec["hessian"] = {"how": how, "hartree_per_bohr2": h.tolist(),
                          "imaginary_modes": n_imag}
        rec["geometry_energy_hartree"] = e_geo
        tol = TOLERATED_IMAGINARY_CM1
        if is_ts:
            if n_imag != 1:
                raise InputError(f"the {glev.label} saddle point of {name} has {n_imag} imaginary "
                                 f"modes ({np.round(nm.frequencies_cm1[:3], 1).tolist()} cm-1), "
                                 "not one", hint="refine its energy only (without --optimise), "
                                 "or start from a better TS")
            if options.verify:
                rec["verification"] = _verify(sym, pos, nm, species, glev, options, bar)
        else:
            bad = nm.frequencies_cm1[nm.frequencies_cm1 < -tol]
            if len(bad):
                raise InputError(f"the {glev.label} minimum of {name} has imaginary modes "
                                 f"{np.round(bad, 1).tolist()} cm-1", hint="start from a better "
                                 "geometry or a lower-symmetry one")
            rec["allow_imaginary_below_cm1"] = tol if np.any(nm.frequencies_cm1 < 0) else 0.0
        rec["positions_A"] = np.asarray(pos).tolist()
        same = glev == level
    else:
        same = False
    if options.optimise and same:
        rec["energy"] = {"energy_hartree": rec["geometry_energy_hartree"], "converged": True,
                         "scf": "the optimisation level's own energy at its final geometry",
                         "n_basis": n_basis_functions(sym, level.basis, charge=q, multiplicity=m)}
        rec["energy_hartree"] = rec["geometry_energy_hartree"]
    else:
        en = energy_at_level(sym, pos, charge=q, multiplicity=m, level=level,
                             max_basis_functions=options.cc_max_basis_functions, label=name)
        rec["energy"] = en.record
        rec["energy_hartree"] = en.energy_hartree
    bar.update(1)
    rec["seconds"] = time.perf_counter() - t_start
    rec["versions"] = package_versions()
    return rec


def _verify(sym, pos, nm, species, glev, options, bar) -> dict:
    """Minimise both ways along the imaginary mode; the two minima must differ in bonding
    and match the minima recorded in the species file (when recorded)."""
    from tstrate.physics.conformers import xyz_lines

    d = nm.modes[0] / np.sqrt(np.asarray(species.masses_amu, dtype=float))[:, None]
    d = d * (PUSH_A / np.max(np.linalg.norm(d, axis=1)))
    sides = []
    for k, sign in enumerate((-1.0, 1.0)):
        p, _ = optimise_geometry(sym, np.asarray(pos) + sign * d, charge=species.charge,
                                 multiplicity=species.multiplicity, level=glev,
                                 max_steps=options.max_steps, label=f"{species.name}-side{k + 1}")
        sides.append(p)
        bar.update(1)
    graphs = [conn.bonds(sym, p) for p in sides]
    if graphs[0] == graphs[1]:
        raise InputError(f"the {glev.label} saddle point of {species.name} leads to the same "
                         "bonding on both sides", hint="refine its energy only, without --optimise")
    recorded = _side_graphs(species)
    text = conn.describe_changes(sym, graphs[0], graphs[1])
    if recorded is not None:
        if {frozenset(g) for g in graphs} != {frozenset(g) for g in recorded}:
            found = "; ".join(conn.describe_changes(sym, recorded[0], g) for g in graphs)
            raise InputError(f"the {glev.label} saddle point of {species.name} no longer connects "
                             f"the minima its file records (relative to the recorded reactant "
                             f"side: {found})", hint="refine its energy only, without --optimise")
        if graphs[0] != recorded[0]:
            sides, graphs = sides[::-1], graphs[::-1]
            text = conn.describe_changes(sym, graphs[0], graphs[1])
    return {"text": f"downhill minimisations at {glev.label} both ways along the imaginary "
                    f"mode: {text}" + ("; both sides match the recorded minima" if recorded else ""),
            "reactant_side_geometry": xyz_lines(sym, sides[0]),
            "product_side_geometry": xyz_lines(sym, sides[1])}


def _species_from(species: Species, level: Level, options: RefineOptions, rec: dict,
                  command: str | None) -> Species:
    from tstrate.io.species import build_species

    e = rec["energy_hartree"] * HARTREE_J_PER_MOL
    v = rec["versions"]
    prov = dict(species.provenance)
    en = rec["energy"]
    sp_prov = {
        "single_point_method": level.label,
        "single_point_program": f"PySCF {v['pyscf']} (pyscf-dispersion {v['pyscf-dispersion']})",
        "single_point_convergence": (f"SCF energy change < {level.conv_tol_hartree:g} hartree "
                                     f"({en.get('scf', '')}); grid level {level.grid_level}"
                                     + ("; CCSD amplitudes 1e-8 hartree" if level.coupled_cluster
                                        else "")),
        "single_point_reference": str(en.get("reference", "")),
        "single_point_seconds": f"{en.get('seconds', 0.0):.1f}",
        "single_point_basis_functions": str(en.get("n_basis", "")),
    }
    if level.coupled_cluster:
        sp_prov["single_point_estimate"] = en.get("estimate", "")
        if "extrapolation" in en:
            sp_prov["single_point_extrapolation"] = en["extrapolation"]
    if "optimisation" not in rec:
        sp_prov["single_point_geometry"] = f"the geometry of {prov.get('method', 'the file')}"
        prov.update(sp_prov)
        prov["refine_command"] = command or "Python API"
        return species.with_changes(energy_J_per_mol=e,
                                    geometry_energy_J_per_mol=(species.geometry_energy_J_per_mol
                                                               if species.geometry_energy_J_per_mol
                                                               is not None else
                                                               species.energy_J_per_mol),
                                    provenance=prov)
    o = rec["optimisation"]
    old_method = prov.get("method", "input")
    keep = {k: v for k, v in prov.items() if k in ("source",)}
    new = keep | {
        "method": o["label"],
        "program": f"PySCF {v['pyscf']}, geomeTRIC {v['geometric']}",
        "versions": ", ".join(f"{k} {x}" for k, x in v.items()),
        "convergence": o["convergence"],
        "optimiser": "geomeTRIC" + (" transition=True, seeded with the Hessian of "
                                    f"{old_method}" if species.kind == "transition_state" else ""),
        "origin": f"re-optimised from the {old_method} geometry",
        "hessian": rec["hessian"]["how"] + "; frequencies projected (tstrate)",
        "optimisation_seconds": f"{o['seconds']:.1f}",
    }
    if "verification" in rec:
        ver = rec["verification"]
        new["verification"] = ver["text"]
        new["reactant_side_geometry"] = ver["reactant_side_geometry"]
        new["product_side_geometry"] = ver["product_side_geometry"]
    if rec["energy"].get("scf", "").startswith("the optimisation"):
        pass
    else:
        new.update(sp_prov)
        new["single_point_geometry"] = o["label"]
    new["command"] = command or "Python API"
    h = np.asarray(rec["hessian"]["hartree_per_bohr2"]) * HESSIAN_UNITS_J_PER_M2["hartree/bohr2"]
    return build_species(
        species.name, sym_list(species), np.asarray(rec["positions_A"]), kind=species.kind,
        charge=species.charge, multiplicity=species.multiplicity, hessian_J_per_m2=h,
        energy_J_per_mol=e, geometry_energy_J_per_mol=rec["geometry_energy_hartree"] * HARTREE_J_PER_MOL,
        frequency_scale=species.frequency_scale, masses_amu=species.masses_amu,
        electronic_levels=species.electronic_levels,
        allow_imaginary_below_cm1=rec.get("allow_imaginary_below_cm1", 0.0),
        lennard_jones=species.lennard_jones, provenance=new)


def sym_list(species: Species) -> list[str]:
    return list(species.symbols)


def refine_species(species: Species, level: Level = Level(),
                   options: RefineOptions = RefineOptions(), *, cache: Cache | None = None,
                   progress: bool = False, command: str | None = None,
                   threads: int | None = None) -> RefineResult:
    """Refine one species at ``level`` (see the module): returns the new species, whose
    energy is the refined one (``single_point``) and whose geometry, Hessian and
    frequencies are new only with ``options.optimise``."""
    from tstrate.compute.engine import progress_bar

    _need_pyscf()
    if threads is not None:
        set_threads(threads)
    if options.optimise and options.geometry_level is None and level.coupled_cluster:
        raise InputError("optimisation needs a DFT or HF geometry level; give one with CCSD(T) "
                         "energies", field="geometry_level")
    cache = cache or Cache(enabled=False)
    inputs = {"symbols": list(species.symbols), "positions_A": np.asarray(species.positions_A),
              "charge": species.charge, "multiplicity": species.multiplicity,
              "kind": species.kind, "level": level.as_dict(), "options": options.key()}
    if options.optimise and species.kind == "transition_state":
        inputs["seed_hessian"] = (None if species.hessian_J_per_m2 is None
                                  else np.asarray(species.hessian_J_per_m2) / 1e3)
        if options.verify:
            inputs["recorded_sides"] = [species.provenance.get("reactant_side_geometry"),
                                        species.provenance.get("product_side_geometry")]
    key = cache_key_refine(inputs)
    hit = cache.load("refine", key)
    from_cache = hit is not None
    if hit is None:
        stages = 1 + (2 if options.optimise else 0) + (
            2 if options.optimise and options.verify and species.kind == "transition_state" else 0)
        with progress_bar(stages, f"refine {species.name}", progress) as bar:
            hit = _compute(species, level, options, bar)
        cache.store("refine", key, hit)
    new = _species_from(species, level, options, hit, command)
    new = new.with_changes(provenance=new.provenance | {"single_point_cache_key": key[:16]}) \
        if "single_point_method" in new.provenance else new
    return RefineResult(new, hit["energy_hartree"], hit, from_cache, {"cache_key": key})


def cache_key_refine(inputs: dict) -> str:
    """The cache key of a refinement (the PySCF versions enter it)."""
    return cache_key("refine", inputs | {"pyscf_versions": package_versions()})


def refine_many(species_list, level: Level = Level(), options: RefineOptions = RefineOptions(), *,
                cache: Cache | None = None, progress: bool = False, command: str | None = None,
                threads: int | None = None, on_done=None) -> list[RefineResult]:
    """Refine several species in turn with an overall bar weighted by the estimated cost
    (so its remaining-time figure is a time estimate); ``on_done(result)`` after each."""
    from tstrate.compute.engine import progress_bar

    est = [estimate_seconds(s, level, options) for s in species_list]
    out = []
    with progress_bar(int(math.ceil(sum(est))) or 1, "refine (estimated s)", progress) as bar:
        for sp, t in zip(species_list, est):
            res = refine_species(sp, level, options, cache=cache, progress=progress,
                                 command=command, threads=threads)
            out.append(res)
            bar.update(int(round(t)))
            if on_done is not None:
                on_done(res)
    return out

