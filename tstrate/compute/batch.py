"""The batch engine: many studies, refinements or uncertainty sample blocks as tasks on Dask.

Python use (the same as ``tstrate many``)::

    from tstrate.compute.batch import dask_client, run_batch, study_tasks, write_summary

    tasks = study_tasks(["a/study.toml", "b/study.toml"], "batch-out")
    with dask_client(workers=2) as client:            # a LocalCluster of 2 processes
        records = run_batch(tasks, client)
    write_summary(records, "batch-out")                # summary.csv, summary.json
    [r.status for r in records]                        # "done", "skipped" or "failed"

What runs where:

- **Cluster.** :func:`dask_client` starts a ``dask.distributed`` ``LocalCluster`` of worker
  processes on this machine (as many as cores, one thread each, with ``OMP_NUM_THREADS``,
  ``MKL_NUM_THREADS`` and ``OPENBLAS_NUM_THREADS`` set to 1 in the workers), or connects to
  a running scheduler by its address (a cluster started by ``dask-jobqueue`` on SLURM or
  PBS, or by ``dask scheduler`` / ``dask worker`` by hand; see docs/batch.md).
- **Tasks.** A :class:`Task` is one job: a whole study (``run``: what ``tstrate run`` writes,
  into ``<folder>/<name>/``), one species file refined with PySCF (``refine``: the refined
  species file ``<folder>/<name>.toml``), or the uncertainty of one study (``uncertainty``:
  the record ``tstrate uncertainty --json`` prints, in ``<folder>/<name>.json``), whose
  samples are split into blocks that run as separate tasks and are combined in order, so
  the numbers are those of the serial run.
- **Same numbers as serial runs.** Each task calls the same library functions as the serial
  command, with the same inputs; nothing is shared between tasks but the files they read.
- **Failures.** A task that fails (a bad input, a refused calculation, a crashed worker) is
  recorded with a one-line error; the other tasks go on.
- **Resuming.** Each task has a key: the SHA-256 of its kind, its options, the package
  versions, and the name and SHA-256 of every input file (for a study: the study file and
  the species files it names). A finished task leaves ``<folder>/tasks/<name>.json`` with
  its key; a later batch skips a task whose record has the same key and whose output is
  still there, and reruns it otherwise.
- **Summary.** :func:`write_summary` writes ``summary.json`` and ``summary.csv`` with every
  task (done, skipped or failed) and, per channel of a study, its fitted form and rate
  constants at the ends of its temperature grid.

The library never prints: progress comes back through ``on_done(record)``.
"""

from __future__ import annotations

import json
import logging
import os
import time
import traceback
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Iterable

from tstrate.errors import InputError

log = logging.getLogger(__name__)

#: kinds of task
TASK_KINDS = ("run", "refine", "uncertainty")
#: environment of the worker processes of a LocalCluster: one thread for every numerical library
WORKER_ENV = {"OMP_NUM_THREADS": "1", "MKL_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1"}
#: samples per uncertainty block task (rounded up to the uncertainty step's own block)
DEFAULT_SAMPLES_PER_TASK = 250
#: the folder of the task records inside a batch folder
RECORDS = "tasks"
#: names no task takes (the batch folder's own entries: tasks/, summary.json, summary.csv)
RESERVED_NAMES = (RECORDS, "summary")


# ---------------------------------------------------------------- tasks and their keys
@dataclass(frozen=True)
class Task:
    """One job of a batch.

    name: unique in the batch; names the output and the record. kind: one of :data:`TASK_KINDS`.
    source: the file the task starts from (a study or a species file). inputs: every file
    whose bytes decide the result (each once). options: JSON-able options of the job (they
    enter the key). output: the folder (run) or file (refine, uncertainty) written.
    key: hex SHA-256 of all of it (:func:`task_key`).
    """

    name: str
    kind: str
    source: str
    inputs: tuple[str, ...]
    options: dict
    output: str
    key: str


