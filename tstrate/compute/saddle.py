"""Transition states by GFN2-xTB: guess or reactant/product -> saddle point -> verification.

Route
-----
1. From reactant and product geometries (same atoms in the same order): both
   are minimised, the product is rotated onto the reactant (least-squares fit),
   the path is interpolated with the image-dependent pair potential (IDPP;
   S. Smidstrup, A. Pedersen, K. Stokbro, H. Jonsson, J. Chem. Phys. 140, 214106
   (2014)) and relaxed as a climbing-image nudged elastic band (G. Henkelman,
   B. P. Uberuaga, H. Jonsson, J. Chem. Phys. 113, 9901 (2000)) with ASE; the
   highest image is the guess. A guess geometry may be given instead.
2. A small seeded random displacement breaks any symmetry of the guess, then
   Sella (order=1) climbs to the first-order saddle point.
3. The finite-difference Hessian counts imaginary modes. With more than one,
   the geometry is pushed along the extra ones and the search repeated (at most
   ``max_retries`` times); ending with none or with several is an InputError.
4. Verification without an IRC: the saddle is displaced both ways along its
   imaginary mode and each side minimised; the bonding graphs (covalent radii,
   :mod:`tstrate.compute.connectivity`) of the two minima must be those of the
   intended reactant and product (when known) and must differ from each other.
   The two minima are characterised too: barriers are reported from the
   reactant-side minimum, classical (electronic) and zero-point corrected.
"""

from __future__ import annotations

import logging
import warnings
from dataclasses import dataclass, field

import numpy as np

from tstrate.compute import connectivity as conn
from tstrate.compute.cache import Cache, cache_key
from tstrate.compute.engine import (Settings, _scf_failure_is_input_error, minimise, progress_bar,
                                    provenance, saddle_optimise, with_calculator)
from tstrate.compute.minima import relax_minimum
from tstrate.compute.stationary import (Characterised, cartesian_mode, characterise,
                                        species_from_record, species_record)
from tstrate.errors import InputError
from tstrate.model import Species

log = logging.getLogger(__name__)

#: size of the symmetry-breaking random displacement (standard deviation per coordinate) [Angstrom]
SYMMETRY_BREAK_A = 0.01
#: largest atomic displacement along a mode when pushing off a saddle [Angstrom]
PUSH_A = 0.15


@dataclass(frozen=True)
class SaddleResult:
    """Outcome of a verified saddle search.

    ts: the transition state (exactly one imaginary mode; Hessian kept).
    reactant, product: minima reached downhill from the saddle, each side
        matched to the intended reactant/product when those were given.
    barrier_J_per_mol: E(TS) - E(reactant side) [J/mol] (classical).
    barrier_zpe_J_per_mol: the same with zero-point energies added [J/mol].
    reverse_barrier_J_per_mol, reverse_barrier_zpe_J_per_mol: from the product side [J/mol].
    bond_changes: text listing the bonds formed and broken from reactant to product.
    imaginary_frequency_cm1: magnitude of the imaginary wavenumber [cm^-1].
    retries: re-searches needed to remove extra imaginary modes.
    gradient_calls_hessian: calculator calls of the TS Hessian (6N).
    from_cache: whether the result came from the cache.
    """

    ts: Species
    reactant: Species
    product: Species
    barrier_J_per_mol: float
    barrier_zpe_J_per_mol: float
    reverse_barrier_J_per_mol: float
    reverse_barrier_zpe_J_per_mol: float
    bond_changes: str
    imaginary_frequency_cm1: float
    retries: int = 0
    gradient_calls_hessian: int = 0
    from_cache: bool = False
    details: dict = field(default_factory=dict)


def check_same_atoms(reactant, product, *, names=("reactant", "product")) -> None:
    """InputError unless both geometries list the same elements in the same order."""
    a, b = list(reactant.get_chemical_symbols()), list(product.get_chemical_symbols())
    if len(a) != len(b):
        raise InputError(f"the {names[0]} has {len(a)} atoms but the {names[1]} has {len(b)}",
                         field=names[1], hint="both ends must hold the same atoms")
    if sorted(a) != sorted(b):
        raise InputError(f"the {names[0]} ({''.join(sorted(a))}) and the {names[1]} "
                         f"({''.join(sorted(b))}) hold different atoms", field=names[1],
                         hint="a reaction path keeps every atom")
    if a != b:
        i = next(k for k in range(len(a)) if a[k] != b[k])
        raise InputError(f"atom order differs: atom {i + 1} is {a[i]} in the {names[0]} but "
                         f"{b[i]} in the {names[1]}", field=names[1],
                         hint="reorder the atoms of one file so each atom keeps its number, "
                              "or give a single --guess geometry instead")


