"""The rule cache: a cached rule set is the set the reader builds, is used only while the
rule files and the reader are unchanged, and can name no code but the rule classes."""

import json
import os
import pickle
import shutil
import subprocess
import sys
from pathlib import Path

from checker import user_cache
from checker.engine.regime import rule_cache, rulebook
from checker.resources import rules_dir

ROOT = Path(__file__).resolve().parents[1]


def _read_counted(paths, counter):
    def read():
        counter.append(1)
        return rulebook._read_rules(paths)

    return read


def _shipped_copy(tmp_path: Path) -> tuple[Path, list[Path]]:
    folder = tmp_path / "rules"
    shutil.copytree(rules_dir(), folder)
    return folder, sorted(folder.glob("*.yaml"))


def test_a_cached_set_is_the_set_the_reader_builds(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    folder, paths = _shipped_copy(tmp_path)
    reads: list[int] = []
    fresh = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    cached = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    assert reads == [1]  # the second came from the cache file
    assert cached is not fresh
    assert [r.id for r in cached] == [r.id for r in fresh]
    for old, new in zip(fresh, cached, strict=True):
        for name in ("title", "message", "relation", "per", "path", "replaces", "references"):
            assert getattr(new, name) == getattr(old, name), (old.id, name)
        assert repr(new.threshold) == repr(old.threshold)  # nan where the rule has none
        if old.indicator is not None:
            assert new.indicator.tree == old.indicator.tree
            assert list(new.indicator.run) == list(old.indicator.run)
            assert [c.exact.tree for c in new.corrections] == [
                c.exact.tree for c in old.corrections
            ]
    # the closures are built again from the cached tree and compute the same numbers
    rule = next(r for r in cached if r.per == "carrier" and r.indicator is not None)
    again = next(r for r in fresh if r.id == rule.id)
    assert rule.indicator.run["n"] is not again.indicator.run["n"]


def test_a_changed_rule_file_is_read_afresh(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    folder, paths = _shipped_copy(tmp_path)
    reads: list[int] = []
    rule_cache.cached(folder, paths, _read_counted(paths, reads))
    target = folder / "MOB01.yaml"
    target.write_text(
        target.read_text(encoding="utf-8").replace("above: 1.3", "above: 1.4"), encoding="utf-8"
    )
    rules = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    assert reads == [1, 1]
    assert next(r for r in rules if r.id == "MOB01").threshold == 1.4


class _Planted:
    """A cache file that would create a folder if its globals were honoured."""

    def __init__(self, marker: Path):
        self.marker = marker

    def __reduce__(self):
        return (os.mkdir, (str(self.marker),))


def test_a_planted_cache_file_names_no_code(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    folder, paths = _shipped_copy(tmp_path)
    marker = tmp_path / "ran"
    file = tmp_path / "cache" / "regimecheck" / user_cache.entry_name("rules", folder)
    file.parent.mkdir(parents=True)
    wanted = user_cache.source_hash(paths)
    file.write_bytes(pickle.dumps((wanted, (_Planted(marker),))))
    reads: list[int] = []
    rules = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    assert not marker.exists()
    assert reads == [1] and len(rules) == len(paths)


def test_a_damaged_cache_file_is_read_past(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    folder, paths = _shipped_copy(tmp_path)
    reads: list[int] = []
    rule_cache.cached(folder, paths, _read_counted(paths, reads))
    file = tmp_path / "cache" / "regimecheck" / user_cache.entry_name("rules", folder)
    file.write_bytes(file.read_bytes()[:1000])
    rules = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    assert reads == [1, 1] and len(rules) == len(paths)


def test_an_unwritable_cache_folder_only_costs_the_reading(tmp_path, monkeypatch):
    blocked = tmp_path / "a file"
    blocked.write_text("not a folder", encoding="utf-8")
    monkeypatch.setenv("XDG_CACHE_HOME", str(blocked))
    folder, paths = _shipped_copy(tmp_path)
    reads: list[int] = []
    for _ in range(2):
        rules = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    assert reads == [1, 1] and len(rules) == len(paths)


def test_a_cached_rule_evaluates_in_a_new_process(tmp_path):
    # MOB01's indicator, max(stated/model, model/stated), by hand on two cells
    code = (
        "import json, numpy as np\n"
        "from checker.engine.regime import rulebook\n"
        "rule = next(r for r in rulebook.load_rules() if r.id == 'MOB01')\n"
        "values = {'stated_mu_n': np.array([800.0, 300.0]), 'mu_n': np.array([456.5, 600.0])}\n"
        "print(json.dumps(rule.indicator.run['n'](values).tolist()))\n"
    )
    env = {**os.environ, "XDG_CACHE_HOME": str(tmp_path)}
    runs = [
        subprocess.run(
            [sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True
        ).stdout
        for _ in range(2)  # the first fills the cache, the second reads it
    ]
    assert len(list(tmp_path.glob("regimecheck/rules-*.pickle"))) == 1
    for run in runs:
        assert json.loads(run) == [800.0 / 456.5, 600.0 / 300.0]


def test_a_cached_set_that_is_not_one_rule_per_file_is_read_afresh(tmp_path, monkeypatch):
    # a rewritten cache file with the right key but a rule dropped (a verdict silenced)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    folder, paths = _shipped_copy(tmp_path)
    reads: list[int] = []
    rules = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    file = tmp_path / "cache" / "regimecheck" / user_cache.entry_name("rules", folder)
    file.write_bytes(pickle.dumps((user_cache.source_hash(paths), rules[1:])))
    again = rule_cache.cached(folder, paths, _read_counted(paths, reads))
    assert reads == [1, 1] and len(again) == len(paths)
