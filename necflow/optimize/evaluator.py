"""The seam between a study and the engine: design -> feedpoint impedance
through a cache, then the whole evaluation and its score.

Feed-only variants of one geometry share a wire model, so their antenna
response is looked up instead of solved.  The cache lives in the process
(:class:`ResponseCache`); a persistent cache can replace it behind the same
``lookup(model, frequency_hz)`` call.
"""

from __future__ import annotations

import hashlib
from typing import Callable

import numpy as np

Solver = Callable[..., np.ndarray]


class ResponseCache:
    """Feedpoint impedance per (wire model key, frequencies), in memory.

    Parameters
    ----------
    solver : callable, optional
        ``solver(model, frequency_hz) -> z_feedpoint [ohm]``; default the
        PyNEC adapter.
    max_entries : int
        Oldest entries are dropped beyond this many geometries.
    """

    def __init__(self, solver: Solver | None = None, max_entries: int = 256):
        self._solver = solver
        self._store: dict[tuple[str, str], np.ndarray] = {}
        self.max_entries = max_entries
        self.hits = 0
        self.misses = 0

    @staticmethod
    def key(model, frequency_hz) -> tuple[str, str]:
        f = np.ascontiguousarray(np.asarray(frequency_hz, dtype=float))
        return model.key(), hashlib.sha256(f.tobytes()).hexdigest()

    def lookup(self, model, frequency_hz) -> np.ndarray:
        """Feedpoint impedance of ``model`` at ``frequency_hz`` [ohm], solved once."""
        k = self.key(model, frequency_hz)
        z = self._store.get(k)
        if z is not None:
            self.hits += 1
            return z.copy()
        self.misses += 1
        solver = self._solver
        if solver is None:
            from necflow.engine import solve_feedpoint as solver
        z = np.asarray(solver(model, frequency_hz), dtype=complex)
        if len(self._store) >= self.max_entries:
            self._store.pop(next(iter(self._store)))
        self._store[k] = z
        return z.copy()

    __call__ = lookup


def evaluate_cached(design, cache: ResponseCache):
    """:func:`necflow.pipeline.evaluate` with the antenna response from ``cache``."""
    from necflow.pipeline import evaluate

    return evaluate(design, solver=cache)


def score_design(design, cache: ResponseCache):
    """Evaluate and score one design; returns ``(Evaluation, Score)``."""
    from necflow.optimize.cost import score

    evaluation = evaluate_cached(design, cache)
    return evaluation, score(evaluation, design.cost)
