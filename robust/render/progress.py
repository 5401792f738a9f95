"""Progress on stderr: a live line on a terminal, one summary line otherwise; never stdout.

On a terminal the live line is tqdm's (imported only then, so that a command whose stderr
is a file or a pipe pays nothing for it); elsewhere nothing is written until the work ends,
and then one line says what was done. Results never depend on any of this.
"""

from __future__ import annotations

import sys
import threading
import time
from typing import IO, Any

from ..exact.numbers import approx_text

__all__ = ["Progress"]


def _plural(unit: str) -> str:
    """The plural of a unit, its first word taking it ("design decided": "designs decided")."""
    word, space, rest = unit.partition(" ")
    return word + ("es" if word.endswith(("x", "s")) else "s") + space + rest


class Progress:
    """What one long command shows while it works.

    Parameters
    ----------
    label
        The command, e.g. ``"margin"``; starts every line.
    total
        The work budget in ``unit`` (a bar fills towards it), or None for a plain counter.
    unit
        What is counted: ``"decision"``, ``"box"``, ``"draw"``.
    stream
        Where to write (default: sys.stderr, looked up when the progress starts).
    live
        Force the live line on (True) or off (False); default: when the stream is a terminal.
    """

    def __init__(self, label: str, total: int | None = None, unit: str = "decision",
                 stream: IO[str] | None = None, live: bool | None = None) -> None:
        self.label = label
        self.unit = unit
        self.total = total
        self.count = 0
        self.note = ""
        self.stream = stream if stream is not None else sys.stderr
        self.started = time.perf_counter()
        self.lower: Any = None  # the largest scale decided stable so far
        self.upper: Any = None  # the least scale refuted so far
        #: show the scales decided so far (one search over one scale: the margin, not a
        #: ranking, whose searches run one per parameter)
        self.brackets = True
        is_tty = getattr(self.stream, "isatty", lambda: False)
        try:
            self.live = bool(is_tty()) if live is None else live
        except ValueError:  # a closed stream
            self.live = False
        self._bar: Any = None
        if self.live:
            from tqdm import tqdm  # a terminal only: no start-up cost elsewhere

            self._bar = tqdm(total=total, desc=label, unit=f" {_plural(unit)}", file=self.stream,
                             leave=False, mininterval=0.2)
            # one decision may take seconds: redraw meanwhile, so that the clock moves on
            self._stop = threading.Event()
            threading.Thread(target=self._redraw, daemon=True).start()

    def _redraw(self) -> None:
        while not self._stop.wait(0.5):
            bar = self._bar
            if bar is not None:
                bar.refresh()

    def listen(self, event: str, facts: dict) -> None:
        """A listener for :func:`robust.analysis.progress.listening`."""
        if event == "decision":
            self.advance(1)
        elif event == "tested" and self.brackets:
            scale, verdict = facts.get("scale"), getattr(facts.get("verdict"), "value", "")
            if verdict == "stable" and (self.lower is None or scale > self.lower):
                self.lower = scale
            elif verdict == "unstable" and (self.upper is None or scale < self.upper):
                self.upper = scale
            self.show(self.bracket_text())

    def restart(self, note: str, brackets: bool) -> None:
        """A new stage: forget the scales of the last one."""
        self.lower = self.upper = None
        self.brackets = brackets
        self.show(note)

    def bracket_text(self) -> str:
        """The scales decided so far, as ``stable to x1.2, unstable from x1.3``."""
        parts = []
        if self.lower is not None:
            parts.append(f"stable to x{approx_text(self.lower, 6)}")
        if self.upper is not None:
            parts.append(f"unstable from x{approx_text(self.upper, 6)}")
        return ", ".join(parts)

    def advance(self, steps: int = 1, note: str | None = None) -> None:
        """Count ``steps`` more units of work done."""
        self.count += steps
        if self._bar is not None:
            self._bar.update(steps)
        if note is not None:
            self.show(note)

    def reach(self, count: int, note: str | None = None) -> None:
        """Set the work done to ``count`` units."""
        self.advance(count - self.count, note)

    def show(self, note: str) -> None:
        """Keep ``note`` beside the counter (the live line shows it at once)."""
        self.note = note
        if self._bar is not None and note:
            self._bar.set_postfix_str(note, refresh=False)

    def finish(self, summary: str | None = None, quiet_under: float = 0.0) -> None:
        """End the live line and write the one summary line (none for work that took less
        than ``quiet_under`` seconds: a quick command's output stands alone)."""
        seconds = time.perf_counter() - self.started
        if self._bar is None and seconds < quiet_under:
            return
        if self._bar is not None:
            self._stop.set()
            bar, self._bar = self._bar, None
            bar.close()
        done = f"{self.count} {self.unit if self.count == 1 else _plural(self.unit)}"
        text = summary if summary is not None else self.note
        line = f"{self.label}: {done}{'; ' + text if text else ''} ({seconds:.1f} s)"
        try:
            self.stream.write(line + "\n")
            self.stream.flush()
        except (OSError, ValueError):  # stderr gone: the exit code still tells
            pass
