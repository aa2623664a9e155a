"""Long fuzz run of ``regimecheck check`` over hostile inputs of every kind.

    python bench/fuzz_inputs.py                       # 100,000 cases, 1 worker
    python bench/fuzz_inputs.py --cases 20000 --seconds 3600 --jobs 2 --out /tmp/fz
    python bench/fuzz_inputs.py --replay /tmp/fz      # re-run saved reproductions

``--snapshot HEAD`` fuzzes the package as committed (unpacked beside the
reproductions) rather than a working tree others are editing.  The strategies and the
in-process harness are those of the test suite
(tests/fuzz_inputs.py) with the long profile (deeper nesting).  Cases are spread
evenly over the kinds and run in batches by worker processes (``--jobs``), each
case in-process through ``checker.cli.main`` in a worker thread with a time bound
(``--timeout``, default 20 s).  A worker whose case overruns the bound is replaced
(the runaway thread cannot be stopped); a worker that stops answering altogether
(a loop that holds the interpreter) is killed and its current case recorded as a
hang.  Every few hundred cases a worker re-runs a fixed calculation and compares
the report with its first run (class ``state-leak``: one input changed how a later
one is checked); a report that differs is compared with a fresh run of the installed
`regimecheck` command (an exit code other than 0 or 1 there is written to workers.log).

Prints a table: kind, cases, exit codes 0/1/2, failures by class (exit3, traceback,
input-modified, hang, malformed-output, lost-calculation, state-leak), then each
distinct failure (class, error and the last frame of its traceback, run again with
REGIMECHECK_DEBUG=1) with its count and the folder of its first reproduction under
``--out``: files/ (the inputs), command.txt, outcome.txt (exit code, streams,
traceback) and minimized/ (the same failure from a smaller input).
"""

from __future__ import annotations

import argparse
import base64
import collections
import json
import os
import queue
import re
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))

import fuzz_inputs as fz  # noqa: E402  (the shared strategies and harness)
import installed_command  # noqa: E402  (bench/: the command a fresh process runs)

CLASSES = fz.FAILURE_CLASSES + ("state-leak",)
CANARY_EVERY = 250


# --- worker: one batch of one kind, in-process ------------------------------------------


def _encode(case: fz.Case) -> dict:
    return {
        "kind": case.kind,
        "argv_extra": list(case.argv_extra),
        "paths": None if case.paths is None else list(case.paths),
        "sentinel": case.sentinel,
        "files": {name: base64.b64encode(data).decode() for name, data in case.files.items()},
    }


def _decode(data: dict) -> fz.Case:
    return fz.Case(
        data["kind"],
        {n: base64.b64decode(b) for n, b in data["files"].items()},
        tuple(data["argv_extra"]),
        None if data["paths"] is None else tuple(data["paths"]),
        data["sentinel"],
    )


def _slug(signature: str) -> str:
    return re.sub(r"[^A-Za-z0-9]+", "-", signature).strip("-")[:90] or "failure"


def _canary() -> fz.Case:
    return fz.Case("canary", {fz.SENTINEL_NAME: fz.SENTINEL}, ("--format", "json"))


def _canary_report(outcome: fz.Outcome) -> str:
    """The JSON report of the canary without its temporary paths."""
    return re.sub(r"/tmp/regimecheck-fuzz-[^/\"]+/", "", outcome.stdout)


def _fresh_canary(timeout) -> str:
    """The canary's report from a new process (the code as it is on disk now)."""
    import tempfile

    with tempfile.TemporaryDirectory(prefix="regimecheck-fuzz-") as folder:
        path = Path(folder) / fz.SENTINEL_NAME
        path.write_bytes(fz.SENTINEL)
        try:
            done = subprocess.run(
                [installed_command.command(), "check", str(path), "--format", "json"],
                capture_output=True,
                text=True,
                timeout=timeout + 30,
            )
        except subprocess.TimeoutExpired:
            return ""
        if done.returncode not in installed_command.CHECKED:
            # inside a worker: said in workers.log, and the differing report is kept as
            # a state-leak reproduction rather than ending the run
            print(f"fresh canary run exited with {done.returncode}: {done.stderr}", file=sys.stderr)
            return ""
        return re.sub(r"/tmp/regimecheck-fuzz-[^/\"]+/", "", done.stdout.rstrip("\n") + "\n")


