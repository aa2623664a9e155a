"""Write tests/data/reference_values.json: the multiple-precision references of the
slow mpmath tests, computed once instead of on every test run.

    python tools/make_reference_values.py            # about 1.5 minutes on one core

Contents (every number from mpmath, through the functions of tests/reference_cache.py):
  fermi_dirac   F_j(eta) for j = -3/2 ... 7/2 at the 2,018 eta points of the accuracy
                test (NIST DLMF 25.12.16, 22 digits, rounded to float)
  equilibrium   eta_n of the 40-digit neutrality solve (tests/reference.py) and
                n = N_c F_1/2(eta_n) for each independent-solve case of
                tests/test_equilibrium.py, with the material numbers the solve read
  inverse       the root eta of F_1/2(eta) = u for 120 values of u in [1e-300, 1e8]

Run it after changing a material's band, density-of-states or dopant data (the
equilibrium tests then say so) or the cases; commit the file with the change.
"""

from __future__ import annotations

import json
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))

import mpmath  # noqa: E402
import reference_cache as cache  # noqa: E402

from checker import load_material  # noqa: E402


def _dump(data: dict) -> str:
    """JSON with one line per list (readable diffs without one line per number)."""

    def block(obj, indent):
        pad = " " * indent
        if isinstance(obj, dict):
            items = [
                f"{pad}  {json.dumps(k)}: {block(v, indent + 2).lstrip()}" for k, v in obj.items()
            ]
            return pad + "{\n" + ",\n".join(items) + "\n" + pad + "}"
        return pad + json.dumps(obj)

    return block(data, 0) + "\n"


def main() -> int:
    start = time.perf_counter()
    points = cache.fd_points()
    fermi = {"eta": points, "values": {}}
    for j in cache.FD_ORDERS:
        fermi["values"][str(j)] = [cache.fd_value(j, eta) for eta in points]
        print(f"F_{j}: {len(points)} points ({time.perf_counter() - start:.0f} s)", flush=True)

    equilibrium = {}
    for name, T, donors, acceptors, regime in cache.EQUILIBRIUM_CASES:
        material = load_material(name)
        entry = cache.equilibrium_value(material, T, donors, acceptors)
        entry["material"] = cache.material_inputs(material, float(T), {**donors, **acceptors})
        equilibrium[cache.case_key(name, T, donors, acceptors)] = entry
        print(f"{name} {T} K {regime}: eta_n = {entry['eta_n']:.15g}", flush=True)

    inverse = {"u": cache.INVERSE_U, "eta": [cache.inverse_value(u) for u in cache.INVERSE_U]}
    data = {
        "generated_by": "tools/make_reference_values.py",
        "mpmath": mpmath.__version__,
        "fermi_dirac": fermi,
        "equilibrium": equilibrium,
        "inverse": inverse,
    }
    cache.PATH.parent.mkdir(parents=True, exist_ok=True)
    cache.PATH.write_text(_dump(data), encoding="utf-8")
    print(
        f"wrote {cache.PATH.relative_to(ROOT)} ({cache.PATH.stat().st_size / 1e3:.0f} kB) "
        f"in {time.perf_counter() - start:.0f} s"
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
