"""Command line: ``regimecheck check PATH...`` and its companions.

Commands: check (the main job), point (one operating point from options),
rules, explain ID, symbols, state (solve only), materials, map and curve (plots).
Exit codes: 0 no finding at or above the fail level, 1 findings, 2 unusable
input or usage, 3 internal error.  Bad input never shows a traceback.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path
from types import SimpleNamespace

from .close_words import close_matches
from .errors import RegimecheckError
from .vocabulary_words import SEVERITIES

EXIT_OK, EXIT_FINDINGS, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3
EXIT_BROKEN_PIPE = 141  # 128 + SIGPIPE, as a shell reports it
EXIT_INTERRUPTED = 130  # 128 + SIGINT
FORMATS = ("console", "compact", "json", "markdown", "sarif", "junit", "html")


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
        if args.output:  # imported only then
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
    if args.own_process:
        _quiet_collector()  # before the engine's imports, which make many objects
        _keep_freed_memory()  # before a sweep's solving threads start
    from .engine.run import check_paths

    if args.own_process:
        import gc

        gc.freeze()  # what the imports made is set aside for good
    config = _settings(args)
    with _sweep_progress() as progress:
        result = check_paths(
            args.paths, config=config, skip_unrelated=args.skip_unrelated, progress=progress
        )
    return _report(result, args, config)


# glibc's mallopt parameters (malloc.h)
_M_TRIM_THRESHOLD, _M_MMAP_THRESHOLD, _M_ARENA_MAX = -1, -3, -8


def _keep_freed_memory() -> None:
    """Set the C allocator up for chunk after chunk of the same arrays, once per process.
    glibc would give each solving thread an arena of its own, hand every array above
    128 kB (a chunk's are ~1 MB) to mmap and give freed memory back, so each chunk
    faulted its pages in afresh, two threads at once (a 1000 x 1000 sweep: ~40 ms, most
    of it in the first chunk).  Here: one arena, arrays up to 32 MB from the heap, freed
    memory kept up to 256 MB; the 2000 x 2000 sweep then peaks lower (bench/bench_sweep.py:
    175 -> 152 MB).  A process-wide setting: made by the command in a process of its own
    only, never for a program that calls the engine.  Another C library (no mallopt) is
    left as it is."""
    import ctypes  # (numpy, imported next, loads it anyway)

    try:
        mallopt = ctypes.CDLL(None).mallopt
    except (OSError, AttributeError):
        return
    mallopt(_M_ARENA_MAX, 1)
    mallopt(_M_MMAP_THRESHOLD, 32 << 20)
    mallopt(_M_TRIM_THRESHOLD, 256 << 20)


def _quiet_collector() -> None:
    """Fewer passes of Python's cycle collector over a run of the command (never where
    main() is called with arguments from a longer-lived program): the youngest generation
    is collected after 100,000 new containers rather than 700, and _cmd_check sets what
    its imports made aside for good (gc.freeze).  A check of many calculations makes some
    hundred thousand short-lived containers, nearly all freed by reference counting; the
    default schedule spent about a tenth of such a run walking them and the modules, one
    of 20,000 still some 1.4 ms a pass (1,000 calculations: five passes, and ten during
    the engine's imports)."""
    import gc

    gc.set_threshold(100_000, 10, 10)


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


# `check PATH...` with these options after the paths is read without argparse (its import
# and the parser's ~40 options are some 4 ms of a 0.1 s run); anything else is argparse's
_CHECK_FLAGS = {"--exit-zero": "exit_zero", "--skip-unrelated": "skip_unrelated"}
_CHECK_VALUES = {
    "--format": "format",
    "--output": "output",
    "--fail-on": "fail_on",
    "--config": "config",
}


def _arguments(argv):
    """The command line as argparse reads it (cli_parser): ``check`` followed by paths and
    then options, each once, in their plain spelling, is read here to the same values;
    anything else (--help, another command, an abbreviated option, an option before a
    path, ``--format=json``) goes to argparse, which also words every usage error."""
    words = sys.argv[1:] if argv is None else list(argv)
    plain = _plain_check(words)
    if plain is not None:
        return plain
    from .cli_parser import parser

    return parser().parse_args(argv)


def _plain_check(words):
    """The parsed ``check`` command line, or None where argparse must read it."""
    if len(words) < 2 or words[0] != "check" or not all(isinstance(w, str) and w for w in words):
        return None
    paths: list[str] = []
    while len(paths) + 1 < len(words) and not words[len(paths) + 1].startswith("-"):
        paths.append(words[len(paths) + 1])
    args = SimpleNamespace(version=None, command="check", paths=paths, skip_unrelated=False)
    args.__dict__.update(format=None, output=None, fail_on=None, config=None, exit_zero=False)
    rest, seen = words[len(paths) + 1 :], set()
    while rest:
        option = rest.pop(0)
        if option in seen or not (option in _CHECK_FLAGS or option in _CHECK_VALUES):
            return None
        seen.add(option)
        if option in _CHECK_FLAGS:
            setattr(args, _CHECK_FLAGS[option], True)
            continue
        if not rest or rest[0].startswith("-"):
            return None
        value = rest.pop(0)
        if (option == "--format" and value not in FORMATS) or (
            option == "--fail-on" and value not in SEVERITIES
        ):
            return None
        setattr(args, _CHECK_VALUES[option], value)
    return args if paths else None


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
        args = _arguments(argv)
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
