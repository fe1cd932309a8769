"""``tstrate compute``: stationary points by GFN2-xTB, and species from quantum-chemistry outputs."""

from __future__ import annotations

import argparse
import os
import shlex
import sys
from pathlib import Path

from tstrate.errors import InputError

HELP = "make species files: GFN2-xTB minima, saddle points, water relays; read QC outputs"
DESCRIPTION = """\
Make species files by the semi-empirical route (GFN2-xTB through tblite and ASE)
or from the output of a quantum-chemistry program.

  minimum   optimise a SMILES (lowest of several conformers) or a geometry; Hessian
  conformers the distinct conformers of a SMILES (a conformer ensemble), each with its Hessian
  saddle    transition state from a guess, or from reactant + product (NEB, then Sella);
            verified by minimising both ways along the imaginary mode
  relay     carbonic acid decomposition assisted by 0, 1 or 2 water molecules:
            the pre-reactive ring complex and the relay transition state
  relay-any the same for any substrate, catalyst and number of catalyst molecules,
            given the atoms that move
  read      species from an output file cclib parses (or a geometry ASE reads),
            optionally with a separate high-level single-point energy
  rotors    hindered rotors of a species file: every rotatable bond (or --bond) scanned by
            GFN2-xTB, rigid or relaxed, fitted as a Fourier series; the mode each replaces
            found by projection onto the normal modes of the file's Hessian
  refine    better energies with PySCF: DFT/HF single points (default wB97X-D3BJ/def2-TZVP),
            optional DFT re-optimisation and Hessian, optional frozen-core CCSD(T)

Results are cached by a hash of their inputs (folder: --cache-dir, else $TSTRATE_CACHE,
else ~/.cache/tstrate), so a rerun is instant. Existing files are never replaced
without --force; input files never.
"""


