"""Robust design in the optimiser: a trial's objective over the tolerance cases
applied to its own design.

These tests are about the bookkeeping around the engine (which cases, around
which values, how many solves), not about antenna physics, so they run on
stand-in solvers.  The reference is the direct computation: each perturbed
design built by hand and scored with :func:`necflow.optimize.cost.score`.
"""

from __future__ import annotations

import numpy as np
import optuna
import pytest
from optuna.trial import TrialState

from necflow.chain import Chain, evaluate, load_design
from necflow.config.fields import apply
from necflow.config.tolerances import perturbations
from necflow.engine.response import ResponseCache
from necflow.errors import ConfigError
from necflow.optimize.problem.cost import score
from necflow.optimize.problem.robust import robust_cost, robust_plan, robust_score
from necflow.optimize.problem.space import load_study_design
from necflow.optimize.storage.bookkeeping import trial_values
from necflow.optimize.strategy.study import StudyOptions, run_study
from tests.conftest import dipole_like_solver
from tests.optimize.helpers import STUDY, write_study

optuna.logging.set_verbosity(optuna.logging.WARNING)

#: The study design with searched AND toleranced span (absolute) and capacitor
#: (percentage), plus a toleranced feed line length that is not searched.
ROBUST = STUDY + """\
tolerances:
  fields: {antenna.span: 20 cm, feed.cap.value: 5 %, feed.coax.length: 10 cm,
           antenna.height: 30 cm}
  samples: 16
  seed: 5
  levels: 2
cost:
  robust: {how: expected}
"""

SPAN_HALF, CAP_SHARE, COAX_HALF, HEIGHT_HALF = 0.20, 0.05, 0.10, 0.30


def span_solver(model, frequency_hz):
    """Stand-in whose resonance follows the wire extent (7.1 MHz for 30 m), so
    a change of span changes the response; not antenna physics."""
    extent = 2.0 * max(max(abs(float(w.start[0])), abs(float(w.end[0]))) for w in model.wires)
    f = np.asarray(frequency_hz, dtype=float)
    return dipole_like_solver(model, f * extent / 30.0)


class CountingSolver:
    """``span_solver`` that counts its calls."""

    def __init__(self):
        self.calls = 0

    def __call__(self, model, frequency_hz):
        self.calls += 1
        return span_solver(model, frequency_hz)


@pytest.fixture
def design(tmp_path):
    return load_design(write_study(tmp_path, ROBUST))


def _by_hand(variant, case):
    """The case applied to ``variant`` from the tolerance texts of ROBUST,
    independently of :meth:`Case.values`."""
    u = {t.path: share for t, share in case.shares}
    span, cap = variant.antenna.span, variant.feed[1].value
    return {"antenna.span": span + u["antenna.span"] * SPAN_HALF,
            "antenna.height": variant.antenna.height + u["antenna.height"] * HEIGHT_HALF,
            "feed.cap.value": cap * (1.0 + u["feed.cap.value"] * CAP_SHARE),
            "feed.coax.length": variant.feed[2].length + u["feed.coax.length"] * COAX_HALF}


@pytest.mark.parametrize("how", ["expected", "worst"])
def test_objective_is_mean_or_max_of_direct_scores(design, how):
    d = design.model_copy(deep=True)
    d.cost.robust.how = how
    plan = robust_plan(d)
    variant = apply(d, {"antenna.span": 25.0, "feed.cap.value": 300e-12})
    rs = robust_score(variant, plan, ResponseCache(span_solver))
    direct = np.array([score(evaluate(apply(variant, _by_hand(variant, c)),
                                      solver=span_solver), d.cost).cost for c in plan.cases])
    # Same arithmetic on the same designs; 1e-9 relative allows only for the
    # 15-digit text a set value passes through and float summation order.
    expect = direct.mean() if how == "expected" else direct.max()
    assert rs.values[0] == pytest.approx(expect, rel=1e-9)
    assert rs.case_costs[rs.worst_case] == pytest.approx(direct.max(), rel=1e-9)
    nominal = score(evaluate(variant, solver=span_solver), d.cost).cost
    assert rs.nominal.cost == pytest.approx(nominal, rel=1e-9)
    # the cases do spread the cost (else the test could not tell the cases apart)
    assert direct.max() - direct.min() > 1e-3 * abs(direct.mean())
    # the tolerance module's seam gives the same number
    assert robust_cost(variant, plan.cases, ResponseCache(span_solver), how) == \
        pytest.approx(expect, rel=1e-9)


