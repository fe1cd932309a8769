"""The whole run written to one folder, atomically: what ``tstrate run`` leaves on disk.

Everything is written into a temporary folder beside the target and renamed into place at the
end, so an interrupted run leaves nothing half-written.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path
from typing import Callable

from tstrate.errors import InputError
from tstrate.model import Study
from tstrate.study.run import StudyResult


def input_files(study: Study) -> list[str]:
    """The study file and every species file it names (each once)."""
    return ([study.file] if study.file else []) + list(dict.fromkeys(study.species_files.values()))


def default_output_dir(study: Study, base: str | Path = "tstrate-output") -> Path:
    """``tstrate-output/<study stem>``, or ``-2``, ``-3``, ... when that exists (never reuse one)."""
    stem = Path(study.file).stem if study.file else "study"
    if study.file and stem == "study":
        stem = Path(study.file).resolve().parent.name or stem
    base = Path(base)
    candidate = base / stem
    i = 2
    while candidate.exists():
        candidate = base / f"{stem}-{i}"
        i += 1
    return candidate


def write_outputs(result: StudyResult, output_dir, *, force: bool = False,
                  progress: Callable[[str], None] | None = None, plots=None) -> list[Path]:
    """Write every output of ``result`` into ``output_dir`` atomically.

    Everything is written into a temporary folder beside ``output_dir`` and
    renamed into place at the end, so an interrupted run leaves nothing
    half-written. An existing ``output_dir`` is replaced only with ``force``;
    a folder holding an input file is never replaced. ``plots``: which figures and formats
    (:class:`tstrate.output.plots.PlotSettings`; default PNG only).
    """
    from tstrate.io.files import current_umask
    from tstrate.output.run_files import write_all

    out = Path(output_dir)
    inputs = [Path(f).resolve() for f in input_files(result.study)]
    if out.exists():
        if not force:
            raise InputError("output folder exists", file=str(out),
                             hint="pass --force to replace it, or choose another --output")
        if not out.is_dir():
            raise InputError("output path exists and is not a folder", file=str(out))
        resolved = out.resolve()
        if any(resolved == p or resolved in p.parents for p in inputs):
            raise InputError("output folder holds input files; refusing to replace it", file=str(out))
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
        tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.", suffix=".part", dir=out.parent))
    except OSError as exc:
        raise InputError(f"cannot write the output folder: {exc.strerror}", file=str(out)) from None
    try:
        os.chmod(tmp, 0o777 & ~current_umask())
        written = write_all(result, tmp, progress=progress, plots=plots)
        if out.exists():
            old = out.with_name(f".{out.name}.old")
            if old.exists():
                shutil.rmtree(old)
            out.rename(old)
            tmp.rename(out)
            shutil.rmtree(old)
        else:
            tmp.rename(out)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    return [out / p.relative_to(tmp) for p in written]