def _common(p: argparse.ArgumentParser, *, semi_empirical: bool = True, charge_help: str = "",
            multiplicity_help: str = "") -> None:
    """Options every action has; the GFN2-xTB ones for the semi-empirical actions, whose
    --charge and --multiplicity say what their defaults are for that action."""
    from tstrate.cli.common import add_quiet_option

    p.add_argument("--traceback", action="store_true", default=argparse.SUPPRESS,
                   help="show the full Python traceback on errors")
    p.add_argument("--json", action="store_true", help="print a JSON summary instead of text")
    p.add_argument("--force", action="store_true", help="replace existing output files")
    p.add_argument("--charge", type=int, default=None, help=charge_help)
    p.add_argument("--multiplicity", type=int, default=None, help=multiplicity_help)
    if not semi_empirical:
        return
    p.add_argument("--fmax", type=float, default=5e-4, metavar="EV_PER_A",
                   help="convergence of every minimisation and saddle search: largest force on an "
                        "atom in eV/Angstrom (default %(default)s)")
    p.add_argument("--max-steps", type=int, default=1000,
                   help="step limit of each minimisation and saddle search; not converging within it "
                        "is an error (default %(default)s)")
    p.add_argument("--seed", type=int, default=20240611,
                   help="seed of every random choice: conformers embedded from a SMILES, the small "
                        "displacements that break the symmetry of a saddle-point guess (default %(default)s)")
    p.add_argument("--cache-dir", default=None, help="cache folder (default $TSTRATE_CACHE or "
                   "~/.cache/tstrate)")
    p.add_argument("--no-cache", action="store_true", help="neither read nor write the cache")
    add_quiet_option(p)
    p.add_argument("--work-dir", default=".", help="folder where the last geometry of a failed or "
                   "unconverged optimisation is written (default: the current folder)")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    sub = parser.add_subparsers(dest="compute_command", metavar="ACTION", required=True)

    p = sub.add_parser("minimum", help="GFN2-xTB minimum from a SMILES or a geometry file",
                       description="Optimise a minimum (lowest of several conformers from a SMILES) "
                                   "and compute its Hessian by finite differences.")
    src = p.add_mutually_exclusive_group(required=True)
    src.add_argument("--smiles", help="SMILES string (hydrogens are added)")
    src.add_argument("--geometry", help="any geometry file ASE reads (last frame)")
    p.add_argument("--name", required=True, help="species name")
    p.add_argument("-o", "--output", help="species file to write (.toml); without it nothing is written, only a summary is printed")
    p.add_argument("--conformers", type=int, default=10, help="conformers embedded from --smiles, "
                   "each minimised, the lowest kept (default %(default)s)")
    _common(p, charge_help="total charge (default: the sum of the formal charges of --smiles; 0 "
                           "with --geometry)",
            multiplicity_help="spin multiplicity 2S+1 (default: one more than the radical electrons "
                              "of --smiles; 1 with --geometry)")

    p = sub.add_parser("conformers", help="GFN2-xTB conformer ensemble from a SMILES",
                       description="Embed conformers of a SMILES, minimise each with GFN2-xTB, remove "
                                   "duplicates by energy and RMSD (or sorted interatomic distances), and "
                                   "write one species file (with its Hessian) per distinct minimum, for a "
                                   "conformer ensemble in a study's [species].")
    p.add_argument("--smiles", required=True, help="SMILES string (hydrogens are added)")
    p.add_argument("--name", required=True, help="species name; the files are NAME_c1.toml, NAME_c2.toml ...")
    p.add_argument("--output-dir", help="folder for the species files (made if missing); without it only a "
                   "summary is printed")
    p.add_argument("--conformers", type=int, default=20, help="conformers embedded (default %(default)s)")
    p.add_argument("--rmsd-A", type=float, default=0.125, metavar="A",
                   help="two minima within this Kabsch RMSD [Angstrom] and within --energy-tolerance-kJ "
                        "are one (default %(default)s, common practice)")
    p.add_argument("--energy-tolerance-kJ", type=float, default=0.2, metavar="KJ_PER_MOL",
                   help="energy agreement of duplicates [kJ/mol] (default %(default)s)")
    p.add_argument("--energy-window-kJ", type=float, default=20.0, metavar="KJ_PER_MOL",
                   help="minima further above the lowest are dropped [kJ/mol] (default %(default)s)")
    _common(p, charge_help="total charge (default: the sum of the formal charges of --smiles)",
            multiplicity_help="spin multiplicity 2S+1 (default: one more than the radical electrons of --smiles)")

    p = sub.add_parser("saddle", help="GFN2-xTB transition state from a guess or from reactant "
                       "and product", description="Find, characterise and verify a saddle point.")
    p.add_argument("--guess", help="guess geometry (any file ASE reads)")
    p.add_argument("--reactant", help="reactant geometry (same atom order as the product)")
    p.add_argument("--product", help="product geometry (same atom order as the reactant)")
    p.add_argument("--name", required=True, help="name of the transition state")
    p.add_argument("-o", "--output", help="species file of the transition state (.toml); without it only a summary is printed")
    p.add_argument("--reactant-output", help="species file of the reactant-side minimum")
    p.add_argument("--product-output", help="species file of the product-side minimum")
    p.add_argument("--neb-images", type=int, default=7, help="interior NEB images between --reactant "
                   "and --product (default %(default)s)")
    p.add_argument("--retries", type=int, default=3,
                   help="searches repeated after pushing along extra imaginary modes (default %(default)s)")
    p.add_argument("--cartesian", action="store_true",
                   help="let Sella work in Cartesian instead of internal coordinates")
    p.add_argument("--same-bonding", action="store_true",
                   help="search a saddle point that keeps the bonding (a torsion, an inversion, a "
                        "cis-trans isomerisation) from --guess; both downhill sides must keep it")
    _common(p, charge_help="total charge (default 0)",
            multiplicity_help="spin multiplicity 2S+1 (default 1)")

    p = sub.add_parser("relay", help="water-relay transition state of H2CO3 -> CO2 + H2O",
                       description="Build the ring of carbonic acid and 0, 1 or 2 waters, optimise "
                                   "the pre-reactive complex, and find the relay saddle point.")
    p.add_argument("--waters", type=int, choices=(0, 1, 2), required=True,
                   help="relay waters: 0 (bare four-centre TS), 1 (six-membered ring), 2 (eight)")
    p.add_argument("--name", help="name of the transition state (default TS-H2CO3, TS-H2CO3.H2O or "
                   "TS-H2CO3.(H2O)2)")
    p.add_argument("--complex-name", help="name of the pre-reactive complex (default H2CO3, H2CO3.H2O "
                   "or H2CO3.(H2O)2)")
    p.add_argument("-o", "--output", help="species file of the transition state (.toml); without it only a summary is printed")
    p.add_argument("--complex-output", help="species file of the pre-reactive complex")
    p.add_argument("--product-output", help="species file of the product-side complex")
    _common(p, charge_help="total charge: the relay (H2CO3 and water) is neutral, so only 0 is "
                           "accepted (the default)",
            multiplicity_help="spin multiplicity 2S+1: the relay is a singlet, so only 1 is "
                              "accepted (the default)")

    p = sub.add_parser("read", help="species from a quantum-chemistry output or geometry file",
                       description="Read geometry, energy, frequencies and Hessian through cclib "
                                   "(or a geometry through ASE) and make a species file.")
    p.add_argument("file", metavar="QC_FILE",
                   help="the input: an output file of a quantum-chemistry program that cclib parses "
                        "(geometry, energy, frequencies or Hessian), or a geometry file ASE reads "
                        "(then give --hessian)")
    p.add_argument("--name", help="species name (default: the stem of QC_FILE)")
    p.add_argument("--single-point", metavar="'VALUE UNIT'|FILE",
                   help="high-level energy overriding the one of QC_FILE, e.g. '-264.12 hartree', or "
                        "an output file whose last energy is used")
    p.add_argument("--hessian", help="Hessian file of plain numbers in hartree/bohr^2 (as xtb writes "
                   "its 'hessian' file); needed for a geometry file; with an output file that lists "
                   "frequencies it must reproduce them within 2 %%")
    p.add_argument("--geometry", metavar="FILE", help="coordinates (any file ASE reads) for an output that "
                   "holds none, e.g. a Hessian-only output, or for --hessian; same atoms, same order")
    p.add_argument("--kind", choices=("minimum", "transition_state"),
                   help="default: transition_state with exactly one imaginary mode (larger than "
                        "--allow-imaginary-below-cm1), else minimum")
    p.add_argument("--allow-imaginary-below-cm1", type=float, default=0.0, metavar="CM1",
                   help="a minimum may have imaginary modes smaller than this [cm^-1]; they are treated "
                        "as real, with a warning, and the file written says so (default 0: none)")
    p.add_argument("--accept-unusual-wavenumbers", action="store_true",
                   help="accept wavenumbers outside 5 to 5000 cm-1 (imaginary 5i to 5000i), which are "
                        "otherwise refused as a sign of a cut, unfinished or wrong file")
    p.add_argument("--max-file-mib", type=float, default=512.0, metavar="MIB",
                   help="largest output file read [MiB] (default 512); larger files are refused unread")
    p.add_argument("--scale", type=float, default=1.0, help="frequency scale factor applied to every "
                   "wavenumber, stored as frequency_scale (default 1)")
    p.add_argument("-o", "--output", help="species file to write (.toml); without it nothing is written, only a summary is printed")
    _common(p, semi_empirical=False,
            charge_help="total charge (default: the one QC_FILE gives; required when it gives none, "
                        "as with a geometry file)",
            multiplicity_help="spin multiplicity 2S+1 (default: the one QC_FILE gives; required when "
                              "it gives none, as with xtb outputs and geometry files)")

    p = sub.add_parser("rotors", help="hindered rotors of a species file from GFN2-xTB torsional scans",
                       description="Scan every rotatable bond of a species (or the --bond ones) over one "
                                   "period by GFN2-xTB and write the species with [[hindered_rotors]]: the "
                                   "points, their Fourier fit, Pitzer's reduced moment, and the mode each "
                                   "rotor replaces (by projection onto the normal modes of the file's Hessian).")
    p.add_argument("species", metavar="SPECIES", help="species file (.toml) with a [hessian]")
    p.add_argument("-o", "--output", help="species file to write (.toml); without it only a summary is printed")
    p.add_argument("--bond", nargs=2, type=int, action="append", metavar=("FRAME", "TOP"),
                   help="scan only this bond (1-based atoms, the top beyond the second); repeatable "
                        "(default: every rotatable bond)")
    p.add_argument("--step-deg", type=float, default=15.0, help="scan step in degrees (default %(default)s)")
    p.add_argument("--relaxed", action="store_true", help="relax every other coordinate at each angle "
                   "(default: rigid scan)")
    p.add_argument("--fourier-terms", type=int, default=None, help="harmonics fitted (default: as many as "
                   "the points allow, at most 6)")
    _common(p, charge_help="ignored: the species file's charge is used",
            multiplicity_help="ignored: the species file's multiplicity is used")

    from tstrate.cli.compute_refine import add_refine_arguments
    from tstrate.cli.compute_relay_any import add_relay_any_arguments

    add_refine_arguments(sub)
    add_relay_any_arguments(sub, _common)


