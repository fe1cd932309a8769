"""Shared test helpers: a valence force-field Hessian written out analytically.

The Hessian of a sum of harmonic valence terms at their reference geometry is
B^T K B, where B holds the first derivatives of the internal coordinates with
respect to the Cartesian coordinates (Wilson, Decius and Cross, Molecular
Vibrations, 1955, ch. 4) and K the (diagonal) force constants. This gives
Hessians with exactly known properties (zero gradient, exact translational and
rotational invariance) without any electronic-structure program. The tests import
these helpers directly (``from tests.conftest import ...``).
"""

from __future__ import annotations

import numpy as np
from hypothesis import settings as _hypothesis_settings

# property-based tests draw the same examples on every run and machine (no example database
# replaying old failures), so that the suite's result does not depend on where it ran before
_hypothesis_settings.register_profile("tstrate", derandomize=True, database=None)
_hypothesis_settings.load_profile("tstrate")


def _unit(v):
    return v / np.linalg.norm(v)


def valence_b_rows(positions_A, bonds=(), angles=(), linear_bends=()):
    """Rows of Wilson's B matrix [1/m for lengths, rad/m for angles] and the force constants.

    bonds: (i, j, k [N/m]) for the distance i-j.
    angles: (i, j, k, k_theta [J/rad^2]) for the angle i-j-k (apex j).
    linear_bends: (i, j, k, k [N/m]) for the sideways displacement of j from the
        midpoint of i and k, in both directions perpendicular to the i-k axis.
    """
    x = np.asarray(positions_A, dtype=float) * 1e-10  # [m]
    n = len(x)
    rows, consts = [], []
    for i, j, k in bonds:
        e = _unit(x[i] - x[j])
        b = np.zeros((n, 3))
        b[i], b[j] = e, -e
        rows.append(b.ravel())
        consts.append(k)
    for i, j, l, k in angles:
        r1, r2 = x[i] - x[j], x[l] - x[j]
        d1, d2 = np.linalg.norm(r1), np.linalg.norm(r2)
        e1, e2 = r1 / d1, r2 / d2
        c = e1 @ e2
        s = np.sqrt(1.0 - c * c)
        b = np.zeros((n, 3))
        b[i] = (c * e1 - e2) / (d1 * s)
        b[l] = (c * e2 - e1) / (d2 * s)
        b[j] = -b[i] - b[l]
        rows.append(b.ravel())
        consts.append(k)
    for i, j, l, k in linear_bends:
        axis = _unit(x[l] - x[i])
        trial = np.eye(3)[np.argmin(np.abs(axis))]
        p1 = _unit(np.cross(axis, trial))
        p2 = np.cross(axis, p1)
        for p in (p1, p2):
            b = np.zeros((n, 3))
            b[i], b[j], b[l] = -0.5 * p, p, -0.5 * p
            rows.append(b.ravel())
            consts.append(k)
    return np.array(rows), np.array(consts, dtype=float)


def valence_hessian_J_per_m2(positions_A, **terms):
    """Cartesian Hessian [J/m^2] of a diagonal valence force field at its reference geometry."""
    b, k = valence_b_rows(positions_A, **terms)
    return b.T @ (k[:, None] * b)


#: Approximate diagonal valence force constants of water (from memory; textbook
#: magnitudes: 8.4 mdyn/Angstrom for O-H, 0.76 mdyn Angstrom/rad^2 for the bend). They only
#: have to give a realistic model Hessian (the D2O test compares only frequency ratios with
#: experiment, and those depend on them weakly).
WATER_K_OH_N_PER_M = 845.0
WATER_K_BEND_J_PER_RAD2 = 0.76e-18

#: Experimental H2O geometry (tstrate/io/reference/h2o.toml: r(OH) = 0.9572 A, HOH = 104.52 deg)
WATER_SYMBOLS = ("O", "H", "H")
WATER_POSITIONS_A = np.array([[0.0, 0.0, 0.0],
                              [0.0, 0.756950, 0.585882],
                              [0.0, -0.756950, 0.585882]])


def water_terms(k_bend=WATER_K_BEND_J_PER_RAD2):
    """Valence terms of the H2O model (two O-H stretches, one bend) for the functions above."""
    return dict(bonds=[(1, 0, WATER_K_OH_N_PER_M), (2, 0, WATER_K_OH_N_PER_M)],
                angles=[(1, 0, 2, k_bend)])


# ---------------------------------------------------------------------------------------
# one run of the demo study per test session
# ---------------------------------------------------------------------------------------

import contextlib  # noqa: E402
import io  # noqa: E402
import json  # noqa: E402
import shutil  # noqa: E402
from pathlib import Path  # noqa: E402

import pytest  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "molecules" / "carbonic_acid"


def reduced_demo(folder: Path) -> Path:
    """A copy of the bundled GFN2-xTB carbonic-acid demo in ``folder`` with fewer temperatures
    (the rest of the study as bundled); returns the study file."""
    shutil.copytree(DEMO, folder, ignore=shutil.ignore_patterns("inputs", "*.sh", "*.md"))
    path = folder / "study.toml"
    text = path.read_text()
    start = text.index("temperature_K = [150")
    end = text.index("]", start) + 1
    path.write_text(text[:start] + "temperature_K = [200, 215, 230, 245, 260, 275, 290, 300]" + text[end:])
    return path


def run_cli_json(argv: list[str]):
    """``tstrate ARGV`` in this process; its exit status must be 0 and its stdout JSON."""
    from tstrate.cli.main import main

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        code = main(argv)
    assert code == 0, (argv, buf.getvalue())
    return json.loads(buf.getvalue())


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory):
    """``tstrate run STUDY --output OUT --json`` of the reduced demo, once per test session:
    (study file, output folder, the --json summary). Tests only read the folder."""
    base = tmp_path_factory.mktemp("demo_run")
    study = reduced_demo(base / "study")
    out = base / "out"
    summary = run_cli_json(["run", str(study), "--output", str(out), "--quiet", "--json"])
    return study, out, summary
