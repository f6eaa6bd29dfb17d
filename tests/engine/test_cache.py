"""The persistent solve store and the response cache in front of it:
round trip, partial reuse, engine-version isolation, two writer processes,
least-recently-used memory, and 1-vs-2-worker determinism."""

from __future__ import annotations

import multiprocessing

import numpy as np
import pytest

from necflow.engine import pynec_adapter
from necflow.engine.cache import SolveStore, frequency_keys
from necflow.engine.parallel import ParallelSolver, frequency_blocks
from necflow.engine.response import ResponseCache
from necflow.model import build_model
from tests.conftest import dipole_like_solver

F = np.linspace(14.0e6, 14.35e6, 5)


class Counting:
    """The stand-in solver, counting the frequency points it is asked for."""

    def __init__(self):
        self.points = 0
        self.__module__, self.__qualname__ = __name__, "Counting"

    def __call__(self, model, f):
        self.points += len(f)
        return dipole_like_solver(model, f)


@pytest.fixture
def model(make_design):
    d = make_design({"shape": "doublet", "span": "10.2 m", "height": "10 m"})
    return build_model(d, 14.35e6)


def test_round_trip_keeps_values_exactly(tmp_path):
    store = SolveStore(tmp_path, engine="test-1")
    z = dipole_like_solver(None, F)
    store.put("m", F, z)
    got, found = store.get("m", F)
    assert found.all()
    assert np.array_equal(got, z)  # stored as two float64: no rounding at all


def test_frequency_key_ignores_arithmetic_noise():
    # linspace and a sum of steps land a few ulp apart; the key is 1 mHz
    a = np.linspace(3.5e6, 4.0e6, 11)
    b = 3.5e6 + np.arange(11) * (0.5e6 / 10)
    assert np.array_equal(frequency_keys(a), frequency_keys(b))


def test_partial_hit_solves_only_the_missing_points(tmp_path, model):
    store = SolveStore(tmp_path, engine="test-1")
    solver = Counting()
    ResponseCache(solver, store=store).lookup(model, F[:3])
    assert solver.points == 3
    fresh = ResponseCache(solver, store=store)       # a new process's empty memory
    z = fresh.lookup(model, F)
    assert solver.points == 3 + 2                    # only the two new frequencies
    assert np.allclose(z, dipole_like_solver(model, F), rtol=0, atol=0)


def test_engine_version_change_ignores_stored_results(tmp_path, model, monkeypatch):
    # the store tags rows with the engine version read at call time
    monkeypatch.setattr(pynec_adapter, "engine_version", lambda: "1.0-old")
    store = SolveStore(tmp_path)
    store.put(model.key(), F, np.full(F.size, 1 + 1j))
    assert store.get(model.key(), F)[1].all()
    monkeypatch.setattr(pynec_adapter, "engine_version", lambda: "2.0-new")
    assert not store.get(model.key(), F)[1].any()
    calls = []

    def engine(m, f):  # stands for the new engine through the default seam
        calls.append(len(f))
        return dipole_like_solver(m, f)

    monkeypatch.setattr("necflow.engine.solve_feedpoint", engine)
    z = ResponseCache(store=store).lookup(model, F)
    assert calls == [F.size]
    assert np.array_equal(z, dipole_like_solver(model, F))  # not the stale 1+1j


def test_stand_in_solver_results_do_not_pass_for_engine_results(tmp_path, model):
    store = SolveStore(tmp_path)
    ResponseCache(Counting(), store=store).lookup(model, F)
    assert not store.get(model.key(), F)[1].any()   # engine-tagged lookup finds nothing


def _writer(path: str, seed: int, barrier, n_models: int, q) -> None:
    """Write rows for shared and own model keys, one transaction per model."""
    try:
        rng = np.random.default_rng(seed)
        store = SolveStore(path, engine="test-1")
        barrier.wait(timeout=60)
        for i in range(n_models):
            key = f"shared-{i}" if i % 2 == 0 else f"own-{seed}-{i}"
            z = np.round(rng.normal(size=F.size) + 1j * rng.normal(size=F.size), 3)
            if key.startswith("shared"):
                z = dipole_like_solver(None, F) * (i + 1)   # both writers agree on it
            store.put(key, F, z)
        q.put(("ok", seed))
    except BaseException as exc:  # report to the parent instead of dying silently
        q.put(("error", f"{type(exc).__name__}: {exc}"))


def test_two_processes_writing_at_once(tmp_path):
    ctx = multiprocessing.get_context("spawn")
    barrier, q = ctx.Barrier(2), ctx.Queue()
    n = 60
    procs = [ctx.Process(target=_writer, args=(str(tmp_path), seed, barrier, n, q))
             for seed in (11, 12)]
    for p in procs:
        p.start()
    for p in procs:
        p.join(timeout=120)   # bound: a deadlock fails the test instead of hanging
    assert all(p.exitcode == 0 for p in procs)
    reports = sorted(q.get(timeout=5) for _ in procs)
    assert reports == [("ok", 11), ("ok", 12)]
    store = SolveStore(tmp_path, engine="test-1")
    # 30 shared keys once each, 30 own keys per writer: 90 models x 5 points
    assert store.count() == (n // 2 + 2 * (n // 2)) * F.size
    for i in range(0, n, 2):
        z, found = store.get(f"shared-{i}", F)
        assert found.all() and np.array_equal(z, dipole_like_solver(None, F) * (i + 1))


def test_memory_drops_least_recently_used(model, make_design):
    other = build_model(make_design({"shape": "doublet", "span": "9 m", "height": "10 m"}),
                        14.35e6)
    third = build_model(make_design({"shape": "doublet", "span": "8 m", "height": "10 m"}),
                        14.35e6)
    solver = Counting()
    c = ResponseCache(solver, max_entries=2)
    c(model, F), c(other, F), c(model, F)   # model is now the most recent
    c(third, F)                             # drops 'other', keeps 'model'
    before = solver.points
    c(model, F)
    assert solver.points == before
    c(other, F)
    assert solver.points == before + F.size


def test_blocks_depend_on_frequencies_only():
    f = np.concatenate([np.linspace(3.5e6, 4e6, 11), np.linspace(7e6, 7.3e6, 11)])
    blocks = frequency_blocks(f[::-1], max_block=16)
    assert [b.size for b in blocks] == [11, 11]     # cut at the band edge
    assert [b.size for b in frequency_blocks(f, max_block=4)] == [4, 4, 3, 4, 4, 3]


@pytest.mark.engine
def test_one_and_two_workers_give_identical_impedances(make_design):
    d = make_design({"shape": "doublet", "span": "10.2 m", "height": "10 m",
                     "wire": {"material": "copper"}},
                    {"model": "sommerfeld", "surface": "medium-dry"})
    m = build_model(d, 14.35e6)
    f = np.concatenate([np.linspace(14.0e6, 14.35e6, 4), np.linspace(10.1e6, 10.15e6, 3)])
    with ParallelSolver(workers=1) as one, ParallelSolver(workers=2) as two:
        z1 = one(m, f)
        z2 = two(m, f)
    # same blocks, same engine calls: equal bit for bit, not just close
    assert np.array_equal(z1, z2)
    assert one.solves == two.solves == f.size