def test_cases_follow_the_trial_value_not_the_base(design):
    plan = robust_plan(design)
    for span, cap in [(22.0, 150e-12), (38.0, 1.5e-9)]:
        variant = apply(design, {"antenna.span": span, "feed.cap.value": cap})
        rs = robust_score(variant, plan, ResponseCache(span_solver))
        worst = rs.attrs()["worst_case_values"]
        expect = _by_hand(variant, plan.cases[rs.worst_case])
        # 1e-12 relative: the same sums in SI floats
        for path in expect:
            assert worst[path] == pytest.approx(expect[path], rel=1e-12), path
        assert abs(worst["antenna.span"] - span) <= SPAN_HALF * (1 + 1e-12)
        assert abs(worst["feed.cap.value"] / cap - 1.0) <= CAP_SHARE * (1 + 1e-12)


def test_solves_bounded_by_geometry_states(design):
    """Two geometry tolerances at two levels: at most 4 states, plus the
    nominal geometry, each solved once per band model (every band has its
    own segmentation); a feed-only change of the trial needs no solve."""
    plan = robust_plan(design)
    per_state = len({m.key() for m in Chain(design).models})
    states = {c.geometry_key() for c in plan.cases}
    assert len(states) <= 4
    solver = CountingSolver()
    cache = ResponseCache(solver)
    v1 = apply(design, {"antenna.span": 27.0, "feed.cap.value": 300e-12})
    rs = robust_score(v1, plan, cache)
    assert rs.states == len(states)
    assert solver.calls == (len(states) + 1) * per_state
    v2 = apply(design, {"antenna.span": 27.0, "feed.cap.value": 800e-12})
    robust_score(v2, plan, cache)
    assert solver.calls == (len(states) + 1) * per_state


def _study(tmp_path, text, trials=6, name="r"):
    d, space = load_study_design(write_study(tmp_path, text))
    opts = StudyOptions(out=tmp_path / "run", study_name=name, trials=trials, seed=3,
                        cache=False)
    study, _ = run_study(d, space, opts, solver=span_solver)
    return d, study


def test_study_uses_the_same_cases_around_each_trial(tmp_path):
    d, study = _study(tmp_path, ROBUST)
    plan = robust_plan(d)
    done = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    assert len(done) == 6
    spans = {t.params["antenna.span"] for t in done}
    assert len(spans) > 1
    for t in done:
        r = t.user_attrs["necflow.robust"]
        assert r["cases"] == 16 and r["how"] == "expected"
        assert t.value == pytest.approx(r["robust_cost"], rel=1e-12)
        assert r["nominal_cost"] == t.user_attrs["necflow.terms"]["cost"]
        # the worst case index names the same draw in every trial: its
        # recorded values are that draw applied to this trial's values
        variant = apply(d, trial_values(t))   # the nested method's feed included
        expect = _by_hand(variant, plan.cases[r["worst_case"]])
        for path in expect:
            assert r["worst_case_values"][path] == pytest.approx(expect[path], rel=1e-12)


def test_changed_robust_setting_is_refused_on_resume(tmp_path):
    _study(tmp_path, ROBUST, trials=2)
    with pytest.raises(ConfigError, match="cost.robust.how"):
        _study(tmp_path, ROBUST.replace("how: expected", "how: worst"), trials=3)


def test_refusals_are_config_errors(design, tmp_path):
    bare = design.model_copy(deep=True)
    bare.tolerances.fields = {}
    with pytest.raises(ConfigError, match="robust design needs tolerances"):
        robust_plan(bare)
    off = design.model_copy(deep=True)
    off.cost.robust = None
    assert robust_plan(off) is None


def test_perturbations_are_seeded(design):
    a, b = perturbations(design), perturbations(design)
    c = perturbations(design, seed=6)
    assert a == b and a != c


def test_optimize_command_end_to_end(tmp_path, monkeypatch):
    import necflow.engine
    from necflow.cli import main

    monkeypatch.setattr(necflow.engine, "solve_feedpoint", span_solver)
    path = write_study(tmp_path, ROBUST)
    out = tmp_path / "run"
    code = main(["optimize", str(path), "--out", str(out), "--trials", "5", "--seed", "2",
                 "--no-cache"])
    assert code == 0
    best = load_design(out / "best.yaml")
    assert best.cost.robust is not None and best.cost.robust.how == "expected"
    ev = evaluate(best, solver=span_solver)
    assert np.all(np.isfinite(ev.system.swr))
