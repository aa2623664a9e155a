"""One check run: read calculation files, check the single points together
(:mod:`checker.engine.regime.points`) and each sweep over its grid
(:mod:`checker.engine.regime.sweep`),
apply the waivers.

Data flows one way: files -> Calculation objects -> solved quantities ->
findings -> :class:`RunResult` (which the reports render).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from pathlib import Path

from ..errors import RegimecheckError
from ..inputs.calculation_file import Calculation
from ..inputs.config import Config, check_rule_ids
from ..inputs.sources import read_input
from ..records import Record, field
from ..vocabulary_words import SEVERITY_RANK, Severity
from .findings import Finding
from .regime import rulebook
from .regime.points import CalculationReport, check_points
from .regime.rulebook import Rule
from .waivers import apply_waivers

# progress(done, total) of a sweep's grid
Progress = Callable[[int, int], None]


class RunResult(Record):
    reports: list[CalculationReport]
    input_errors: list[str]
    rules: tuple[Rule, ...]
    notes: list[str] = field(default_factory=list)  # run-level (configuration waivers)
    files_read: list[str] = field(default_factory=list)  # every input and settings file

    def active_findings(self) -> list[Finding]:
        return [f for r in self.reports for f in r.findings if not f.waived]

    def worst(self) -> Severity | None:
        # the words ranked by a table (Severity.worst makes a member of each)
        words = {f.severity for f in self.active_findings()}
        return Severity(max(words, key=SEVERITY_RANK.__getitem__)) if words else None

    def counts(self) -> dict[str, int]:
        out = {level.value: 0 for level in Severity}
        for finding in self.active_findings():
            out[finding.severity] += 1
        out["waived"] = sum(1 for r in self.reports for f in r.findings if f.waived)
        return out


def expand_paths(
    paths: Iterable[str], config: Config | None = None
) -> tuple[list[tuple[str, bool]], list[str]]:
    """(path, named on the command line) of the files named directly, plus every file
    under named directories that the configuration's file patterns select and its
    exclude patterns do not.  Each file once, however often it is named (directly, in
    a directory, through a link); named directly anywhere counts as named."""
    config = config or Config()
    files: list[tuple[str, bool]] = []
    errors: list[str] = []
    seen: dict[tuple[int, int] | str, int] = {}  # the file's identity -> index in files

    def add(path: Path, explicit: bool) -> None:
        key: tuple[int, int] | str
        try:
            info = path.stat()
            key = (info.st_dev, info.st_ino)
        except OSError:  # the reader will say why it cannot be read
            key = str(path.resolve())
        if key in seen:
            first = seen[key]
            files[first] = (files[first][0], files[first][1] or explicit)
            return
        seen[key] = len(files)
        files.append((str(path), explicit))

    for text in paths:
        path = Path(text)
        if path.is_dir():
            found = sorted(
                p
                for p in path.rglob("*")
                if p.is_file()
                and config.reads(p.name)
                and not config.excluded(p.relative_to(path).as_posix())
            )
            if not found:
                errors.append(
                    f"{text}: the directory holds no file to check "
                    f"({', '.join(config.file_patterns)})"
                )
            for p in found:
                add(p, False)
        elif config.excludes_named(text):
            continue  # exclude-patterns hold for named files (pre-commit)
        elif path.exists():
            add(path, True)
        else:
            errors.append(f"{text}: no such file or directory")
    return files, errors


def check_calculations(
    calculations: Sequence[Calculation],
    rules: tuple[Rule, ...] | None = None,
    input_errors: Iterable[str] = (),
    config: Config | None = None,
    progress: Progress | None = None,
) -> RunResult:
    """Solve and check already-read calculations (``config``: an inputs.config.Config).
    Sweeps are checked over their grid (``progress(done, total)`` is told how far)."""
    rules = rulebook.load_rules() if rules is None else rules
    points = [i for i, calc in enumerate(calculations) if not calc.sweep]
    reports, errors = check_points([calculations[i] for i in points], rules)
    by_index = dict(zip(points, reports))
    for i, calc in enumerate(calculations):
        if calc.sweep:
            from .regime.sweep import check_sweep  # imported only for a sweep

            try:
                by_index[i], sweep_errors = check_sweep(calc, rules, progress)
            except RegimecheckError as exc:
                # a grid the solve cannot finish loses this sweep, not the other calculations
                by_index[i] = CalculationReport(
                    calc, None, error=f"{calc.source}:{calc.line}: {exc}"
                )
                continue
            errors += sweep_errors
    ordered = [by_index[i] for i in range(len(calculations))]
    waivers = apply_waivers(rules, calculations, [r.findings for r in ordered], config)
    for i, report in enumerate(ordered):
        report.findings = sorted(
            report.findings, key=lambda f: (-SEVERITY_RANK[f.severity], f.rule)
        )
        report.notes += waivers.notes[i]
    errors = list(input_errors) + waivers.errors + errors
    errors += [r.error for r in ordered if r.error]
    return RunResult(ordered, errors, tuple(rules), waivers.run_notes)


def check_paths(
    paths: Iterable[str],
    rules: tuple[Rule, ...] | None = None,
    config: Config | None = None,
    skip_unrelated: bool = False,
    progress: Progress | None = None,
) -> RunResult:
    """Read every calculation under ``paths`` and check them all in one pass.

    ``config`` (an inputs.config.Config) selects and adjusts the rules, the files
    a directory walk reads, and adds waivers per path.  ``skip_unrelated``: files
    named directly that hold no calculation are skipped, as in a directory walk."""
    config = config or Config()
    rules = rulebook.load_rules() if rules is None else rules
    check_rule_ids(config, rules)
    rules = rulebook.configured(rules, config)
    files, errors = expand_paths(paths, config)
    calculations: list[Calculation] = []
    for path, explicit in files:
        read = read_input(path, explicit and not skip_unrelated, config.columns)
        calculations.extend(read.calculations)
        errors.extend(read.errors)
    result = check_calculations(calculations, rules, errors, config, progress)
    result.files_read = [path for path, _ in files] + ([config.source] if config.source else [])
    return result
