"""Water-relay transition states for carbonic acid decomposition, H2CO3 -> CO2 + H2O.

Bare, the reaction is a 1,3-hydrogen shift through a four-membered ring
(O1-H1...O2-C): the hydroxyl hydrogen H1 moves from O1 to the other hydroxyl
oxygen O2, which leaves as water with its own hydrogen H2. One water turns the
shift into a relay through a six-membered ring (C, O1, H1, Ow, Hw, O2): H1 goes
to the water oxygen while the water hands one of its hydrogens on to O2. Two
waters make an eight-membered ring. (Water catalysis of this reaction: T.
Loerting, C. Tautermann, R. T. Kroemer, I. Kohl, A. Hallbrucker, E. Mayer,
K. R. Liedl, Angew. Chem. Int. Ed. 39, 891 (2000).)

The ring is laid out in a plane: the carbonic acid frame, then the water
oxygens on a circular arc from O1 to O2 with equal O...O spacings, each
transferring hydrogen on its O...O edge. The pre-reactive complex has the
hydrogens on their donors (O-H 0.98 A, O...O 2.70 A; bare, H1 sits syn to O2
with a C-O-H angle of 108 degrees); the saddle-point guess
has them half way (O...O 2.45 A) and the C-O2 bond stretched. Free water
hydrogens point out of the ring plane, alternating up and down.

Atom order: C, O1, O2, O3 (carbonyl), H1 (on O1, moves), H2 (on O2, stays),
then for each water k: Ow_k, Hw_k (moves on), Hf_k (stays).

:func:`general_relay_geometry` and :func:`find_general_relay` build the same kind of ring
for any substrate and catalyst, given the atoms that move (the donor, its hydrogen and the
acceptor of the substrate; the catalyst atom and the hydrogen it passes on) and any other
bond changes of the substrate; the substrate's own geometry is kept and the catalysts are
laid on the arc from donor to acceptor.
"""

from __future__ import annotations

import logging
import math
from dataclasses import dataclass, field

import numpy as np

from tstrate.compute import connectivity as conn
from tstrate.compute.cache import Cache
from tstrate.compute.engine import Settings
from tstrate.compute.minima import MinimumResult, compute_minimum
from tstrate.compute.saddle import SaddleResult, find_saddle
from tstrate.errors import InputError

log = logging.getLogger(__name__)

_R_CO_A, _R_CO_DOUBLE_A, _R_OH_A = 1.34, 1.21, 0.98


@dataclass(frozen=True)
class RelayPlan:
    """Bookkeeping of a relay geometry.

    transfers: (hydrogen, donor, acceptor) 0-based atom indices, in ring order.
    broken: the C-O bond that breaks (carbon, leaving oxygen).
    reactant_bonds, product_bonds: intended bonding graphs (0-based pairs).
    """

    n_waters: int
    transfers: tuple[tuple[int, int, int], ...]
    broken: tuple[int, int]
    reactant_bonds: frozenset
    product_bonds: frozenset


def _arc_positions(p1: np.ndarray, p2: np.ndarray, n: int, spacing_A: float) -> list[np.ndarray]:
    """n points on a circular arc above the chord p1-p2 (in the xy-plane), equally spaced,
    with p1 -> points -> p2 consecutive distances ``spacing_A``."""
    from scipy.optimize import brentq

    c = 0.5 * np.linalg.norm(p2 - p1)
    if (n + 1) * spacing_A <= 2 * c:
        raise InputError("ring spacing too small for the ring", field="waters")

    def mismatch(h):
        radius = math.hypot(c, h)
        if spacing_A >= 2 * radius:
            return 1.0
        arc = 2 * math.pi - 2 * math.atan2(c, h)
        return (n + 1) * 2 * math.asin(spacing_A / (2 * radius)) - arc

    h = brentq(mismatch, -5 * c, 50.0)
    mid = 0.5 * (p1 + p2)
    e = (p2 - p1) / (2 * c)
    nrm = np.array([-e[1], e[0], 0.0])
    if np.dot(nrm, mid) < 0:  # the arc bulges away from the carbon at the origin
        nrm = -nrm
    radius = math.hypot(c, h)
    step = 2 * math.asin(spacing_A / (2 * radius))
    theta1 = math.atan2(-h, -c)  # p1 seen from the centre (0, h) in the chord frame
    pts = []
    for k in range(1, n + 2):
        th = theta1 - k * step
        x, y = radius * math.cos(th), h + radius * math.sin(th)
        pts.append(mid + x * e + y * nrm)
    assert np.linalg.norm(pts[-1] - p2) < 1e-6, "arc construction missed the end point"
    return pts[:-1]


