"""The demo storeroom kept in the cache: keyed by version, sources and day; written whole;
private; checked before each use (a damaged or stale one is built again); safe when two
first runs race; and never anything to do with a real database."""

from __future__ import annotations

import hashlib
import os
import sqlite3
import stat
import subprocess
import sys
import time
from datetime import timedelta
from pathlib import Path

import pytest

import carboy
from carboy.store import demo, demo_cache
from carboy.store.db import open_database
from carboy.store.demo_cache import DemoTemplate, template_path, template_problem, throwaway

DAY = demo.DEMO_TODAY


@pytest.fixture
def cache(tmp_path, monkeypatch) -> Path:
    folder = tmp_path / "cache"
    monkeypatch.setenv(demo_cache.ENV_VAR, str(folder))
    return folder


def _rows(path: Path) -> list:
    store = open_database(path, create=False)
    try:
        return [store.rows(f"SELECT * FROM {t} ORDER BY 1") for t in
                ("stock_bottles", "waste_containers", "waste_additions", "journal_entries")]
    finally:
        store.close()


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _mode(path: Path) -> int:
    return stat.S_IMODE(path.stat().st_mode)


def test_a_run_gets_a_private_copy_of_the_kept_template(cache, tmp_path):
    fresh = demo.create_demo_database(tmp_path / "fresh.db", DAY)
    with throwaway(DAY) as copy:
        assert _rows(copy) == _rows(fresh)
        assert _mode(copy) == 0o660
        kept = template_path(DAY)
        assert list((cache / "demo").iterdir()) == [kept]
        assert _mode(kept) == 0o660
        assert _mode(cache) == _mode(cache / "demo") == 0o700
        assert os.stat(copy).st_ino != os.stat(kept).st_ino
    assert not copy.parent.exists()  # the run's copy goes with it


def test_a_kept_template_is_copied_not_built_again(cache, monkeypatch):
    with throwaway(DAY):
        pass
    built = template_path(DAY).stat().st_mtime_ns

    def no_build(*_args, **_kw):
        raise AssertionError("built again")

    monkeypatch.setattr(demo_cache, "create_demo_database", no_build)
    with throwaway(DAY) as copy:
        assert copy.stat().st_size > 0
    assert template_path(DAY).stat().st_mtime_ns == built


def test_the_name_holds_version_sources_and_day(cache, monkeypatch):
    today = template_path(DAY)
    assert template_path(DAY + timedelta(days=1)) != today
    assert DAY.isoformat() in today.name and carboy.__version__ in today.name
    monkeypatch.setattr(carboy, "__version__", "99.0.0")
    assert template_path(DAY) != today


def test_the_fingerprint_follows_the_demo_text_and_every_store_and_model_file(tmp_path):
    root = tmp_path / "pkg"
    (root / "store").mkdir(parents=True)
    (root / "model" / "data").mkdir(parents=True)
    demo_file, data = root / "store" / "demo.py", root / "model" / "data" / "x.toml"
    demo_file.write_text("A = 1\n")
    data.write_text("a = 1\n")
    first = demo_cache.source_fingerprint(root)
    assert demo_cache.source_fingerprint(root) == first
    stamp = demo_file.stat().st_mtime_ns
    demo_file.write_text("A = 2\n")  # same size, same time: only the text tells
    os.utime(demo_file, ns=(stamp, stamp))
    second = demo_cache.source_fingerprint(root)
    assert second != first
    os.utime(data, ns=(stamp + 10**9, stamp + 10**9))
    assert demo_cache.source_fingerprint(root) != second
    (root / "model" / "__pycache__").mkdir()
    (root / "model" / "__pycache__" / "x.py").write_text("")  # compiled files do not count
    assert demo_cache.source_fingerprint(root) == demo_cache.source_fingerprint(root)