# ---- helpers ----------------------------------------------------------------------

def _command_line(args) -> str:
    if Path(sys.argv[0]).name == "tstrate":
        return "tstrate " + shlex.join(sys.argv[1:])
    skip = {"_run", "_prog", "command", "compute_command", "traceback", "verbose"}
    parts = ["tstrate", "compute", args.compute_command]
    for key, value in vars(args).items():
        if key in skip or value is None or value is False:
            continue
        if key == "file":
            parts.append(str(value))
            continue
        if isinstance(value, list):  # positional lists and repeatable options
            if key == "species_files":
                parts += [str(v) for v in value]
            else:
                for v in value:
                    parts += ["--" + key.replace("_", "-"), str(v)]
            continue
        flag = "--" + key.replace("_", "-")
        parts += [flag] if value is True else [flag, str(value)]
    return shlex.join(parts)


def _resolved(path, field) -> Path:
    """``path`` resolved; a symbolic-link loop is an InputError (Python raises RuntimeError)."""
    try:
        return Path(path).resolve()
    except (RuntimeError, OSError) as exc:
        raise InputError(f"cannot be opened: {exc}"[:200], file=str(path), field=field) from None


def _outputs(args, inputs, *names) -> list[Path | None]:
    """Output paths, refusing existing files without --force and input files always."""
    outs = []
    ins = set()
    for p in inputs:
        if p:
            try:
                ins.add(Path(p).resolve())
            except (RuntimeError, OSError):  # a link loop: the reader refuses it with its name
                pass
    for n in names:
        value = getattr(args, n, None)
        if not value:
            outs.append(None)
            continue
        path = Path(value)
        flag = "--" + n.replace("_", "-")
        if _resolved(path, flag) in ins:
            raise InputError("refusing to overwrite an input file", file=str(path), field=flag)
        if path.is_dir():
            raise InputError("is a folder, not a file", file=str(path), field=flag,
                             hint="give the species file to write, e.g. NAME.toml")
        if path.exists() and not args.force:
            raise InputError("file exists; refusing to overwrite it", file=str(path), field=flag,
                             hint="pass --force to replace it")
        outs.append(path)
    if len({p.resolve() for p in outs if p}) < len([p for p in outs if p]):
        raise InputError("two outputs name the same file", field="output")
    return outs


