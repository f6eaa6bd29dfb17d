"""Progress of a command: rich's display on a terminal, plain lines otherwise.

:class:`StudyProgress` follows a study (``necflow optimize``); :class:`Steps`
follows the steps of every other long command (evaluate, fit, trim,
tolerance, batch, report, check).  Both write to the stream they are given
(the commands pass stderr, so that stdout holds the results alone); the jobs
call them and never print.

A job reports a step as ``on_step(done, total, text)``: ``done`` of ``total``
steps of the current phase are finished (``total`` None when the count is
not known in advance, as for a search's model evaluations) and ``text`` is
the work now under way.  The call comes before the work, so the display
names what the command is waiting for.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from datetime import timedelta
from typing import TextIO

from rich.console import Console
from rich.live import Live
from rich.progress import BarColumn, Progress, SpinnerColumn, TextColumn, TimeElapsedColumn

#: Plain lines: steps of unknown count print at most once per this many
#: seconds (a long search stays visibly alive without a line per evaluation).
HEARTBEAT_S = 10.0


def _hms(seconds: float | None) -> str:
    if seconds is None or seconds != seconds or seconds == float("inf"):
        return "?"
    return str(timedelta(seconds=int(round(max(seconds, 0.0)))))


def remaining_s(done_here: int, elapsed: float, left_trials: int | None,
                left_time: float | None) -> float | None:
    """Estimate of the time left [s]: trials left at this run's pace, capped
    by the time left before the timeout; None when nothing bounds the run."""
    est = None
    if left_trials is not None and done_here > 0:
        est = elapsed / done_here * max(left_trials, 0)
    if left_time is not None:
        est = left_time if est is None else min(est, left_time)
    return est


class StudyProgress:
    """Callback for :func:`necflow.optimize.study.worker_loop`.

    Parameters
    ----------
    stream : text stream
    total : int or None
        The study's trial budget.
    timeout_s : float or None
    live : bool
        A rich live display (for terminals) instead of log lines.
    count : callable
        ``count(study)``: the trials that count toward the budget.
    """

    def __init__(self, stream: TextIO, total: int | None, timeout_s: float | None,
                 live: bool = False, *, count: Callable[[object], int]):
        self.stream, self.total, self.timeout_s = stream, total, timeout_s
        self.count = count
        self.t0 = time.time()
        self.done_here = 0
        self._live = None
        if live:
            self._live = Live("", console=Console(file=stream), refresh_per_second=4,
                              transient=False)
            self._live.start()

    def line(self, study) -> str:
        done = self.count(study)
        elapsed = time.time() - self.t0
        best = None
        try:
            if len(study.directions) == 1:
                bt = study.best_trial
                best = f"best cost {bt.value:.4g} (trial {bt.number})"
            else:
                best = f"{len(study.best_trials)} on the Pareto front"
        except ValueError:
            best = "no complete trial yet"
        left_trials = None if self.total is None else self.total - done
        left_time = None if self.timeout_s is None else self.timeout_s - elapsed
        rem = remaining_s(self.done_here, elapsed, left_trials, left_time)
        of = f"/{self.total}" if self.total is not None else ""
        return (f"trials {done}{of} done, {best}, elapsed {_hms(elapsed)}, "
                f"about {_hms(rem)} left")

    def __call__(self, study, number, state, reason) -> None:
        self.done_here += 1
        text = self.line(study)
        if self._live is not None:
            self._live.update(text)
            return
        what = state.name.lower() + (f" ({reason})" if reason else "")
        print(f"necflow: trial {number} {what}; {text}", file=self.stream, flush=True)

    def close(self) -> None:
        if self._live is not None:
            self._live.stop()
            self._live = None


def step_text(done: int, total: int | None, text: str) -> str:
    """One step as a line: ``solving 40m [2/5]``, or with an unknown count
    ``searching antenna.span: 14 evaluations``."""
    if total:
        return f"{text} [{min(done + 1, total)}/{total}]"
    return f"{text}: {done} evaluation{'s' if done != 1 else ''}" if done else text


class Steps:
    """The steps of one command, as jobs report them (``on_step``).

    On a terminal: rich's progress display (spinner, the step, a bar,
    elapsed time), shown from the moment it is made and gone when closed, so
    that the results print on a clean screen.  Otherwise one flushed line per
    step, ``necflow: COMMAND: STEP``: every counted step, every change of
    phase, and steps of unknown count at most once per :data:`HEARTBEAT_S`.

    Parameters
    ----------
    command : str
        The command's name, shown before each step.
    stream : text stream
        Where to write (the commands pass stderr).
    live : bool, optional
        Force the display (True) or plain lines (False); default: the display
        when ``stream`` is a terminal.
    """

    def __init__(self, command: str, stream: TextIO, live: bool | None = None):
        self.command, self.stream = command, stream
        self.live = stream.isatty() if live is None else live
        self._last_text: str | None = None
        self._last_line = 0.0
        self._progress: Progress | None = None
        if self.live:
            self._progress = Progress(
                SpinnerColumn(), TextColumn(f"{command}:"),
                TextColumn("{task.description}", markup=False), BarColumn(),
                TimeElapsedColumn(), console=Console(file=stream), transient=True,
                refresh_per_second=8)
            self._task = self._progress.add_task("loading", total=None)
            self._progress.start()

    def __call__(self, done: int, total: int | None, text: str) -> None:
        line = step_text(done, total, text)
        if self._progress is not None:
            self._progress.update(self._task, description=line, completed=done, total=total,
                                  refresh=True)
            return
        now = time.monotonic()
        if total or text != self._last_text or now - self._last_line >= HEARTBEAT_S:
            print(f"necflow: {self.command}: {line}", file=self.stream, flush=True)
            self._last_line = now
        self._last_text = text

    def note(self, text: str) -> None:
        """A short preparatory step (reading the design): shown on the
        display, no plain line (so an input error stays the only line)."""
        if self._progress is not None:
            self._progress.update(self._task, description=text, refresh=True)

    def close(self) -> None:
        """Remove the display (idempotent)."""
        if self._progress is not None:
            self._progress.stop()
            self._progress = None


def steps_of(args, command: str, stream: TextIO) -> Steps:
    """The command's :class:`Steps`: the one :func:`necflow.cli.main` started
    (``args.progress``, shown while the command's modules load), or a new one."""
    made = getattr(args, "progress", None)
    return made if made is not None else Steps(command, stream)