@pytest.mark.parametrize("damage", ["garbage", "truncated", "empty", "foreign", "old schema"])
def test_a_damaged_or_stale_template_is_built_again(cache, tmp_path, damage):
    good = demo.create_demo_database(tmp_path / "good.db", DAY)
    kept = template_path(DAY)
    kept.parent.mkdir(parents=True)
    if damage == "garbage":
        kept.write_bytes(os.urandom(8192))
    elif damage == "truncated":
        kept.write_bytes(good.read_bytes()[: good.stat().st_size // 2])
    elif damage == "empty":
        kept.write_bytes(b"")
    elif damage == "foreign":
        conn = sqlite3.connect(kept)
        conn.execute("CREATE TABLE notes (text)")
        conn.commit()
        conn.close()
    else:
        kept.write_bytes(good.read_bytes())
        conn = sqlite3.connect(kept)
        conn.execute("DELETE FROM _sqlite_migrations WHERE name = "
                     "(SELECT max(name) FROM _sqlite_migrations)")
        conn.commit()
        conn.close()
    if damage != "empty":
        assert template_problem(kept) is not None
    with throwaway(DAY) as copy:
        assert _rows(copy) == _rows(good)
    assert template_problem(kept) is None


def test_old_templates_and_crashed_builds_are_cleared_by_a_build(cache):
    folder = cache / "demo"
    folder.mkdir(parents=True)
    day_before = template_path(DAY - timedelta(days=1))  # same sources, another day
    other_recent = folder / "demo-0.0.1-aaaaaaaaaaaa-2025-03-14.db"
    other_old = folder / "demo-0.0.1-bbbbbbbbbbbb-2025-03-01.db"
    crashed = folder / "building-x1"
    unrelated = folder / "notes.txt"
    for path in (day_before, other_recent, other_old, unrelated):
        path.write_bytes(b"x")
    crashed.mkdir()
    long_ago = time.time() - demo_cache.KEEP_S - 60
    for path in (other_old, crashed):
        os.utime(path, (long_ago, long_ago))
    with throwaway(DAY):
        pass
    left = {p.name for p in folder.iterdir()}
    assert left == {template_path(DAY).name, other_recent.name, unrelated.name}


PROBE = """
from carboy.store.demo_cache import throwaway
from carboy.store.db import open_database
with throwaway() as path:
    store = open_database(path, create=False)
    print(store.scalar("SELECT count(*) FROM stock_bottles"))
    store.close()
"""


def test_first_runs_at_once_each_get_a_whole_demo_and_leave_one_template(cache):
    env = dict(os.environ, **{demo_cache.ENV_VAR: str(cache)})
    runs = [subprocess.Popen([sys.executable, "-c", PROBE], env=env, stdout=subprocess.PIPE,
                             stderr=subprocess.PIPE, text=True) for _ in range(3)]
    results = [run.communicate(timeout=120) for run in runs]
    assert [run.returncode for run in runs] == [0, 0, 0], [err for _, err in results]
    counts = {out.strip() for out, _ in results}
    assert len(counts) == 1 and int(counts.pop()) > 0
    kept = list((cache / "demo").iterdir())
    assert len(kept) == 1 and kept[0].name.startswith("demo-")  # no build folder left
    assert template_problem(kept[0]) is None


def test_a_run_changes_only_its_copy(cache):
    with throwaway(DAY) as copy:
        kept = template_path(DAY)
        before = _digest(kept)
        store = open_database(copy, create=False)
        store.write(lambda s: s.conn.execute("UPDATE stock_bottles SET notes = 'x'"))
        store.close()
    assert _digest(kept) == before
    assert not Path(f"{kept}-wal").exists() and not Path(f"{kept}-shm").exists()


def test_a_real_database_never_uses_the_cache(cache, tmp_path, capsys):
    from carboy.store.db import init_database
    from carboy.tui.launch import main

    real = tmp_path / "real.db"
    init_database(real).close()
    assert main(["stock", "list", "--db", str(real)]) == 0
    assert main(["--db", str(real), "waste", "list"]) == 0
    capsys.readouterr()
    assert not cache.exists()


def test_without_a_cache_folder_the_demo_is_built_in_place(tmp_path, monkeypatch):
    monkeypatch.setenv(demo_cache.ENV_VAR, str(tmp_path / "a-file"))
    (tmp_path / "a-file").write_text("not a folder")
    with throwaway(DAY) as copy:  # the cache cannot be made: built in place
        assert open_database(copy, create=False).scalar(
            "SELECT count(*) FROM stock_bottles") > 0
    monkeypatch.delenv(demo_cache.ENV_VAR)
    import platformdirs

    def no_home(*_a, **_kw):
        raise RuntimeError("no home directory")

    monkeypatch.setattr(platformdirs, "user_cache_dir", no_home)
    assert DemoTemplate(DAY).path is None
    with throwaway(DAY) as copy:
        assert copy.stat().st_size > 0


def test_an_empty_variable_means_the_user_cache_directory(tmp_path, monkeypatch):
    monkeypatch.setenv(demo_cache.ENV_VAR, "")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    if sys.platform.startswith("linux"):
        assert demo_cache.cache_folder() == tmp_path / "xdg" / "carboy" / "demo"
    assert demo_cache.cache_folder() is not None
