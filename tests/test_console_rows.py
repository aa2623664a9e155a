"""The console's state table: each row '  label' padded to 24 columns and the value
right-aligned in 24, written as one block; a value holding a character a terminal would
act on is padded as it stands, then written as a visible escape (report/safe_text.py)."""

from checker.report.check_report import _PlainText


def test_rows_are_padded_and_aligned():
    out = _PlainText()
    out.append_rows([("n", "1e+17 cm^-3"), ("regime", "extrinsic")])
    assert out.plain == (
        "  n"
        + " " * 23
        + " " * 13
        + "1e+17 cm^-3\n"
        + "  regime"
        + " " * 18
        + " " * 15
        + "extrinsic\n"
    )


def test_a_value_with_a_control_character_is_escaped_after_padding():
    out = _PlainText()
    out.append_rows([("n", "1e+17 cm^-3"), ("regime", "ex\x1btrinsic")])
    # 'ex\x1btrinsic' is 10 characters: 14 blanks, then the escape written out as \x1b
    assert out.plain.endswith("  regime" + " " * 18 + " " * 14 + "ex\\x1btrinsic\n")
    assert out.plain.startswith("  n" + " " * 23 + " " * 13 + "1e+17 cm^-3\n")