def _settings(args, **extra):
    from tstrate.compute.engine import Settings

    kw = dict(fmax_eV_per_A=args.fmax, max_steps=args.max_steps, seed=args.seed)
    kw.update(extra)
    return Settings(**kw)


def _cache(args):
    from tstrate.compute.cache import Cache

    return Cache(args.cache_dir, enabled=not args.no_cache)


def _progress(args) -> bool:
    from tstrate.cli.common import show_progress

    return show_progress(args)


def _geometry(path: str, flag: str):
    from tstrate.compute.minima import read_geometry_file

    try:
        return read_geometry_file(path)
    except InputError as exc:
        raise exc.located(field=flag) from None


def _hartree_J_per_mol() -> float:
    from tstrate.units import ENERGY_UNITS_J_PER_MOL

    return ENERGY_UNITS_J_PER_MOL["hartree"]


def _write(species, path) -> None:
    from tstrate.io.species import write_species

    if path is not None:
        write_species(species, path, overwrite=True)


def _print_text(lines: list[str]) -> None:
    print("\n".join(lines))


def _describe(sp, path) -> str:
    freqs = ", ".join(f"{f:.0f}" for f in sp.frequencies_cm1[:6])
    more = " ..." if len(sp.frequencies_cm1) > 6 else ""
    energy = ("no energy" if sp.energy_J_per_mol is None
              else f"E = {sp.energy_J_per_mol / _hartree_J_per_mol():.8f} hartree")
    where = f" -> {path}" if path else ""
    return f"{sp.name} ({sp.formula}, {sp.kind}): {energy}; modes [cm-1] {freqs}{more}{where}"


