"""Command line: ``regimecheck check PATH...`` and its companions.

Commands: check (the main job), point (one operating point from options),
rules, explain ID, symbols, state (solve only), materials, map and curve (plots).
Exit codes: 0 no finding at or above the fail level, 1 findings, 2 unusable
input or usage, 3 internal error.  Bad input never shows a traceback.
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

from .close_words import close_matches
from .errors import RegimecheckError
from .vocabulary_words import SEVERITIES

EXIT_OK, EXIT_FINDINGS, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3
EXIT_BROKEN_PIPE = 141  # 128 + SIGPIPE, as a shell reports it
EXIT_INTERRUPTED = 130  # 128 + SIGINT


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


def _parser() -> argparse.ArgumentParser:
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


FORMATS = ("console", "compact", "json", "markdown", "sarif", "junit", "html")


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


def _quantity(text, dimension, option):
    """A quantity from the command line, held to the bounds of a calculation file."""
    from .inputs.quantities import check_plausible, parse_quantity

    value = parse_quantity(text, dimension, option)
    if value < 0:
        raise RegimecheckError(f"{option} {text!r} is negative; give a value >= 0")
    return check_plausible(value, dimension, text, option)


def _pairs(items, what):
    out = {}
    for item in items:
        species, sep, density = item.partition("=")
        if not sep or not species:
            raise RegimecheckError(f"--{what} {item!r}: write SPECIES=DENSITY, e.g. P=1e17cm-3")
        species = species.strip()
        if species in out:
            raise RegimecheckError(
                f"--{what} {item!r}: {species} is given twice; give each "
                "species once (add the densities if both are meant)"
            )
        out[species] = _quantity(density, "density", f"--{what} {species}")
    return out


def _solve_point(material, T, donors, acceptors, narrowing):
    from . import api

    state = api.solve_equilibrium(material, T, donors, acceptors, band_gap_narrowing=narrowing)
    return api.state_summary(state)


def _console():
    from rich.console import Console

    # a pipe or file gets no colour (rich's default) and a width that keeps lines whole
    return Console(highlight=False, width=None if sys.stdout.isatty() else 110)


def _exit_code(result, args) -> int:
    if result.input_errors:
        return EXIT_INPUT
    worst = result.worst()
    fail_on = args.fail_on or "warning"
    if worst is None or args.exit_zero or SEVERITIES.index(worst) < SEVERITIES.index(fail_on):
        return EXIT_OK
    return EXIT_FINDINGS


def _render(result, code, args) -> str:
    if args.format == "json":
        from .report.check_report import render_json

        return render_json(result, code)
    if args.format == "compact":
        from .report.check_report import render_compact

        return render_compact(result, code)
    if args.format == "markdown":
        from .report.markdown_report import render_markdown

        return render_markdown(result, code)
    if args.format == "sarif":
        from .report.ci_formats import render_sarif

        return render_sarif(result, code)
    if args.format == "junit":
        from .report.ci_formats import render_junit

        return render_junit(result, code, args.fail_on or "warning")
    if args.format == "html":
        from .report.html_report import render_html

        return render_html(result, code)
    import io

    from .report.check_report import render_console

    stream = io.StringIO()
    render_console(result, stream=stream)
    return stream.getvalue()


def _protected(config, result=None) -> list:
    """Every file this run read: its inputs, the settings file, and each pyproject.toml
    the settings search may read (from here upward)."""
    here = Path.cwd()
    files = list(result.files_read) if result is not None else []
    files.append(config.source if config is not None else None)
    upward = (folder / "pyproject.toml" for folder in (here, *here.parents))
    return files + [path for path in upward if path.is_file()]


def _report(result, args, config) -> int:
    from .report.check_report import render_console, summary_line
    from .report.safe_text import visible

    code = _exit_code(result, args)
    output = getattr(args, "output", None)
    if output:
        from .report.output_file import refuse_inputs, write_atomically

        refuse_inputs(output, _protected(config, result))
        text = _render(result, code, args).rstrip("\n") + "\n"  # complete before writing
        write_atomically(output, text.encode("utf-8", errors="backslashreplace"))
        print(visible(f"{summary_line(result)} Report: {output}"), file=sys.stderr)
    elif args.format != "console":
        print(_render(result, code, args))
    elif sys.stdout.isatty():
        render_console(result, _console())
    else:
        render_console(result, stream=sys.stdout)
    return code


def _choose_format(args) -> None:
    """--format, else the --output file's suffix, else the console."""
    if hasattr(args, "format") and args.format is None:
        args.format = "console"
        if args.output:  # imported only then: it brings tempfile
            from .report.output_file import format_for

            args.format = format_for(args.output) or "console"