@dataclass(frozen=True)
class TaskRecord:
    """The outcome of one task: status "done", "skipped" (found finished with the same key) or
    "failed" (``error``: one line). seconds: wall time of the task on its worker [s] (for a
    skipped task, that of the run that made it). summary: per-kind numbers (see
    :func:`write_summary`)."""

    name: str
    kind: str
    source: str
    status: str
    key: str
    output: str
    seconds: float | None = None
    error: str | None = None
    summary: dict = field(default_factory=dict)

    def to_json(self) -> dict:
        """The record as tasks/<name>.json and summary.json hold it (units in the keys)."""
        return {"name": self.name, "kind": self.kind, "status": self.status, "source": self.source,
                "output": self.output, "input_key_sha256": self.key, "time_s": self.seconds, "error": self.error,
                "summary": self.summary}

    @classmethod
    def from_json(cls, doc: dict) -> "TaskRecord":
        return cls(doc["name"], doc["kind"], doc["source"], doc["status"], doc["input_key_sha256"], doc["output"],
                   doc.get("time_s"), doc.get("error"), doc.get("summary") or {})


def package_versions() -> dict[str, str]:
    """Versions of the packages whose numbers end up in the results of a task."""
    from importlib.metadata import PackageNotFoundError, version

    out = {}
    for pkg in ("tstrate", "numpy", "scipy", "matplotlib", "pyscf"):
        try:
            out[pkg] = version(pkg)
        except PackageNotFoundError:
            out[pkg] = "not installed"
    return out


def task_key(kind: str, inputs: Iterable[str], options: dict) -> str:
    """Hex SHA-256 of the kind, the options, :func:`package_versions` and the name and SHA-256 of
    each input file (a missing file raises the user-error type naming it)."""
    import hashlib

    from tstrate.io.files import file_sha256

    files = []
    for f in inputs:
        try:
            files.append({"file": str(f), "sha256": file_sha256(f)})
        except OSError as exc:
            raise InputError(f"cannot be read: {exc.strerror or exc}", file=str(f)) from None
    payload = {"kind": kind, "options": options, "inputs": files, "versions": package_versions()}
    text = json.dumps(payload, sort_keys=True, separators=(",", ":"), default=str)
    return hashlib.sha256(text.encode()).hexdigest()


def unique_names(paths: Iterable[str | os.PathLike]) -> list[str]:
    """A name per path, in order: the file stem (a ``study.toml``'s folder name), with ``-2``,
    ``-3``, ... after names already taken (as ``tstrate run`` names its default folders) and
    after :data:`RESERVED_NAMES`, the batch folder's own entries."""
    out, taken = [], set(RESERVED_NAMES)
    for p in paths:
        p = Path(p)
        stem = p.stem
        if stem == "study":
            stem = p.resolve().parent.name or stem
        name, i = stem, 2
        while name in taken:
            name = f"{stem}-{i}"
            i += 1
        taken.add(name)
        out.append(name)
    return out


@dataclass(frozen=True)
class Unstartable:
    """A task that could not even be described (its input cannot be read): it fails at once."""

    name: str
    kind: str
    source: str
    output: str
    error: str


def study_input_files(study) -> tuple[str, ...]:
    """Every file whose bytes decide a study's results: the study file, the species files it
    names, and the CSV altitude profiles of its [[excitation]] sections (each once)."""
    from tstrate.model.settings import US_STANDARD_1976
    from tstrate.output.folder import input_files

    files = list(input_files(study))
    for ex in study.sections.get("excitation") or ():
        profile = getattr(ex, "profile", None)
        if profile and profile != US_STANDARD_1976 and Path(profile).is_file():
            files.append(str(profile))
    return tuple(dict.fromkeys(files))


def _study_inputs(path) -> tuple[str, ...]:
    from tstrate.io.study import read_study

    return study_input_files(read_study(path))


