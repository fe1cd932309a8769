"""``tstrate many``: many studies, refinements or uncertainty runs as tasks on Dask."""

from __future__ import annotations

import argparse

HELP = "run many studies, refinements or uncertainty runs at once on a Dask cluster (local by default)"
DESCRIPTION = """\
Runs many jobs as tasks on a dask.distributed cluster and writes them into one folder:

  run          each STUDY as `tstrate run` does, into FOLDER/<name>/
  refine       each SPECIES_FILE (or every species file of --study) as
               `tstrate compute refine` does, into FOLDER/<name>.toml
  uncertainty  each STUDY as `tstrate uncertainty --json` does, into
               FOLDER/<name>.json; its samples are split into blocks of
               --samples-per-task that run as separate tasks

By default a LocalCluster of worker processes starts on this machine (one per
core, one thread each, OMP_NUM_THREADS=1); --scheduler ADDRESS uses a running
cluster instead (for SLURM or PBS through dask-jobqueue: docs/batch.md). The
numbers are those of the serial commands.

A task that fails is reported in one line and the others go on; the exit
status is then 1. Each finished task leaves FOLDER/tasks/<name>.json with a
SHA-256 key of its input files (a study and the species files it names) and
options: running the same command again skips the tasks whose key and output
are unchanged (--redo runs them all). FOLDER/summary.csv and summary.json list
every task, and per channel its fitted form and rate constants (run) or f298,
g and what matters most (uncertainty). <name> is the file stem (a study.toml's
folder name), with -2, -3 ... when taken.
"""


