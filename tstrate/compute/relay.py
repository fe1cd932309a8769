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