def study_tasks(study_paths, folder, *, low_modes=None, kind: str = "run",
                uncertainty: dict | None = None) -> list:
    """One task per study file: ``kind`` "run" (``tstrate run`` into ``folder/<name>/``) or
    "uncertainty" (``tstrate uncertainty --json`` into ``folder/<name>.json``; ``uncertainty``:
    overrides ``samples``, ``seed``, ``sampling`` and ``samples_per_task``).

    low_modes: a :class:`tstrate.physics.thermo.LowModes` (default harmonic). A study that cannot
    be read gives an :class:`Unstartable` in its place, which :func:`run_batch` reports as failed.
    """
    if kind not in ("run", "uncertainty"):
        raise ValueError(f"kind must be 'run' or 'uncertainty', got {kind!r}")
    folder = Path(folder)
    lm = {"method": "harmonic", "cutoff_cm1": None} if low_modes is None else {
        "method": low_modes.method, "cutoff_cm1": low_modes.cutoff_cm1}
    options = {"low_modes": lm}
    if kind == "uncertainty":
        u = dict(uncertainty or {})
        options["uncertainty"] = {k: u.get(k) for k in ("samples", "seed", "sampling")}
        # the block size does not change the numbers, so it stays out of the key
        options_run = {"samples_per_task": int(u.get("samples_per_task") or DEFAULT_SAMPLES_PER_TASK)}
    else:
        options_run = {}
    out = []
    for name, path in zip(unique_names(study_paths), study_paths):
        target = folder / name if kind == "run" else folder / f"{name}.json"
        try:
            inputs = _study_inputs(path)
            key = task_key(kind, inputs, options)
        except InputError as exc:
            out.append(Unstartable(name, kind, str(path), str(target), str(exc)))
            continue
        out.append(Task(name, kind, str(path), inputs, options | options_run, str(target), key))
    return out


def refine_tasks(species_paths, folder, *, level: str, options: dict | None = None) -> list:
    """One task per species file refined with PySCF into ``folder/<name>.toml``.

    level: ``METHOD/BASIS`` (as ``tstrate compute refine --level``). options: keys of
    :func:`refine_settings` (density_fit, conv_tol_hartree, optimise, geometry_level, verify,
    analytic_hessian, max_steps, cc_max_basis_functions, cache_dir, use_cache).
    """
    folder = Path(folder)
    opts = {"level": level, **(options or {})}
    refine_settings(opts)  # a bad level or option is the user's error before anything runs
    key_opts = {k: v for k, v in opts.items() if k not in ("cache_dir", "use_cache")}
    out = []
    for name, path in zip(unique_names(species_paths), species_paths):
        target = folder / f"{name}.toml"
        try:
            key = task_key("refine", [str(path)], key_opts)
        except InputError as exc:
            out.append(Unstartable(name, "refine", str(path), str(target), str(exc)))
            continue
        out.append(Task(name, "refine", str(path), (str(path),), opts, str(target), key))
    return out


def refine_settings(opts: dict):
    """(Level, geometry Level or None, RefineOptions) from the JSON-able options of a refine task."""
    from tstrate.compute.refine import DEFAULT_CC_MAX_BASIS, RefineOptions, parse_level

    kw = {"density_fit": bool(opts.get("density_fit", True)),
          "conv_tol_hartree": float(opts.get("conv_tol_hartree", 1e-10))}
    level = parse_level(opts["level"], field_name="--level", **kw)
    glevel = (parse_level(opts["geometry_level"], field_name="--geometry-level", **kw)
              if opts.get("geometry_level") else None)
    if glevel is not None and not opts.get("optimise"):
        raise InputError("--geometry-level is the level of --optimise", field="--geometry-level",
                         hint="add --optimise")
    options = RefineOptions(optimise=bool(opts.get("optimise", False)), geometry_level=glevel,
                            verify=bool(opts.get("verify", True)),
                            analytic_hessian=opts.get("analytic_hessian"),
                            max_steps=int(opts.get("max_steps", 100)),
                            cc_max_basis_functions=int(opts.get("cc_max_basis_functions", DEFAULT_CC_MAX_BASIS)))
    return level, glevel, options


# ---------------------------------------------------------------- what a task does (on a worker)
def one_line(exc: BaseException) -> str:
    """An exception as one line: the user-error text, else ``Type: message`` and where it arose."""
    if isinstance(exc, InputError):
        return " ".join(str(exc).split())
    text = " ".join(f"{type(exc).__name__}: {exc}".split())
    tb = traceback.extract_tb(exc.__traceback__)
    if tb:
        last = tb[-1]
        text += f" (at {Path(last.filename).name}:{last.lineno})"
    return text


