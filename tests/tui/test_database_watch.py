"""The app and its database file: replaced or removed under it, protections changed,
first start; and no traceback when something unexpected happens."""

from __future__ import annotations

import os
import shutil
import sqlite3

import pytest

from carboy.store.demo import DEMO_TODAY
from carboy.store.files import DatabaseMissing, DatabaseReplaced
from carboy.tui.app.app import make_app
from carboy.tui.first_start import ensure_database


def test_a_replaced_file_is_refused_from_then_on(demo_db, tmp_path):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    app.open_store().close()
    other = tmp_path / "other.db"
    shutil.copyfile(demo_db, other)
    os.replace(other, demo_db)  # same content, another file: a restore or a swap
    for _ in range(2):
        with pytest.raises(DatabaseReplaced, match="was replaced"):
            app.open_store()
    assert any("nothing more is written" in n for n in app.database_notices)


def test_a_removed_file_is_refused_not_recreated(demo_db):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    os.unlink(demo_db)
    with pytest.raises(DatabaseReplaced, match="was removed"):
        app.open_store()
    assert not demo_db.exists()


def test_a_changed_guard_raises_a_notice(demo_db):
    conn = sqlite3.connect(demo_db, isolation_level=None)
    conn.execute("DROP TRIGGER journal_entries_no_delete")
    conn.close()
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    app.open_store().close()
    assert any("journal verify" in n for n in app.database_notices)


async def test_the_notice_is_shown_in_the_running_app(demo_db, wait_for):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=(80, 24), notifications=True) as pilot:
        await pilot.pause()
        os.unlink(demo_db)
        await pilot.press("f6")  # reload: the screen's worker opens the database again
        await wait_for(pilot, lambda: any("was removed" in n.message
                                          for n in app._notifications))


def test_an_unexpected_error_ends_the_app_with_one_line(demo_db, tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_STATE_HOME", str(tmp_path / "state"))
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    app._exception = RuntimeError("a bug")
    app._close_messages_no_wait = lambda: None
    app._fatal_error()
    (line,) = app._exit_renderables
    assert str(line).startswith("carboy: unexpected error (RuntimeError): a bug")
    assert "errors.log" in str(line)


def test_first_start_asks_before_creating(tmp_path, capsys):
    path = tmp_path / "first.db"
    with pytest.raises(DatabaseMissing, match="carboy init"):
        ensure_database(str(path), interactive=False)
    asked = []
    with pytest.raises(DatabaseMissing):
        ensure_database(str(path), ask=lambda q: asked.append(q) or "n", interactive=True)
    assert not path.exists() and str(path) in asked[0]
    assert ensure_database(str(path), ask=lambda q: "yes", interactive=True) == path
    assert path.exists() and oct(path.stat().st_mode & 0o777) == "0o660"
    assert ensure_database(str(path), interactive=False) == path  # there now: no question