def _common(p) -> None:
    from tstrate.cli.common import add_quiet_option

    p.add_argument("--traceback", action="store_true", default=argparse.SUPPRESS,
                   help="show the full Python traceback on errors")
    p.add_argument("--output-dir", "-o", default="tstrate-many", metavar="FOLDER",
                   help="folder of the outputs, task records and summary (default %(default)s)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="address of a running Dask scheduler (tcp://host:8786) instead of a local cluster")
    p.add_argument("--scheduler-file", metavar="FILE",
                   help="the JSON file a running scheduler wrote (dask scheduler --scheduler-file FILE)")
    p.add_argument("--workers", type=int, metavar="N",
                   help="worker processes of the local cluster (default: the number of cores)")
    p.add_argument("--redo", action="store_true", help="run every task, also those found finished")
    add_quiet_option(p)
    p.add_argument("--json", action="store_true", help="print the summary (summary.json) on stdout")


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_low_mode_options
    from tstrate.compute.refine import DEFAULT_BASIS, DEFAULT_CC_MAX_BASIS, DEFAULT_METHOD

    sub = parser.add_subparsers(dest="many_command", metavar="JOB", required=True)
    p = sub.add_parser("run", help="each study as `tstrate run`", description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("studies", nargs="+", metavar="STUDY", help="study files (TOML)")
    add_low_mode_options(p)
    _common(p)

    p = sub.add_parser("uncertainty", help="each study as `tstrate uncertainty --json`, in sample blocks",
                       description=DESCRIPTION, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("studies", nargs="+", metavar="STUDY", help="study files (TOML)")
    p.add_argument("--samples", "-n", type=int, metavar="N", help="number of samples (default: the study's, "
                   "else 1000)")
    p.add_argument("--seed", type=int, metavar="S", help="seed of the sampling (default: the study's, else 1)")
    p.add_argument("--sampling", choices=("sobol", "latin-hypercube"),
                   help="sampling design (default: the study's, else sobol)")
    p.add_argument("--samples-per-task", type=int, default=250, metavar="N",
                   help="samples per block task, rounded up to a multiple of 250 (default %(default)s); "
                        "it does not change the numbers")
    add_low_mode_options(p)
    _common(p)

    p = sub.add_parser("refine", help="each species file as `tstrate compute refine`", description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("species_files", nargs="*", metavar="SPECIES_FILE", help="species files (.toml) to refine")
    p.add_argument("--study", help="refine every species file the study names")
    p.add_argument("--level", default=f"{DEFAULT_METHOD}/{DEFAULT_BASIS}", metavar="METHOD/BASIS",
                   help="energy level, as tstrate compute refine --level (default %(default)s)")
    p.add_argument("--no-density-fit", action="store_true", help="no density fitting of the SCF")
    p.add_argument("--optimise", action="store_true", help="re-optimise the geometry and compute its Hessian")
    p.add_argument("--geometry-level", metavar="METHOD/BASIS", help="level of --optimise (default: --level)")
    p.add_argument("--no-verify", action="store_true", help="skip the downhill checks of a re-optimised TS")
    p.add_argument("--hessian", choices=("auto", "analytic", "finite-difference"), default="auto",
                   help="how the Hessian of --optimise is made (default %(default)s)")
    p.add_argument("--max-steps", type=int, default=100, help="geomeTRIC step limit (default %(default)s)")
    p.add_argument("--scf-tolerance", type=float, default=1e-10, metavar="HARTREE",
                   help="SCF energy convergence (default %(default)s hartree)")
    p.add_argument("--cc-max-basis-functions", type=int, default=DEFAULT_CC_MAX_BASIS,
                   help="refuse coupled-cluster runs above this many basis functions (default %(default)s)")
    p.add_argument("--cache-dir", default=None, help="cache folder (default $TSTRATE_CACHE or ~/.cache/tstrate)")
    p.add_argument("--no-cache", action="store_true", help="neither read nor write the cache")
    _common(p)


def _tasks(args):
    from pathlib import Path

    from tstrate.cli.common import low_modes_from_args
    from tstrate.compute import batch
    from tstrate.errors import InputError

    if args.many_command == "refine":
        paths = [str(p) for p in args.species_files]
        if args.study:
            from tstrate.io.study import read_study

            seen = {Path(p).resolve() for p in paths}
            for f in read_study(args.study).species_files.values():
                if Path(f).resolve() not in seen:
                    paths.append(str(f))
                    seen.add(Path(f).resolve())
        if not paths:
            raise InputError("give species files or --study", field="SPECIES_FILE")
        if args.max_steps < 1 or args.cc_max_basis_functions < 1:
            raise InputError("--max-steps and --cc-max-basis-functions must be positive", field="--max-steps")
        options = {"density_fit": not args.no_density_fit, "conv_tol_hartree": args.scf_tolerance,
                   "optimise": args.optimise, "geometry_level": args.geometry_level, "verify": not args.no_verify,
                   "analytic_hessian": {"auto": None, "analytic": True, "finite-difference": False}[args.hessian],
                   "max_steps": args.max_steps, "cc_max_basis_functions": args.cc_max_basis_functions,
                   "cache_dir": args.cache_dir, "use_cache": not args.no_cache}
        return batch.refine_tasks(paths, args.output_dir, level=args.level, options=options)
    low_modes = low_modes_from_args(args)
    if args.many_command == "run":
        return batch.study_tasks(args.studies, args.output_dir, low_modes=low_modes)
    if args.samples_per_task < 1:
        raise InputError(f"{args.samples_per_task} samples per task; give at least 1", field="--samples-per-task")
    if args.samples is not None and args.samples < 1:
        raise InputError(f"{args.samples} samples; give at least 1", field="--samples")
    return batch.study_tasks(args.studies, args.output_dir, low_modes=low_modes, kind="uncertainty",
                             uncertainty={"samples": args.samples, "seed": args.seed, "sampling": args.sampling,
                                          "samples_per_task": args.samples_per_task})


def run(args) -> int:
    import sys
    from pathlib import Path

    from tstrate.cli.common import print_json, show_progress
    from tstrate.compute import batch
    from tstrate.errors import InputError

    folder = Path(args.output_dir)
    if folder.exists() and not folder.is_dir():
        raise InputError("exists and is not a folder", file=str(folder), field="--output-dir")
    if args.scheduler and args.scheduler_file:
        raise InputError("give --scheduler or --scheduler-file, not both", field="--scheduler")
    if args.workers is not None and args.workers < 1:
        raise InputError(f"{args.workers} workers; give at least 1", field="--workers")
    tasks = _tasks(args)
    bar = None
    if show_progress(args):
        from tqdm import tqdm

        bar = tqdm(total=len(tasks), desc=f"tstrate many {args.many_command}", unit="task", file=sys.stderr)
    failed_lines = []

    def done(rec):
        if rec.status == "failed":
            line = f"tstrate many: {rec.name}: failed: {rec.error}"
            failed_lines.append(line)
            if bar is not None:
                bar.write(line, file=sys.stderr)
            elif not args.json:
                print(line, file=sys.stderr)
        if bar is not None:
            bar.set_postfix_str(f"{rec.name} {rec.status}")
            bar.update(1)

    if not getattr(args, "verbose", False):  # Dask's own start and stop messages are for --verbose
        import logging

        try:
            import distributed  # noqa: F401  (it sets its loggers' levels when imported)
        except ImportError:
            pass
        for name in [n for n in logging.root.manager.loggerDict if n.split(".")[0] in ("distributed", "dask")]:
            logging.getLogger(name).setLevel(logging.ERROR)
        logging.getLogger("distributed").setLevel(logging.ERROR)
    try:
        with batch.dask_client(args.scheduler, workers=args.workers, scheduler_file=args.scheduler_file) as client:
            records = batch.run_batch(tasks, client, folder, resume=not args.redo, on_done=done)
    finally:
        if bar is not None:
            bar.close()
    batch.write_summary(records, folder)
    failed = [r for r in records if r.status == "failed"]
    if args.json:
        print_json(batch.summary_document(records))
        if failed and bar is None:
            for line in failed_lines:
                print(line, file=sys.stderr)
    else:
        counts = {s: sum(1 for r in records if r.status == s) for s in ("done", "skipped", "failed")}
        print(f"{len(records)} tasks: {counts['done']} done, {counts['skipped']} skipped (finished before, "
              f"same inputs), {counts['failed']} failed; summary: {folder / 'summary.csv'}")
    return 1 if failed else 0
