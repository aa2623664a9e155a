"""Objects kept in the user cache (checker/user_cache.py): built-in materials come back
equal to the ones their files make, a kept object is rebuilt when a source changes, and a
cache file can name no class the caller did not allow."""

import os
import pickle

from checker import user_cache
from checker.inputs import material_catalog as catalog


def test_every_builtin_material_from_the_cache_is_the_one_its_file_makes(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    for name in catalog.builtin_names():
        entry = catalog._data_files() / catalog._builtin_file(name)
        for _ in range(2):  # the first builds and keeps it, the second reads it back
            catalog._load_builtin.cache_clear()
            assert catalog.builtin_material(name) == catalog._read_builtin(entry), name
    assert len(list(tmp_path.glob("regimecheck/material-*.pickle"))) == len(
        {catalog._builtin_file(n) for n in catalog.builtin_names()}
    )
    catalog._load_builtin.cache_clear()


def test_a_changed_source_rebuilds(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    source = tmp_path / "source.txt"
    source.write_text("one", encoding="utf-8")
    builds = []

    def build():
        builds.append(1)
        return ("made", source.read_text(encoding="utf-8"))

    def fits(made):
        return isinstance(made, tuple)

    assert user_cache.kept("thing.pickle", [source], (), build, fits) == ("made", "one")
    assert user_cache.kept("thing.pickle", [source], (), build, fits) == ("made", "one")
    source.write_text("two", encoding="utf-8")
    assert user_cache.kept("thing.pickle", [source], (), build, fits) == ("made", "two")
    assert builds == [1, 1]


class _Planted:
    def __init__(self, marker):
        self.marker = marker

    def __reduce__(self):
        return (os.mkdir, (str(self.marker),))


def test_a_cache_file_names_no_class_it_was_not_allowed(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    source = tmp_path / "source.txt"
    source.write_text("one", encoding="utf-8")
    marker = tmp_path / "ran"
    folder = tmp_path / "regimecheck"
    folder.mkdir(parents=True)
    wanted = user_cache.source_hash([source])
    (folder / "thing.pickle").write_bytes(pickle.dumps((wanted, _Planted(marker))))
    made = user_cache.kept("thing.pickle", [source], (), lambda: "built", lambda m: True)
    assert made == "built" and not marker.exists()


def test_the_cache_setting_names_the_folder_or_switches_it_off(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    source = tmp_path / "source.txt"
    source.write_text("one", encoding="utf-8")
    builds = []

    def build():
        builds.append(1)
        return "made"

    chosen = tmp_path / "chosen"
    monkeypatch.setenv(user_cache.CACHE_SETTING, str(chosen))
    assert user_cache.kept("thing.pickle", [source], (), build, lambda m: True) == "made"
    assert (chosen / "thing.pickle").is_file() and not (tmp_path / "xdg").exists()
    monkeypatch.setenv(user_cache.CACHE_SETTING, "off")
    assert user_cache.cache_folder() is None
    assert user_cache.kept("other.pickle", [source], (), build, lambda m: True) == "made"
    assert user_cache.kept("other.pickle", [source], (), build, lambda m: True) == "made"
    assert builds == [1, 1, 1]  # off: built every time, nothing written
    assert sorted(p.name for p in tmp_path.rglob("*.pickle")) == ["thing.pickle"]


def test_a_folder_others_can_write_is_not_used(tmp_path, monkeypatch):
    shared = tmp_path / "shared"
    shared.mkdir()
    shared.chmod(0o777)
    monkeypatch.setenv(user_cache.CACHE_SETTING, str(shared))
    assert user_cache.usable_folder() is None
    assert user_cache.kept("thing.pickle", [], (), lambda: "built", lambda m: True) == "built"
    assert list(shared.iterdir()) == []
    monkeypatch.setenv(user_cache.CACHE_SETTING, str(tmp_path / "fresh"))
    assert user_cache.usable_folder() == tmp_path / "fresh"
    assert (tmp_path / "fresh").stat().st_mode & 0o777 == 0o700


def test_a_relative_cache_home_is_ignored(tmp_path, monkeypatch):
    # the XDG base-directory convention: a relative XDG_CACHE_HOME is invalid
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("XDG_CACHE_HOME", "relative")
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    (tmp_path / "home").mkdir()
    assert user_cache.cache_folder() == tmp_path / "home" / ".cache" / "regimecheck"
    monkeypatch.setenv("HOME", str(tmp_path / "missing"))
    assert user_cache.cache_folder() is None


def test_the_code_stamp_changes_with_the_sympy_install(tmp_path, monkeypatch):
    # formula matches are proved with sympy: another sympy must not reuse their outcomes
    fake = tmp_path / "site" / "sympy"
    fake.mkdir(parents=True)
    (fake / "release.py").write_text('__version__ = "0.0"\n', encoding="utf-8")
    monkeypatch.setattr(user_cache, "_STAMP", [])
    before = user_cache.code_stamp()
    monkeypatch.setattr(user_cache, "_STAMP", [])
    monkeypatch.syspath_prepend(str(tmp_path / "site"))
    assert user_cache.code_stamp() != before
