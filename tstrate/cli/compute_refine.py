"""``tstrate compute refine``: better energies (and optionally geometries) with PySCF."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from tstrate.errors import InputError

DESCRIPTION = """\
Refine species files with PySCF. By default: a single point at wB97X-D3BJ/def2-TZVP with
density fitting at the file's geometry; the file's geometry, Hessian and frequencies are
kept, its energy stays as `energy` and the refined one is written as `single_point` with
its provenance (method, basis, program version, convergence, timing).

With --optimise the geometry is re-optimised at --geometry-level (default: --level) with
geomeTRIC, a transition state as a saddle point seeded with the file's Hessian, and the
Hessian is computed there (a Hessian belongs to its level's own stationary point). A
re-optimised TS must keep exactly one imaginary mode and is verified by minimising both
ways along it. Coupled cluster: --level 'CCSD(T)/cc-pVTZ' or 'CCSD(T)/cc-pVTZ:cc-pVQZ'
(two-point extrapolation), frozen core; the cost is estimated first and runs above
--cc-max-basis-functions are refused.

Results are cached by a hash of their inputs like the semi-empirical ones.
"""


def add_refine_arguments(sub) -> None:
    from tstrate.cli.common import add_quiet_option
    from tstrate.compute.refine import DEFAULT_BASIS, DEFAULT_CC_MAX_BASIS, DEFAULT_METHOD

    p = sub.add_parser("refine", help="DFT, HF or CCSD(T) energies (and optionally geometries "
                       "and Hessians) with PySCF", description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("species_files", nargs="*", metavar="SPECIES_FILE",
                   help="species files (.toml) to refine")
    p.add_argument("--study", help="refine every species file the study names")
    p.add_argument("--level", default=f"{DEFAULT_METHOD}/{DEFAULT_BASIS}", metavar="METHOD/BASIS",
                   help="energy level: any PySCF functional or HF, or CCSD(T)/CCSD, and a basis "
                        "(SMALL:LARGE for a coupled-cluster extrapolation) (default %(default)s)")
    p.add_argument("--no-density-fit", action="store_true",
                   help="exact Coulomb and exchange integrals instead of density fitting")
    p.add_argument("--optimise", action="store_true",
                   help="re-optimise the geometry (minimum or TS) and compute its Hessian")
    p.add_argument("--geometry-level", metavar="METHOD/BASIS",
                   help="level of the re-optimisation and Hessian (default: --level; needed with "
                        "coupled-cluster energies)")
    p.add_argument("--no-verify", action="store_true",
                   help="skip the downhill minimisations that verify a re-optimised TS")
    p.add_argument("--hessian", choices=("auto", "analytic", "finite-difference"), default="auto",
                   help="how the Hessian of --optimise is made (default: analytic where PySCF has "
                        "it, else finite differences of gradients)")
    p.add_argument("--max-steps", type=int, default=100,
                   help="geomeTRIC step limit of each optimisation (default %(default)s)")
    p.add_argument("--scf-tolerance", type=float, default=1e-10, metavar="HARTREE",
                   help="SCF energy convergence (default %(default)s hartree)")
    p.add_argument("--cc-max-basis-functions", type=int, default=DEFAULT_CC_MAX_BASIS,
                   help="refuse coupled-cluster runs above this many basis functions "
                        "(default %(default)s)")
    p.add_argument("--threads", type=int, default=1,
                   help="OpenMP threads of PySCF (default %(default)s)")
    p.add_argument("--estimate", action="store_true",
                   help="print the estimated cost of each species and stop")
    p.add_argument("-o", "--output", help="refined species file (one SPECIES_FILE only)")
    p.add_argument("--output-dir", help="folder for the refined files, under the names of the "
                   "inputs (the inputs are never replaced)")
    p.add_argument("--traceback", action="store_true", default=argparse.SUPPRESS,
                   help="show the full Python traceback on errors")
    p.add_argument("--json", action="store_true", help="print a JSON summary instead of text")
    p.add_argument("--force", action="store_true", help="replace existing output files")
    p.add_argument("--cache-dir", default=None, help="cache folder (default $TSTRATE_CACHE or "
                   "~/.cache/tstrate)")
    p.add_argument("--no-cache", action="store_true", help="neither read nor write the cache")
    add_quiet_option(p)


def _inputs(args) -> list[Path]:
    paths = [Path(p) for p in args.species_files]
    if args.study:
        from tstrate.io.study import read_study

        seen = {p.resolve() for p in paths}
        for f in read_study(args.study).species_files.values():
            if Path(f).resolve() not in seen:
                paths.append(Path(f))
                seen.add(Path(f).resolve())
    if not paths:
        raise InputError("give species files or --study", field="SPECIES_FILE")
    return paths


def _outputs(args, paths: list[Path]) -> list[Path | None]:
    if args.output and args.output_dir:
        raise InputError("give -o or --output-dir, not both", field="--output")
    if args.output and len(paths) != 1:
        raise InputError(f"-o names one file but {len(paths)} species are refined",
                         field="--output", hint="use --output-dir")
    if args.output:
        outs = [Path(args.output)]
        flag = "--output"
    elif args.output_dir:
        outs = [Path(args.output_dir) / p.name for p in paths]
        flag = "--output-dir"
        if len({o.resolve() for o in outs}) < len(outs):
            raise InputError("two inputs have the same file name", field="--output-dir")
    else:
        return [None] * len(paths)
    ins = {p.resolve() for p in paths}
    for o in outs:
        if o.resolve() in ins:
            raise InputError("refusing to overwrite an input file", file=str(o), field=flag)
        if o.exists() and not args.force:
            raise InputError("file exists; refusing to overwrite it", file=str(o), field=flag,
                             hint="pass --force to replace it")
    return outs


def run_refine(args, command: str) -> int:
    from tstrate.cli.common import print_json, show_progress
    from tstrate.compute.cache import Cache
    from tstrate.compute.refine import RefineOptions, estimate_seconds, parse_level, refine_many
    from tstrate.io.species import read_species, write_species

    level = parse_level(args.level, field_name="--level", density_fit=not args.no_density_fit,
                        conv_tol_hartree=args.scf_tolerance)
    glevel = (parse_level(args.geometry_level, field_name="--geometry-level",
                          density_fit=not args.no_density_fit, conv_tol_hartree=args.scf_tolerance)
              if args.geometry_level else None)
    if glevel is not None and not args.optimise:
        raise InputError("--geometry-level is the level of --optimise", field="--geometry-level",
                         hint="add --optimise")
    if args.threads < 1 or args.max_steps < 1 or args.cc_max_basis_functions < 1:
        raise InputError("--threads, --max-steps and --cc-max-basis-functions must be positive",
                         field="--threads")
    options = RefineOptions(optimise=args.optimise, geometry_level=glevel,
                            verify=not args.no_verify,
                            analytic_hessian={"auto": None, "analytic": True,
                                              "finite-difference": False}[args.hessian],
                            max_steps=args.max_steps,
                            cc_max_basis_functions=args.cc_max_basis_functions)
    paths = _inputs(args)
    outs = _outputs(args, paths)
    species = [read_species(p) for p in paths]
    est = [estimate_seconds(s, level, options) for s in species]
    level_text = level.label + (f" // {glevel.label}" if glevel else
                                (f" // {level.label}" if args.optimise else ""))
    if args.estimate:
        rows = [{"species": s.name, "file": str(p), "atoms": len(s.symbols),
                 "estimated_seconds": t} for s, p, t in zip(species, paths, est)]
        if args.json:
            print_json({"level": level_text, "estimate": rows,
                        "total_estimated_seconds": sum(est)})
        else:
            print(f"{level_text}: about {sum(est):.0f} s in all (rough estimate)")
            for r in rows:
                print(f"  {r['species']}: {r['atoms']} atoms, about {r['estimated_seconds']:.0f} s")
        return 0
    if not args.json and not args.quiet:
        print(f"refining {len(species)} species at {level_text}: about {sum(est):.0f} s "
              "(rough estimate)", file=sys.stderr)
    written = []

    def done(res):
        k = len(written)
        if outs[k] is not None:
            write_species(res.species, outs[k], overwrite=True)
        written.append(res)

    refine_many(species, level, options, cache=Cache(args.cache_dir, enabled=not args.no_cache),
                progress=show_progress(args), command=command, threads=args.threads,
                on_done=done)
    rows = []
    for res, src, out in zip(written, paths, outs):
        rec = res.record
        rows.append({"species": res.species.name, "input": str(src),
                     "output": str(out) if out else None, "level": level_text,
                     "energy_hartree": res.energy_hartree,
                     "seconds": rec.get("seconds"), "basis_functions": rec["energy"].get("n_basis"),
                     "imaginary_modes": rec.get("hessian", {}).get("imaginary_modes"),
                     "from_cache": res.from_cache})
    if args.json:
        print_json({"level": level_text, "species": rows})
    else:
        for r in rows:
            where = f" -> {r['output']}" if r["output"] else ""
            cached = " (from cache)" if r["from_cache"] else f" in {r['seconds']:.1f} s"
            print(f"{r['species']}: E = {r['energy_hartree']:.10f} hartree at {r['level']}"
                  f"{cached}{where}")
    return 0