# ---- actions ----------------------------------------------------------------------

def _run_minimum(args) -> int:
    from tstrate.compute.minima import compute_minimum

    (out,) = _outputs(args, [args.geometry], "output")
    settings = _settings(args, n_conformers=args.conformers)
    atoms = _geometry(args.geometry, "--geometry") if args.geometry else None
    res = compute_minimum(name=args.name, smiles=args.smiles, atoms=atoms, charge=args.charge,
                          multiplicity=args.multiplicity, settings=settings, cache=_cache(args),
                          progress=_progress(args), work_dir=args.work_dir,
                          command=_command_line(args), source=args.geometry)
    _write(res.species, out)
    if args.json:
        from tstrate.cli.common import print_json

        from tstrate.output.compute_records import minimum_document

        print_json(minimum_document(res, out))
    else:
        _print_text([_describe(res.species, out)] + (["(from cache)"] if res.from_cache else []))
    return 0


def _run_conformers(args) -> int:
    from tstrate.compute.conformers import search_conformers

    folder = Path(args.output_dir) if args.output_dir else None
    if folder is not None and folder.exists() and not folder.is_dir():
        raise InputError("is a file, not a folder", file=str(folder), field="--output-dir")
    settings = _settings(args, n_conformers=args.conformers)
    res = search_conformers(name=args.name, smiles=args.smiles, settings=settings, rmsd_A=args.rmsd_A,
                            energy_tolerance_J_per_mol=args.energy_tolerance_kJ * 1e3,
                            energy_window_J_per_mol=args.energy_window_kJ * 1e3, charge=args.charge,
                            multiplicity=args.multiplicity, cache=_cache(args), progress=_progress(args),
                            work_dir=args.work_dir, command=_command_line(args))
    paths = [None if folder is None else folder / f"{args.name}_{lb}.toml" for lb, _ in res.conformers]
    if folder is not None:
        existing = [p for p in paths if p.exists()]
        if existing and not args.force:
            raise InputError("file exists; refusing to overwrite it", file=str(existing[0]), field="--output-dir",
                             hint="pass --force to replace it")
        folder.mkdir(parents=True, exist_ok=True)
        for (_, sp), path in zip(res.conformers, paths):
            _write(sp, path)
    from tstrate.output.compute_records import conformers_document

    doc = conformers_document(res, args.name, paths)
    if args.json:
        from tstrate.cli.common import print_json

        print_json(doc)
    else:
        lines = [f"{lb}: {c['relative_energy_kJ_per_mol']:.3f} kJ/mol above the lowest; "
                 + _describe(sp, path) for (lb, sp), path, c in zip(res.conformers, paths, doc["conformers"])]
        lines.append(f"{len(res.conformers)} distinct of {len(res.minimised_energies_J_per_mol)} embedded "
                     f"({res.duplicates} duplicates, {res.above_window} above the window)"
                     + (" (from cache)" if res.from_cache else ""))
        if folder is not None:
            lines.append("study [species] line: " + doc["study_species_line"])
        _print_text(lines)
    return 0