def relay_geometry(n_waters: int, stage: str = "complex"):
    """ASE Atoms of carbonic acid with ``n_waters`` (0, 1, 2) relay waters, and its RelayPlan.

    stage: "complex" (hydrogens on their donors: the pre-reactive ring complex) or
    "guess" (hydrogens half way, C-O2 stretched: a saddle-point guess).
    """
    from ase import Atoms

    if n_waters not in (0, 1, 2):
        raise InputError(f"{n_waters} waters: the relay takes 0, 1 or 2", field="waters")
    if stage not in ("complex", "guess"):
        raise ValueError(stage)
    guess = stage == "guess"
    half = math.radians(50.0 if (guess and n_waters == 0) else 60.0)  # half the O1-C-O2 angle
    r_co2 = 1.45 if guess else _R_CO_A
    c = np.zeros(3)
    o1 = _R_CO_A * np.array([-math.sin(half), math.cos(half), 0.0])
    o2 = r_co2 * np.array([math.sin(half), math.cos(half), 0.0])
    o3 = np.array([0.0, -_R_CO_DOUBLE_A, 0.0])
    spacing = 2.45 if guess else 2.70
    waters = _arc_positions(o1, o2, n_waters, spacing) if n_waters else []
    chain = [o1] + waters + [o2]
    hyd = []
    for donor, acceptor in zip(chain[:-1], chain[1:]):
        frac = 0.5 if guess else _R_OH_A / np.linalg.norm(acceptor - donor)
        hyd.append(donor + frac * (acceptor - donor))
    if n_waters == 0 and not guess:
        # bare acid: a four-membered ring cannot hold H1 on the O1...O2 line; put it
        # syn to O2 with an ordinary C-O1-H1 angle of 108 degrees instead
        u = (c - o1) / np.linalg.norm(c - o1)
        cands = []
        for sgn in (1.0, -1.0):
            a = sgn * math.radians(108.0)
            rot = np.array([[math.cos(a), -math.sin(a), 0.0], [math.sin(a), math.cos(a), 0.0],
                            [0.0, 0.0, 1.0]])
            cands.append(o1 + _R_OH_A * rot @ u)
        hyd[0] = min(cands, key=lambda p: np.linalg.norm(p - o2))
    # H2 on O2, in plane, syn to the carbonyl (C-O2-H 108 degrees, away from the ring)
    ang = math.radians(90.0 - math.degrees(half) - 180.0 + 108.0)
    h2 = o2 + _R_OH_A * np.array([math.cos(ang), math.sin(ang), 0.0])
    symbols = ["C", "O", "O", "O", "H", "H"]
    pos = [c, o1, o2, o3, hyd[0], h2]
    centroid = np.mean(chain + [c], axis=0)
    for k, ow in enumerate(waters):
        u = hyd[k + 1] - ow
        u /= np.linalg.norm(u)
        out = ow - centroid
        out[2] = 0.0
        out /= np.linalg.norm(out)
        tilt = math.radians(55.0) * (1 if k % 2 == 0 else -1)
        w = math.cos(tilt) * out + math.sin(tilt) * np.array([0.0, 0.0, 1.0])
        w -= np.dot(w, u) * u
        w /= np.linalg.norm(w)
        hoh = math.radians(104.5)
        hf = ow + _R_OH_A * (math.cos(hoh) * u + math.sin(hoh) * w)
        symbols += ["O", "H", "H"]
        pos += [ow, hyd[k + 1], hf]
    atoms = Atoms(symbols, positions=np.array(pos))

    # bookkeeping: ring oxygens and the hydrogens that move
    ring_o = [1] + [6 + 3 * k for k in range(n_waters)] + [2]
    movers = [4] + [7 + 3 * k for k in range(n_waters)]
    transfers = tuple((h, d, a) for h, d, a in zip(movers, ring_o[:-1], ring_o[1:]))
    reactant_bonds = frozenset({(0, 1), (0, 2), (0, 3), (1, 4), (2, 5)}
                               | {(6 + 3 * k, 7 + 3 * k) for k in range(n_waters)}
                               | {(6 + 3 * k, 8 + 3 * k) for k in range(n_waters)})
    product_bonds = conn.edit_bonds(reactant_bonds,
                                    break_=[(d, h) for h, d, _ in transfers] + [(0, 2)],
                                    form=[(a, h) for h, _, a in transfers])
    plan = RelayPlan(n_waters, transfers, (0, 2), reactant_bonds, product_bonds)
    return atoms, plan