def run_worker(kind, count, seed, stop_at, timeout, out_dir, current, minimize_runs):
    """Run ``count`` cases of ``kind``; print one JSON line per case on stdout."""
    from hypothesis import HealthCheck, Phase, given, settings
    from hypothesis import seed as fixed_seed

    fz.set_profile(long=True)
    channel = os.fdopen(os.dup(1), "w", buffering=1)
    os.dup2(2, 1)  # stray prints (hypothesis notes) away from the channel
    out_dir = Path(out_dir)
    saved = set()
    done = [0]

    def emit(**record):
        channel.write(json.dumps(record) + "\n")

    import checker

    emit(t="hello", checker=str(Path(checker.__file__).parent))
    canary = [_canary_report(_canary().run(timeout))]

    def save(signature, case, outcome, failure):
        """The first reproduction of each distinct failure, and a smaller one."""
        if signature in saved:
            return None
        saved.add(signature)
        folder = out_dir / _slug(signature)
        try:
            folder.mkdir(parents=True)
        except FileExistsError:
            return str(folder)  # another worker saved this failure first
        fz.save_case(case, folder, outcome, f"signature: {signature}")
        if failure.cls != "hang" and minimize_runs:
            small = fz.minimize(
                case,
                signature,
                budget=minimize_runs,
                timeout=timeout,
                progress=lambda: emit(t="beat"),
            )
            fz.save_case(
                small, folder / "minimized", fz.examine(small, timeout), f"signature: {signature}"
            )
        return str(folder)

    @fixed_seed(seed)
    @settings(
        max_examples=count,
        phases=[Phase.generate],
        database=None,
        deadline=None,
        suppress_health_check=list(HealthCheck),
    )
    @given(fz.cases(kind))
    def body(case):
        if time.time() > stop_at:
            return  # the budget is spent: the batch's rest is skipped
        Path(current).write_text(json.dumps(_encode(case)))
        outcome = fz.examine(case, timeout)
        failures = outcome.failures()
        records = []
        for failure in failures:
            signature = outcome.signature(failure)
            folder = save(signature, case, outcome, failure)
            records.append([failure.cls, signature, folder])
        done[0] += 1
        if done[0] % CANARY_EVERY == 0:
            again = _canary().run(timeout)
            if _canary_report(again) != canary[0] and _canary_report(again) == _fresh_canary(
                timeout
            ):
                canary[0] = _canary_report(again)  # the code changed, not this process
            if _canary_report(again) != canary[0]:
                folder = out_dir / "state-leak"
                if "state-leak" not in saved:
                    saved.add("state-leak")
                    folder.mkdir(parents=True, exist_ok=True)
                    fz.save_case(case, folder / "last-case", outcome, "the case before the leak")
                    (folder / "first.json").write_text(canary[0])
                    (folder / "later.json").write_text(_canary_report(again))
                records.append(["state-leak", "state-leak", str(folder)])
        emit(
            t="case",
            kind=kind,
            code=outcome.code,
            elapsed=round(outcome.elapsed, 3),
            failures=records,
        )
        if fz.runaway_threads():
            emit(t="tainted")  # a runaway thread is left: end this worker
            channel.flush()
            os._exit(3)

    try:
        body()
    except Exception as exc:  # hypothesis' own errors: say so, do not hide them
        emit(t="error", message=f"{kind} batch: {type(exc).__name__}: {exc}"[:2000])
    emit(t="done")
    channel.flush()
    os._exit(0)


