"""Local refinement of a nested trial's geometry.

* :func:`necflow.optimize.strategy.polish.refine` on closed forms whose
  minimiser is known analytically: a bowl with its minimum inside the unit
  cube, one with it beyond a bound (the search ends on the bound), a region
  where the objective is infinite (never returned), a start that is already
  the minimum (nothing moves), and the evaluation budget;
* a nested study over Sommerfeld-Norton ground with a continuous height: its
  best trial's geometry is the refined one (``necflow.geometry``), its cost
  is what the plain scoring path computes for that design from full solves
  (made here), and it lies within 0.5 % of the optimum of a separate
  one-dimensional search made here (a scan of full solves, then scipy's
  bounded Brent search, every feed on its grid scored); a new best queues a
  revisit of its geometry.
"""

from __future__ import annotations

import numpy as np
import optuna
import pytest
from optuna.trial import TrialState
from scipy.optimize import minimize_scalar

from necflow.config.fields import apply
from necflow.engine.response import ResponseCache
from necflow.optimize.problem.cost import score_design
from necflow.optimize.problem.space import load_study_design
from necflow.optimize.storage.bookkeeping import trial_values
from necflow.optimize.strategy.polish import refine
from necflow.optimize.strategy.study import (
    GEOMETRY,
    REFINE,
    REVISIT,
    SCREENING,
    StudyOptions,
    run_study,
)
from tests.optimize.helpers import write_study

optuna.logging.set_verbosity(optuna.logging.WARNING)


def _bowl(centre):
    c = np.asarray(centre, dtype=float)

    def f(x):
        return 1.0 + 10.0 * float(np.sum((np.asarray(x) - c) ** 2))
    return f


def test_refine_finds_the_minimum_of_a_bowl_inside_the_cube():
    centre = [0.3, 0.7, 0.55]                      # the analytic minimiser
    f = _bowl(centre)
    x0 = np.array([0.6, 0.4, 0.2])
    out = refine(f, x0, f(x0), evaluations=120)
    assert out.x == pytest.approx(centre, abs=0.01)
    assert out.value == pytest.approx(1.0, abs=1e-3)
    assert out.start_value == f(x0) and out.value == f(out.x)


def test_refine_stops_on_the_bound_when_the_minimum_lies_beyond_it():
    f = _bowl([1.3, 0.5])                          # minimum over the cube: x = (1, 0.5)
    seen = []

    def g(x):
        seen.append(np.array(x))
        return f(x)
    out = refine(g, [0.5, 0.2], f([0.5, 0.2]), evaluations=100)
    assert out.x == pytest.approx([1.0, 0.5], abs=0.01)
    assert all(np.all((s >= 0.0) & (s <= 1.0)) for s in seen)   # never outside the cube


def test_refine_never_returns_a_point_where_the_objective_is_infinite():
    bowl = _bowl([0.9, 0.9])

    def f(x):                                      # the corner beyond x0 + x1 > 1.4 cannot be built
        return np.inf if x[0] + x[1] > 1.4 else bowl(x)
    out = refine(f, [0.3, 0.3], f([0.3, 0.3]), evaluations=80)
    assert np.isfinite(out.value) and out.x.sum() <= 1.4
    assert out.x == pytest.approx([0.7, 0.7], abs=0.03)   # the closest buildable point


def test_refine_keeps_the_start_when_it_is_the_minimum_and_counts_its_evaluations():
    f = _bowl([0.5, 0.5])
    calls = []

    def g(x):
        calls.append(1)
        return f(x)
    out = refine(g, [0.5, 0.5], f([0.5, 0.5]), evaluations=7)
    assert out.value == 1.0 and list(out.x) == [0.5, 0.5]
    assert out.evaluations == len(calls) <= 7


CONTINUOUS_STUDY = """\
name: refined-engine
bands: [{name: 40m, points: 7}, {name: 20m, points: 7}]
antenna: {shape: doublet, span: 26 m, height: 11 m, wire: {diameter: 2 mm, material: copper}}
ground: {model: sommerfeld, surface: medium-dry}
feed:
  - {id: ladder, line: window-450, length: 8 m}
  - {id: coax, line: rg-213, length: 10 m}
goal: {swr_limit: 2.0}
search:
  antenna.height: [4 m, 12 m]
  feed.ladder.length: {range: [4 m, 16 m], step: 0.5 m}
"""


@pytest.mark.engine
def test_refined_study_reaches_a_separate_one_dimensional_optimum(tmp_path):
    design, space = load_study_design(write_study(tmp_path, CONTINUOUS_STUDY))
    ladders = [float(x) for x in space.params[1].grid()]
    cache = ResponseCache()

    def best_feed(height: float) -> float:
        """Full-solve cost of the height with its best ladder on the grid."""
        return min(score_design(apply(design, {"antenna.height": height,
                                               "feed.ladder.length": x}), cache)[1].cost
                   for x in ladders)
    scan = np.linspace(4.0, 12.0, 5)
    costs = [best_feed(float(s)) for s in scan]
    k = int(np.argmin(costs))
    lo, hi = scan[max(k - 1, 0)], scan[min(k + 1, scan.size - 1)]
    found = minimize_scalar(best_feed, bounds=(lo, hi), method="bounded",
                            options={"xatol": 1e-3})
    optimum = min(float(found.fun), min(costs))

    opts = StudyOptions(out=tmp_path / "run", study_name="s", trials=4, seed=5)
    study, why = run_study(design, space, opts)
    assert why == "trial budget reached"
    best = study.best_trial
    assert best.user_attrs[SCREENING]["confirmed"] is True
    assert best.value <= optimum * 1.005
    # the reported cost is that of the refined geometry, scored afresh from full solves
    values = trial_values(best)
    assert values["antenna.height"] == best.user_attrs.get(GEOMETRY, best.params)[
        "antenna.height"]
    again = score_design(apply(design, values), ResponseCache())[1].cost
    assert best.value == pytest.approx(again, rel=1e-9)
    # the first trial (no best yet) was refined, and its new best queued a revisit
    trials = study.get_trials()
    assert trials[0].user_attrs[REFINE]["moved"] is True
    revisits = [t for t in trials if t.user_attrs.get(REVISIT) is not None]
    assert revisits and revisits[0].user_attrs[REVISIT] == 0
    assert revisits[0].params["antenna.height"] == pytest.approx(
        trial_values(trials[0])["antenna.height"])
    complete = study.get_trials(states=(TrialState.COMPLETE,))
    assert all(t.value >= best.value for t in complete)