@dataclass(frozen=True)
class RelayResult:
    """complex: the pre-reactive ring complex (a minimum); saddle: the verified relay saddle point.
    barrier_J_per_mol / barrier_zpe_J_per_mol: TS relative to the complex [J/mol]."""

    complex: MinimumResult
    saddle: SaddleResult
    plan: RelayPlan
    barrier_J_per_mol: float
    barrier_zpe_J_per_mol: float
    details: dict = field(default_factory=dict)


def find_relay(n_waters: int, *, name: str | None = None, complex_name: str | None = None,
               settings: Settings = Settings(), cache: Cache | None = None, progress: bool = False,
               work_dir=None, command: str | None = None) -> RelayResult:
    """Pre-reactive complex and verified relay saddle point of H2CO3 (+ n H2O) -> CO2 + (n+1) H2O."""
    from tstrate.physics.thermo import zero_point_energy_J_per_mol

    label = {0: "H2CO3", 1: "H2CO3.H2O", 2: "H2CO3.(H2O)2"}[n_waters]
    name = name or f"TS-{label}"
    complex_name = complex_name or label
    start, plan = relay_geometry(n_waters, "complex")
    cplx = compute_minimum(name=complex_name, atoms=start, settings=settings, cache=cache,
                           progress=progress, work_dir=work_dir, command=command,
                           source=f"relay ring layout, {n_waters} water(s)")
    got = conn.bonds(cplx.species.symbols, cplx.species.positions_A)
    if got != plan.reactant_bonds:
        log.warning("%s: the minimised complex changed its bonding: %s", complex_name,
                    conn.describe_changes(cplx.species.symbols, plan.reactant_bonds, got))
    guess, _ = relay_geometry(n_waters, "guess")
    sad = find_saddle(name=name, guess=guess, reactant_bonds=plan.reactant_bonds,
                      product_bonds=plan.product_bonds, settings=settings, cache=cache,
                      progress=progress, work_dir=work_dir, command=command,
                      reactant_name=f"{complex_name}-reactant-side",
                      product_name=f"CO2.{n_waters + 1}H2O-product-side")
    ts, cs = sad.ts, cplx.species
    barrier = ts.energy_J_per_mol - cs.energy_J_per_mol
    zpe = (ts.energy_J_per_mol + zero_point_energy_J_per_mol(ts)) - \
          (cs.energy_J_per_mol + zero_point_energy_J_per_mol(cs))
    return RelayResult(cplx, sad, plan, barrier, zpe)


# ---- relays of any substrate and catalyst --------------------------------------------

@dataclass(frozen=True)
class GeneralRelayPlan:
    """Bookkeeping of a relay of any substrate through ``n_catalysts`` catalyst molecules.

    transfers: (hydrogen, donor, acceptor) 0-based atom indices of the relay geometry, in
        ring order (the substrate's atoms first, then each catalyst's).
    reactant_bonds, product_bonds: intended bonding graphs (0-based pairs).
    """

    n_catalysts: int
    transfers: tuple
    reactant_bonds: frozenset
    product_bonds: frozenset