# --- parent: batches, workers, the table ------------------------------------------------


class Tally:
    def __init__(self):
        self.cases = collections.Counter()
        self.codes = collections.defaultdict(collections.Counter)
        self.classes = collections.defaultdict(collections.Counter)
        self.signatures = collections.Counter()
        self.folders = {}
        self.slow = collections.Counter()

    def add(self, record):
        kind = record["kind"]
        self.cases[kind] += 1
        self.codes[kind][record["code"]] += 1
        if (record.get("elapsed") or 0) > 5:
            self.slow[kind] += 1
        for cls, signature, folder in record["failures"]:
            self.classes[kind][cls] += 1
            self.signatures[(cls, signature)] += 1
            if folder and signature not in self.folders:
                self.folders[signature] = folder

    def table(self, seconds) -> str:
        columns = ["kind", "cases", "exit 0", "exit 1", "exit 2", *CLASSES, "> 5 s"]
        rows = []
        kinds = [k for k in fz.KINDS if self.cases[k]]
        for kind in kinds + ["total"]:
            pick = kinds if kind == "total" else [kind]
            row = [kind, sum(self.cases[k] for k in pick)]
            row += [sum(self.codes[k][c] for k in pick) for c in (0, 1, 2)]
            row += [sum(self.classes[k][c] for k in pick) for c in CLASSES]
            row += [sum(self.slow[k] for k in pick)]
            rows.append(row)
        widths = [
            max(len(str(col)), *(len(str(r[i])) for r in rows)) for i, col in enumerate(columns)
        ]
        line = lambda values: "  ".join(
            str(v).rjust(w) if i else str(v).ljust(w)
            for i, (v, w) in enumerate(zip(values, widths))
        )
        out = [line(columns), line(["-" * w for w in widths])] + [line(r) for r in rows]
        total = sum(self.cases.values())
        out.append(f"\n{total} cases in {seconds:.0f} s ({total / max(seconds, 1e-9):.1f} cases/s)")
        if self.signatures:
            out.append("\ndistinct failures (class, error, last frame): count, reproduction")
            for (_cls, signature), count in self.signatures.most_common():
                out.append(
                    f"  {count:6d}  {signature}\n          {self.folders.get(signature, '')}"
                )
        return "\n".join(out)


