"""Path waivers of the configuration over files of many calculations: a file's waivers
are looked up once and hold for every calculation in it, and only there."""

from __future__ import annotations

import json
import subprocess
import sys

DEGENERATE = """name: degenerate GaAs {n}
material: GaAs
temperature: 300 K
doping:
  donors: {{Si: {doping}e18 cm-3}}
formulas:
  - D_n = mu_n*k*T/q
  - E_F - E_c = k*T*ln(N_D/N_c)
"""


def test_a_path_waiver_holds_for_every_calculation_of_its_file_only(tmp_path):
    (tmp_path / "pyproject.toml").write_text(
        "[project]\nname = 'memos'\n\n[tool.regimecheck]\n"
        '[[tool.regimecheck.waive]]\npath = "calcs/cap.yaml"\n'
        'rule = "STAT01"\nreason = "contact layer, degenerate on purpose"\n',
        encoding="utf-8",
    )
    calcs = tmp_path / "calcs"
    calcs.mkdir()
    docs = [DEGENERATE.format(n=n, doping=d) for n, d in enumerate((5, 6, 7))]
    (calcs / "cap.yaml").write_text("---\n".join(docs), encoding="utf-8")
    (calcs / "other.yaml").write_text(DEGENERATE.format(n=9, doping=8), encoding="utf-8")
    done = subprocess.run(
        [sys.executable, "-m", "checker.cli", "check", "calcs", "--format", "json"],
        cwd=tmp_path,
        capture_output=True,
        text=True,
        timeout=120,
    )
    data = json.loads(done.stdout)
    waived = {
        (c["source"]["file"], c["name"]): f["waived"]
        for c in data["calculations"]
        for f in c["findings"]
        if f["rule"] == "STAT01"
    }
    reason = "contact layer, degenerate on purpose (configuration, calcs/cap.yaml)"
    assert waived == {
        ("calcs/cap.yaml", "degenerate GaAs 0"): reason,
        ("calcs/cap.yaml", "degenerate GaAs 1"): reason,
        ("calcs/cap.yaml", "degenerate GaAs 2"): reason,
        ("calcs/other.yaml", "degenerate GaAs 9"): None,
    }
