"""The seam between a study and the engine: design -> feedpoint impedance
through a cache, then the whole evaluation and its score.

Feed-only variants of one geometry share a wire model, so their antenna
response is looked up instead of solved.  The cache lives in the process
(:class:`ResponseCache`, least recently used entries dropped first) with an
optional persistent store behind it (:mod:`necflow.engine.cache`), shared by
the processes of a study and by later runs, behind the same
``lookup(model, frequency_hz)`` call.
"""

from __future__ import annotations

import hashlib
from collections import OrderedDict
from typing import Callable

import numpy as np

Solver = Callable[..., np.ndarray]


class ResponseCache:
    """Feedpoint impedance per (wire model key, frequencies): in memory, and
    optionally in a persistent store shared with other processes.

    Parameters
    ----------
    solver : callable, optional
        ``solver(model, frequency_hz) -> z_feedpoint [ohm]``; default the
        PyNEC adapter.  A :class:`necflow.engine.parallel.ParallelSolver`
        spreads the solves over processes.
    max_entries : int
        The least recently used entries are dropped beyond this many.
    store : necflow.engine.cache.SolveStore, optional
        Persistent per-frequency store (keyed with the engine version); on a
        memory miss it is asked first, and only the frequencies it lacks are
        solved.

    Attributes
    ----------
    hits, misses : int
        Lookups answered without a solve, and lookups that needed one.
    store_hits : int
        Lookups answered (wholly) by the persistent store.
    """

    def __init__(self, solver: Solver | None = None, max_entries: int = 256, store=None):
        self._solver = solver
        self._store: OrderedDict[tuple[str, str], np.ndarray] = OrderedDict()
        self.max_entries = max_entries
        self.persistent = store
        self.hits = 0
        self.misses = 0
        self.store_hits = 0

    @staticmethod
    def key(model, frequency_hz) -> tuple[str, str]:
        f = np.ascontiguousarray(np.asarray(frequency_hz, dtype=float))
        return model.key(), hashlib.sha256(f.tobytes()).hexdigest()

    def _engine_tag(self) -> str | None:
        """Version tag of the results in the persistent store (None: the
        engine's own version); a stand-in solver gets its own tag."""
        s = self._solver
        if s is None:
            return None
        if hasattr(s, "engine_tag"):
            return s.engine_tag
        return f"solver {getattr(s, '__module__', '?')}.{getattr(s, '__qualname__', repr(s))}"

    def _remember(self, k, z: np.ndarray) -> None:
        self._store[k] = z
        self._store.move_to_end(k)
        while len(self._store) > self.max_entries:
            self._store.popitem(last=False)

    def lookup(self, model, frequency_hz) -> np.ndarray:
        """Feedpoint impedance of ``model`` at ``frequency_hz`` [ohm], solved once."""
        return self.lookup_many([model], frequency_hz)[0]

    __call__ = lookup

    def lookup_many(self, models, frequency_hz) -> list[np.ndarray]:
        """Feedpoint impedances of several models at the same frequencies [ohm].

        What neither the memory nor the persistent store holds is solved in
        one call to the solver's ``solve_many`` when it has one (all missing
        models and frequency blocks in parallel), else model by model.
        """
        f = np.asarray(frequency_hz, dtype=float)
        out: list[np.ndarray | None] = [None] * len(models)
        need: list[tuple[int, tuple, np.ndarray, np.ndarray, np.ndarray]] = []
        tag = self._engine_tag()
        for i, m in enumerate(models):
            k = self.key(m, f)
            z = self._store.get(k)
            if z is not None:
                self.hits += 1
                self._store.move_to_end(k)
                out[i] = z.copy()
                continue
            if self.persistent is not None:
                z, found = self.persistent.get(k[0], f, engine=tag)
            else:
                z, found = np.full(f.shape, np.nan, dtype=complex), np.zeros(f.shape, bool)
            if found.all():
                self.hits += 1
                self.store_hits += 1
                self._remember(k, z)
                out[i] = z.copy()
            else:
                self.misses += 1
                need.append((i, k, z, found, m))
        if need:
            solver = self._solver
            if solver is None:
                from necflow.engine import solve_feedpoint as solver
            todo = [f[~found] for _, _, _, found, _ in need]
            if hasattr(solver, "solve_many"):
                solved = solver.solve_many([n[4] for n in need], todo)
            else:
                solved = [solver(n[4], ff) for n, ff in zip(need, todo)]
            for (i, k, z, found, m), ff, zs in zip(need, todo, solved):
                zs = np.asarray(zs, dtype=complex)
                z = z.copy()
                z[~found] = zs
                if self.persistent is not None:
                    self.persistent.put(k[0], ff, zs, engine=tag)
                self._remember(k, z)
                out[i] = z.copy()
        return out  # type: ignore[return-value]


def evaluate_cached(design, cache: ResponseCache):
    """:func:`necflow.pipeline.evaluate` with the antenna response from ``cache``."""
    from necflow.pipeline import evaluate

    return evaluate(design, solver=cache)


def score_design(design, cache: ResponseCache):
    """Evaluate and score one design; returns ``(Evaluation, Score)``."""
    from necflow.optimize.cost import score

    evaluation = evaluate_cached(design, cache)
    return evaluation, score(evaluation, design.cost)
