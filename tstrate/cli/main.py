"""Entry point of the ``tstrate`` command.

Each subcommand lives in its own module under ``tstrate.cli`` and exposes
``HELP`` (one line), ``add_arguments(parser)`` and ``run(args) -> int``.
Subcommand modules import heavy packages inside ``run`` only, so that
``tstrate --help`` starts fast. Usage errors (unknown option, missing or badly
typed argument, bad choice) are one line on stderr with exit status 2, from
every parser (:class:`tstrate.cli.common.OneLineParser`).
"""

from __future__ import annotations

import argparse
import importlib
import logging
import sys

from tstrate.errors import InputError

#: subcommand name -> module (in the order shown by --help)
SUBCOMMANDS: dict[str, str] = {
    "run": "tstrate.cli.run",
    "thermo": "tstrate.cli.thermo",
    "rates": "tstrate.cli.rates",
    "falloff": "tstrate.cli.falloff",
    "excite": "tstrate.cli.excite",
    "compare": "tstrate.cli.compare",
    "compute": "tstrate.cli.compute",
    "tunnel": "tstrate.cli.tunnel",
    "isotopes": "tstrate.cli.isotopes",
    "uncertainty": "tstrate.cli.uncertainty",
    "many": "tstrate.cli.many",
}


def build_parser() -> argparse.ArgumentParser:
    from tstrate import __version__
    from tstrate.cli.common import OneLineParser

    parser = OneLineParser(
        prog="tstrate",
        description="Rate constants from the stationary points of a reaction.",
    )
    parser.add_argument("--version", action="version", version=f"tstrate {__version__}")
    parser.add_argument("--traceback", action="store_true",
                        help="show the full Python traceback on errors (for developers)")
    parser.add_argument("-v", "--verbose", action="store_true", help="log progress messages")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, modname in SUBCOMMANDS.items():
        mod = importlib.import_module(modname)
        p = sub.add_parser(name, help=mod.HELP, description=getattr(mod, "DESCRIPTION", mod.HELP),
                           formatter_class=argparse.RawDescriptionHelpFormatter)
        p.add_argument("--traceback", action="store_true", default=argparse.SUPPRESS,
                       help="show the full Python traceback on errors")
        mod.add_arguments(p)
        p.set_defaults(_run=mod.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    logging.basicConfig(level=logging.INFO if args.verbose else logging.WARNING,
                        format="tstrate: %(levelname)s: %(message)s")
    # numpy's and other libraries' RuntimeWarnings are for developers: logged with --verbose only
    logging.captureWarnings(True)
    logging.getLogger("py.warnings").setLevel(logging.INFO if args.verbose else logging.ERROR)
    if not getattr(args, "_run", None):
        parser.error("give a command: " + ", ".join(SUBCOMMANDS) + " (tstrate --help describes them)")
    try:
        return int(args._run(args) or 0)
    except InputError as exc:
        if args.traceback:
            raise
        print(f"tstrate {args.command}: error: {exc}", file=sys.stderr)
        return 2
    except BrokenPipeError:  # e.g. piped into `head`
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except KeyboardInterrupt:
        print(f"tstrate {args.command}: interrupted", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
