"""The split search: the exhaustive optimum of a small grid, screening that
solves only the leaders over the exact ground, the winner confirmed by a
full evaluation, and ``necflow optimize --method split`` end to end.

Stand-in solvers only: these tests are about which solves the search asks
for and what it reports, not about antenna physics."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from necflow.chain import Chain, load_design_text
from necflow.config.fields import apply
from necflow.engine.response import ResponseCache
from necflow.optimize.problem.cost import score_design
from necflow.optimize.problem.space import build_space
from necflow.optimize.strategy.split import split_search
from tests.conftest import dipole_like_solver

DESIGN = """\
name: split-test
bands: [80m, {name: 40m, points: 5}]
antenna: {shape: doublet, span: 30 m, height: 10 m}
ground: {model: sommerfeld, surface: medium-dry}
feed:
  - {id: ladder, line: window-450, length: 10 m}
  - {id: cap, series: capacitor, value: 400 pF}
  - {id: coax, line: rg-213, length: 30 m}
search:
  antenna.span: {range: [26 m, 30 m], step: 1 m}
  feed.ladder.length: {range: [6 m, 12 m], step: 50 cm}
  feed.cap.value: {choices: [100 pF, 220 pF, 470 pF, 1000 pF]}
"""


def _span(model) -> float:
    return 2 * max(max(abs(float(w.start[0])), abs(float(w.end[0]))) for w in model.wires)


class GroundAware:
    """Stand-in whose answer depends on the span and, by 2 %, on the ground
    kind; it logs (ground kind, points) of every call."""

    def __init__(self):
        self.calls: list[tuple[str, int]] = []

    def __call__(self, model, f):
        self.calls.append((model.ground.kind, len(f)))
        z = dipole_like_solver(model, np.asarray(f) * _span(model) / 28.3)
        return z * (1.02 if model.ground.kind == "reflection" else 1.0)


@pytest.fixture(scope="module")
def problem():
    design = load_design_text(DESIGN, file="split.yaml")
    return design, build_space(design)


def _brute_force(design, space, solver):
    best = None
    grids = []
    for p in space.params:
        if p.choices is not None:
            grids.append(list(p.choices))
        else:
            grids.append(list(p.low + p.step * np.arange(round((p.high - p.low) / p.step) + 1)))
    cache = ResponseCache(solver)
    for combo in itertools.product(*grids):
        vals = dict(zip([p.path for p in space.params], combo))
        c = score_design(apply(design, vals), cache)[1].cost
        if best is None or c < best[0]:
            best = (c, vals)
    return best


def test_split_search_finds_the_grid_optimum_and_confirms_it(problem):
    design, space = problem
    solver = GroundAware()
    res = split_search(design, space, ResponseCache(solver), top_k=2)
    ref_cost, ref_vals = _brute_force(design, space, GroundAware())
    # the same grid point scored by the same scalar pipeline: equal to rounding
    assert res.cost == pytest.approx(ref_cost, rel=1e-9)
    assert res.values == pytest.approx(ref_vals, rel=1e-12)
    assert res.confirmed and res.evaluation.model.ground.kind == "sommerfeld"
    # five geometries screened over the reflection ground, two confirmed over
    # Sommerfeld-Norton, each solve once per band model; the full check of
    # the winner reused its solves
    per = len({m.key() for m in Chain(design).models})
    kinds = [k for k, _ in solver.calls]
    assert kinds.count("reflection") == 5 * per and kinds.count("sommerfeld") == 2 * per
    assert len(res.confirmations) == 2 and res.screen_cost_error > 0
    assert res.screen_z_error == pytest.approx(0.02, rel=1e-9)   # the stand-in's 2 % of Z


def test_without_screening_every_geometry_is_solved_exactly(problem):
    design, space = problem
    solver = GroundAware()
    res = split_search(design, space, ResponseCache(solver), screen=False)
    per = len({m.key() for m in Chain(design).models})
    assert {k for k, _ in solver.calls} == {"sommerfeld"} and len(solver.calls) == 5 * per
    assert res.confirmations == [] and res.screen_cost_error == 0.0


def test_cli_split_method_records_a_confirmed_trial(tmp_path, monkeypatch, capsys):
    import optuna

    import necflow.engine
    from necflow.cli import main
    from necflow.engine import pynec_adapter

    monkeypatch.setattr(necflow.engine, "solve_feedpoint", dipole_like_solver)
    monkeypatch.setattr(pynec_adapter, "solve_feedpoint", dipole_like_solver)
    path = tmp_path / "d.yaml"
    path.write_text(DESIGN, encoding="utf-8")
    out = tmp_path / "run"
    assert main(["optimize", str(path), "--method", "split", "--out", str(out)]) == 0
    text = capsys.readouterr()
    assert "confirmed with a full solve" in text.err
    assert (out / "best.yaml").exists() and (out / "solves.sqlite").exists()
    storage = optuna.storages.JournalStorage(optuna.storages.journal.JournalFileBackend(
        str(next(out.glob("*.journal*")))))
    study = optuna.load_study(study_name="split-test", storage=storage)
    (trial,) = study.trials
    assert trial.user_attrs["necflow.confirmed"] is True


def test_a_feed_field_the_batch_cannot_vary_is_a_config_error(problem):
    from necflow.errors import ConfigError

    design, _ = problem
    d = design.model_copy(deep=True)
    d.search = {"feed.ladder.velocity_factor": {"range": [0.8, 0.95]}}
    with pytest.raises(ConfigError, match="cannot be varied in a batch"):
        split_search(d, build_space(d), ResponseCache(GroundAware()))