def _zpe(species: Species) -> float:
    from tstrate.physics.thermo import zero_point_energy_J_per_mol

    return zero_point_energy_J_per_mol(species)


def neb_guess(reactant, product, settings: Settings, *, images: int = 7, charge: int = 0,
              multiplicity: int = 1, fmax_eV_per_A: float = 0.05, max_steps: int = 200,
              progress: bool = False):
    """Highest image of an IDPP-interpolated climbing-image NEB between two minima (ASE Atoms)."""
    from ase.build import minimize_rotation_and_translation
    from ase.mep import NEB
    from ase.mep.neb import idpp_interpolate
    from ase.optimize import FIRE

    start = reactant.copy()
    end = product.copy()
    minimize_rotation_and_translation(start, end)
    band = [start] + [start.copy() for _ in range(images)] + [end]
    for img in band:
        img.calc = None
    for img in band:
        img.calc = with_calculator(img, settings, charge, multiplicity).calc
    neb = NEB(band, climb=True, k=0.1, method="improvedtangent")
    neb.interpolate(method="linear")
    # a straight line between two linear molecules keeps every image linear (an H
    # moving along a line runs through its neighbours); a seeded kick lets IDPP bend it
    rng = np.random.default_rng(settings.seed)
    for img in band[1:-1]:
        img.positions = img.positions + rng.normal(scale=5 * SYMMETRY_BREAK_A, size=img.positions.shape)
    with warnings.catch_warnings():  # ASE's IDPP builds its own band with the default method
        warnings.filterwarnings("ignore", message="The default method has changed")
        idpp_interpolate(band, traj=None, log=None)
    opt = FIRE(neb, logfile=None)
    with progress_bar(max_steps, "NEB", progress) as bar:
        for _ in opt.irun(fmax=fmax_eV_per_A, steps=max_steps):
            bar.update(1)
    energies = [img.get_potential_energy() for img in band[1:-1]]
    top = band[1 + int(np.argmax(energies))]
    log.info("NEB: %d steps, highest image %d", opt.nsteps, 1 + int(np.argmax(energies)))
    out = top.copy()
    out.calc = None
    return out


def _search(guess, settings: Settings, *, label: str, charge: int, multiplicity: int,
            max_retries: int, internal: bool, progress: bool, work_dir) -> tuple[Characterised, int]:
    rng = np.random.default_rng(settings.seed)
    work = with_calculator(guess, settings, charge, multiplicity)
    work.positions = work.positions + rng.normal(scale=SYMMETRY_BREAK_A, size=work.positions.shape)
    retries = 0
    while True:
        saddle_optimise(work, settings, label=label, internal=internal, work_dir=work_dir)
        ch = characterise(work, settings, progress=progress, desc=f"Hessian {label}")
        imag = np.nonzero(ch.frequencies_cm1 < 0)[0]
        log.info("%s: imaginary modes %s cm-1", label, np.round(ch.frequencies_cm1[imag], 1))
        if len(imag) == 1:
            return ch, retries
        if len(imag) == 0:
            raise InputError(f"the saddle search for {label} ended at a minimum (no imaginary mode)",
                             hint="give a guess closer to the transition state, or reactant and "
                                  "product geometries")
        if retries >= max_retries:
            raise InputError(f"{label} still has {len(imag)} imaginary modes "
                             f"({np.round(ch.frequencies_cm1[imag], 1).tolist()} cm-1) after "
                             f"{retries} re-searches", hint="try another guess")
        retries += 1
        masses = work.get_masses()
        for k in imag[1:]:  # keep the most negative: it is the reaction coordinate
            work.positions = work.positions + cartesian_mode(ch.modes, k, masses, PUSH_A)


def _downhill(ch: Characterised, settings: Settings, sign: float, *, label: str, charge: int,
              multiplicity: int, progress: bool, work_dir) -> Characterised:
    start = ch.atoms.copy()
    start.positions = start.positions + sign * cartesian_mode(ch.modes, 0, start.get_masses(), PUSH_A)
    return relax_minimum(start, settings, label=label, charge=charge, multiplicity=multiplicity,
                         progress=progress, work_dir=work_dir)


