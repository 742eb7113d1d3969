"""Progress of long steps on standard error: a redrawn line on a terminal, plain lines otherwise.

The pipeline calls a ``Progress`` callback (``jobs.workbook.Progress``) as each
step starts, and with ``(done, total)`` during counted steps (rows read,
analyses run). :class:`ProgressDisplay` is that callback for the command line.
A background ticker keeps the seconds moving while a step gives no news (the
sheet load, one long analysis, the write).

* On a terminal, one status line is redrawn in place: the step, a bar and the
  counts when the step is counted, and the seconds it has taken.
* Elsewhere (a log, a scheduled task), a plain line is written for a step only
  once it has taken ``PLAIN_AFTER`` seconds, then at most every ``PLAIN_EVERY``
  seconds, so short runs stay silent and long ones show they are alive.
"""

from __future__ import annotations

import threading
import time
from collections.abc import Callable
from typing import IO

from .words import progress as words

PLAIN_AFTER = 2.0  # seconds a step runs before a plain line is written for it
PLAIN_EVERY = 2.0  # seconds between plain lines of one step
TICK = 0.25  # seconds between the ticker's looks
BAR_WIDTH = 24


class ProgressDisplay:
    """A progress callback that draws on a text stream; use it as a context manager.

    Parameters
    ----------
    stream : text stream
        Where to write (standard error for the command line).
    terminal : bool
        Redraw one line in place (True) or write plain lines (False).
    clock : callable, optional
        Seconds, monotonic; tests pass a fake clock.
    ticker : bool
        Run the background ticker (tests drive :meth:`tick` themselves).
    """

    def __init__(
        self,
        stream: IO[str],
        *,
        terminal: bool,
        clock: Callable[[], float] = time.monotonic,
        ticker: bool = True,
    ) -> None:
        self.stream = stream
        self.terminal = terminal
        self.clock = clock
        self.lock = threading.Lock()
        self.message: str | None = None
        self.done: int | None = None
        self.total: int | None = None
        self.started = 0.0
        self.last_plain = 0.0
        self.width = 0  # characters of the status line on the terminal
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, name="statmargin-progress", daemon=True)
        self._ticker = ticker

    def __enter__(self) -> ProgressDisplay:
        if self._ticker:
            self._thread.start()
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def __call__(self, message: str, done: int | None = None, total: int | None = None) -> None:
        with self.lock:
            now = self.clock()
            if message != self.message:
                self._end_line()
                self.message, self.started, self.last_plain = message, now, now
            self.done, self.total = done, total
            if self.terminal:
                self._draw(now)
            elif now - self.started >= PLAIN_AFTER and now - self.last_plain >= PLAIN_EVERY:
                self._plain(now)

    def tick(self) -> None:
        """Refresh the seconds on a terminal; write a plain line when one is due."""
        with self.lock:
            if self.message is None:
                return
            now = self.clock()
            if self.terminal:
                self._draw(now)
            elif now - self.started >= PLAIN_AFTER and (
                now - self.last_plain >= PLAIN_EVERY or self.last_plain == self.started
            ):
                self._plain(now)

    def close(self) -> None:
        """Stop the ticker and end the status line."""
        self._stop.set()
        if self._thread.is_alive():
            self._thread.join()
        with self.lock:
            self._end_line()
            self.message = None

    # -- internals -----------------------------------------------------------------
    def _run(self) -> None:
        while not self._stop.wait(TICK):
            self.tick()

    def _text(self, now: float) -> str:
        assert self.message is not None
        seconds = now - self.started
        if self.done is not None and self.total:
            return words.step_line(words.count_text(self.message, self.done, self.total), seconds)
        return words.step_line(self.message, seconds)

    def _draw(self, now: float) -> None:
        text = self._text(now)
        if self.done is not None and self.total:
            filled = BAR_WIDTH * min(self.done, self.total) // self.total
            text = f"[{'#' * filled}{'.' * (BAR_WIDTH - filled)}] {text}"
        pad = " " * max(0, self.width - len(text))
        self.stream.write(f"\r{text}{pad}")
        self.stream.flush()
        self.width = len(text)

    def _plain(self, now: float) -> None:
        self.stream.write(self._text(now) + "\n")
        self.stream.flush()
        self.last_plain = now

    def _end_line(self) -> None:
        if self.terminal and self.width:
            self.stream.write("\n")
            self.stream.flush()
        self.width = 0
