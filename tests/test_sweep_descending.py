"""A sweep written from high to low values fails where the same sweep written from low to
high fails: the boundary is said in values (T ≤ edge), not in the order of the grid."""

from checker.engine.run import check_paths
from checker.report.sweep_text import boundary_lines


def _boundaries(tmp_path, name, temperature, doping="{donors: {P: 1e16 cm-3}}"):
    path = tmp_path / name
    path.write_text(
        f"material: Si\ntemperature: {temperature}\ndoping: {doping}\n"
        "assumes: [non-degenerate, full-ionization]\n",
        encoding="utf-8",
    )
    (report,) = check_paths([str(path)]).reports
    return {f.rule: boundary_lines(f.sweep) for f in report.findings if f.sweep}


def test_a_falling_temperature_sweep_fails_below_the_same_edge(tmp_path):
    rising = _boundaries(tmp_path, "up.yaml", "{from: 20 K, to: 400 K, steps: 39}")
    falling = _boundaries(tmp_path, "down.yaml", "{from: 400 K, to: 20 K, steps: 39}")
    # silicon's fits hold from 250 K (checker/data/materials/Si.yaml): MODEL01 fails below
    assert rising["MODEL01"][0].startswith("fails for T ≤ 2")
    assert falling == rising


def test_a_falling_doping_sweep_fails_on_the_same_side(tmp_path):
    up = "{donors: {P: {from: 1e14 cm-3, to: 1e20 cm-3, steps: 25, spacing: log}}}"
    down = "{donors: {P: {from: 1e20 cm-3, to: 1e14 cm-3, steps: 25, spacing: log}}}"
    rising = _boundaries(tmp_path, "up.yaml", "300 K", up)
    falling = _boundaries(tmp_path, "down.yaml", "300 K", down)
    # the non-degenerate form fails at the high end (common practice (no source): eta > -3)
    assert rising["STAT01"][0].startswith("fails for N_D(P) ≥")
    assert falling == rising