def _batches(total, batch, kinds, seed):
    """(kind, count, seed) batches, kinds in turn, ``total`` cases spread evenly."""
    left = {k: total // len(kinds) + (i < total % len(kinds)) for i, k in enumerate(kinds)}
    number = 0
    while any(left.values()):
        for kind in kinds:
            if left[kind]:
                count = min(batch, left[kind])
                left[kind] -= count
                number += 1
                yield kind, count, seed * 100003 + number


def _snapshot(rev: str, target: Path) -> str:
    """The package (checker/ and rules/) as committed at ``rev``, unpacked into
    ``target`` in its installed layout (rules/ as checker/rules/): a fixed state of the
    code to fuzz while others edit the working tree.  Returns the commit."""
    import io
    import shutil
    import tarfile

    commit = subprocess.run(
        ["git", "-C", str(ROOT), "rev-parse", "--verify", rev],
        capture_output=True,
        text=True,
        check=True,
    ).stdout.strip()
    archive = subprocess.run(
        ["git", "-C", str(ROOT), "archive", commit, "checker", "rules"],
        capture_output=True,
        check=True,
    ).stdout
    shutil.rmtree(target, ignore_errors=True)
    target.mkdir(parents=True)
    with tarfile.open(fileobj=io.BytesIO(archive)) as tar:
        tar.extractall(target, filter="data")
    (target / "rules").rename(target / "checker" / "rules")
    return commit


def run_parent(args) -> int:
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    env = dict(os.environ)
    code = "the working tree"
    if args.snapshot:
        commit = _snapshot(args.snapshot, out / "code")
        env["PYTHONPATH"] = os.pathsep.join(
            filter(None, [str(out / "code"), env.get("PYTHONPATH")])
        )
        code = f"commit {commit[:12]} ({args.snapshot}), unpacked in {out / 'code'}"
    print(f"fuzzing {code}", file=sys.stderr, flush=True)
    kinds = args.kinds.split(",") if args.kinds else list(fz.KINDS)
    pending = collections.deque(_batches(args.cases, args.batch, kinds, args.seed))
    start = time.time()
    stop_at = start + args.seconds if args.seconds else float("inf")
    tally = Tally()
    lines = queue.Queue()
    workers = {}  # id -> dict(process, kind, left, seed, last, current)
    next_id = [0]
    log = open(out / "workers.log", "a")
    last_print = time.time()
    seen_code = set()
    crashes = [0]

    def launch(kind, count, seed):
        wid = next_id[0]
        next_id[0] += 1
        current = out / f".current-{wid}.json"
        process = subprocess.Popen(
            [
                sys.executable,
                __file__,
                "--worker",
                kind,
                str(count),
                str(seed),
                str(stop_at),
                str(args.timeout),
                str(out),
                str(current),
                str(args.minimize),
            ],
            stdout=subprocess.PIPE,
            stderr=log,
            text=True,
            cwd=str(ROOT),
            env=env,
        )
        workers[wid] = {
            "process": process,
            "kind": kind,
            "left": count,
            "seed": seed,
            "last": time.time(),
            "current": current,
            "cases": 0,
        }

        def read():
            for text in process.stdout:
                lines.put((wid, text))
            lines.put((wid, None))

        threading.Thread(target=read, daemon=True).start()

    def refill():
        while len(workers) < args.jobs and pending and time.time() < stop_at and not stopping:
            launch(*pending.popleft())

    def finish(wid, killed=False):
        worker = workers.pop(wid)
        code = worker["process"].wait()
        if code not in (0, 3) and not killed and not worker["cases"]:
            crashes[0] += 1  # died before its first case: see workers.log
            if crashes[0] >= 3:
                pending.clear()
                print(
                    f"workers die at start (exit {code}); see {out / 'workers.log'}",
                    file=sys.stderr,
                )
                return
        if killed:
            tally.add(_hang_record(worker, out))
            worker["left"] -= 1
        if worker["left"] > 0 and time.time() < stop_at and not stopping:
            pending.appendleft((worker["kind"], worker["left"], worker["seed"] + 7919))
        worker["current"].unlink(missing_ok=True)

    stopping = []

    def interrupted(*_):
        stopping.append(True)  # Ctrl-C or SIGTERM: stop, and still print the table
        pending.clear()
        for worker in workers.values():
            worker["process"].kill()

    import signal

    signal.signal(signal.SIGTERM, interrupted)
    signal.signal(signal.SIGINT, interrupted)

    refill()
    while workers:
        try:
            wid, text = lines.get(timeout=1.0)
        except queue.Empty:
            wid, text = None, None
        now = time.time()
        if wid is not None and wid in workers:
            worker = workers[wid]
            if text is None:
                finish(wid)
            else:
                worker["last"] = now
                try:
                    record = json.loads(text)
                except ValueError:
                    record = {}
                if record.get("t") == "case":
                    tally.add(record)
                    worker["left"] -= 1
                    worker["cases"] += 1
                elif record.get("t") == "hello" and record["checker"] not in seen_code:
                    seen_code.add(record["checker"])
                    print(
                        f"worker {wid} imports checker from {record['checker']}",
                        file=sys.stderr,
                        flush=True,
                    )
                elif record.get("t") == "error":
                    print(f"worker {wid}: {record['message']}", file=sys.stderr)
        for wid, worker in list(workers.items()):
            if now - worker["last"] > args.timeout + 60 and worker["process"].poll() is None:
                worker["process"].kill()  # stuck beyond the thread bound: record a hang
                finish(wid, killed=True)
        refill()
        if now - last_print > args.progress:
            last_print = now
            done = sum(tally.cases.values())
            failures = sum(sum(c.values()) for c in tally.classes.values())
            print(
                f"[{now - start:6.0f} s] {done} cases, {failures} failures, "
                f"{len(tally.signatures)} distinct",
                file=sys.stderr,
                flush=True,
            )
    text = f"code: {code}\n\n" + tally.table(time.time() - start)
    print(text)
    (out / "table.txt").write_text(text + "\n")
    return 0


def _hang_record(worker, out) -> dict:
    """A case whose worker stopped answering: saved as a hang reproduction."""
    signature = "hang (worker killed)"
    folder = out / _slug(signature)
    try:
        case = _decode(json.loads(worker["current"].read_text()))
        if not folder.exists():
            fz.save_case(case, folder, None, "the worker stopped answering on this case")
    except (OSError, ValueError, KeyError):
        folder = None
    return {
        "kind": worker["kind"],
        "code": None,
        "elapsed": None,
        "failures": [["hang", signature, str(folder) if folder else ""]],
    }


def replay(folder, timeout) -> int:
    """Run every saved reproduction under ``folder`` again and say which still fail."""
    rows = []
    for case_file in sorted(Path(folder).rglob("case.json")):
        case = fz.load_case(case_file.parent)
        outcome = fz.examine(case, timeout)
        failures = outcome.failures()
        state = "; ".join(outcome.signature(f) for f in failures) or "fixed"
        rows.append((str(case_file.parent.relative_to(folder)), outcome.code, state))
    width = max((len(r[0]) for r in rows), default=10)
    print(f"{'reproduction'.ljust(width)}  exit  now")
    for name, code, state in rows:
        print(f"{name.ljust(width)}  {str(code).rjust(4)}  {state}")
    return 0


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--cases", type=int, default=100_000, help="cases in all (default 100000)")
    parser.add_argument(
        "--seconds",
        type=float,
        default=0,
        help="time budget; stop dispatching and end batches after it (0: none)",
    )
    parser.add_argument("--jobs", type=int, default=1, help="worker processes (default 1)")
    parser.add_argument("--batch", type=int, default=400, help="cases per worker batch")
    parser.add_argument(
        "--timeout",
        type=float,
        default=fz.DEFAULT_TIMEOUT,
        help="seconds a case may take before it is a hang (default 20)",
    )
    parser.add_argument("--seed", type=int, default=1, help="seed of the whole run")
    parser.add_argument("--kinds", default="", help=f"comma-separated subset of {fz.KINDS}")
    parser.add_argument(
        "--out",
        default=os.path.join(tempfile.gettempdir(), "regimecheck-fuzz"),
        help="folder for reproductions (default: regimecheck-fuzz in the temporary folder)",
    )
    parser.add_argument(
        "--minimize",
        type=int,
        default=300,
        help="runs spent shrinking each new failure (0: keep it as found)",
    )
    parser.add_argument("--progress", type=float, default=60, help="seconds between progress lines")
    parser.add_argument(
        "--snapshot",
        metavar="REV",
        help="fuzz the package as committed at REV (e.g. HEAD), unpacked "
        "under --out, instead of the working tree",
    )
    parser.add_argument("--replay", metavar="FOLDER", help="re-run saved reproductions")
    parser.add_argument("--worker", nargs=8, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.worker:
        kind, count, seed, stop_at, timeout, out, current, minimize_runs = args.worker
        return run_worker(
            kind,
            int(count),
            int(seed),
            float(stop_at),
            float(timeout),
            out,
            current,
            int(minimize_runs),
        )
    if args.replay:
        return replay(args.replay, args.timeout)
    installed_command.command()  # the workers' canary needs it: stop now if it is missing
    return run_parent(args)


if __name__ == "__main__":
    sys.exit(main())
