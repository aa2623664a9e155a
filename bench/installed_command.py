"""The installed `regimecheck` command, as the benches run it.

Benches time what users run: the console script pip installed beside this interpreter
(not `python -m checker` from the repository root, which skips the entry point and may
import a different tree).  A run that ends with an exit code it should not have is a
failure of the bench, never a time: the bench stops with a message and exit code 1.
"""

import os
import shutil
import subprocess
import sys

# what `regimecheck check` returns: 0 nothing found, 1 findings (cli.EXIT_OK, EXIT_FINDINGS)
CHECKED = (0, 1)


def command() -> str:
    """Path of the `regimecheck` script next to sys.executable; stops the bench without one."""
    found = shutil.which("regimecheck", path=os.path.dirname(sys.executable))
    if found is None:
        sys.exit(
            f"bench: no `regimecheck` command beside {sys.executable}; install the package "
            "into this environment first (python -m pip install -e .)"
        )
    return found


def run(args, expected=(0,), **options) -> subprocess.CompletedProcess:
    """Run ``regimecheck *args`` (stdout discarded unless ``options`` say otherwise) and stop
    the bench when it exits with a code outside ``expected``, showing the end of stderr."""
    options.setdefault("stdout", subprocess.DEVNULL)
    options.setdefault("stderr", subprocess.PIPE)
    done = subprocess.run([command(), *map(str, args)], **options)
    if done.returncode not in expected:
        error = done.stderr if isinstance(done.stderr, str) else (done.stderr or b"").decode()
        tail = "\n".join(error.strip().splitlines()[-5:])
        shown = " ".join(map(str, args))
        if len(shown) > 160:  # many file names: the start and the end say enough
            shown = f"{shown[:80]} ... {shown[-70:]}"
        sys.exit(
            f"bench: `regimecheck {shown}` exited with {done.returncode}, expected "
            f"{' or '.join(map(str, expected))}" + (f":\n{tail}" if tail else "")
        )
    return done