@contextmanager
def _one_thread():
    """One BLAS/OpenMP thread in this worker while a task runs. A LocalCluster sets the
    environment already; this also covers workers started elsewhere, when threadpoolctl is
    installed (without it, start such workers with OMP_NUM_THREADS=1)."""
    try:
        from threadpoolctl import threadpool_limits
    except ImportError:
        yield
        return
    with threadpool_limits(1):
        yield


def _low_modes(options):
    from tstrate.physics.thermo import LowModes

    lm = options.get("low_modes") or {}
    if lm.get("cutoff_cm1") is None:
        return LowModes(lm.get("method", "harmonic"))
    return LowModes(lm["method"], lm["cutoff_cm1"])


def study_summary(result) -> dict:
    """Per channel of a study result: fitted form and k at the ends of the grid (study units)."""
    from tstrate.output.records import rate_from_SI, rate_unit

    units = result.study.conditions.rate_units
    forms = {c.name: c.mechanism_kind for c in result.fits.channels}
    channels = []
    for cr in result.rates:
        unit = rate_unit(cr.order, units)
        T = cr.temperature_K
        k = rate_from_SI(cr.k, cr.order, unit)
        channels.append({"name": cr.channel, "order": int(cr.order), "mechanism_kind": forms.get(cr.channel),
                         "T_min_K": float(T[0]), "T_max_K": float(T[-1]),
                         "rate_constant_at_T_min": float(k[0]), "rate_constant_at_T_max": float(k[-1]),
                         "rate_constant_unit": unit})
    return {"title": result.study.title, "channels": channels, "n_warnings": len(result.warnings)}


def _do_run(task: Task) -> dict:
    from tstrate.io.study import read_study
    from tstrate.output.folder import write_outputs
    from tstrate.study.run import compute_study

    result = compute_study(read_study(task.source), low_modes=_low_modes(task.options))
    files = write_outputs(result, task.output, force=True)
    return study_summary(result) | {"n_files": len(files)}


def _do_refine(task: Task) -> dict:
    from tstrate.compute.cache import Cache
    from tstrate.compute.refine import refine_species
    from tstrate.io.species import read_species, write_species

    level, glevel, options = refine_settings(task.options)
    cache = Cache(task.options.get("cache_dir"), enabled=bool(task.options.get("use_cache", True)))
    res = refine_species(read_species(task.source), level, options, cache=cache,
                         command="tstrate many refine", threads=1)
    write_species(res.species, task.output, overwrite=True)
    text = level.label + (f" // {glevel.label}" if glevel else (f" // {level.label}" if options.optimise else ""))
    return {"species": res.species.name, "level": text,
            "energy_kJ_per_mol": float(res.species.energy_J_per_mol) / 1e3, "from_cache": bool(res.from_cache)}


def execute_task(task: Task) -> TaskRecord:
    """Run one task here (on a worker, or in this process) and return its record; a failure is
    caught and recorded as one line. The output is written atomically, then the record."""
    start = time.perf_counter()
    try:
        with _one_thread():
            if task.kind == "run":
                summary = _do_run(task)
            elif task.kind == "refine":
                summary = _do_refine(task)
            else:
                raise ValueError(f"execute_task runs 'run' and 'refine' tasks, not {task.kind!r}")
    except Exception as exc:  # one failing task must not lose the others
        return _record(task, "failed", time.perf_counter() - start, error=one_line(exc))
    return _record(task, "done", time.perf_counter() - start, summary=summary)


def _record(task, status, seconds=None, *, error=None, summary=None) -> TaskRecord:
    return TaskRecord(task.name, task.kind, task.source, status, getattr(task, "key", ""), task.output,
                      None if seconds is None else float(seconds), error, summary or {})


# ---- uncertainty: a deterministic run, sample blocks, and the rest of the step
def uncertainty_settings(study, overrides: dict):
    """The study's [uncertainty] settings (else the defaults) with ``overrides`` (samples, seed,
    sampling) applied; a bad override names its option (``--samples`` ...)."""
    from dataclasses import replace

    from tstrate.model.uncertainty import UncertaintySettings

    settings = study.sections.get("uncertainty") or UncertaintySettings()
    changes = {k: v for k, v in overrides.items() if k in ("samples", "seed", "sampling") and v is not None}
    if changes:
        try:
            settings = replace(settings, **changes)
        except InputError as exc:
            raise InputError(exc.problem, field="--" + (exc.field or "samples"), hint=exc.hint) from None
    return settings