def _settings(args):
    """The configuration (file or pyproject.toml); command-line options override it."""
    from .inputs.config import load_config

    config = load_config(args.config)
    if args.fail_on is None:
        args.fail_on = config.fail_level
    return config


def _cmd_check(args) -> int:
    from .engine.run import check_paths

    if args.own_process:
        _quiet_collector()
    config = _settings(args)
    with _sweep_progress() as progress:
        result = check_paths(
            args.paths, config=config, skip_unrelated=args.skip_unrelated, progress=progress
        )
    return _report(result, args, config)


def _quiet_collector() -> None:
    """Fewer passes of Python's cycle collector over a run of the command (never where
    main() is called with arguments from a longer-lived program): what the imports made
    is set aside for good (gc.freeze), and the youngest generation is collected after
    20,000 new containers rather than 700.  A check of many calculations makes some hundred
    thousand short-lived containers, nearly all freed by reference counting; the default
    schedule spent about a tenth of such a run walking them and the modules."""
    import gc

    gc.freeze()
    gc.set_threshold(20_000, 10, 10)


class _sweep_progress:
    """A rich progress bar on a terminal's stderr for sweeps of many points (none when
    stderr is not a terminal, or for small grids that finish in well under a second)."""

    LARGE = 200_000

    def __enter__(self):
        self.bar = None
        return self.update if sys.stderr.isatty() else None

    def update(self, done, total):
        if total < self.LARGE:
            return
        if self.bar is None:
            from rich.console import Console
            from rich.progress import Progress

            self.bar = Progress(console=Console(stderr=True), transient=True)
            self.bar.start()
            self.task = self.bar.add_task("sweep", total=total)
            self.total = total
        if total != self.total:
            self.task = self.bar.add_task("sweep", total=total)
            self.total = total
        self.bar.update(self.task, completed=done)

    def __exit__(self, *exc):
        if self.bar is not None:
            self.bar.stop()
        return False


def _cmd_point(args) -> int:
    """One operating point, checked as if every textbook shortcut were taken."""
    from .engine.run import check_calculations
    from .inputs.calculation_file import ASSUMPTIONS, Calculation
    from .inputs.material_catalog import resolve_material
    from .inputs.quantities import check_plausible, parse_temperature

    material = resolve_material(args.material)
    T = check_plausible(
        parse_temperature(args.temperature, "--temperature"),
        "temperature",
        args.temperature,
        "--temperature",
    )
    donors, acceptors = _pairs(args.donor, "donor"), _pairs(args.acceptor, "acceptor")
    for species in list(donors) + list(acceptors):
        material.dopant(species)
    structure = {"dim": float(args.dimensionality)}
    if args.field:
        structure["field"] = _quantity(args.field, "field", "--field")
    if args.length:
        structure["L"] = _quantity(args.length, "length", "--length")
    calc = Calculation(
        name=f"{material.name} at {T:.2f} K",
        source="(command line)",
        line=0,
        material=material,
        temperature=T,
        donors=donors,
        acceptors=acceptors,
        band_gap_narrowing=args.narrowing,
        structure=structure,
        assumes={word: 0 for word in ASSUMPTIONS},
    )
    from .engine.regime.rulebook import configured, load_rules
    from .inputs.config import check_rule_ids

    config = _settings(args)
    rules = load_rules()
    check_rule_ids(config, rules)
    return _report(
        check_calculations([calc], configured(rules, config), config=config), args, config
    )


def _cmd_rules(_args) -> int:
    from .engine.regime.rulebook import load_rules

    for rule in load_rules():
        print(f"{rule.id:8s} {rule.severity:8s} {rule.assumption:18s} {rule.title}")
    return EXIT_OK


def _cmd_symbols(args) -> int:
    from .engine.formulas.symbols import FORMULA_FUNCTIONS, glossary

    rows = glossary(args.dimensionality)
    print(f"{'symbol':11s} {'unit (SI)':20s} meaning  [accepted spellings]")
    for name, unit, meaning, spellings in rows:
        print(f"{name:11s} {unit:20s} {meaning}  [{spellings}]")
    print(
        f"\nfunctions: {', '.join(FORMULA_FUNCTIONS)}; F(j, eta) is the normalized "
        "Fermi–Dirac integral of order j.\nWrite each formula as '<left> = <right>' with "
        "* / + - and ^ or ** for powers; numbers are dimensionless."
    )
    return EXIT_OK