def _saddle_text(res, outs) -> list[str]:
    from tstrate.output.compute_records import saddle_record

    s = saddle_record(res)
    return [
        _describe(res.ts, outs[0]), _describe(res.reactant, outs[1]),
        _describe(res.product, outs[2]),
        f"imaginary frequency {s['imaginary_frequency_cm1']:.0f}i cm-1; {s['bond_changes']}",
        f"barrier {s['barrier_classical_kJ_per_mol']:.2f} kJ/mol classical, "
        f"{s['barrier_zpe_kJ_per_mol']:.2f} kJ/mol with zero-point energies; reverse "
        f"{s['reverse_barrier_classical_kJ_per_mol']:.2f} / {s['reverse_barrier_zpe_kJ_per_mol']:.2f} kJ/mol",
    ] + (["(from cache)"] if res.from_cache else [])


def _run_saddle(args) -> int:
    from tstrate.compute.saddle import find_saddle

    if not args.guess and not (args.reactant and args.product):
        raise InputError("give --guess, or both --reactant and --product", field="--guess")
    if bool(args.reactant) != bool(args.product) and not args.guess:
        raise InputError("--reactant and --product go together", field="--product")
    outs = _outputs(args, [args.guess, args.reactant, args.product], "output",
                    "reactant_output", "product_output")
    res = find_saddle(
        name=args.name,
        guess=_geometry(args.guess, "--guess") if args.guess else None,
        reactant=_geometry(args.reactant, "--reactant") if args.reactant else None,
        product=_geometry(args.product, "--product") if args.product else None,
        charge=args.charge or 0, multiplicity=args.multiplicity or 1,
        settings=_settings(args), neb_images=args.neb_images, max_retries=args.retries,
        internal=not args.cartesian, cache=_cache(args), progress=_progress(args),
        work_dir=args.work_dir, command=_command_line(args), same_bonding=args.same_bonding)
    for sp, path in zip((res.ts, res.reactant, res.product), outs):
        _write(sp, path)
    if args.json:
        from tstrate.cli.common import print_json
        from tstrate.output.compute_records import saddle_document

        print_json(saddle_document(res, outs))
    else:
        _print_text(_saddle_text(res, outs))
    return 0


def _run_relay(args) -> int:
    from tstrate.compute.relay import find_relay

    for opt, value, only in (("--charge", args.charge, 0), ("--multiplicity", args.multiplicity, 1)):
        if value is not None and value != only:
            raise InputError(f"the relay is neutral singlet H2CO3 with water; {opt} {value} cannot apply",
                             field=opt, hint=f"leave {opt} out (it is {only})")
    outs = _outputs(args, [], "output", "complex_output", "product_output")
    res = find_relay(args.waters, name=args.name, complex_name=args.complex_name,
                     settings=_settings(args), cache=_cache(args), progress=_progress(args),
                     work_dir=args.work_dir, command=_command_line(args))
    sad = res.saddle
    for sp, path in zip((sad.ts, res.complex.species, sad.product), outs):
        _write(sp, path)
    if args.json:
        from tstrate.cli.common import print_json
        from tstrate.output.compute_records import relay_document

        print_json(relay_document(res, outs))
    else:
        _print_text([_describe(res.complex.species, outs[1])] + _saddle_text(sad, [outs[0], None,
                                                                                    outs[2]])
                    + [f"barrier from the pre-reactive complex {res.barrier_J_per_mol / 1e3:.2f} "
                       f"kJ/mol classical, {res.barrier_zpe_J_per_mol / 1e3:.2f} kJ/mol with "
                       "zero-point energies"])
    return 0