def deterministic_for_uncertainty(study_path, options: dict):
    """The deterministic result an uncertainty run starts from (as ``tstrate uncertainty``):
    the study without its [uncertainty] step."""
    from dataclasses import replace

    from tstrate.io.study import read_study
    from tstrate.study.run import compute_study

    study = read_study(study_path)
    sections = {k: v for k, v in study.sections.items() if k != "uncertainty"}
    return compute_study(replace(study, sections=sections), low_modes=_low_modes(options))


def _unc_deterministic(task: Task):
    try:
        with _one_thread():
            return deterministic_for_uncertainty(task.source, task.options)
    except Exception as exc:
        return _Failure(one_line(exc))


@dataclass(frozen=True)
class _Failure:
    error: str


def _unc_block(result, settings, start: int, stop: int):
    """The sampled rows start:stop of an uncertainty task (or the failure that stopped it)."""
    if isinstance(result, _Failure):
        return result
    from tstrate.study.uncertainty import evaluate_sample_block, uncertainty_setup

    try:
        with _one_thread():
            _, space, U = uncertainty_setup(result.study, settings)
            return evaluate_sample_block(result, space, U[start:stop])
    except Exception as exc:
        return _Failure(one_line(exc))


def _unc_finish(result, task: Task, settings, started: float, *blocks) -> TaskRecord:
    """The rest of the uncertainty step from the combined blocks; writes the record file."""
    for b in (result, *blocks):
        if isinstance(b, _Failure):
            return _record(task, "failed", time.time() - started, error=b.error)
    from tstrate.io.files import atomic_write_text
    from tstrate.output.records import to_jsonable
    from tstrate.output.uncertainty_records import uncertainty_record
    from tstrate.study.uncertainty import combine_sample_blocks, study_uncertainty

    try:
        with _one_thread():
            unc = study_uncertainty(result, settings, sampled=combine_sample_blocks(blocks))
            doc = {"study": result.study.file, "title": result.study.title,
                   **uncertainty_record(unc, result.study.conditions.rate_units)}
            atomic_write_text(task.output, json.dumps(to_jsonable(doc), indent=2) + "\n")
            summary = {"title": result.study.title, "n_samples": int(unc.samples),
                       "channels": [{"name": c.name, "f298": float(c.f298), "g_K": float(c.g_K),
                                     "matters_most": c.k.ranking[0].factor if c.k.ranking else None}
                                    for c in unc.channels]}
    except Exception as exc:
        return _record(task, "failed", time.time() - started, error=one_line(exc))
    return _record(task, "done", time.time() - started, summary=summary)


def _uncertainty_plan(task: Task):
    """(settings, [(start, stop), ...]) of an uncertainty task: the study's settings with the
    task's overrides (the deterministic result has no [uncertainty] section, so they are read
    here) and its sample blocks."""
    from tstrate.io.study import read_study
    from tstrate.study.uncertainty import sample_block_ranges

    settings = uncertainty_settings(read_study(task.source), task.options.get("uncertainty") or {})
    return settings, sample_block_ranges(settings.samples, int(task.options.get("samples_per_task",
                                                                                DEFAULT_SAMPLES_PER_TASK)))


def _submit(client, task: Task):
    """The future of a task's record on ``client`` (uncertainty: a small graph)."""
    if task.kind != "uncertainty":
        return client.submit(execute_task, task, pure=False, key=f"tstrate-{task.kind}-{task.name}-{time.time_ns()}")
    settings, ranges = _uncertainty_plan(task)
    stamp = time.time_ns()
    det = client.submit(_unc_deterministic, task, pure=False, key=f"tstrate-det-{task.name}-{stamp}")
    blocks = [client.submit(_unc_block, det, settings, a, b, pure=False, key=f"tstrate-block-{task.name}-{a}-{stamp}")
              for a, b in ranges]
    return client.submit(_unc_finish, det, task, settings, time.time(), *blocks, pure=False,
                         key=f"tstrate-finish-{task.name}-{stamp}")


