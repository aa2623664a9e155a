"""The argparse parser of the command line (imported only where ``cli._arguments`` does
not read a plain ``check`` itself): every command, option and the --help text."""

from __future__ import annotations

import argparse
import os
import sys

from .cli import EXIT_INPUT, FORMATS
from .vocabulary_words import SEVERITIES


def _terminal_columns() -> int:
    """What shutil.get_terminal_size gives argparse (COLUMNS, else the terminal of the
    standard output, else 80), without importing shutil and the archive modules it pulls
    in on every run: argparse builds a formatter for each option it is given."""
    try:
        columns = int(os.environ.get("COLUMNS", "0"))
    except ValueError:
        columns = 0
    if columns <= 0:
        try:
            columns = os.get_terminal_size(sys.__stdout__.fileno()).columns  # type: ignore[union-attr]
        except (AttributeError, ValueError, OSError):
            columns = 0
    return columns or 80


def _formatter(prog: str) -> argparse.HelpFormatter:
    return argparse.HelpFormatter(prog, width=_terminal_columns() - 2)  # argparse's margin


class _Parser(argparse.ArgumentParser):
    def __init__(self, *args, **kwargs):
        kwargs.setdefault("formatter_class", _formatter)
        super().__init__(*args, **kwargs)

    def error(self, message):  # usage errors exit 2 with a one-line hint
        self.print_usage(sys.stderr)
        print(f"regimecheck: {message}", file=sys.stderr)
        raise SystemExit(EXIT_INPUT)


class _Version(argparse.Action):
    """--version: the installed version, looked up only when asked for."""

    def __init__(self, option_strings, dest, **kwargs):
        super().__init__(option_strings, dest, nargs=0, help="print the version and exit")

    def __call__(self, parser, *_):
        from importlib.metadata import PackageNotFoundError, version

        try:
            number = version("regimecheck")
        except PackageNotFoundError:  # run from a source tree that is not installed
            from . import __version__

            number = __version__
        print(f"regimecheck {number}")
        parser.exit()


def parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="regimecheck",
        description="Solve and check semiconductor operating points.",
        epilog="Environment: REGIMECHECK_CACHE=<folder> or off (the user cache of validated "
        "rules, built-in materials and formula matches; default $XDG_CACHE_HOME/regimecheck "
        "or ~/.cache/regimecheck), REGIMECHECK_DEBUG=1 (show a traceback on an internal "
        "error).",
    )
    parser.add_argument("--version", action=_Version)
    sub = parser.add_subparsers(dest="command", required=True)
    check = sub.add_parser("check", help="check calculation files (files or directories)")
    check.add_argument(
        "paths",
        nargs="+",
        help="calculation files (.yaml), memos (.md), tables (.csv), directories",
    )
    check.add_argument(
        "--skip-unrelated",
        action="store_true",
        help="skip named files that hold no calculation (memos without a "
        "regimecheck block, other YAML), as a directory walk does; for "
        "pre-commit hooks",
    )
    _report_options(check)
    state = sub.add_parser("state", help="solve every calculation in YAML files")
    state.add_argument("paths", nargs="+", help="calculation files (.yaml)")
    state.add_argument("--format", choices=("console", "json"), default="console")
    point = sub.add_parser("point", help="solve one operating point given on the command line")
    point.add_argument("--material", required=True, help="built-in material, e.g. Si, GaAs, 4H-SiC")
    point.add_argument("--temperature", required=True, help="e.g. 300K or 27degC")
    point.add_argument(
        "--donor",
        action="append",
        default=[],
        metavar="SPECIES=DENSITY",
        help="e.g. P=1e17cm-3 (repeatable)",
    )
    point.add_argument(
        "--acceptor",
        action="append",
        default=[],
        metavar="SPECIES=DENSITY",
        help="e.g. B=1e15cm-3 (repeatable)",
    )
    point.add_argument("--narrowing", action="store_true", help="apply band-gap narrowing")
    point.add_argument("--dimensionality", type=int, choices=(1, 2, 3), default=3)
    point.add_argument(
        "--field", help="applied field, e.g. 20kV/cm (checks the low-field shortcut)"
    )
    point.add_argument(
        "--length", help="conductor length, e.g. 100nm (checks the diffusive shortcut)"
    )
    _report_options(point)
    regime = sub.add_parser(
        "map",
        help="regime map of a material and dopant over doping and "
        "temperature, with checked points (PNG or SVG)",
    )
    regime.add_argument("paths", nargs="*", help="calculation files whose points are drawn")
    regime.add_argument("--material", help="built-in material (default: the files')")
    regime.add_argument("--dopant", help="dopant species, e.g. P (default: the files')")
    regime.add_argument(
        "--doping-range",
        default="1e13:1e21",
        metavar="FROM:TO",
        help="dopant density range in cm^-3 (default 1e13:1e21)",
    )
    regime.add_argument(
        "--temperature-range",
        default="20:700",
        metavar="FROM:TO",
        help="temperature range in K (default 20:700)",
    )
    regime.add_argument(
        "--resolution", type=int, default=200, help="grid points along each axis (default 200)"
    )
    regime.add_argument("--output", required=True, metavar="FILE", help="a .png or .svg file")
    curve = sub.add_parser(
        "curve",
        help="η of the majority carrier vs temperature at one "
        "doping, with the regimes marked (PNG or SVG)",
    )
    curve.add_argument("--material", required=True)
    curve.add_argument("--doping", required=True, metavar="SPECIES=DENSITY", help="e.g. P=1e17cm-3")
    curve.add_argument(
        "--temperature-range",
        default="20:700",
        metavar="FROM:TO",
        help="temperature range in K (default 20:700)",
    )
    curve.add_argument("--output", required=True, metavar="FILE", help="a .png or .svg file")
    listing = sub.add_parser(
        "materials", help="list the built-in materials: bands, models, dopants, sources"
    )
    listing.add_argument("name", nargs="*", help="only these materials (name or alias)")
    sub.add_parser("rules", help="list the checks")
    symbols = sub.add_parser("symbols", help="the trade symbols a stated formula may use")
    symbols.add_argument(
        "--dimensionality",
        type=int,
        choices=(1, 2, 3),
        default=3,
        help="dimensionality the units are shown for (default 3)",
    )
    explain = sub.add_parser("explain", help="what a check tests, why, and how to fix it")
    explain.add_argument("rule", help="a rule id, e.g. STAT02")
    return parser


def _report_options(command):
    command.add_argument(
        "--format",
        choices=FORMATS,
        default=None,
        help="console (default), compact (one line per finding and per clean "
        "calculation, for CI logs), json, markdown (to paste under a memo), "
        "sarif (SARIF 2.1.0), junit (JUnit XML), html (a self-contained "
        "review report with regime maps); with --output and no "
        "--format, the file's suffix chooses (.json .md .sarif .xml "
        ".html .txt)",
    )
    command.add_argument(
        "--output",
        metavar="FILE",
        help="write the report to FILE (UTF-8) instead of the terminal; "
        "never over an input, and only once the report is complete",
    )
    command.add_argument(
        "--fail-on",
        choices=SEVERITIES,
        default=None,
        help="lowest severity that makes the exit code 1 (default: the "
        "configuration's fail-level, else warning)",
    )
    command.add_argument(
        "--config",
        metavar="FILE",
        help="TOML settings file (default: [tool.regimecheck] of the first "
        "pyproject.toml from here upward)",
    )
    command.add_argument(
        "--exit-zero",
        action="store_true",
        help="exit 0 even when there are findings (input errors still exit 2)",
    )
