"""Progress on stderr for long work: one line redrawn in place, with finished rows above it.

Shown only on a terminal and never with `--quiet`: logs and pipes get no carriage returns and
no noise. `SolveProgress` is the display side of `milp.solve(progress=...)`.
"""
from __future__ import annotations

import shutil
import sys
import threading
import time
from typing import Callable, Optional, TextIO

from .text import number, percent


def is_terminal(stream) -> bool:
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):
        return False


class StatusLine:
    """One status line redrawn in place; `row` prints a finished line above it. Off (every call a
    no-op) when disabled or when the stream is not a terminal."""

    def __init__(self, stream: Optional[TextIO] = None, enabled: bool = True):
        self.stream = sys.stderr if stream is None else stream
        self.on = enabled and is_terminal(self.stream)
        self.text = ""
        self._lock = threading.Lock()

    def _width(self) -> int:
        return max(20, shutil.get_terminal_size((100, 24)).columns - 1)

    def _draw(self, text: str) -> None:
        text = text[: self._width()]
        self.stream.write("\r" + text + " " * max(0, len(self.text) - len(text)))
        self.text = text

    def show(self, text: str) -> None:
        if not self.on:
            return
        with self._lock:
            self._draw(text)
            self.stream.flush()

    def row(self, text: str) -> None:
        if not self.on:
            return
        with self._lock:
            current = self.text
            self._draw("")
            self.stream.write("\r" + text + "\n")
            self.text = ""
            if current:
                self._draw(current)
            self.stream.flush()

    def close(self) -> None:
        """Clear the status line (the terminal is left as it was found)."""
        if not self.on:
            return
        with self._lock:
            if self.text:
                self._draw("")
                self.stream.write("\r")
                self.text = ""
            self.stream.flush()


def solve_status(info: dict, elapsed: float) -> str:
    """`solve [decision] incumbent 9  bound 8  gap 11.11%  3.2 s` from a `milp.solve` progress dict."""
    return (f"solve [{info.get('stage', '-')}] incumbent {number(info.get('incumbent'))}  "
            f"bound {number(info.get('bound'))}  gap {percent(info.get('gap'))}  {elapsed:.1f} s")


class Ticker:
    """Redraws `line` with `render()` every `interval` seconds in a daemon thread (so elapsed time
    moves between events); a no-op when the line is off. Use as a context manager or start/stop."""

    def __init__(self, line: StatusLine, render: Callable[[], str], interval: float = 0.5):
        self.line, self.render, self.interval = line, render, interval
        self._stop = threading.Event()
        self._thread: Optional[threading.Thread] = None

    def redraw(self) -> None:
        self.line.show(self.render())

    def _run(self) -> None:
        while not self._stop.wait(self.interval):
            self.redraw()

    def start(self) -> "Ticker":
        if self.line.on and self._thread is None:
            self.redraw()
            self._thread = threading.Thread(target=self._run, name="stackproof-progress", daemon=True)
            self._thread.start()
        return self

    def stop(self) -> None:
        self._stop.set()
        if self._thread is not None:
            self._thread.join(timeout=2)
        self.line.close()

    def __enter__(self):
        return self.start()

    def __exit__(self, *exc) -> None:
        self.stop()


class SolveProgress(Ticker):
    """Pass as `milp.solve(progress=...)`: keeps one line with incumbent, bound, gap and elapsed
    time, refreshed between the solver's calls. Use as a context manager."""

    def __init__(self, line: StatusLine, interval: float = 0.5):
        super().__init__(line, lambda: solve_status(self.info, time.monotonic() - self.started), interval)
        self.info: dict = {"stage": "start"}
        self.started = time.monotonic()

    def __call__(self, info: dict) -> None:
        self.info = dict(info)
        self.redraw()
