"""Vectorised feed variants against the scalar power-flow path, the
vectorised cost against the scalar score, the exhaustive inner search
against a brute-force loop, and feed-only changes costing no solve."""

from __future__ import annotations

import numpy as np
import pytest

from necflow.analysis import analyse
from necflow.catalog.bands import resolve_bands
from necflow.chain import band_points, evaluate, load_design_text
from necflow.config.fields import apply
from necflow.engine.response import ResponseCache
from necflow.feed import build_chain
from necflow.feed.batch import FeedBatch
from necflow.optimize.problem.cost import score, score_design
from necflow.optimize.problem.space import build_space
from necflow.optimize.strategy.inner import FeedSearch
from tests.conftest import dipole_like_solver

DESIGN = """\
name: inner-test
bands: [80m, 40m, {name: 20m, points: 5}]
antenna: {shape: doublet, span: 30 m, height: 10 m}
ground: {model: free-space}
feed:
  - {id: ladder, line: window-450, length: 10 m}
  - {id: coil, shunt: inductor, value: 4 uH, q: 150}
  - {id: cap, series: capacitor, value: 400 pF}
  - {id: trim, shunt: capacitor, value: 50 pF, q: 500}
  - {id: bal, transformer: balun, ratio: "4:1", loss: 0.2}
  - {id: pad, series: resistor, value: 2 ohm}
  - {id: coax, line: rg-213, length: 30 m}
goal: {swr_limit: 2.5}
search:
  antenna.span: {range: [26 m, 34 m], step: 50 cm}
  feed.ladder.length: {range: [5 m, 20 m], step: 1 cm}
  feed.ladder.line: {choices: [window-450, window-300, open-wire-600]}
  feed.coil.value: {range: [1 uH, 10 uH], scale: log}
  feed.trim.q: {range: [50, 400]}
  feed.cap.value: {choices: [100 pF, 220 pF, 470 pF, 1000 pF]}
  feed.bal.ratio: {range: [1, 9]}
  feed.bal.loss: {range: [0.05, 0.5]}
  feed.coax.length: {range: [10 m, 40 m]}
"""


@pytest.fixture(scope="module")
def setup():
    design = load_design_text(DESIGN, file="inner.yaml")
    space = build_space(design)
    feed = [p for p in space.params if not p.geometry]
    f, bi = band_points(resolve_bands(design))
    return design, space, feed, f, bi


def _random_values(feed, n, seed):
    rng = np.random.default_rng(seed)
    out = {}
    for p in feed:
        if p.choices is not None:
            out[p.path] = np.array(p.choices, dtype=object)[rng.integers(len(p.choices), size=n)]
        elif p.log:
            out[p.path] = np.exp(rng.uniform(np.log(p.low), np.log(p.high), n))
        else:
            out[p.path] = rng.uniform(p.low, p.high, n)
    return out


def test_batch_agrees_with_scalar_power_flow(setup):
    design, _, feed, f, _ = setup
    z_fp = dipole_like_solver(None, f)
    vals = _random_values(feed, 40, seed=3)
    chain = build_chain(design.feed, r_radio=design.radio.impedance)
    fields = [tuple(p.path.split(".")[1:3]) for p in feed]
    r = FeedBatch(chain, f, fields).response(
        {fld: vals[p.path] for p, fld in zip(feed, fields)}, z_fp, z_ref=50.0)
    assert r.swr.shape == (40, f.size)
    for k in range(40):
        variant = apply(design, {p: (v[k].item() if hasattr(v[k], "item") else v[k])
                                 for p, v in vals.items()})
        s = analyse(build_chain(variant.feed, r_radio=50.0), f, z_fp, z_ref=50.0)
        # the same formulas in another order: agreement to rounding (1e-9 relative
        # leaves six orders of margin over float64 rounding through six elements)
        assert np.allclose(r.z_radio[k], s.z_radio, rtol=1e-9, atol=0)
        assert np.allclose(r.swr[k], s.swr, rtol=1e-9, atol=0)
        assert np.allclose(r.loss_db[k], s.loss_db["total"], rtol=1e-9, atol=1e-12)


