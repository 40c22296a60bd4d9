"""`carboy --demo` in a real terminal (tmux): it starts, draws, switches screens, quits cleanly."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import time
import uuid
from pathlib import Path

import pytest

pytestmark = pytest.mark.skipif(shutil.which("tmux") is None, reason="tmux is not installed")

CARBOY = Path(sys.executable).with_name("carboy")


def tmux(*args: str) -> str:
    return subprocess.run(["tmux", *args], check=True, capture_output=True, text=True).stdout


def wait_for_screen(session: str, needle: str, timeout: float = 10.0) -> str:
    deadline = time.monotonic() + timeout
    screen = ""
    while time.monotonic() < deadline:
        screen = tmux("capture-pane", "-t", session, "-p")
        if needle in screen:
            return screen
        time.sleep(0.1)
    raise AssertionError(f"{needle!r} never appeared; the screen was:\n{screen}")


def test_demo_starts_draws_and_quits(tmp_path):
    if not CARBOY.exists():
        pytest.skip("the carboy entry point is not installed beside this Python")
    session = f"carboy-test-{uuid.uuid4().hex[:8]}"
    status = tmp_path / "status"
    env_unset = " ".join(f"-u {k}" for k in os.environ if k.startswith("TEXTUAL_")
                         or k == "NO_COLOR")
    scratch = tmp_path / "scratch"
    scratch.mkdir()
    cache = tmp_path / "cache"  # the day's demo storeroom is kept here, never in the user's
    command = (f"env {env_unset} TERM=xterm-256color TMPDIR={scratch} "
               f"CARBOY_CACHE_DIR={cache} {CARBOY} --demo; "
               f"echo $? > {status}; sleep 30")
    tmux("new-session", "-d", "-s", session, "-x", "80", "-y", "24", command)
    try:
        screen = wait_for_screen(session, "rows 1–40 of 40")
        assert "[f2 Stock]" in screen and "Compound" in screen and "✓ current" in screen
        tmux("send-keys", "-t", session, "F3")
        screen = wait_for_screen(session, "Advice only")
        assert "MA-01" in screen and "safety office" in screen
        tmux("send-keys", "-t", session, "C-q")
        deadline = time.monotonic() + 10
        while not status.exists() and time.monotonic() < deadline:
            time.sleep(0.1)
        assert status.exists(), "carboy did not exit on ctrl+q"
        assert status.read_text().strip() == "0"
        after = tmux("capture-pane", "-t", session, "-p")
        assert "Traceback" not in after
        assert list(scratch.iterdir()) == []  # the throwaway database is gone
        kept = list((cache / "demo").iterdir())
        assert len(kept) == 1 and kept[0].name.startswith("demo-")
        assert kept[0].stat().st_mode & 0o777 == 0o660
    finally:
        subprocess.run(["tmux", "kill-session", "-t", session], capture_output=True)
