"""A small terminal for the benchmarks: carboy runs in a real pseudo-terminal, as in a
person's terminal window, and this side reads what it draws.

:class:`PtyTerminal` starts a command on a new pseudo-terminal of a given size (the
child is a session leader with the terminal as its controlling terminal, as a shell
would start it), answers the one question Textual asks a terminal (does it support
synchronized output: yes, as current terminals do, so every frame arrives between a
begin and an end mark) and keeps the screen's text: cursor moves, erases and printed
characters are applied, colours and styles are skipped.  Each frame's end is
time-stamped as its last byte is read, so "when was X on screen" is a time this side
observed, not one the app reports.
"""

from __future__ import annotations

import contextlib
import fcntl
import os
import pty
import re
import select
import signal
import struct
import termios
import time
import unicodedata
from collections.abc import Callable

SYNC_QUERY = b"\x1b[?2026$p"
SYNC_REPLY = b"\x1b[?2026;2$y"  # "mode 2026 is supported, currently reset"
SYNC_END = b"\x1b[?2026l"
_SEQUENCE = re.compile(rb"\x1b\[([0-9;?<>=$ ]*)([@-~])|\x1b\][^\x07\x1b]*(?:\x07|\x1b\\)"
                       rb"|\x1b[()][0-9A-Za-z]|\x1b[=>78DEHMNOPZc\\]")
KEYS = {"down": b"\x1b[B", "up": b"\x1b[A", "backspace": b"\x7f", "enter": b"\r",
        "escape": b"\x1b", "tab": b"\t", "ctrl+q": b"\x11", "f2": b"\x1bOQ", "f3": b"\x1bOR",
        "f4": b"\x1bOS"}


class PtyTerminal:
    """A command on a pseudo-terminal of ``cols`` × ``rows``, and the text it shows."""

    def __init__(self, argv: list[str], env: dict[str, str], cols: int = 80,
                 rows: int = 24) -> None:
        self.cols, self.rows = cols, rows
        self.grid = [[" "] * cols for _ in range(rows)]
        self.row = self.col = 0
        self._pending = b""
        self.frames = 0
        self.last_frame_at = 0.0
        self.started = time.perf_counter()
        pid, fd = pty.fork()
        if pid == 0:  # the child: size the terminal, then become the command
            try:
                fcntl.ioctl(0, termios.TIOCSWINSZ, struct.pack("HHHH", rows, cols, 0, 0))
                os.execvpe(argv[0], argv, env)
            finally:
                os._exit(127)
        self.pid, self.fd = pid, fd

    # -- reading -------------------------------------------------------------------
    def pump(self, timeout: float) -> bool:
        """Read what arrived within ``timeout`` seconds; True if a frame ended."""
        ready, _, _ = select.select([self.fd], [], [], max(0.0, timeout))
        if not ready:
            return False
        try:
            data = os.read(self.fd, 65536)
        except OSError:  # the child has gone
            raise EOFError("the program closed its terminal") from None
        if not data:
            raise EOFError("the program closed its terminal")
        now = time.perf_counter()
        if SYNC_QUERY in data:
            os.write(self.fd, SYNC_REPLY)
        ended = SYNC_END in data
        self._feed(data)
        if ended:
            self.frames += 1
            self.last_frame_at = now
        return ended

    def until(self, condition: Callable[[PtyTerminal], bool], timeout: float = 20.0) -> float:
        """Read until, at the end of a frame, ``condition(self)`` holds; the
        :func:`time.perf_counter` of that frame's last byte."""
        deadline = time.perf_counter() + timeout
        while True:
            if self.pump(deadline - time.perf_counter()) and condition(self):
                return self.last_frame_at
            if time.perf_counter() > deadline:
                raise TimeoutError("the screen never showed what was waited for:\n"
                                   + self.text())

    def settle(self, quiet_s: float, timeout: float = 20.0,
               on_frame: Callable[[PtyTerminal], object] | None = None) -> str:
        """Read until the text has not changed for ``quiet_s`` seconds; that text.
        ``on_frame(self)`` is called at the end of each frame meanwhile."""
        deadline = time.perf_counter() + timeout
        text, since = self.text(), time.perf_counter()
        while time.perf_counter() - since < quiet_s:
            if self.pump(min(0.02, quiet_s)) and on_frame is not None:
                on_frame(self)
            now_text = self.text()
            if now_text != text:
                text, since = now_text, time.perf_counter()
            if time.perf_counter() > deadline:
                raise TimeoutError("the screen never settled:\n" + text)
        return text

    def text(self) -> str:
        return "\n".join("".join(line).rstrip() for line in self.grid)

    def contains(self, needle: str) -> bool:
        return any(needle in "".join(line) for line in self.grid)

    # -- writing and ending ----------------------------------------------------------
    def press(self, key: str) -> float:
        """Send one key as a terminal does; the time it was sent."""
        os.write(self.fd, KEYS.get(key, key.encode()))
        return time.perf_counter()

    def close(self, quit_key: str = "ctrl+q") -> None:
        with contextlib.suppress(OSError):
            self.press(quit_key)
        deadline = time.perf_counter() + 5
        while time.perf_counter() < deadline:
            with contextlib.suppress(EOFError):
                self.pump(0.05)
            done, _ = os.waitpid(self.pid, os.WNOHANG)
            if done:
                break
        else:
            os.kill(self.pid, signal.SIGKILL)
            os.waitpid(self.pid, 0)
        os.close(self.fd)

    # -- the screen's text ------------------------------------------------------------
    def _feed(self, data: bytes) -> None:
        data = self._pending + data
        self._pending = b""
        pos = 0
        while pos < len(data):
            esc = data.find(b"\x1b", pos)
            chunk = data[pos:] if esc < 0 else data[pos:esc]
            if chunk:
                self._print(chunk.decode("utf-8", "replace"))
            if esc < 0:
                break
            match = _SEQUENCE.match(data, esc)
            if match is None:
                if len(data) - esc < 64:  # a sequence cut by the read: wait for the rest
                    self._pending = data[esc:]
                    break
                pos = esc + 1
                continue
            if match.group(2):
                self._control(match.group(1).decode(), match.group(2).decode())
            pos = match.end()

    def _control(self, params: str, final: str) -> None:
        if final == "H" or final == "f":
            parts = (params.split(";") + ["", ""])[:2]
            self.row = min(self.rows - 1, max(0, int(parts[0] or 1) - 1))
            self.col = min(self.cols - 1, max(0, int(parts[1] or 1) - 1))
        elif final == "J" and params in ("2", "3"):
            self.grid = [[" "] * self.cols for _ in range(self.rows)]
        elif final == "K":
            start, end = {"": (self.col, self.cols), "0": (self.col, self.cols),
                          "1": (0, self.col + 1), "2": (0, self.cols)}.get(params, (0, 0))
            for c in range(start, end):
                self.grid[self.row][c] = " "
        elif final == "G":
            self.col = min(self.cols - 1, max(0, int(params or 1) - 1))
        # colours (m), modes (h, l), queries: nothing to keep

    def _print(self, text: str) -> None:
        for ch in text:
            if ch == "\r":
                self.col = 0
            elif ch == "\n":
                self.row = min(self.rows - 1, self.row + 1)
            elif ch >= " ":
                wide = unicodedata.east_asian_width(ch) in ("W", "F")
                if self.col < self.cols:
                    self.grid[self.row][self.col] = ch
                    if wide and self.col + 1 < self.cols:
                        self.grid[self.row][self.col + 1] = ""
                self.col = min(self.cols, self.col + (2 if wide else 1))