def _frame(points: np.ndarray, d: np.ndarray, a: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Origin and rows e1, e2, e3 of a frame with the donor d and acceptor a in the e1-e2 plane
    and the substrate's centroid at the origin (the ring then bulges away from it)."""
    c = points.mean(axis=0)
    e1 = (a - d) / np.linalg.norm(a - d)
    m = 0.5 * (a + d) - c
    m -= np.dot(m, e1) * e1
    if np.linalg.norm(m) < 1e-6:  # the centroid on the donor-acceptor line: any normal
        m = np.cross(e1, [0.0, 0.0, 1.0])
        if np.linalg.norm(m) < 1e-6:
            m = np.cross(e1, [0.0, 1.0, 0.0])
    e2 = m / np.linalg.norm(m)
    return c, np.array([e1, e2, np.cross(e1, e2)])


def general_relay_geometry(substrate, catalyst, n_catalysts: int, *, donor: int, hydrogen: int,
                           acceptor: int, catalyst_atom: int, catalyst_hydrogen: int,
                           stage: str = "complex", break_bonds=(), form_bonds=()):
    """A relay of ``substrate`` (ASE Atoms) through ``n_catalysts`` copies of ``catalyst``.

    The substrate's ``hydrogen`` leaves its ``donor`` for the first catalyst's
    ``catalyst_atom``; each catalyst hands its ``catalyst_hydrogen`` on to the next, and the
    last to the substrate's ``acceptor`` (0-based indices into each structure). The ring
    atoms lie on a circular arc from donor to acceptor, bulging away from the substrate,
    spaced 2.70 Angstrom ("complex": hydrogens on their donors at 0.98 Angstrom) or 2.45
    Angstrom ("guess": hydrogens half way). ``break_bonds`` / ``form_bonds``: other bond
    changes of the substrate (0-based pairs), e.g. the C-O bond of a decarboxylation.
    Returns the ASE Atoms and a GeneralRelayPlan.
    """
    from ase import Atoms

    if int(n_catalysts) < 0 or int(n_catalysts) > 6:
        raise InputError(f"{n_catalysts} catalyst molecules: use 0 to 6", field="catalysts")
    if stage not in ("complex", "guess"):
        raise ValueError(stage)
    ns, nc = len(substrate), len(catalyst)
    for label, idx, n in (("donor", donor, ns), ("hydrogen", hydrogen, ns),
                          ("acceptor", acceptor, ns), ("catalyst_atom", catalyst_atom, nc),
                          ("catalyst_hydrogen", catalyst_hydrogen, nc)):
        if not 0 <= idx < n:
            raise InputError(f"{label} atom {idx + 1} does not exist ({n} atoms)", field=label)
    ss, cs = list(substrate.get_chemical_symbols()), list(catalyst.get_chemical_symbols())
    xs = np.array(substrate.positions, dtype=float)
    xc = np.array(catalyst.positions, dtype=float)
    sub_bonds = conn.bonds(ss, xs)
    cat_bonds = conn.bonds(cs, xc)
    if tuple(sorted((donor, hydrogen))) not in sub_bonds:
        raise InputError(f"atom {hydrogen + 1} is not bonded to the donor {donor + 1}",
                         field="hydrogen")
    if tuple(sorted((catalyst_atom, catalyst_hydrogen))) not in cat_bonds:
        raise InputError(f"catalyst atom {catalyst_hydrogen + 1} is not bonded to catalyst atom "
                         f"{catalyst_atom + 1}", field="catalyst_hydrogen")
    guess = stage == "guess"
    spacing = 2.45 if guess else 2.70
    origin, rot = _frame(xs, xs[donor], xs[acceptor])
    local = (xs - origin) @ rot.T  # substrate in the ring frame: donor, acceptor at z = 0
    local[:, 2] -= local[donor, 2]
    p1, p2 = local[donor], local[acceptor]
    ring = _arc_positions(p1, p2, n_catalysts, spacing) if n_catalysts else []
    chain = [p1] + ring + [p2]
    symbols = list(ss)
    pos = [p for p in local]
    cen = np.mean(local, axis=0)
    movers, ring_idx = [hydrogen], [donor]
    for k, xk in enumerate(ring):
        nxt = chain[k + 2]
        u = (nxt - xk) / np.linalg.norm(nxt - xk)
        # catalyst frame: its hydrogen along u, its other atoms away from the substrate
        c0 = xc - xc[catalyst_atom]
        v = c0[catalyst_hydrogen] / np.linalg.norm(c0[catalyst_hydrogen])
        from tstrate.compute.bimolecular import _rotation_onto

        r1 = _rotation_onto(v, u)
        c1 = c0 @ r1.T
        rest = [i for i in range(nc) if i not in (catalyst_atom, catalyst_hydrogen)]
        if rest:
            out = xk - cen
            out -= np.dot(out, u) * u
            tilt = math.radians(55.0) * (1 if k % 2 == 0 else -1)
            z = np.array([0.0, 0.0, 1.0])
            want = math.cos(tilt) * out / max(np.linalg.norm(out), 1e-9) + math.sin(tilt) * z
            want -= np.dot(want, u) * u
            have = np.mean(c1[rest], axis=0)
            have -= np.dot(have, u) * u
            if np.linalg.norm(have) > 1e-6 and np.linalg.norm(want) > 1e-6:
                have /= np.linalg.norm(have)
                want /= np.linalg.norm(want)
                ang = math.atan2(np.dot(np.cross(have, want), u), np.dot(have, want))
                kx = np.array([[0, -u[2], u[1]], [u[2], 0, -u[0]], [-u[1], u[0], 0]])
                r2 = np.eye(3) + math.sin(ang) * kx + (1 - math.cos(ang)) * kx @ kx
                c1 = c1 @ r2.T
        base = len(symbols)
        symbols += cs
        pos += [xk + p for p in c1]
        movers.append(base + catalyst_hydrogen)
        ring_idx.append(base + catalyst_atom)
    ring_idx.append(acceptor)
    pos = np.array(pos)
    for h, d_, a_ in zip(movers, ring_idx[:-1], ring_idx[1:]):
        if not guess and n_catalysts == 0:
            break  # no ring to lie on: the substrate keeps its own hydrogen
        vec = pos[a_] - pos[d_]
        frac = 0.5 if guess else _R_OH_A / np.linalg.norm(vec)
        pos[h] = pos[d_] + frac * vec
    atoms = Atoms(symbols, positions=pos)
    reactant = set(sub_bonds)
    for k in range(n_catalysts):
        base = ns + k * nc
        reactant |= {(i + base, j + base) for i, j in cat_bonds}
    transfers = tuple(zip(movers, ring_idx[:-1], ring_idx[1:]))
    product = conn.edit_bonds(frozenset(reactant),
                              break_=[tuple(sorted((d_, h))) for h, d_, _ in transfers]
                              + [tuple(sorted(b)) for b in break_bonds],
                              form=[tuple(sorted((a_, h))) for h, _, a_ in transfers]
                              + [tuple(sorted(b)) for b in form_bonds])
    return atoms, GeneralRelayPlan(int(n_catalysts), transfers, frozenset(reactant),
                                   frozenset(product))


def find_general_relay(substrate, catalyst, n_catalysts: int, *, donor: int, hydrogen: int,
                       acceptor: int, catalyst_atom: int, catalyst_hydrogen: int,
                       break_bonds=(), form_bonds=(), name: str = "TS-relay",
                       complex_name: str = "relay-complex", charge: int = 0,
                       multiplicity: int = 1, settings: Settings = Settings(),
                       cache: Cache | None = None, progress: bool = False, work_dir=None,
                       command: str | None = None):
    """Pre-reactive complex and verified relay saddle point of any substrate and catalyst
    (see :func:`general_relay_geometry`); returns (MinimumResult, SaddleResult, plan)."""
    kw = dict(donor=donor, hydrogen=hydrogen, acceptor=acceptor, catalyst_atom=catalyst_atom,
              catalyst_hydrogen=catalyst_hydrogen, break_bonds=break_bonds, form_bonds=form_bonds)
    start, plan = general_relay_geometry(substrate, catalyst, n_catalysts, stage="complex", **kw)
    cplx = compute_minimum(name=complex_name, atoms=start, charge=charge,
                           multiplicity=multiplicity, settings=settings, cache=cache,
                           progress=progress, work_dir=work_dir, command=command,
                           source=f"relay ring layout, {n_catalysts} catalyst molecule(s)")
    guess, _ = general_relay_geometry(substrate, catalyst, n_catalysts, stage="guess", **kw)
    sad = find_saddle(name=name, guess=guess, reactant_bonds=plan.reactant_bonds,
                      product_bonds=plan.product_bonds, charge=charge, multiplicity=multiplicity,
                      settings=settings, cache=cache, progress=progress, work_dir=work_dir,
                      command=command, reactant_name=f"{complex_name}-reactant-side",
                      product_name=f"{name}-product-side")
    return cplx, sad, plan
