"""Solves of several geometries and frequency blocks in parallel processes.

The work is cut into blocks that depend only on the frequencies asked for,
never on the number of workers: the sorted frequencies are split where their
spacing changes (band edges) and after at most ``max_block`` points.  Each
block is one engine call, made in the same way whether it runs here or in a
worker, so the impedances are identical, bit for bit, for any worker count.
Results are assembled in submission order.
"""

from __future__ import annotations

import multiprocessing
import time
from collections.abc import Callable, Sequence
from concurrent.futures import ProcessPoolExecutor

import numpy as np

from necflow.engine import pynec_adapter

Solver = Callable[..., np.ndarray]

#: Points per engine call at most (a band of the built-in table has 11).
MAX_BLOCK = 16


def frequency_blocks(frequency_hz, max_block: int = MAX_BLOCK) -> list[np.ndarray]:
    """Index arrays into ``frequency_hz``, one per engine call.

    The frequencies are taken in increasing order and cut where the spacing
    between neighbours changes (relative 1e-9) or a block reaches
    ``max_block`` points.

    Parameters
    ----------
    frequency_hz : array_like
        Frequencies [Hz], shape (n,), distinct, any order.
    max_block : int
        Largest block.

    Returns
    -------
    list of ndarray of int
    """
    f = np.asarray(frequency_hz, dtype=float)
    order = np.argsort(f, kind="stable")
    out: list[list[int]] = []
    cur: list[int] = []
    step = None
    for j in order.tolist():
        if cur:
            d = f[j] - f[cur[-1]]
            same = step is None or abs(d - step) <= 1e-9 * max(abs(step), 1.0)
            if not same or len(cur) >= max_block:
                out.append(cur)
                cur, step = [], None
            else:
                step = d if step is None else step
        cur.append(j)
    if cur:
        out.append(cur)
    return [np.array(b, dtype=int) for b in out]


def _default_solver() -> Solver:

    return pynec_adapter.solve_feedpoint


def _solve_block(solver: Solver | None, model, f: np.ndarray) -> tuple[np.ndarray, float]:
    """Worker entry: one engine call, with the seconds it took."""
    s = solver or _default_solver()
    t0 = time.perf_counter()
    z = np.asarray(s(model, f), dtype=complex)
    return z, time.perf_counter() - t0


class ParallelSolver:
    """Solve wire models with ``workers`` processes (1: in this process).

    Parameters
    ----------
    workers : int
        Processes; 1 solves in the calling process, more start a pool of
        spawned processes on first use (close it with :meth:`close`).
    solver : callable, optional
        ``solver(model, frequency_hz) -> z [ohm]``, a module-level function
        (it is sent to the workers by reference); default the PyNEC adapter.
    max_block : int
        Largest engine call, in frequency points.

    Attributes
    ----------
    solves : int
        Frequency points solved through this object.
    solve_seconds : float
        Time spent inside the solver, summed over the workers [s].
    """

    def __init__(self, workers: int = 1, solver: Solver | None = None,
                 max_block: int = MAX_BLOCK):
        self.workers = max(1, int(workers))
        self.solver = solver
        self.max_block = max_block
        self.solves = 0
        self.solve_seconds = 0.0
        self._pool: ProcessPoolExecutor | None = None

    @property
    def engine_tag(self) -> str | None:
        """Version tag for a result store: None for the engine itself."""
        if self.solver is None:
            return None
        return f"solver {self.solver.__module__}.{self.solver.__qualname__}"

    def _executor(self) -> ProcessPoolExecutor:
        if self._pool is None:
            self._pool = ProcessPoolExecutor(
                max_workers=self.workers, mp_context=multiprocessing.get_context("spawn"))
        return self._pool

    def solve_many(self, models: Sequence, frequency_hz: Sequence) -> list[np.ndarray]:
        """Feedpoint impedance of each model at its frequencies.

        Parameters
        ----------
        models : sequence of WireModel
        frequency_hz : sequence of array_like
            One frequency vector [Hz] per model (or one shared vector).

        Returns
        -------
        list of ndarray
            Impedances [ohm] per model, in the order of its frequencies.
        """
        if len(frequency_hz) and np.ndim(frequency_hz[0]) == 0:
            frequency_hz = [frequency_hz] * len(models)
        freqs = [np.atleast_1d(np.asarray(f, dtype=float)) for f in frequency_hz]
        tasks = [(m, i, idx) for i, (m, f) in enumerate(zip(models, freqs))
                 for idx in frequency_blocks(f, self.max_block)]
        out = [np.empty(f.size, dtype=complex) for f in freqs]
        if self.workers == 1 or len(tasks) == 1:
            results = [_solve_block(self.solver, m, freqs[i][idx]) for m, i, idx in tasks]
        else:
            pool = self._executor()
            futures = [pool.submit(_solve_block, self.solver, m, freqs[i][idx])
                       for m, i, idx in tasks]
            results = [fu.result() for fu in futures]
        for (_, i, idx), (z, dt) in zip(tasks, results):
            out[i][idx] = z
            self.solves += idx.size
            self.solve_seconds += dt
        return out

    def solve(self, model, frequency_hz) -> np.ndarray:
        """One model, its frequency blocks spread over the workers."""
        return self.solve_many([model], [frequency_hz])[0]

    __call__ = solve

    def close(self) -> None:
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def __getstate__(self):
        state = dict(self.__dict__)
        state["_pool"] = None
        return state