def _run_read(args) -> int:
    from tstrate.io.qcout import read_output

    inputs = [args.file, args.hessian, args.geometry]
    if args.single_point and os.path.exists(args.single_point):
        inputs.append(args.single_point)
    (out,) = _outputs(args, inputs, "output")
    if not (args.max_file_mib > 0 and args.max_file_mib < 1e6):
        raise InputError(f"--max-file-mib {args.max_file_mib:g} must be a positive size below 1e6 MiB",
                         field="--max-file-mib")
    if not (0.0 <= args.allow_imaginary_below_cm1 <= 1000.0):
        raise InputError(f"--allow-imaginary-below-cm1 {args.allow_imaginary_below_cm1:g} must lie in 0 to "
                         "1000 cm-1", field="--allow-imaginary-below-cm1")
    sp = read_output(args.file, name=args.name, kind=args.kind, charge=args.charge,
                     multiplicity=args.multiplicity, single_point=args.single_point,
                     hessian_file=args.hessian, geometry_file=args.geometry, frequency_scale=args.scale,
                     allow_imaginary_below_cm1=args.allow_imaginary_below_cm1,
                     accept_unusual_wavenumbers=args.accept_unusual_wavenumbers,
                     max_file_bytes=int(args.max_file_mib * 2**20))
    sp = sp.with_changes(provenance=sp.provenance | {"command": _command_line(args)})
    _write(sp, out)
    if args.json:
        from tstrate.cli.common import print_json

        from tstrate.output.compute_records import read_document

        print_json(read_document(sp, out))
    else:
        _print_text([_describe(sp, out)])
    return 0


def _run_rotors(args) -> int:
    from tstrate.compute.rotor_scan import species_with_scanned_rotors
    from tstrate.io.species import read_species

    (out,) = _outputs(args, [args.species], "output")
    sp = read_species(args.species)
    bonds = [(a - 1, b - 1) for a, b in args.bond] if args.bond else None
    new, scans = species_with_scanned_rotors(sp, _settings(args), bonds=bonds, step_deg=args.step_deg,
                                             relaxed=args.relaxed, fourier_terms=args.fourier_terms)
    new = new.with_changes(provenance=new.provenance | {"command": _command_line(args)})
    _write(new, out)
    lines = [_describe(new, out)]
    for r in new.hindered_rotors:
        barrier = (max(r.points_J_per_mol) - min(r.points_J_per_mol)) / 1e3 if r.points_J_per_mol else float("nan")
        fit = f", fit RMS {r.fit_rms_J_per_mol / 1e3:.3f} kJ/mol" if r.fit_rms_J_per_mol is not None else ""
        lines.append(f"  rotor {new.symbols[r.bond_atoms[0]]}{r.bond_atoms[0] + 1}-"
                     f"{new.symbols[r.bond_atoms[1]]}{r.bond_atoms[1] + 1}: sigma {r.symmetry_number}, "
                     f"I = {r.reduced_moment_amu_A2:.4f} u A2, barrier {barrier:.2f} kJ/mol{fit}; replaces "
                     f"{r.replaces_cm1:.1f} cm-1 ({r.mode_assignment}"
                     + (f", overlap {r.mode_overlap:.2f})" if r.mode_overlap is not None else ")"))
    if args.json:
        from tstrate.cli.common import print_json

        from tstrate.output.records import hindered_rotor_records

        print_json({"species": new.name, "output": str(out) if out else None,
                    "hindered_rotors": hindered_rotor_records(new)})
    else:
        _print_text(lines)
    return 0


def _run_relay_any(args) -> int:
    from tstrate.cli.compute_relay_any import run_relay_any

    return run_relay_any(args, {"outputs": _outputs, "geometry": _geometry, "settings": _settings,
                                "cache": _cache, "progress": _progress, "write": _write,
                                "command_line": _command_line, "describe": _describe,
                                "saddle_text": _saddle_text})


def _run_refine(args) -> int:
    from tstrate.cli.compute_refine import run_refine

    return run_refine(args, _command_line(args))


def run(args) -> int:
    action = {"minimum": _run_minimum, "conformers": _run_conformers, "saddle": _run_saddle, "relay": _run_relay,
              "read": _run_read, "refine": _run_refine,
              "relay-any": _run_relay_any, "rotors": _run_rotors}[args.compute_command]
    try:
        return action(args)
    except InputError as exc:
        # the library names its arguments (smiles, fmax, conformers ...); name the option instead
        if exc.file is None and exc.field and not exc.field.startswith("-") and hasattr(args, exc.field):
            raise InputError(exc.problem, field="--" + exc.field.replace("_", "-"), hint=exc.hint) from None
        raise
