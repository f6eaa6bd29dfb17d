"""Progress of a study: a live line on a terminal, plain log lines otherwise.

The reporter writes to the stream it is given (``necflow optimize`` passes
stderr); the study runner calls it after each trial and never prints.
"""

from __future__ import annotations

import time
from datetime import timedelta
from typing import TextIO

from rich.console import Console
from rich.live import Live

from necflow.optimize.strategy.study import counted_trials


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
    """

    def __init__(self, stream: TextIO, total: int | None, timeout_s: float | None,
                 live: bool = False):
        self.stream, self.total, self.timeout_s = stream, total, timeout_s
        self.t0 = time.time()
        self.done_here = 0
        self._live = None
        if live:
            self._live = Live("", console=Console(file=stream), refresh_per_second=4,
                              transient=False)
            self._live.start()

    def line(self, study) -> str:
        counted = counted_trials(study)
        done = len(counted)
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
