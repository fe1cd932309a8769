"""``tstrate thermo``: thermochemistry of species files."""

from __future__ import annotations

HELP = "thermochemistry (S, Cp, H(T)-H(0), G, ZPE) of species files at 1 bar (or 1 atm)"
DESCRIPTION = """\
Ideal-gas thermochemistry of one or more species files: rigid rotor, harmonic
oscillator (with optional quasi-harmonic treatment of low modes), free and
hindered internal rotors ([[free_rotors]], [[hindered_rotors]]) and electronic
levels, standard state 1 bar (--standard-pressure atm for 1 atm).

JSON output (--json): one object with a list "species"; each entry has name,
formula, kind, symmetry_number, optical_isomers, linear, frequencies_cm1
(scaled, imaginary negative), free_rotors (each with replaces_cm1,
symmetry_number, reduced_moment_amu_A2; the replaced modes are not harmonic
and have no zero-point energy), hindered_rotors (bond, top_atoms,
symmetry_number, reduced_moment_amu_A2, barrier_kJ_per_mol, Fourier terms,
fit_rms_kJ_per_mol, replaces_cm1, mode_assignment, mode_overlap, zpe_cm1,
levels_cm1), zpe_kJ_per_mol, and arrays over temperature_K:
entropy_J_per_mol_K, heat_capacity_J_per_mol_K, enthalpy_increment_kJ_per_mol
(H(T)-H(0)), gibbs_increment_kJ_per_mol (G(T)-H(0)); plus standard_pressure_bar
conventions (standard pressure, masses, symmetry tolerance, optical isomers)
and low_modes (method, cutoff_cm1). Every key with its unit: docs/outputs/command-json.md.
"""

DEFAULT_TEMPERATURES_K = [298.15]


def add_arguments(parser) -> None:
    from tstrate.cli.common import add_low_mode_options, add_standard_pressure_option

    parser.add_argument("files", nargs="+", metavar="FILE", help="species files (TOML)")
    parser.add_argument("--temperature", "-T", nargs="+", type=float, metavar="K",
                        default=DEFAULT_TEMPERATURES_K,
                        help="temperatures in K (default 298.15)")
    add_low_mode_options(parser)
    add_standard_pressure_option(parser, study=False)
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")


def compute(files, temperatures_K, low_modes, standard_pressure_Pa: float | None = None):
    """Read the files and return one record per species (plain numbers, units in the keys);
    ``standard_pressure_Pa`` [Pa]: 1 bar (default) or 1 atm."""
    import sys

    from tstrate.units import P_STANDARD

    from tstrate.io.species import read_species
    from tstrate.output.records import thermo_record
    from tstrate.physics.thermo import electronic_level_warning, thermochemistry

    out = []
    for f in files:
        sp = read_species(f)
        warning = electronic_level_warning(sp)
        if warning:
            print(f"tstrate thermo: warning: {f}: {warning}", file=sys.stderr)
        th = thermochemistry(sp, temperatures_K, low_modes=low_modes,
                             pressure_Pa=P_STANDARD if standard_pressure_Pa is None else standard_pressure_Pa)
        out.append({"file": str(f), **thermo_record(th, sp)})
    return out


def run(args) -> int:
    from tstrate.arrays import MAX_TEMPERATURE_K, temperatures_K
    from tstrate.cli.common import format_table, low_modes_from_args, print_json, standard_pressure_from_args
    from tstrate.units import standard_pressure_name

    temperatures_K(args.temperature, name="--temperature", ndim=1, upper_K=MAX_TEMPERATURE_K)
    low = low_modes_from_args(args)
    p0 = standard_pressure_from_args(args)
    records = compute(args.files, args.temperature, low, p0)
    if args.json:
        from tstrate.output.records import thermo_document

        print_json(thermo_document(records, low, p0))
        return 0
    for rec in records:
        print(f"{rec['name']} ({rec['formula']}, {rec['kind']}): symmetry number "
              f"{rec['symmetry_number']}, optical isomers {rec['optical_isomers']}, "
              f"{'linear' if rec['linear'] else 'nonlinear'}, ZPE {rec['zpe_kJ_per_mol']:.2f} kJ/mol")
        rows = [[t, s, cp, h, g] for t, s, cp, h, g in zip(
            rec["temperature_K"], rec["entropy_J_per_mol_K"], rec["heat_capacity_J_per_mol_K"],
            rec["enthalpy_increment_kJ_per_mol"], rec["gibbs_increment_kJ_per_mol"])]
        print(format_table(["T/K", "S/(J mol-1 K-1)", "Cp/(J mol-1 K-1)", "[H(T)-H(0)]/(kJ mol-1)",
                            "[G(T)-H(0)]/(kJ mol-1)"], rows, "{:.2f}"))
        print()
    print(f"Standard state {standard_pressure_name(p0)}; isotopic masses (most common isotopes unless a file "
          f"names others); low modes: {low.label}. Estimates bounded by the input data.")
    return 0