def find_saddle(*, name: str, guess=None, reactant=None, product=None, charge: int = 0,
                multiplicity: int = 1, settings: Settings = Settings(), neb_images: int = 7,
                max_retries: int = 3, internal: bool = True, reactant_bonds=None,
                product_bonds=None, reactant_name: str | None = None,
                product_name: str | None = None, cache: Cache | None = None,
                progress: bool = False, work_dir=None, command: str | None = None,
                same_bonding: bool = False) -> SaddleResult:
    """Find, characterise and verify a first-order saddle point with GFN2-xTB.

    Give ``guess`` (ASE Atoms), or ``reactant`` and ``product`` (ASE Atoms with
    the same atom order), or all three (the ends then only define the intended
    bonding). ``reactant_bonds``/``product_bonds`` (sets of 0-based atom pairs)
    override the bonding taken from the end geometries. Energies in J/mol.

    ``same_bonding``: the saddle joins two minima of the same bonding (a torsion, an
    inversion, a cis-trans isomerisation); the verification then asks only that both
    downhill sides are minima of that bonding.
    """
    if guess is None and (reactant is None or product is None):
        raise InputError("give a guess geometry, or both reactant and product geometries",
                         field="guess")
    if reactant is not None and product is not None:
        check_same_atoms(reactant, product)
    if guess is not None and reactant is not None:
        check_same_atoms(reactant, guess, names=("reactant", "guess"))
    if guess is not None and product is not None:
        check_same_atoms(product, guess, names=("product", "guess"))
    reactant_name = reactant_name or f"{name}-reactant"
    product_name = product_name or f"{name}-product"
    cache = cache or Cache(enabled=False)
    inputs = {"charge": charge, "multiplicity": multiplicity, "settings": settings.as_dict(),
              "neb_images": neb_images, "max_retries": max_retries, "internal": internal}
    if same_bonding:
        inputs["same_bonding"] = True
    for key_name, at in (("guess", guess), ("reactant", reactant), ("product", product)):
        if at is not None:
            inputs[key_name] = {"symbols": at.get_chemical_symbols(), "positions_A": at.positions}
    for key_name, bset in (("reactant_bonds", reactant_bonds), ("product_bonds", product_bonds)):
        if bset is not None:
            inputs[key_name] = sorted(bset)
    key = cache_key("saddle", inputs)
    hit = cache.load("saddle", key)
    if hit is None:
        hit = _compute(name, guess, reactant, product, charge, multiplicity, settings, neb_images,
                       max_retries, internal, reactant_bonds, product_bonds, progress, work_dir,
                       command, same_bonding)
        cache.store("saddle", key, hit)
        from_cache = False
    else:
        from_cache = True
    ts = species_from_record(hit["ts"], name, command=command)
    rs = species_from_record(hit["reactant"], reactant_name, command=command)
    ps = species_from_record(hit["product"], product_name, command=command)
    e_ts, e_r, e_p = ts.energy_J_per_mol, rs.energy_J_per_mol, ps.energy_J_per_mol
    return SaddleResult(
        ts=ts, reactant=rs, product=ps,
        barrier_J_per_mol=e_ts - e_r, barrier_zpe_J_per_mol=(e_ts + _zpe(ts)) - (e_r + _zpe(rs)),
        reverse_barrier_J_per_mol=e_ts - e_p,
        reverse_barrier_zpe_J_per_mol=(e_ts + _zpe(ts)) - (e_p + _zpe(ps)),
        bond_changes=hit["bond_changes"], imaginary_frequency_cm1=ts.imaginary_frequency_cm1,
        retries=hit["retries"], gradient_calls_hessian=hit["ts"]["gradient_calls"],
        from_cache=from_cache, details={"cache_key": key, "verified": hit["verified"]})


