"""The user's cache folder (emu.cache): where it is, what it keeps, and what it refuses to trust."""

from __future__ import annotations

import multiprocessing
import os
import pickle
from pathlib import Path

import pytest

import emu.cache
from emu.cache import CACHE_VARIABLE, cache_folder, cached, entry_key, sources_fingerprint


@pytest.fixture
def folder(tmp_path, monkeypatch):
    monkeypatch.setenv(CACHE_VARIABLE, str(tmp_path / "cache"))
    return tmp_path / "cache"


class Maker:
    """``make`` for ``cached``: counts its calls."""

    def __init__(self, value):
        self.value, self.calls = value, 0

    def __call__(self):
        self.calls += 1
        return self.value


def through(key, maker):
    return cached("things", key, maker, pickle.dumps, pickle.loads)


def entry_files(folder: Path) -> list[Path]:
    return sorted((folder / "things").glob("*"))


def test_the_suite_never_uses_the_users_own_cache():
    folder = cache_folder()
    assert folder is not None and Path.home() not in folder.resolve().parents


def test_the_folder_comes_from_the_variable_then_xdg_then_home(monkeypatch, tmp_path):
    monkeypatch.setenv(CACHE_VARIABLE, str(tmp_path / "mine"))
    assert cache_folder() == tmp_path / "mine"
    monkeypatch.delenv(CACHE_VARIABLE)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert cache_folder() == tmp_path / "xdg" / "relaybench"        # XDG Base Directory Specification 0.8
    monkeypatch.delenv("XDG_CACHE_HOME")
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    assert cache_folder() == tmp_path / "home" / ".cache" / "relaybench"
    monkeypatch.setenv(CACHE_VARIABLE, "off")
    assert cache_folder() is None


def test_a_second_call_reads_the_entry_instead_of_making_it(folder):
    maker = Maker({"words": [1, 2, 3]})
    assert through("k1", maker) == {"words": [1, 2, 3]}
    assert through("k1", maker) == {"words": [1, 2, 3]}
    assert maker.calls == 1
    assert len(entry_files(folder)) == 1
    other = Maker("another")
    assert through("k2", other) == "another" and other.calls == 1


@pytest.mark.parametrize("damage", ["truncated", "random bytes", "content changed", "empty"])
def test_a_damaged_entry_is_ignored_and_written_anew(folder, damage):
    maker = Maker(list(range(100)))
    through("k", maker)
    [path] = entry_files(folder)
    good = path.read_bytes()
    if damage == "truncated":
        path.write_bytes(good[:len(good) // 2])
    elif damage == "random bytes":
        path.write_bytes(os.urandom(len(good)))
    elif damage == "content changed":        # header intact, one byte of the pickle changed
        path.write_bytes(good[:-3] + bytes([good[-3] ^ 0x01]) + good[-2:])
    else:
        path.write_bytes(b"")
    assert through("k", maker) == list(range(100))
    assert maker.calls == 2
    assert path.read_bytes() == good             # rewritten whole
    assert through("k", maker) == list(range(100)) and maker.calls == 2


def test_an_entry_written_under_another_key_is_not_read(folder):
    """A file in the right place that says it belongs to another key (copied, or left by a
    version whose key happened to name the same file) is made anew."""
    through("old", Maker("old value"))
    [old] = entry_files(folder)
    maker = Maker("new value")
    through("new", maker)
    new = next(p for p in entry_files(folder) if p != old)
    new.write_bytes(old.read_bytes())
    assert through("new", maker) == "new value" and maker.calls == 2


def test_the_key_changes_with_the_version_and_each_part(monkeypatch):
    key = entry_key("machine", "text")
    assert entry_key("machine", "text") == key
    assert entry_key("machine", "text2") != key
    assert entry_key("machinet", "ext") != key          # parts are kept apart
    monkeypatch.setattr(emu.cache, "__version__", "99.0")
    assert entry_key("machine", "text") != key


def test_the_fingerprint_of_a_package_changes_with_any_of_its_source_files(tmp_path, monkeypatch):
    """What keeps a changed code generator from reading code an older one wrote."""
    package = tmp_path / "made_up_generator"
    (package / "inner").mkdir(parents=True)
    (package / "__init__.py").write_text("")
    (package / "inner" / "__init__.py").write_text("")
    (package / "inner" / "rules.lark").write_text("start: 'a'\n")
    monkeypatch.syspath_prepend(str(tmp_path))
    seen = set()
    for change in ["", "start: 'b'\n", "x = 1\n"]:
        if change.startswith("start"):
            (package / "inner" / "rules.lark").write_text(change)
        elif change:
            (package / "inner" / "new.py").write_text(change)
        sources_fingerprint.cache_clear()
        seen.add(sources_fingerprint("made_up_generator"))
    (package / "notes.txt").write_text("not source")
    sources_fingerprint.cache_clear()
    assert sources_fingerprint("made_up_generator") in seen
    assert len(seen) == 3


def test_the_cache_turned_off_makes_every_time_and_writes_nothing(folder, monkeypatch):
    monkeypatch.setenv(CACHE_VARIABLE, "off")
    maker = Maker(5)
    assert through("k", maker) == 5 and through("k", maker) == 5
    assert maker.calls == 2
    assert not folder.exists()


def test_a_folder_that_cannot_be_written_only_costs_time(tmp_path, monkeypatch):
    blocker = tmp_path / "a file"
    blocker.write_text("not a folder")
    monkeypatch.setenv(CACHE_VARIABLE, str(blocker / "cache"))
    maker = Maker("value")
    assert through("k", maker) == "value" and through("k", maker) == "value"
    assert maker.calls == 2


def _write_at_once(folder: str, start, value: int) -> int:
    os.environ[CACHE_VARIABLE] = folder
    start.wait()
    return through("shared", Maker(value))


def test_processes_writing_one_entry_at_once_all_succeed_and_leave_it_whole(folder):
    context = multiprocessing.get_context("spawn")
    with context.Manager() as manager:
        start = manager.Barrier(6)
        with context.Pool(6) as pool:
            results = pool.starmap(_write_at_once, [(str(folder), start, list(range(20_000)))] * 6)
    assert all(r == list(range(20_000)) for r in results)
    assert [p.suffix for p in entry_files(folder)] == [".bin"]       # no temporary file left behind
    maker = Maker("not needed")
    assert through("shared", maker) == list(range(20_000)) and maker.calls == 0
