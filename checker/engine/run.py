"""One check run: read calculation files, solve them all, evaluate every rule.

Data flows one way: files -> Calculation objects -> solved quantities ->
findings -> :class:`RunResult` (which the reports render).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from ..inputs.sources import read_input
from ..inputs.config import Config, check_rule_ids
from ..physics.constants import EV
from . import rulebook, state_values
from .evaluate import SEVERITY_RANK, apply_waivers, evaluate


@dataclass
class CalculationReport:
    calc: object                 # inputs.calculation_file.Calculation
    state: dict | None           # trade-unit summary of the solved state
    findings: list = field(default_factory=list)
    notes: list = field(default_factory=list)
    error: str | None = None     # the calculation could not be solved
    formulas: list = field(default_factory=list)   # formula_check.FormulaResult
    sweep: dict | None = None    # a sweep: {"axes": [(label, Axis)], "points": n}


@dataclass
class RunResult:
    reports: list
    input_errors: list
    rules: tuple
    notes: list = field(default_factory=list)     # run-level notes (configuration waivers)
    files_read: list = field(default_factory=list)   # every input file (and settings file)

    def active_findings(self):
        return [f for r in self.reports for f in r.findings if not f.waived]

    def worst(self) -> str | None:
        ranks = [SEVERITY_RANK[f.severity] for f in self.active_findings()]
        return None if not ranks else [k for k, v in SEVERITY_RANK.items() if v == max(ranks)][0]

    def counts(self) -> dict:
        out = {level: 0 for level in SEVERITY_RANK}
        for finding in self.active_findings():
            out[finding.severity] += 1
        out["waived"] = sum(1 for r in self.reports for f in r.findings if f.waived)
        return out


def expand_paths(paths, config=None) -> tuple[list, list[str]]:
    """(path, named on the command line) of the files named directly, plus every file
    under named directories that the configuration's file patterns select and its
    exclude patterns do not.  Each file once, however often it is named (directly, in
    a directory, through a link); named directly anywhere counts as named."""
    config = config or Config()
    files, errors, seen = [], [], {}

    def add(path, explicit):
        try:
            info = path.stat()
            key = (info.st_dev, info.st_ino)
        except OSError:         # the reader will say why it cannot be read
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
            found = sorted(p for p in path.rglob("*") if p.is_file() and config.reads(p.name)
                           and not config.excluded(p.relative_to(path).as_posix()))
            if not found:
                errors.append(f"{text}: the directory holds no file to check "
                              f"({', '.join(config.file_patterns)})")
            for p in found:
                add(p, False)
        elif config.excludes_named(text):
            continue                      # exclude-patterns hold for named files (pre-commit)
        elif path.exists():
            add(path, True)
        else:
            errors.append(f"{text}: no such file or directory")
    return files, errors


def summarize(values: dict, i: int) -> dict:
    """Trade-unit numbers of calculation ``i`` (stable keys of the JSON report)."""
    pick = lambda name: float(values[name][i])
    kT = pick("kT")
    return {
        "regime": str(values["regime"][i]),
        "temperature_K": pick("T"),
        "EF_minus_EC_eV": pick("eta_n") * kT / EV,
        "EF_minus_EV_eV": -pick("eta_p") * kT / EV,
        "eta_n": pick("eta_n"),
        "eta_p": pick("eta_p"),
        "n_cm3": pick("dens_n") * 1e-6,
        "p_cm3": pick("dens_p") * 1e-6,
        "donors_ionized_fraction": pick("f_n"),
        "acceptors_ionized_fraction": pick("f_p"),
        "ni_cm3": pick("ni") * 1e-6,
        "band_gap_eV": pick("Eg") / EV,
        "above_mott_density": bool(pick("metal_n") > 0 or pick("metal_p") > 0),
    }


def check_calculations(calculations, rules=None, input_errors=(), config=None,
                       progress=None) -> RunResult:
    """Solve and check already-read calculations (``config``: an inputs.config.Config).
    Sweeps are checked over their grid (``progress(done, total)`` is told how far)."""
    rules = rulebook.load_rules() if rules is None else rules
    points = [i for i, calc in enumerate(calculations) if not calc.sweep]
    reports, findings, errors = _check_points([calculations[i] for i in points], rules)
    by_index = dict(zip(points, zip(reports, findings)))
    for i, calc in enumerate(calculations):
        if calc.sweep:
            report, sweep_errors = _check_sweep(calc, rules, progress)
            by_index[i] = (report, report.findings)
            errors += sweep_errors
    ordered_reports = [by_index[i][0] for i in range(len(calculations))]
    waivers = apply_waivers(rules, calculations, [by_index[i][1]
                                                  for i in range(len(calculations))], config)
    for i, report in enumerate(ordered_reports):
        report.findings = sorted(report.findings,
                                 key=lambda f: (-SEVERITY_RANK[f.severity], f.rule))
        report.notes += waivers.notes[i]
    errors = list(input_errors) + waivers.errors + errors
    errors += [r.error for r in ordered_reports if r.error]
    return RunResult(ordered_reports, errors, tuple(rules), waivers.run_notes)


def _check_points(calculations, rules):
    """(reports, findings per calculation, input errors) of single operating points."""
    values, solve_errors, solve_notes = state_values.solve_all(calculations)
    formulas = [None] * len(calculations)
    if any(calc.formulas for calc in calculations):
        from . import formula_check    # imported only when there are formulas to read

        formulas = formula_check.analyse_all(calculations, values, skip=solve_errors.keys())
    findings = evaluate(rules, calculations, values, skip=solve_errors.keys(),
                        embodied=[f.embodied if f else [] for f in formulas])
    by_id = {rule.id: rule for rule in rules}
    reports = []
    for i, calc in enumerate(calculations):
        if i in solve_errors:
            reports.append(CalculationReport(calc, None, error=f"{calc.source}:{calc.line}: "
                                                               f"{solve_errors[i]}"))
            findings[i] = []
            continue
        if formulas[i]:
            findings[i] += formula_check.formula_findings(formulas[i], by_id, calc, findings[i])
        notes = [solve_notes[i]] if i in solve_notes else []
        reports.append(CalculationReport(calc, summarize(values, i), findings[i], notes,
                                         formulas=formulas[i].results if formulas[i] else []))
    errors = [message for f in formulas if f for message in f.errors]
    return reports, findings, errors


def _check_sweep(calc, rules, progress):
    """A sweep: rules over the grid, then each failing rule's worst point in full."""
    from . import sweep

    T, donors, acceptors, _ = sweep.grid(calc)
    first = sweep.point(calc, T, donors, acceptors, 0)
    first_reports, first_findings, errors = _check_points([first], rules)
    first_report = first_reports[0]
    if first_report.error:
        return CalculationReport(calc, None, error=first_report.error), errors
    formulas = first_report.formulas
    for result in formulas:          # a value "here" belongs to one point, not to a sweep
        result.value = result.exact = result.error = float("nan")
    embodied = [(word, carrier) for r in formulas if r.match
                for word, carrier in r.match.assumptions]
    from .evaluate import Embodied

    items = [Embodied(word, carrier, 0, "") for word, carrier in embodied]
    masks, points, notes = sweep.evaluate_sweep(calc, rules, items, progress)
    findings = [f for f in first_findings[0] if f.rule in ("FORM01", "FORM02")]
    for (rule_id, x), (mask, index) in sorted(masks.items()):
        worst = sweep.point(calc, T, donors, acceptors, index)
        checked, checked_findings, _ = _check_points([worst], rules)
        carrier = {"n": "electrons", "p": "holes"}.get(x)
        match = [f for f in checked_findings[0] if f.rule == rule_id and f.carrier == carrier]
        if not match:
            continue
        finding = match[0]
        rule = next(r for r in rules if r.id == rule_id)
        summary = sweep.summarize_sweep(calc, mask, index, points,
                                        sweep.excess_at(calc, rule, x, items, points))
        where = ", ".join(f"{k} = {v}" for k, v in summary.worst_point.items())
        finding.message = (f"On {summary.failing_fraction:.1%} of the sweep; "
                           f"{'; '.join(summary.boundary)}. Worst at {where}: {finding.message}")
        finding.sweep = summary
        findings.append(finding)
    report = CalculationReport(calc, None, findings, notes, formulas=formulas)
    report.sweep = {"axes": [(sweep.axis_label(a), a) for a in calc.sweep],
                    "points": int(T.size)}
    return report, errors


def check_paths(paths, rules=None, config=None, skip_unrelated=False,
                progress=None) -> RunResult:
    """Read every calculation under ``paths`` and check them all in one pass.

    ``config`` (an inputs.config.Config) selects and adjusts the rules, the files
    a directory walk reads, and adds waivers per path.  ``skip_unrelated``: files
    named directly that hold no calculation are skipped, as in a directory walk."""
    config = config or Config()
    rules = rulebook.load_rules() if rules is None else rules
    check_rule_ids(config, rules)
    rules = rulebook.configured(rules, config)
    files, errors = expand_paths(paths, config)
    calculations = []
    for path, explicit in files:
        read = read_input(path, explicit and not skip_unrelated, config.columns)
        calculations.extend(read.calculations)
        errors.extend(read.errors)
    result = check_calculations(calculations, rules, errors, config, progress)
    result.files_read = [path for path, _ in files] + ([config.source] if config.source else [])
    return result
