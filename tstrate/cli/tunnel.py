"""``tstrate tunnel``: tunnelling factors of one barrier, without any species files."""

from __future__ import annotations

HELP = "tunnelling factors kappa(T) (Wigner, Skodje-Truhlar, Eckart) of one barrier"
DESCRIPTION = """\
Tunnelling factors kappa(T) of one barrier from its imaginary frequency and
its forward and reverse barrier heights (zero-point corrected, both measured
from the top of the barrier down to each side):

  wigner          1 + (h c nu / kT)^2 / 24                  (Wigner 1932)
  skodje-truhlar  truncated parabolic barrier               (Skodje and Truhlar 1981)
  eckart          unsymmetrical Eckart barrier, exact P(E)  (Eckart 1930;
                  thermally averaged numerically            Johnston and Heicklen 1962)

The energy integral starts at the higher of the two asymptotes unless
--energy-floor sets a higher start (for example the separated reactants of a
channel whose barriers are measured from a pre-reactive complex).

JSON output (--json): one object with temperature_K (list), kappa (a list for
one model, or an object keyed by model for --model all), model, and the
inputs: imaginary_frequency_cm1, tunnelling_forward_barrier_kJ_per_mol,
tunnelling_reverse_barrier_kJ_per_mol, tunnelling_energy_floor_kJ_per_mol (the
start of the energy integral actually used, measured from the reactant side).
Every key with its unit: docs/outputs/command-json.md.
"""

MODEL_CHOICES = ("wigner", "skodje-truhlar", "eckart", "all")
ENERGY_UNIT_CHOICES = ("kJ/mol", "kcal/mol", "eV", "cm-1")
#: default temperature grid [K]
DEFAULT_TEMPERATURES_K = [150.0 + 25.0 * i for i in range(11)]   # 150, 175, ..., 400

#: names used by the library -> the option the user typed
_OPTION_OF_FIELD = {
    "imaginary_frequency_cm1": "--imaginary-cm1",
    "forward_barrier": "--forward-barrier",
    "reverse_barrier": "--reverse-barrier",
    "temperature_K": "--temperature",
    "energy_floor": "--energy-floor",
}


def add_arguments(parser) -> None:
    parser.add_argument("--imaginary-cm1", type=float, required=True, metavar="CM1",
                        help="magnitude of the imaginary frequency of the transition state in cm-1 "
                             "(e.g. 1500 for 1500i)")
    parser.add_argument("--forward-barrier", type=float, required=True, metavar="V1",
                        help="forward barrier (transition state above reactants), in --energy-unit")
    parser.add_argument("--reverse-barrier", type=float, required=True, metavar="V2",
                        help="reverse barrier (transition state above products), in --energy-unit")
    parser.add_argument("--energy-unit", choices=ENERGY_UNIT_CHOICES, default="kJ/mol",
                        help="unit of the barriers and of --energy-floor (default kJ/mol)")
    parser.add_argument("--energy-floor", type=float, default=None, metavar="E0",
                        help="start of the energy integral above the reactant side, in --energy-unit "
                             "(default: the higher asymptote)")
    parser.add_argument("--model", choices=MODEL_CHOICES, default="all",
                        help="tunnelling model (default all)")
    parser.add_argument("--temperature", "-T", nargs="+", type=float, metavar="K",
                        default=DEFAULT_TEMPERATURES_K,
                        help="temperatures in K (default 150 to 400 in steps of 25)")
    parser.add_argument("--json", action="store_true", help="machine-readable output on stdout")


def compute(imag_freq_cm1: float, V1_J_per_mol: float, V2_J_per_mol: float, models: list[str],
            temperatures_K, energy_floor_J_per_mol=None, model: str = "all") -> dict:
    """kappa of each model on the temperatures as the ``--json`` document (see
    :func:`tstrate.output.records.tunnelling_record`; ``model`` is "all" or the one model)."""
    import numpy as np

    from tstrate.errors import InputError
    from tstrate.physics import tunnelling

    from tstrate.arrays import MAX_TEMPERATURE_K
    from tstrate.arrays import temperatures_K as checked_temperatures

    T = checked_temperatures(temperatures_K, name="--temperature", ndim=1, upper_K=MAX_TEMPERATURE_K)
    if not (np.isfinite(imag_freq_cm1) and 0 < imag_freq_cm1 <= 5000.0):
        raise InputError(f"the imaginary frequency (its magnitude) must be positive and at most 5000 cm-1, got "
                         f"{imag_freq_cm1:g}", field="--imaginary-cm1")
    for value, option in ((V1_J_per_mol, "--forward-barrier"), (V2_J_per_mol, "--reverse-barrier")):
        if not np.isfinite(value) or value < 0 or value > 2.0e6:
            raise InputError(f"a barrier must be >= 0 and at most 2000 kJ/mol, got {value / 1e3:g} kJ/mol",
                             field=option, hint="both barriers are measured down from the top")
    if energy_floor_J_per_mol is not None and not np.isfinite(energy_floor_J_per_mol):
        raise InputError("the energy floor must be a finite number", field="--energy-floor")
    kappas = {}
    try:
        for name in models:
            kappas[name] = tunnelling.kappa(name, T, imag_freq_cm1, V1_J_per_mol, V2_J_per_mol,
                                             energy_floor=energy_floor_J_per_mol)
    except InputError as exc:
        option = _OPTION_OF_FIELD.get(exc.field)
        if option is None:
            raise
        raise InputError(exc.problem, field=option, hint=exc.hint) from None
    floor = max(0.0, V1_J_per_mol - V2_J_per_mol)
    if energy_floor_J_per_mol is not None:
        floor = max(floor, energy_floor_J_per_mol)
    from tstrate.output.records import tunnelling_record

    return tunnelling_record(imag_freq_cm1, V1_J_per_mol, V2_J_per_mol, floor, T, kappas, model)


def run(args) -> int:
    from tstrate.cli.common import format_table, print_json
    from tstrate.units import energy_to_J_per_mol

    unit = args.energy_unit
    V1 = energy_to_J_per_mol(args.forward_barrier, unit, field="--forward-barrier")
    V2 = energy_to_J_per_mol(args.reverse_barrier, unit, field="--reverse-barrier")
    floor = (None if args.energy_floor is None
             else energy_to_J_per_mol(args.energy_floor, unit, field="--energy-floor"))
    models = ["wigner", "skodje-truhlar", "eckart"] if args.model == "all" else [args.model]
    res = compute(args.imaginary_cm1, V1, V2, models, args.temperature, floor, model=args.model)

    if args.json:
        print_json(res)
        return 0
    kappa = res["kappa"] if args.model == "all" else {args.model: res["kappa"]}
    line = (f"imaginary frequency {res['imaginary_frequency_cm1']:g}i cm-1, "
            f"forward barrier {res['tunnelling_forward_barrier_kJ_per_mol']:.4g} kJ/mol, "
            f"reverse barrier {res['tunnelling_reverse_barrier_kJ_per_mol']:.4g} kJ/mol")
    if args.model != "wigner":
        line += f", energy integral from {res['tunnelling_energy_floor_kJ_per_mol']:.4g} kJ/mol"
    print(line)
    rows = [[float(t)] + [float(kappa[m][i]) for m in models]
            for i, t in enumerate(res["temperature_K"])]
    print(format_table(["T/K"] + [f"kappa({m})" for m in models], rows))
    return 0
