"""Searching every numeric geometry field (a feed position, a loop's number
of sides) and the site constraints a study respects.

The solver is the stand-in of tests/conftest.py: these tests are about the
search mechanics around the engine, not about antenna physics.  Where a
test checks the geometry of a recorded trial it computes it by its own
closed form (plane trigonometry of a straight leg), not with necflow's
wire geometry.
"""

from __future__ import annotations

import math

import optuna
import pytest
from optuna.trial import TrialState

from necflow.chain import load_design, load_design_text
from necflow.config.resolve import resolved_yaml
from necflow.errors import ConfigError
from necflow.model import geometry
from necflow.optimize.outputs import write_outputs
from necflow.optimize.problem.space import load_study_design
from necflow.optimize.storage.bookkeeping import trial_values
from necflow.optimize.strategy.study import (
    CONSTRAINTS,
    FAIL_REASON,
    StudyOptions,
    counted_trials,
    run_study,
)
from tests.conftest import dipole_like_solver
from tests.optimize.helpers import write_study

optuna.logging.set_verbosity(optuna.logging.WARNING)

OFF_CENTRE = """\
name: off-centre-search
bands: [80m, 40m]
antenna: {{shape: off-centre, span: 40 m, height: 10 m, feed_position: {start}}}
ground: {{model: free-space}}
feed:
  - {{id: ladder, line: window-450, length: 10 m}}
search:
  antenna.span: [36 m, 44 m]
  antenna.feed_position: {rng}
  feed.ladder.length: [5 m, 15 m]
"""

INVERTED_V = """\
name: inverted-v-site
bands: [40m]
antenna: {{shape: inverted-v, apex_height: 8 m, leg: 10 m, droop: 30 deg}}
ground: {{model: reflection, surface: medium-dry}}
feed:
  - {{id: ladder, line: window-450, length: 10 m}}
{constraints}search:
  antenna.apex_height: {apex}
  antenna.leg: [9 m, 12 m]
  antenna.droop: [20 deg, 60 deg]
  feed.ladder.length: [5 m, 15 m]
"""


def _run(tmp_path, text, trials, method="nested"):
    design, space = load_study_design(write_study(tmp_path, text))
    opts = StudyOptions(out=tmp_path / "run", study_name="s", trials=trials, seed=3,
                        method=method)
    study, why = run_study(design, space, opts, solver=dipole_like_solver)
    return design, space, study, why


@pytest.mark.parametrize("start, rng, kind", [
    ("0.33", "[0.2, '45 %']", "fraction"),
    ("13 m", "[8 m, 18 m]", "distance"),
])
def test_feed_position_searched_end_to_end(tmp_path, start, rng, kind):
    design, space, study, why = _run(tmp_path, OFF_CENTRE.format(start=start, rng=rng), 8)
    assert why == "trial budget reached"
    done = [t for t in study.trials if t.state == TrialState.COMPLETE]
    assert len(done) == 8
    positions = [t.params["antenna.feed_position"] for t in done]
    # the start design goes first, with its own position; the sampler then moves it
    assert positions[0] == design.antenna.feed_position[1]
    assert len(set(positions)) > 1
    low, high = (0.2, 0.45) if kind == "fraction" else (8.0, 18.0)
    assert all(low <= x <= high for x in positions)
    out = write_outputs(study, design, space, tmp_path / "run", storage_shown="x",
                        solver=dipole_like_solver)
    best = load_design(tmp_path / "run" / "best.yaml")
    written = out.values["antenna.feed_position"]
    assert best.antenna.feed_position == (kind, pytest.approx(written, abs=1e-12))
    searched = trial_values(out.best_trial)["antenna.feed_position"]
    assert written == pytest.approx(searched, abs=1e-3 if kind == "fraction" else 5e-4)
    # the position reaches the wire model: the feed sits at fraction x span (or the
    # distance itself) from the left tip
    _, feed = geometry(best)
    expect = written * best.antenna.span if kind == "fraction" else written
    assert feed.distance == pytest.approx(expect, abs=1e-9)


def test_feed_position_range_in_the_wrong_form_is_refused(tmp_path):
    text = OFF_CENTRE.format(start="0.33", rng="[8 m, 18 m]")
    with pytest.raises(ConfigError) as info:
        load_study_design(write_study(tmp_path, text))
    assert "as a fraction" in str(info.value) and "search.antenna.feed_position" \
        in str(info.value)


def test_loop_sides_searched_as_whole_numbers(tmp_path):
    text = """\
name: loop-sides
bands: [40m]
antenna: {shape: horizontal-loop, sides: 4, perimeter: 42 m, height: 10 m}
ground: {model: free-space}
feed: []
search:
  antenna.sides: [3, 6]
  antenna.perimeter: [40 m, 44 m]
"""
    design, space, study, _ = _run(tmp_path, text, 8)
    sides = {t.params["antenna.sides"] for t in study.trials if t.state == TrialState.COMPLETE}
    assert sides <= {3.0, 4.0, 5.0, 6.0} and len(sides) > 1
    with pytest.raises(ConfigError, match="whole numbers"):
        load_study_design(write_study(tmp_path, text.replace("[3, 6]", "[3, 6.5]"),
                                      name="b.yaml"))