def _cmd_explain(args) -> int:
    from .engine.regime.rulebook import load_rules
    from .report.rule_text import explain_text

    rules = {rule.id: rule for rule in load_rules()}
    rule = rules.get(args.rule.strip().upper())
    if rule is None:
        close = close_matches(args.rule.upper(), list(rules), n=1)
        hint = f"did you mean {close[0]}? " if close else ""
        raise RegimecheckError(f"no rule {args.rule!r}; {hint}'regimecheck rules' lists them")
    print(explain_text(rule))
    return EXIT_OK


def _solve_calculation(calc) -> dict:
    """The state summary of one calculation: the bulk solve of its doping, or -- for a
    sheet (2D gas, graphene), whose Fermi level its stated sheet density fixes -- the
    engine's sheet solve, as `check` does."""
    from .engine.regime import sheet_values

    if not sheet_values.is_sheet(calc):
        return _solve_point(
            calc.material, calc.temperature, calc.donors, calc.acceptors, calc.band_gap_narrowing
        )
    import numpy as np

    from .engine.regime.state_values import solve_all
    from .engine.regime.trade_summary import trade_summary

    values, errors, _ = solve_all([calc])
    if errors:
        raise RegimecheckError(errors[0])
    # every row of the state table; a sheet solve has no bulk residual (shown as unknown)
    full = {**values, "residual": np.full(1, np.nan)}
    return {"material": calc.material.name, **trade_summary(full, 0)}


def _cmd_state(args) -> int:
    from .inputs.calculation_file import read_calculation_file
    from .report.check_report import doping_text
    from .report.state_report import render_console, render_json

    entries, errors = [], []
    for path in args.paths:
        result = read_calculation_file(path)
        errors.extend(result.errors)
        for calc in result.calculations:
            try:
                summary = _solve_calculation(calc)
            except RegimecheckError as exc:
                errors.append(f"{calc.source}:{calc.line}: {exc}")
                continue
            subtitle = (
                f"{calc.source}:{calc.line} - {calc.material.name}, "
                f"{calc.temperature:.2f} K, {doping_text(calc.donors, calc.acceptors)}"
                + (" (the first point of a sweep; `check` covers the grid)" if calc.sweep else "")
            )
            entries.append((calc.name, subtitle, summary))
    if args.format == "json":
        print(render_json(entries, errors))
    else:
        render_console(entries, errors, _console())
    return EXIT_INPUT if errors else EXIT_OK


def _range(text, option, low, high):
    try:
        first, last = (float(part) for part in text.split(":"))
    except ValueError:
        raise RegimecheckError(f"{option} {text!r}: write FROM:TO, e.g. {low:g}:{high:g}") from None
    if not (low <= first < last <= high):
        raise RegimecheckError(f"{option} {text!r}: needs {low:g} <= FROM < TO <= {high:g}")
    return first, last


def _plot_format(output):
    suffix = Path(output).suffix.lower().lstrip(".")
    if suffix not in ("png", "svg"):
        raise RegimecheckError(f"--output {output}: write a .png or .svg file")
    return suffix


def _save(fig, output, config=None, result=None):
    from .report.output_file import refuse_inputs, write_atomically
    from .report.plots import render
    from .report.safe_text import visible

    refuse_inputs(output, _protected(config, result))
    write_atomically(output, render(fig, _plot_format(output)))
    print(visible(f"wrote {output}"), file=sys.stderr)


