"""Compare the numbers of two `tstrate run` output folders (CI packaging check).

Every number in results.json and fits.json must agree to 1e-12 relative (the same code on the
same machine gives the same floats); keys that name the run itself (creation time, paths) are
skipped. The bath-gas species must be in both mechanisms. Exit status 1 on any difference.
"""

import json
import math
import sys
from pathlib import Path

SKIP = {"created_utc", "study", "file", "files", "output_dir", "source", "input_files", "sha256"}


def walk(a, b, where, bad):
    if isinstance(a, dict) and isinstance(b, dict):
        if set(a) != set(b):
            bad.append(f"{where}: keys differ: {sorted(set(a) ^ set(b))}")
        for k in set(a) & set(b):
            if k not in SKIP:
                walk(a[k], b[k], f"{where}.{k}", bad)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            bad.append(f"{where}: lengths {len(a)} and {len(b)}")
        for i, (x, y) in enumerate(zip(a, b)):
            walk(x, y, f"{where}[{i}]", bad)
    elif isinstance(a, (int, float)) and isinstance(b, (int, float)) and not isinstance(a, bool):
        if not math.isclose(a, b, rel_tol=1e-12, abs_tol=1e-300):
            bad.append(f"{where}: {a!r} != {b!r}")
    elif isinstance(a, str) and isinstance(b, str):
        pass  # texts may hold paths
    elif a != b:
        bad.append(f"{where}: {a!r} != {b!r}")


def main(first, second):
    bad = []
    for name in ("results.json", "fits.json"):
        a = json.loads((Path(first) / name).read_text())
        b = json.loads((Path(second) / name).read_text())
        walk(a, b, name, bad)
    fits = json.loads((Path(second) / "fits.json").read_text())
    bath = fits.get("bath_gas")
    roles = [s.get("role") for s in fits.get("species", [])]
    if bath is None or "bath gas" not in roles and bath not in [s.get("name") for s in fits["species"]]:
        bad.append(f"fits.json: no bath-gas species in the installed run (bath_gas = {bath!r})")
    for line in bad[:30]:
        print("CI wheel:", line, file=sys.stderr)
    print(f"CI wheel: {len(bad)} differences between the checkout and the installed wheel")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main(*sys.argv[1:3]))
