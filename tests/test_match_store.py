"""The formula-match store: a match rebuilt from a stored outcome is the match the limit
search finds, a stale or foreign entry is searched again, and an unwritable cache folder
only costs the search.  (Whether a match is right is tests/test_formulas.py's question,
against the published forms named there.)"""

import json

import pytest

from checker.engine.formulas import match, match_store
from checker.engine.formulas.check import parse_formula

# (formula, dimensionality, majority, band): limits, exact relations, an unrecognised text
FORMS = [
    ("n = N_D", 3, "n", "parabolic"),
    ("D_n = mu_n*k*T/q", 3, "n", "parabolic"),
    ("D_n = mu_n*k*T/q", 3, "n", "kane"),
    ("sigma = q*n*mu_n", 3, "n", "parabolic"),
    ("E_F - E_c = k*T*ln(N_D/N_c)", 3, "n", "parabolic"),
    ("p = N_A", 3, "p", "parabolic"),
    ("n = 2*N_D", 3, "n", "parabolic"),
]


def _trees(text, majority):
    lhs, rhs, _ = parse_formula(text, majority, "test")
    return lhs, rhs


@pytest.fixture
def fresh_store(tmp_path, monkeypatch):
    """A store in an empty cache folder, and no match remembered in this process."""
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))

    def renew():
        match.analyse.cache_clear()
        monkeypatch.setattr(match_store, "STORE", match_store.MatchStore())

    renew()
    yield renew
    match.analyse.cache_clear()


def test_a_stored_match_is_the_searched_one(fresh_store, tmp_path):
    searched = {form: match.analyse(*_trees(*form[:3:2]), *form[1:]) for form in FORMS}
    match_store.STORE.save()
    assert len(list(tmp_path.glob("regimecheck/matches-*.json"))) == 1
    fresh_store()  # a new run: the outcomes come from the file
    calls = []
    real = match._analyse
    try:
        match._analyse = lambda *args: calls.append(args) or real(*args)
        for form, found in searched.items():
            assert match.analyse(*_trees(*form[:3:2]), *form[1:]) == found, form
    finally:
        match._analyse = real
    assert calls == []  # no search ran
    assert {m.status for m in searched.values()} >= {"limit", "unrecognised"}


def test_an_entry_the_catalogue_does_not_know_is_searched_again(fresh_store, tmp_path):
    form = FORMS[1]
    found = match.analyse(*_trees(*form[:3:2]), *form[1:])
    match_store.STORE.save()
    (file,) = tmp_path.glob("regimecheck/matches-*.json")
    stored = json.loads(file.read_text(encoding="utf-8"))
    for outcome in stored.values():
        outcome[2] = ["no_such_limit"]
    file.write_text(json.dumps(stored), encoding="utf-8")
    fresh_store()
    assert match.analyse(*_trees(*form[:3:2]), *form[1:]) == found
    for outcome in stored.values():  # a status the engine does not have
        outcome[:] = ["proved", "donor", [], "symbolic"]
    file.write_text(json.dumps(stored), encoding="utf-8")
    fresh_store()
    assert match.analyse(*_trees(*form[:3:2]), *form[1:]) == found


def test_a_damaged_file_or_an_unwritable_folder_only_costs_the_search(fresh_store, tmp_path):
    form = FORMS[0]
    found = match.analyse(*_trees(*form[:3:2]), *form[1:])
    match_store.STORE.save()
    (file,) = tmp_path.glob("regimecheck/matches-*.json")
    file.write_text("{not json", encoding="utf-8")
    fresh_store()
    assert match.analyse(*_trees(*form[:3:2]), *form[1:]) == found
    file.unlink()
    file.parent.rmdir()
    file.parent.write_text("a file where the folder goes", encoding="utf-8")
    fresh_store()
    assert match.analyse(*_trees(*form[:3:2]), *form[1:]) == found
    match_store.STORE.save()  # cannot write: no error
