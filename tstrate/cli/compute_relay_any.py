"""``tstrate compute relay-any``: a relay saddle point of any substrate and catalyst."""

from __future__ import annotations



from tstrate.errors import InputError


def add_relay_any_arguments(sub, common) -> None:
    p = sub.add_parser("relay-any", help="relay TS of any substrate through N catalyst molecules",
                       description="Lay the substrate and N catalyst molecules out as a ring, "
                                   "optimise the pre-reactive complex and find the relay saddle "
                                   "point with GFN2-xTB: the substrate's hydrogen leaves its "
                                   "donor for the first catalyst, each catalyst hands one of its "
                                   "hydrogens on, the last one to the substrate's acceptor. Atom "
                                   "numbers are 1-based, in the order of each geometry file.")
    p.add_argument("--substrate", required=True, help="substrate geometry (any file ASE reads)")
    p.add_argument("--catalyst", required=True, help="catalyst geometry (any file ASE reads)")
    p.add_argument("--catalysts", type=int, required=True, help="number of catalyst molecules (0-6)")
    p.add_argument("--donor", type=int, required=True, help="substrate atom that gives the hydrogen")
    p.add_argument("--hydrogen", type=int, required=True, help="the substrate hydrogen that moves")
    p.add_argument("--acceptor", type=int, required=True, help="substrate atom that receives one")
    p.add_argument("--catalyst-atom", type=int, required=True,
                   help="catalyst atom that receives and gives a hydrogen")
    p.add_argument("--catalyst-hydrogen", type=int, required=True,
                   help="the catalyst hydrogen it passes on")
    p.add_argument("--break", dest="break", action="append", default=[], metavar="I-J",
                   help="another substrate bond that breaks (repeatable), e.g. 1-3")
    p.add_argument("--form", dest="form", action="append", default=[], metavar="I-J",
                   help="another substrate bond that forms (repeatable)")
    p.add_argument("--name", default="TS-relay", help="name of the transition state")
    p.add_argument("--complex-name", default="relay-complex", help="name of the complex")
    p.add_argument("-o", "--output", help="species file of the transition state")
    p.add_argument("--complex-output", help="species file of the pre-reactive complex")
    p.add_argument("--product-output", help="species file of the product-side complex")
    common(p, charge_help="total charge (default 0)", multiplicity_help="spin multiplicity 2S+1 "
           "(default 1)")


def _pairs(values, flag):
    out = []
    for v in values:
        try:
            i, j = (int(x) for x in v.split("-"))
        except ValueError:
            raise InputError(f"{v!r} is not I-J", field=flag, hint="e.g. 1-3") from None
        out.append((i - 1, j - 1))
    return out


def run_relay_any(args, helpers) -> int:
    from tstrate.compute.relay import find_general_relay

    outs = helpers["outputs"](args, [args.substrate, args.catalyst], "output", "complex_output",
                              "product_output")
    cplx, sad, _ = find_general_relay(
        helpers["geometry"](args.substrate, "--substrate"),
        helpers["geometry"](args.catalyst, "--catalyst"), args.catalysts,
        donor=args.donor - 1, hydrogen=args.hydrogen - 1, acceptor=args.acceptor - 1,
        catalyst_atom=args.catalyst_atom - 1, catalyst_hydrogen=args.catalyst_hydrogen - 1,
        break_bonds=_pairs(getattr(args, "break"), "--break"),
        form_bonds=_pairs(getattr(args, "form"), "--form"),
        name=args.name, complex_name=args.complex_name, charge=args.charge or 0,
        multiplicity=args.multiplicity or 1, settings=helpers["settings"](args),
        cache=helpers["cache"](args), progress=helpers["progress"](args), work_dir=args.work_dir,
        command=helpers["command_line"](args))
    for sp, path in zip((sad.ts, cplx.species, sad.product), outs):
        helpers["write"](sp, path)
    barrier = sad.ts.energy_J_per_mol - cplx.species.energy_J_per_mol
    if args.json:
        from tstrate.cli.common import print_json
        from tstrate.output.compute_records import saddle_document

        doc = saddle_document(sad, [outs[0], None, outs[2]])
        doc["barrier_from_complex_classical_kJ_per_mol"] = barrier / 1e3
        print_json(doc)
    else:
        print("\n".join([helpers["describe"](cplx.species, outs[1])]
                        + helpers["saddle_text"](sad, [outs[0], None, outs[2]])
                        + [f"barrier from the pre-reactive complex {barrier / 1e3:.2f} kJ/mol "
                           "classical"]))
    return 0



