"""A plain-text progress bar with an estimate of the time left (no dependency).

On a terminal it redraws one line; when the stream is a file or a pipe it
writes a line at every tenth of the work, so logs stay readable.

>>> import io
>>> buf = io.StringIO()
>>> bar = Progress(4, "sweep", stream=buf, min_interval=0.0)
>>> for _ in range(4):
...     bar.advance()
>>> bar.close()
>>> "4/4" in buf.getvalue() and "100%" in buf.getvalue()
True
"""

from __future__ import annotations

import sys
import time
from typing import TextIO

__all__ = ["Progress", "format_duration"]


def format_duration(seconds: float) -> str:
    """``format_duration(3725) == "1:02:05"``; under an hour ``"2:05"``."""
    s = max(0, round(seconds))
    h, rem = divmod(s, 3600)
    m, sec = divmod(rem, 60)
    return f"{h}:{m:02d}:{sec:02d}" if h else f"{m}:{sec:02d}"


class Progress:
    """Count ``total`` steps; draw ``label [####....] n/total pct rate ETA`` on ``stream``."""

    def __init__(
        self,
        total: int,
        label: str,
        stream: TextIO | None = None,
        width: int = 28,
        min_interval: float = 0.1,
    ):
        self.total = max(int(total), 1)
        self.label = label
        self.stream = stream if stream is not None else sys.stderr
        self.width = width
        self.min_interval = min_interval
        self.done = 0
        self.start = time.perf_counter()
        self._last_draw = -1.0
        self._last_decile = -1
        self._tty = bool(getattr(self.stream, "isatty", lambda: False)())

    def line(self) -> str:
        elapsed = time.perf_counter() - self.start
        frac = self.done / self.total
        filled = int(self.width * frac)
        bar = "#" * filled + "." * (self.width - filled)
        rate = self.done / elapsed if elapsed > 0 else 0.0
        eta = (self.total - self.done) / rate if rate > 0 else float("nan")
        eta_text = format_duration(eta) if eta == eta else "?"
        return (
            f"{self.label} [{bar}] {self.done}/{self.total} {100 * frac:3.0f}% "
            f"{rate:,.1f}/s ETA {eta_text}"
        )

    def advance(self, steps: int = 1) -> None:
        self.done = min(self.done + steps, self.total)
        now = time.perf_counter()
        if self._tty:
            if now - self._last_draw >= self.min_interval or self.done == self.total:
                self.stream.write("\r" + self.line())
                self.stream.flush()
                self._last_draw = now
        else:
            decile = int(10 * self.done / self.total)
            if decile != self._last_decile and (decile > 0 or self.done == 1):
                self.stream.write(self.line() + "\n")
                self.stream.flush()
                self._last_decile = decile

    def close(self) -> None:
        if self._tty:
            self.stream.write("\r" + self.line() + "\n")
        elif self._last_decile != 10:
            self.stream.write(self.line() + "\n")
        self.stream.flush()