def _cmd_map(args) -> int:
    from .engine.regime.regime_map import map_groups, regime_grid
    from .engine.run import check_paths
    from .inputs.material_catalog import resolve_material
    from .report.plots import draw_map
    from .report.safe_text import visible

    _plot_format(args.output)
    doping = tuple(v * 1e6 for v in _range(args.doping_range, "--doping-range", 1e8, 1e23))
    temperatures = _range(args.temperature_range, "--temperature-range", 1.0, 3000.0)
    if not 10 <= args.resolution <= 1000:
        raise RegimecheckError("--resolution must be from 10 to 1000")
    groups, errors, config, result = {}, [], None, None
    if args.paths:
        from .inputs.config import load_config

        config = load_config(None)
        result = check_paths(args.paths, config=config)
        groups, errors = map_groups(result), result.input_errors
    if args.material:
        material = resolve_material(args.material)
        species = args.dopant or next((sp for (name, sp) in groups if name == material.name), None)
        if species is None:
            raise RegimecheckError("--dopant is needed (e.g. --dopant P)")
        material.dopant(species)
    elif len(groups) == 1:
        (name, species), (material, _) = next(iter(groups.items()))
    elif groups:
        listed = ", ".join(f"{name} {sp}" for name, sp in groups)
        raise RegimecheckError(
            f"the files hold several materials and dopants ({listed}); "
            "choose one with --material and --dopant"
        )
    elif result is not None and result.reports:
        raise RegimecheckError(
            "no calculation of the files is doped, so none has a place on "
            "a doping axis; give --material and --dopant"
        )
    else:
        raise RegimecheckError("give --material and --dopant, or calculation files")
    points = groups.get((material.name, species), (None, []))[1]
    grid = regime_grid(material, species, doping, temperatures, (args.resolution, args.resolution))
    _save(draw_map(grid, points), args.output, config, result)
    for message in errors:
        print(visible(f"input error: {message}"), file=sys.stderr)
    return EXIT_INPUT if errors else EXIT_OK


def _cmd_curve(args) -> int:
    import numpy as np

    from .engine.regime.regime_map import eta_curve
    from .inputs.material_catalog import resolve_material
    from .report.plots import draw_eta_curve

    _plot_format(args.output)
    material = resolve_material(args.material)
    ((species, density),) = _pairs([args.doping], "doping").items()
    material.dopant(species)
    first, last = _range(args.temperature_range, "--temperature-range", 1.0, 3000.0)
    curve = eta_curve(material, species, density, np.linspace(first, last, 400))
    _save(draw_eta_curve(curve), args.output)
    return EXIT_OK


def _cmd_materials(args) -> int:
    from .inputs.material_catalog import builtin_material, builtin_names
    from .report.material_listing import material_block

    names = args.name or builtin_names()
    for number, name in enumerate(names):
        material = builtin_material(name)  # an unknown name: a clear message, exit 2
        print(("\n" if number else "") + "\n".join(material_block(material, name)))
    return EXIT_OK


def main(argv=None) -> int:
    import warnings

    for stream in (sys.stdout, sys.stderr):  # a character the terminal cannot show
        if hasattr(stream, "reconfigure"):  # is written as an escape, never a crash
            stream.reconfigure(errors="backslashreplace")
    with warnings.catch_warnings():
        if not os.environ.get("REGIMECHECK_DEBUG"):
            # numpy's overflow / invalid-value warnings are not for the reader: the
            # results are checked and a NaN or infinity is reported as such
            warnings.simplefilter("ignore", RuntimeWarning)
        return _run(argv)


def _run(argv) -> int:
    from .report.safe_text import visible

    try:
        args = _parser().parse_args(argv)
        # main() without arguments is the command itself (the console script, python -m
        # checker): the process is the run's own, so its collector may be tuned
        args.own_process = argv is None
        _choose_format(args)
        handler = {
            "check": _cmd_check,
            "point": _cmd_point,
            "state": _cmd_state,
            "materials": _cmd_materials,
            "rules": _cmd_rules,
            "symbols": _cmd_symbols,
            "map": _cmd_map,
            "curve": _cmd_curve,
            "explain": _cmd_explain,
        }[args.command]
        code = handler(args)
        sys.stdout.flush()  # a closed pipe shows here, not at interpreter exit
        return code
    except SystemExit as exc:  # argparse: --help, --version, usage errors
        # as Python does: no code is 0, a message (not a number) is 1
        return exc.code if isinstance(exc.code, int) else int(exc.code is not None)
    except KeyboardInterrupt:
        print("regimecheck: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except RegimecheckError as exc:
        print(visible(f"regimecheck: error: {exc}"), file=sys.stderr)
        return EXIT_INPUT
    except BrokenPipeError:
        # the reader stopped early (e.g. `| head`): no error message, the shell's code
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return EXIT_BROKEN_PIPE
    except Exception as exc:  # a bug of ours, not the user's input
        if os.environ.get("REGIMECHECK_DEBUG"):
            raise
        print(
            visible(
                f"regimecheck: internal error ({type(exc).__name__}: {exc}); please "
                "report it. Set REGIMECHECK_DEBUG=1 to see the traceback."
            ),
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