def _leg_end(params, design):
    """Leg-end height and tip-to-tip span of an inverted-V [m], by plane
    trigonometry: a straight leg of length L at angle d below horizontal
    drops L sin d and reaches L cos d out from the apex."""
    apex = params.get("antenna.apex_height", design.antenna.apex_height)
    leg = params.get("antenna.leg", design.antenna.leg)
    droop = params.get("antenna.droop", design.antenna.droop)
    return apex - leg * math.sin(droop), 2.0 * leg * math.cos(droop)


def test_inverted_v_with_infeasible_corner_runs(tmp_path):
    """Apex 5-9 m, legs 9-12 m, droop 20-60 deg: at the high corner a 12 m leg
    at 60 deg drops 10.4 m from a 9 m apex, below ground; most of the space
    is buildable.  The study runs; the points below ground fail as
    infeasible, with their reason."""
    text = INVERTED_V.format(constraints="", apex="[5 m, 9 m]")
    design, _, study, why = _run(tmp_path, text, 30)
    assert why == "trial budget reached"
    assert len(counted_trials(study)) == 30
    failed = [t for t in study.trials if t.state == TrialState.FAIL]
    done = [t for t in study.trials if t.state == TrialState.COMPLETE]
    assert failed and done
    for t in failed:
        assert t.user_attrs[FAIL_REASON].startswith("infeasible: ")
        assert "below ground" in t.user_attrs[FAIL_REASON]
        assert _leg_end(t.params, design)[0] < 0
    for t in done:
        assert _leg_end(t.params, design)[0] >= 0


def test_space_with_no_buildable_point_is_refused(tmp_path):
    # apex at most 3 m, legs of 10 m at 60 deg or more: every leg end is below ground
    text = INVERTED_V.format(constraints="", apex="[2 m, 3 m]").replace(
        "[20 deg, 60 deg]", "[60 deg, 80 deg]").replace("[9 m, 12 m]", "[10 m, 12 m]")
    with pytest.raises(ConfigError, match="no point of the search space"):
        load_study_design(write_study(tmp_path, text))


def test_stated_constraints_hold_for_every_complete_trial(tmp_path):
    """Leg ends at least 3 m up (people walk under them) and supports at most
    18 m apart: no COMPLETE trial breaks either; the trials that would are
    failed as infeasible before any solve, with their margins recorded."""
    limits = "constraints: {min_height: 3 m, max_span: 18 m}\n"
    text = INVERTED_V.format(constraints=limits, apex="[5 m, 9 m]")
    design, _, study, _ = _run(tmp_path, text, 30)
    done = [t for t in study.trials if t.state == TrialState.COMPLETE]
    failed = [t for t in study.trials if t.state == TrialState.FAIL]
    assert done and failed
    for t in done:
        z_end, span = _leg_end(t.params, design)
        assert z_end >= 3.0 - 1e-9 and span <= 18.0 + 1e-9
        m = t.user_attrs[CONSTRAINTS]
        assert m["min_height"] == pytest.approx(3.0 - z_end, abs=1e-9)
        assert m["max_span"] == pytest.approx(span - 18.0, abs=1e-9)
    for t in failed:
        reason = t.user_attrs[FAIL_REASON]
        assert reason.startswith("infeasible: ")
        z_end, span = _leg_end(t.params, design)
        assert z_end < 3.0 or span > 18.0
        if z_end >= 0:   # buildable, but outside the site: its margins are recorded
            m = t.user_attrs[CONSTRAINTS]
            assert max(m.values()) > 0


def test_constraints_nothing_meets_is_refused(tmp_path):
    limits = "constraints: {max_span: 5 m}\n"   # legs of 9 m at 60 deg still span 9 m
    text = INVERTED_V.format(constraints=limits, apex="[5 m, 9 m]")
    with pytest.raises(ConfigError, match="no point of the search space") as info:
        load_study_design(write_study(tmp_path, text))
    assert "constraints.max_span" in str(info.value)


def test_constraints_read_back_from_the_resolved_design(tmp_path):
    limits = "constraints: {min_height: 10 ft, max_span: 18 m}\n"
    design = load_design_text(INVERTED_V.format(constraints=limits, apex="[5 m, 9 m]"))
    assert design.constraints.min_height == pytest.approx(3.048, abs=1e-12)   # 10 ft exactly
    again = load_design_text(resolved_yaml(design))
    assert again.constraints == design.constraints