def _compute(name, guess, reactant, product, charge, multiplicity, settings, neb_images,
             max_retries, internal, reactant_bonds, product_bonds, progress, work_dir, command,
             same_bonding=False):
    symbols = list((guess if guess is not None else reactant).get_chemical_symbols())
    origin = "guess geometry"
    if guess is None:
        r_min = relax_minimum(reactant, settings, label=f"{name}-reactant", charge=charge,
                              multiplicity=multiplicity, progress=progress, work_dir=work_dir)
        p_min = relax_minimum(product, settings, label=f"{name}-product", charge=charge,
                              multiplicity=multiplicity, progress=progress, work_dir=work_dir)
        with _scf_failure_is_input_error(r_min.atoms, f"{name}-neb", "NEB", work_dir):
            guess = neb_guess(r_min.atoms, p_min.atoms, settings, images=neb_images,
                              charge=charge, multiplicity=multiplicity, progress=progress)
        origin = f"highest image of a {neb_images}-image IDPP climbing-image NEB"
    if reactant_bonds is None and reactant is not None:
        reactant_bonds = conn.bonds(symbols, reactant.positions)
    if product_bonds is None and product is not None:
        product_bonds = conn.bonds(symbols, product.positions)
    if reactant_bonds is not None and product_bonds is not None and not same_bonding and \
            frozenset(reactant_bonds) == frozenset(product_bonds):
        raise InputError("the reactant and product have the same bonding; there is no reaction "
                         "to find", field="product")

    ch, retries = _search(guess, settings, label=name, charge=charge, multiplicity=multiplicity,
                          max_retries=max_retries, internal=internal, progress=progress,
                          work_dir=work_dir)
    sides = [_downhill(ch, settings, s, label=f"{name}-side{k}", charge=charge,
                       multiplicity=multiplicity, progress=progress, work_dir=work_dir)
             for k, s in ((1, -1.0), (2, 1.0))]
    graphs = [conn.bonds(symbols, side.atoms.positions) for side in sides]
    if same_bonding:
        want = frozenset(reactant_bonds) if reactant_bonds is not None else graphs[0]
        if graphs[0] != want or graphs[1] != want:
            found = " and ".join(f"side {k + 1}: {conn.describe_changes(symbols, want, g)}"
                                 for k, g in enumerate(graphs))
            raise InputError(f"the saddle point {name} was asked to keep its bonding, but {found}",
                             hint="leave out --same-bonding for a reaction that changes bonds")
    elif graphs[0] == graphs[1]:
        raise InputError(f"the saddle point {name} leads to the same bonding on both sides "
                         f"({conn.describe_changes(symbols, reactant_bonds or graphs[0], graphs[0])} "
                         "relative to the reactant): it is not the intended reaction",
                         hint="try another guess")
    order = (0, 1)
    intended = [frozenset(b) if b is not None else None for b in (reactant_bonds, product_bonds)]
    if (intended[0] is not None or intended[1] is not None) and not same_bonding:
        def fits(g, want):  # like atoms (the two H of H2S) may swap roles
            return want is None or conn.equivalent(symbols, g, want)
        if fits(graphs[0], intended[0]) and fits(graphs[1], intended[1]):
            order = (0, 1)
        elif fits(graphs[1], intended[0]) and fits(graphs[0], intended[1]):
            order = (1, 0)
        else:
            ref = intended[0] if intended[0] is not None else intended[1]
            found = " and ".join(f"side {k + 1}: {conn.describe_changes(symbols, ref, g)}"
                                 for k, g in enumerate(graphs))
            raise InputError(f"the saddle point {name} does not connect the intended reactant and "
                             f"product (relative to the "
                             f"{'reactant' if intended[0] is not None else 'product'}, {found})",
                             hint="try another guess or check the atom order of the ends")
    r_side, p_side = sides[order[0]], sides[order[1]]
    changes = conn.describe_changes(symbols, graphs[order[0]], graphs[order[1]])
    if same_bonding:
        changes = "same bonding on both sides (asked for: a conformational saddle point)"
    from tstrate.physics.conformers import xyz_lines

    extra = {"origin": origin, "optimiser": f"Sella order=1 internal={internal}",
             "verification": f"downhill minimisations both ways along the imaginary mode: "
                             f"{changes}",
             # the minima this saddle point connects to, for the check against a channel's species
             "reactant_side_geometry": xyz_lines(symbols, r_side.atoms.positions),
             "product_side_geometry": xyz_lines(symbols, p_side.atoms.positions)}
    prov = provenance(settings, command=command, extra=extra)
    down = provenance(settings, command=command,
                      extra={"origin": f"minimised downhill from the saddle point {name}",
                             "optimiser": "ASE BFGS"})
    tol = settings.tolerated_imaginary_cm1
    return {
        "ts": species_record(ch, kind="transition_state", charge=charge,
                             multiplicity=multiplicity, provenance=prov),
        "reactant": species_record(r_side, kind="minimum", charge=charge, multiplicity=multiplicity,
                                   provenance=down, allow_imaginary_below_cm1=tol),
        "product": species_record(p_side, kind="minimum", charge=charge, multiplicity=multiplicity,
                                  provenance=down, allow_imaginary_below_cm1=tol),
        "bond_changes": changes, "retries": retries,
        "verified": bool(intended[0] is not None or intended[1] is not None or same_bonding),
    }