# ---------------------------------------------------------------- the cluster
@contextmanager
def dask_client(scheduler_address: str | None = None, *, workers: int | None = None,
                scheduler_file: str | None = None, cluster=None):
    """A ``dask.distributed.Client``: connected to ``scheduler_address`` (``tcp://host:8786``),
    to the scheduler described by ``scheduler_file`` (``dask scheduler --scheduler-file``), or
    to ``cluster`` (e.g. a ``dask_jobqueue.SLURMCluster``) when given; else to a new
    ``LocalCluster`` of ``workers`` processes (default: the cores), one thread each, one
    BLAS/OpenMP thread each (:data:`WORKER_ENV`). The client (and a LocalCluster it started)
    are closed on exit; a given cluster is left running."""
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:
        raise InputError("the batch engine needs dask.distributed", field="--scheduler",
                         hint="pip install 'tstrate[cluster]' (or dask[distributed])") from None
    if scheduler_address or scheduler_file or cluster is not None:
        field_name = "--scheduler" if scheduler_address else "--scheduler-file" if scheduler_file else "cluster"
        where = scheduler_address or scheduler_file or cluster
        if scheduler_file and not Path(scheduler_file).is_file():  # Client would wait for it forever
            raise InputError("scheduler file does not exist", file=str(scheduler_file), field="--scheduler-file",
                             hint="start the scheduler with dask scheduler --scheduler-file FILE first")
        try:
            if cluster is not None:
                client = Client(cluster)
            elif scheduler_file:
                client = Client(scheduler_file=str(scheduler_file), timeout="30s")
            else:
                client = Client(scheduler_address, timeout="30s")
        except (OSError, TimeoutError, ValueError) as exc:
            raise InputError(f"cannot reach the scheduler {where}: {' '.join(str(exc).split())}",
                             field=field_name) from None
        try:
            yield client
        finally:
            client.close()
        return
    n = int(workers or os.cpu_count() or 1)
    if n < 1:
        raise InputError(f"{n} workers; give at least 1", field="--workers")
    with LocalCluster(n_workers=n, threads_per_worker=1, processes=True, env=dict(WORKER_ENV),
                      dashboard_address=None, silence_logs=logging.ERROR) as cluster, Client(cluster) as client:
        yield client


# ---------------------------------------------------------------- the batch
def record_path(folder, name: str) -> Path:
    return Path(folder) / RECORDS / f"{name}.json"


def finished_record(task: Task, folder) -> TaskRecord | None:
    """The record of an earlier run of ``task`` that can stand for it: status done, the same key,
    and its output still there; else None."""
    path = record_path(folder, task.name)
    try:
        doc = json.loads(path.read_text())
    except (OSError, ValueError):
        return None
    out = Path(task.output)
    present = out.is_dir() if task.kind == "run" else out.is_file()
    if doc.get("status") != "done" or doc.get("input_key_sha256") != task.key or not present:
        return None
    try:
        old = TaskRecord.from_json(doc)
    except (KeyError, TypeError):
        return None
    return TaskRecord(old.name, old.kind, old.source, "skipped", old.key, old.output, old.seconds, old.error,
                      old.summary)


def _write_record(rec: TaskRecord, folder) -> None:
    from tstrate.io.files import atomic_write_text

    atomic_write_text(record_path(folder, rec.name), json.dumps(rec.to_json(), indent=2) + "\n")