def test_batch_cost_agrees_with_scalar_score(setup):
    design, _, feed, f, bi = setup
    search = FeedSearch(design, feed, f, bi, resolve_bands(design))
    z_fp = dipole_like_solver(None, f)
    vals = _random_values(feed, 12, seed=5)
    costs = search.costs(z_fp, vals)
    for combine in ("mean", "worst"):
        d = design.model_copy(update={"cost": design.cost.model_copy(update={"combine": combine})})
        s2 = FeedSearch(d, feed, f, bi, resolve_bands(d))
        c2 = s2.costs(z_fp, vals)
        for k in range(12):
            v = apply(d, {p: (x[k].item() if hasattr(x[k], "item") else x[k])
                          for p, x in vals.items()})
            ev = evaluate(v, solver=dipole_like_solver)
            # same cost formula on the same numbers: equal to rounding
            assert c2[k] == pytest.approx(score(ev, d.cost).cost, rel=1e-9)
    assert np.all(np.isfinite(costs))


def test_exhaustive_inner_search_finds_the_brute_force_optimum(setup):
    design, space, _, f, bi = setup
    small = [p for p in space.params if p.path in ("feed.ladder.line", "feed.cap.value")]
    search = FeedSearch(design, small, f, bi, resolve_bands(design))
    z_fp = dipole_like_solver(None, f)
    res = search.search(z_fp, max_variants=1000)
    assert res.evaluated == 12                      # 3 line types x 4 capacitors
    brute = min((score_design(apply(design, {"feed.ladder.line": ln, "feed.cap.value": c}),
                              ResponseCache(dipole_like_solver))[1].cost, ln, c)
                for ln in small[0].choices for c in small[1].choices)
    assert res.cost == pytest.approx(brute[0], rel=1e-9)   # batch vs scalar: rounding only
    assert res.values == {"feed.ladder.line": brute[1], "feed.cap.value": brute[2]}


def test_sampled_inner_search_is_seeded_and_beats_its_start(setup):
    design, _, feed, f, bi = setup
    search = FeedSearch(design, feed, f, bi, resolve_bands(design))
    z_fp = dipole_like_solver(None, f)
    a = search.search(z_fp, max_variants=3000, seed=7)
    b = search.search(z_fp, max_variants=3000, seed=7)
    assert a == b
    start = {p.path: getattr(*_owner(design, p.path)) for p in feed}
    assert a.cost < search.costs(z_fp, {k: np.array([v], dtype=object if isinstance(v, str)
                                                     else float) for k, v in start.items()})[0]


def _owner(design, path):
    from necflow.config.fields import locate
    return locate(design, path)


ENGINE_DESIGN = """\
name: feed-only
bands: [{name: 20m, points: 3}]
antenna: {shape: doublet, span: 10 m, height: 10 m, wire: {material: copper}}
ground: {model: free-space}
feed:
  - {id: ladder, line: window-450, length: 3 m}
  - {id: coax, line: rg-213, length: 10 m}
"""


@pytest.mark.engine
def test_feed_only_changes_trigger_no_solve(tmp_path):
    from necflow.engine import solve_count
    from necflow.engine.cache import SolveStore

    design = load_design_text(ENGINE_DESIGN, file="d.yaml")
    store = SolveStore(tmp_path)
    cache = ResponseCache(store=store)
    before = solve_count()
    _, first = score_design(design, cache)
    assert solve_count() - before == 3              # the geometry, once
    costs = set()
    for length in (2.0, 5.5, 9.25):
        v = apply(design, {"feed.ladder.length": length, "feed.coax.length": 2 * length})
        costs.add(score_design(v, cache)[1].cost)
    assert solve_count() - before == 3              # feed changes: no solve
    assert len(costs) == 3 and first.cost not in costs   # ...yet they changed the answer
    # a new cache over the same store (another process, a resumed study): no solve
    score_design(apply(design, {"feed.ladder.length": 7.0}), ResponseCache(store=store))
    assert solve_count() - before == 3


def test_repeated_line_lengths_agree_with_scalar_power_flow(setup):
    # a grid repeats each length once per other value: the batch computes each
    # distinct length once and must still match the scalar path variant by variant
    design, _, _, f, _ = setup
    z_fp = dipole_like_solver(None, f)
    lengths = np.array([7.0, 12.5, 7.0, 19.99, 12.5, 7.0])
    chain = build_chain(design.feed, r_radio=50.0)
    r = FeedBatch(chain, f, [("ladder", "length")]).response({("ladder", "length"): lengths},
                                                             z_fp)
    for k, length in enumerate(lengths):
        s = analyse(build_chain(apply(design, {"feed.ladder.length": length}).feed, 50.0),
                    f, z_fp)
        assert np.allclose(r.z_radio[k], s.z_radio, rtol=1e-9, atol=0)   # rounding only
        assert np.allclose(r.loss_db[k], s.loss_db["total"], rtol=1e-9, atol=1e-12)
