"""Stated numbers of 2D channels compared with the channel's own carriers (VAL06) and with
the mobilities such channels reach (MOB03); a finding without a correction is located at
the stated number it reads."""

import pytest
import scipy.constants as sc

from checker.engine.run import check_paths

CM2 = 1e-4  # cm^2 -> m^2


def _report(tmp_path, text):
    path = tmp_path / "channel.yaml"
    path.write_text(text, encoding="utf-8")
    result = check_paths([str(path)])
    assert not result.input_errors, result.input_errors
    (report,) = result.reports
    return report


def _gan(mobility, sheet_resistance=None, temperature=300):
    resistance = f"  sheet_resistance: {sheet_resistance} ohm/sq\n" if sheet_resistance else ""
    return (
        f"name: channel\nmaterial: GaN-AlGaN\ntemperature: {temperature} K\nstated:\n"
        f"  electron_sheet_density: 1e13 cm-2\n"
        f"  electron_mobility: {mobility} cm^2/(V*s)\n{resistance}"
    )


def _rules(report):
    return sorted(f.rule for f in report.findings)


def test_sheet_resistance_a_decade_off_its_carriers_draws_val06(tmp_path):
    # R_s = 1/(q n_s mu) (Sze & Ng, Physics of Semiconductor Devices, 3rd ed. (2007), ch. 1)
    # with q from CODATA (scipy.constants): 312.1 ohm/sq for 1e13 cm-2 and 2000 cm^2/(V s)
    expected = 1.0 / (sc.e * 1e13 / CM2 * 2000 * CM2)
    assert expected == pytest.approx(312.1, rel=1e-3)
    report = _report(tmp_path, _gan(2000, 31.2))
    (finding,) = [f for f in report.findings if f.rule == "VAL06"]
    assert finding.line == 7  # the sheet resistance's line
    (correction,) = finding.corrections
    assert correction.corrected == pytest.approx(expected, rel=1e-9)
    assert "sheet_resistance" not in report.unchecked


def test_consistent_sheet_resistance_draws_nothing_and_is_compared(tmp_path):
    report = _report(tmp_path, _gan(2000, 312))
    assert _rules(report) == []
    assert "sheet_resistance" not in report.unchecked
    assert "electron_mobility" not in report.unchecked


def test_room_temperature_mobility_above_the_channel_range_draws_mob03(tmp_path):
    # 5000 cm^2/(V s) at 300 K: more than twice the ~2200 the best AlGaN/GaN layers reach at
    # room temperature (J.-T. Chen et al., Appl. Phys. Lett. 106, 251601 (2015))
    report = _report(tmp_path, _gan(5000))
    (finding,) = [f for f in report.findings if f.rule == "MOB03"]
    assert finding.line == 6  # located at the stated mobility, though it corrects nothing
    assert finding.indicator_value == pytest.approx(5000 / 2200, rel=1e-12)


@pytest.mark.parametrize("mobility, temperature", [(2000, 300), (2600, 300), (5000, 77)])
def test_mobility_inside_the_range_or_away_from_its_temperature_draws_nothing(
    tmp_path, mobility, temperature
):
    # 2600 is within 20 % of the range's top (common practice (no source)); at 77 K a
    # 2DEG's mobility is far above its room-temperature range, and the range does not apply
    report = _report(tmp_path, _gan(mobility, temperature=temperature))
    assert "MOB03" not in _rules(report)