def run_batch(tasks, client, folder, *, resume: bool = True,
              on_done: Callable[[TaskRecord], None] | None = None) -> list[TaskRecord]:
    """Run ``tasks`` (from :func:`study_tasks`, :func:`refine_tasks`) on ``client``.

    Tasks with a finished record of the same key in ``folder`` are skipped when ``resume``.
    Each record is written to ``folder/tasks/<name>.json`` as its task ends, and
    ``on_done(record)`` is called (in the order tasks end). Returns the records in the order
    of ``tasks``. Only a bug of the engine itself raises.
    """
    from dask.distributed import as_completed

    folder = Path(folder)
    (folder / RECORDS).mkdir(parents=True, exist_ok=True)
    records: dict[str, TaskRecord] = {}

    def finish(rec):
        records[rec.name] = rec
        if rec.status != "skipped":
            _write_record(rec, folder)
        if on_done:
            on_done(rec)

    tasks = list(tasks)
    names = [t.name for t in tasks]
    twice = sorted({n for n in names if names.count(n) > 1})
    if twice:
        raise InputError(f"two tasks are named {twice[0]!r}; their records would overwrite each other",
                         file=str(folder), hint="give each task its own name (or run them in separate folders)")
    futures = {}
    for task in tasks:
        if isinstance(task, Unstartable):
            finish(TaskRecord(task.name, task.kind, task.source, "failed", "", task.output, None, task.error))
            continue
        old = finished_record(task, folder) if resume else None
        if old is not None:
            finish(old)
            continue
        if task.kind == "uncertainty":
            try:
                fut = _submit(client, task)
            except InputError as exc:
                finish(_record(task, "failed", error=one_line(exc)))
                continue
        else:
            fut = _submit(client, task)
        futures[fut] = task
    for fut in as_completed(list(futures)):
        task = futures[fut]
        try:
            rec = fut.result()
        except Exception as exc:  # the worker died, or the task could not be sent or run
            rec = _record(task, "failed", error=one_line(exc))
        finish(rec)
    return [records[t.name] for t in tasks]


# ---------------------------------------------------------------- the summary
SUMMARY_COLUMNS = ("task", "kind", "status", "source", "output", "time [s]", "error", "title", "channel",
                   "mechanism form", "T min [K]", "T max [K]", "k at T min", "k at T max", "k unit",
                   "f298 [1]", "g [K]", "matters most", "species", "level", "energy [kJ mol-1]")


def summary_rows(records: Iterable[TaskRecord]) -> list[list]:
    """Rows of summary.csv (:data:`SUMMARY_COLUMNS`): one per channel of a study (run and
    uncertainty tasks), one per species (refine), one for a failed task."""
    rows = []
    for r in records:
        base = [r.name, r.kind, r.status, r.source, r.output, r.seconds, r.error or ""]
        s = r.summary or {}
        blank = [""] * (len(SUMMARY_COLUMNS) - len(base))
        if r.kind == "refine" and s:
            rows.append(base + blank[:-3] + [s.get("species"), s.get("level"), s.get("energy_kJ_per_mol")])
            continue
        chans = s.get("channels") or []
        if not chans:
            rows.append(base + blank)
            continue
        for c in chans:
            if r.kind == "run":
                mid = [s.get("title"), c["name"], c.get("mechanism_kind"), c.get("T_min_K"), c.get("T_max_K"),
                       c.get("rate_constant_at_T_min"), c.get("rate_constant_at_T_max"), c.get("rate_constant_unit"),
                       "", "", ""]
            else:
                mid = [s.get("title"), c["name"], "", "", "", "", "", "", c.get("f298"), c.get("g_K"),
                       c.get("matters_most") or ""]
            rows.append(base + mid + ["", "", ""])
    return rows


def summary_document(records: list[TaskRecord]) -> dict:
    """summary.json: counts and every task record (units in the keys)."""
    counts = {s: sum(1 for r in records if r.status == s) for s in ("done", "skipped", "failed")}
    return {"tasks_total": len(records), **{f"tasks_{k}": v for k, v in counts.items()},
            "tasks": [r.to_json() for r in records]}


def write_summary(records: list[TaskRecord], folder) -> list[Path]:
    """Write summary.json and summary.csv into ``folder`` (atomically); returns their paths."""
    from tstrate.io.files import atomic_write_text
    from tstrate.output.tables import csv_text

    folder = Path(folder)
    atomic_write_text(folder / "summary.json", json.dumps(summary_document(records), indent=2) + "\n")
    atomic_write_text(folder / "summary.csv", csv_text(list(SUMMARY_COLUMNS), summary_rows(records)))
    return [folder / "summary.json", folder / "summary.csv"]


__all__ = ["TASK_KINDS", "Task", "TaskRecord", "Unstartable", "study_tasks", "refine_tasks", "task_key",
           "execute_task", "dask_client", "run_batch", "finished_record", "write_summary", "summary_rows",
           "summary_document", "deterministic_for_uncertainty", "uncertainty_settings"]
