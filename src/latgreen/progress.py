"""Progress display for long runs: one updating line on a terminal, plain log lines otherwise
(cron), always on stderr so that stdout stays clean for data."""

from __future__ import annotations

import sys
import time
from typing import TextIO


class Progress:
    def __init__(self, total: int, label: str, stream: TextIO | None = None,
                 enabled: bool = True, log_every: float = 10.0) -> None:
        self.total = max(total, 1)
        self.label = label
        self.stream = stream if stream is not None else sys.stderr
        # no stderr at all (started with 2>&-): nothing to show
        self.enabled = enabled and self.stream is not None
        self.tty = bool(getattr(self.stream, "isatty", lambda: False)())
        self.done = 0
        self.start = time.monotonic()
        self.last = 0.0
        self.log_every = log_every if not self.tty else 0.2

    def _line(self) -> str:
        el = time.monotonic() - self.start
        rate = self.done / el if el > 0 else 0.0
        left = (self.total - self.done) / rate if rate > 0 else float("nan")
        pct = 100.0 * self.done / self.total
        eta = f"{left:,.0f} s left" if left == left else "estimating"
        return (f"{self.label}: {self.done:,}/{self.total:,} ({pct:5.1f}%), "
                f"{rate:,.0f}/s, {eta}")

    def advance(self, k: int) -> None:
        self.done += k
        if not self.enabled:
            return
        now = time.monotonic()
        if now - self.last < self.log_every and self.done < self.total:
            return
        self.last = now
        self._write("\r" + self._line() + "\x1b[K" if self.tty else self._line() + "\n")

    def note(self, message: str) -> None:
        """One line of news during the run (e.g. work units that are computed again)."""
        if self.enabled:
            self._write(("\r\x1b[K" if self.tty else "") + f"{self.label}: {message}\n")

    def finish(self, message: str) -> None:
        if not self.enabled:
            return
        el = time.monotonic() - self.start
        self._write(("\r\x1b[K" if self.tty else "") + f"{self.label}: {message} in {el:,.1f} s\n")

    def _write(self, text: str) -> None:
        """Write and flush; a display that went away (a closed pipe, a full disk behind a
        redirect) switches the display off instead of stopping the run."""
        try:
            self.stream.write(text)
            self.stream.flush()
        except (OSError, ValueError):
            self.enabled = False
