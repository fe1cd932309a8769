"""The layer order of the package (docs/architecture.md): imports only run down.

    errors, units, arrays, geometry  <  model  <  physics  <  expressions  <  study
        <  io, output (side by side; output may use io.files only)  <  compute  <  cli

Imports inside functions count too. The check reads the source with :mod:`ast`, so it needs
nothing installed and fails on the first import that runs back up.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "tstrate"

#: dotted prefix inside the package -> layer (a lower layer may not import a higher one)
LAYERS = {"errors": 0, "units": 0, "arrays": 0, "geometry": 0, "model": 1, "physics": 2, "expressions": 3,
          "study": 4, "io": 5, "output": 5, "compute": 6, "cli": 7}


def _room(dotted: str) -> str | None:
    head = dotted.split(".")[0]
    return head if head in LAYERS else None


def _modules():
    for path in sorted(PACKAGE.rglob("*.py")):
        rel = path.relative_to(PACKAGE).with_suffix("")
        parts = list(rel.parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        yield path, ".".join(parts)


def _imports(path: Path, dotted: str):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    here = dotted.split(".") if dotted else []
    package = here if path.name == "__init__.py" else here[:-1]
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.startswith("tstrate."):
                    yield node.lineno, alias.name[len("tstrate."):]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - (node.level - 1)] if node.level > 1 else package
                target = ".".join(base + ([node.module] if node.module else []))
            elif node.module and node.module.startswith("tstrate."):
                target = node.module[len("tstrate."):]
            elif node.module == "tstrate":
                for alias in node.names:
                    yield node.lineno, alias.name
                continue
            else:
                continue
            yield node.lineno, target


def _allowed(source: str, target: str) -> bool:
    """May module ``source`` import ``target`` (both dotted, inside the package)?"""
    mine, theirs = _room(source), _room(target)
    if mine is None or theirs is None or mine == theirs:
        return True
    crossing = {mine, theirs} == {"io", "output"} and not (mine == "output" and target.startswith("io.files"))
    return LAYERS[theirs] <= LAYERS[mine] and not crossing


def test_every_module_sits_in_a_layer():
    outside = [str(p) for p, d in _modules() if d not in ("", "__main__") and _room(d) is None]
    assert not outside, f"modules outside the layers: {outside}"


def test_imports_only_run_down():
    bad = []
    for path, dotted in _modules():
        for line, target in _imports(path, dotted):
            if not _allowed(dotted, target):
                bad.append(f"{path.relative_to(PACKAGE.parent)}:{line}: {dotted} imports {target}")
    assert not bad, "imports that run back up the layers:\n" + "\n".join(bad)


@pytest.mark.parametrize("source,target,allowed", [
    ("physics.tst", "model.species", True), ("model.species", "physics.symmetry", False),
    ("output.tables", "cli.common", False), ("output.tables", "io.files", True),
    ("io.study", "output.records", False), ("study.run", "expressions.arrhenius", True),
])
def test_the_rule_itself(source, target, allowed):
    """The rule the check applies catches real violations (it is not a check that cannot fail)."""
    assert _allowed(source, target) is allowed
