"""The typing delay and the stale-result guard of a form that recomputes as people type.

Each change bumps a generation counter.  A change after a quiet spell starts the
computation at once (so one keystroke shows its result quickly); changes in quick
succession are gathered and computed once, ``delay_s`` after the last.  At most one
computation runs at a time: a change made while it runs is computed when it finishes.
A result is applied only if its generation is still the current one, so an older result
can never overwrite a newer one.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from textual.dom import DOMNode
from textual.message import Message
from textual.timer import Timer

from carboy.model.forms import Reading

DELAY_S = 0.15
"""Quiet time after the last change before a burst of changes is computed."""


@dataclass(frozen=True)
class Outcome:
    """One computation of a live form: the generation it was started for, the inputs it
    read (``state``, compared with the form's current state before anything is recorded)
    and what came of them."""

    generation: int
    state: Any
    reading: Reading

    @property
    def ok(self) -> bool:
        return self.reading.ok

    @property
    def value(self):
        return self.reading.value


class Computed(Message):
    """A worker finished a computation of a live form."""

    def __init__(self, outcome: Outcome) -> None:
        super().__init__()
        self.outcome = outcome


class LiveComputation:
    """Drives ``start(generation)`` for ``owner`` (a screen) as its inputs change.

    ``start`` launches the computation (normally a thread worker); when its result
    arrives, the owner calls :meth:`finished` with the generation it was started for,
    and applies the result only if that returns True.
    """

    def __init__(self, owner: DOMNode, start: Callable[[int], None], *,
                 delay_s: float = DELAY_S) -> None:
        self._owner = owner
        self._start = start
        self.delay_s = delay_s
        self.generation = 0
        self.running = False
        self._dirty = False
        self._timer: Timer | None = None
        self._last_change = 0.0

    @property
    def settled(self) -> bool:
        """Nothing is running or waiting: the last result applied is the current one."""
        return not self.running and self._timer is None and not self._dirty

    def changed(self) -> None:
        """The inputs changed: compute now after a quiet spell, else after the delay."""
        self.generation += 1
        now = time.monotonic()
        quiet = now - self._last_change >= self.delay_s
        self._last_change = now
        if self._timer is not None:
            self._timer.stop()
            self._timer = None
        if quiet and not self.running:
            self._launch()
        else:
            self._timer = self._owner.set_timer(self.delay_s, self._launch)

    def _launch(self) -> None:
        self._timer = None
        if self.running:
            self._dirty = True
            return
        self.running = True
        self._start(self.generation)

    def finished(self, generation: int) -> bool:
        """A computation ended; True when its result is for the current inputs.  A change
        that arrived meanwhile is computed now."""
        self.running = False
        if self._dirty:
            self._dirty = False
            self._launch()
        return generation == self.generation
