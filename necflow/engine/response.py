"""The one seam through which every job gets antenna responses.

:class:`Solver` is the protocol every solver meets (the PyNEC adapter, the
parallel pool, the stand-ins of the tests): ``solve(model, f)``,
``solve_many(models, fs)`` and an ``engine_tag`` naming whose results these
are.  :func:`as_solver` turns a plain function ``f(model, frequency_hz)``
into one, so nothing downstream asks what a solver can do.

:class:`ResponseCache` keeps feedpoint impedances per (wire model key,
frequencies) in memory (least recently used entries dropped first) with an
optional persistent store behind it (:mod:`necflow.engine.cache`), shared by
the processes of a study and by later runs.  Feed-only variants of one
geometry share a wire model, so their antenna response is looked up, not
solved.
"""

from __future__ import annotations

import hashlib
import sys
from collections import OrderedDict
from collections.abc import Callable, Sequence
from typing import Protocol, runtime_checkable

import numpy as np

from necflow.engine import pynec_adapter
from necflow.errors import EngineError


@runtime_checkable
class Solver(Protocol):
    """What a solver of wire models provides."""

    #: Tag of the results in a persistent store: None for the engine's own
    #: (its version is used), a text for anything else (a stand-in's results
    #: must never be served as the engine's).
    engine_tag: str | None

    def solve(self, model, frequency_hz) -> np.ndarray:
        """Feedpoint impedance [ohm] of ``model`` at ``frequency_hz``."""

    def solve_many(self, models: Sequence, frequency_hz: Sequence) -> list[np.ndarray]:
        """Impedances of several models, each at its own frequencies."""


class FunctionSolver:
    """A :class:`Solver` around a function ``f(model, frequency_hz)``."""

    def __init__(self, function: Callable, engine_tag: str | None):
        self.function = function
        self.engine_tag = engine_tag

    def solve(self, model, frequency_hz) -> np.ndarray:
        return np.asarray(self.function(model, frequency_hz), dtype=complex)

    def solve_many(self, models: Sequence, frequency_hz: Sequence) -> list[np.ndarray]:
        return [self.solve(m, f) for m, f in zip(models, frequency_hz)]

    __call__ = solve


def _engine(model, frequency_hz) -> np.ndarray:
    """The engine through the package's seam ``necflow.engine.solve_feedpoint``,
    read at call time so that a process (a test, a benchmark) may replace it."""
    return sys.modules["necflow.engine"].solve_feedpoint(model, frequency_hz)


def as_solver(solver: Solver | Callable | None) -> Solver:
    """A :class:`Solver`: the engine when None, a plain function wrapped."""
    if solver is None:
        return FunctionSolver(_engine, None)
    if isinstance(solver, Solver):
        return solver
    if callable(solver):
        tag = f"solver {getattr(solver, '__module__', '?')}." \
              f"{getattr(solver, '__qualname__', repr(solver))}"
        return FunctionSolver(solver, tag)
    raise TypeError(f"not a solver: {solver!r}")


class ResponseCache:
    """Feedpoint impedance per (wire model key, frequencies): in memory, and
    optionally in a persistent store shared with other processes.

    Parameters
    ----------
    solver : Solver or callable, optional
        Default the PyNEC adapter.  A :class:`necflow.engine.parallel.ParallelSolver`
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

    def __init__(self, solver: Solver | Callable | None = None, max_entries: int = 256,
                 store=None):
        self.solver = as_solver(solver)
        self._store: OrderedDict[tuple[str, str], np.ndarray] = OrderedDict()
        self._routed: OrderedDict[tuple[str, str], tuple] = OrderedDict()
        self.max_entries = max_entries
        self.persistent = store
        self.hits = 0
        self.misses = 0
        self.store_hits = 0

    @staticmethod
    def key(model, frequency_hz) -> tuple[str, str]:
        f = np.ascontiguousarray(np.asarray(frequency_hz, dtype=float))
        return model.key(), hashlib.sha256(f.tobytes()).hexdigest()

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
        """Feedpoint impedances of several models at the same frequencies [ohm]
        (:meth:`lookup_each` with one frequency vector for all)."""
        f = np.asarray(frequency_hz, dtype=float)
        return self.lookup_each(models, [f] * len(models))

    def lookup_each(self, models, frequencies) -> list[np.ndarray]:
        """Feedpoint impedance of each model at its own frequencies [ohm].

        What neither the memory nor the persistent store holds is solved in
        one call to the solver's ``solve_many`` (all missing models and
        frequency blocks in parallel where the solver runs a pool).
        """
        out: list[np.ndarray | None] = [None] * len(models)
        need: list[tuple[int, tuple, np.ndarray, np.ndarray, object, np.ndarray]] = []
        tag = self.solver.engine_tag
        for i, (m, f) in enumerate(zip(models, frequencies)):
            f = np.asarray(f, dtype=float)
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
                need.append((i, k, z, found, m, f))
        if need:
            todo = [f[~found] for _, _, _, found, _, f in need]
            solved = self.solver.solve_many([n[4] for n in need], todo)
            for (i, k, z, found, _, _), ff, zs in zip(need, todo, solved):
                zs = np.asarray(zs, dtype=complex)
                z = z.copy()
                z[~found] = zs
                if self.persistent is not None:
                    self.persistent.put(k[0], ff, zs, engine=tag)
                self._remember(k, z)
                out[i] = z.copy()
        return out  # type: ignore[return-value]


    def lookup_routed(self, model, frequency_hz) -> tuple[np.ndarray, dict[str, np.ndarray]]:
        """Impedance [ohm] and probe currents [A per volt] of a model with its
        feed line's common-mode path (:func:`necflow.engine.pynec_adapter.solve_routed`),
        solved once per (model, frequencies) and kept in memory; the
        impedance also goes to the persistent store.

        Raises
        ------
        EngineError
            When this cache's solver stands in for the engine: a stand-in
            gives impedances only, not the currents on the line.
        """
        f = np.asarray(frequency_hz, dtype=float)
        k = self.key(model, f)
        hit = self._routed.get(k)
        if hit is not None:
            self.hits += 1
            return hit[0].copy(), {n: v.copy() for n, v in hit[1].items()}
        if self.solver.engine_tag is not None:
            raise EngineError("the feed line's route needs the engine itself: this solver "
                              f"({self.solver.engine_tag}) gives impedances only")
        self.misses += 1
        z, currents = pynec_adapter.solve_routed(model, f)
        self._routed[k] = (z, currents)
        while len(self._routed) > self.max_entries:
            self._routed.popitem(last=False)
        self._remember(k, z)
        if self.persistent is not None:
            self.persistent.put(k[0], f, z, engine=None)
        return z.copy(), {n: v.copy() for n, v in currents.items()}


__all__ = ["Solver", "FunctionSolver", "as_solver", "ResponseCache"]
