"""Command line: ``regimecheck state FILE...`` and ``regimecheck point ...``.

Exit codes: 0 done, 2 unusable input or usage, 3 internal error.  Bad input never
shows a traceback.
"""
from __future__ import annotations

import argparse
import os
import sys

from .errors import RegimecheckError

EXIT_OK, EXIT_INPUT, EXIT_INTERNAL = 0, 2, 3


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # usage errors exit 2 with a one-line hint
        self.print_usage(sys.stderr)
        print(f"regimecheck: {message}", file=sys.stderr)
        raise SystemExit(EXIT_INPUT)


def _parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="regimecheck",
                     description="Solve and check semiconductor operating points.")
    sub = parser.add_subparsers(dest="command", required=True)
    state = sub.add_parser("state", help="solve every calculation in YAML files")
    state.add_argument("paths", nargs="+", help="calculation files (.yaml)")
    state.add_argument("--format", choices=("console", "json"), default="console")
    point = sub.add_parser("point", help="solve one operating point given on the command line")
    point.add_argument("--material", required=True, help="built-in material, e.g. Si, GaAs, 4H-SiC")
    point.add_argument("--temperature", required=True, help="e.g. 300K or 27degC")
    point.add_argument("--donor", action="append", default=[], metavar="SPECIES=DENSITY",
                       help="e.g. P=1e17cm-3 (repeatable)")
    point.add_argument("--acceptor", action="append", default=[], metavar="SPECIES=DENSITY",
                       help="e.g. B=1e15cm-3 (repeatable)")
    point.add_argument("--narrowing", action="store_true", help="apply band-gap narrowing")
    point.add_argument("--format", choices=("console", "json"), default="console")
    sub.add_parser("materials", help="list the built-in materials and their dopants")
    return parser


def _pairs(items, what):
    from .inputs.quantities import parse_quantity

    out = {}
    for item in items:
        species, sep, density = item.partition("=")
        if not sep or not species:
            raise RegimecheckError(f"--{what} {item!r}: write SPECIES=DENSITY, e.g. P=1e17cm-3")
        out[species.strip()] = parse_quantity(density, "density", f"--{what} {species}")
    return out


def _solve_point(material, T, donors, acceptors, narrowing):
    from . import api

    state = api.solve_equilibrium(material, T, donors, acceptors, band_gap_narrowing=narrowing)
    return api.state_summary(state)


def _console():
    from rich.console import Console

    return Console(highlight=False)


def _cmd_point(args) -> int:
    from .inputs.material_catalog import resolve_material
    from .inputs.quantities import parse_temperature
    from .report.state_report import doping_text, render_console, render_json

    material = resolve_material(args.material)
    T = parse_temperature(args.temperature, "--temperature")
    donors, acceptors = _pairs(args.donor, "donor"), _pairs(args.acceptor, "acceptor")
    summary = _solve_point(material, T, donors, acceptors, args.narrowing)
    entry = (f"{material.name} at {T:.2f} K", doping_text(donors, acceptors), summary)
    if args.format == "json":
        print(render_json([entry], []))
    else:
        render_console([entry], [], _console())
    return EXIT_OK


def _cmd_state(args) -> int:
    from .inputs.calculation_file import read_calculation_file
    from .report.state_report import doping_text, render_console, render_json

    entries, errors = [], []
    for path in args.paths:
        result = read_calculation_file(path)
        errors.extend(result.errors)
        for calc in result.calculations:
            try:
                summary = _solve_point(calc.material, calc.temperature, calc.donors,
                                       calc.acceptors, calc.band_gap_narrowing)
            except RegimecheckError as exc:
                errors.append(f"{calc.source}:{calc.line}: {exc}")
                continue
            subtitle = (f"{calc.source}:{calc.line} - {calc.material.name}, "
                        f"{calc.temperature:.2f} K, {doping_text(calc.donors, calc.acceptors)}")
            entries.append((calc.name, subtitle, summary))
    if args.format == "json":
        print(render_json(entries, errors))
    else:
        render_console(entries, errors, _console())
    return EXIT_INPUT if errors else EXIT_OK


def _cmd_materials(_args) -> int:
    from .inputs.material_catalog import builtin_material, builtin_names

    for name in builtin_names():
        material = builtin_material(name)
        dopants = ", ".join(f"{k} ({d.kind[0]}, {d.energy / 1.602176634e-22:.0f} meV)"
                            for k, d in material.dopants.items())
        print(f"{name:8s} {material.long_name}: {dopants}")
    return EXIT_OK


def main(argv=None) -> int:
    args = _parser().parse_args(argv)
    handler = {"point": _cmd_point, "state": _cmd_state, "materials": _cmd_materials}[args.command]
    try:
        return handler(args)
    except RegimecheckError as exc:
        print(f"regimecheck: error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except Exception as exc:  # a bug of ours, not the user's input
        if os.environ.get("REGIMECHECK_DEBUG"):
            raise
        print(f"regimecheck: internal error ({type(exc).__name__}: {exc}); please report it. "
              "Set REGIMECHECK_DEBUG=1 to see the traceback.", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
