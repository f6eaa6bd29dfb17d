"""The nested method: the sampler draws the geometry, each trial's feed is
found by the inner search on that geometry's antenna response.

* nested and trials reach the optimum of a small gridded problem, against
  an exhaustive evaluation of every grid point made here (real engine);
* each nested trial's feed is the exhaustive best feed of its geometry
  (stand-in solver; a brute-force loop over the feed grid made here);
* a nested study killed with SIGKILL five times and resumed keeps every
  finished trial and its feed;
* two worker processes with an exact budget on the journal file and on
  PostgreSQL;
* a study of feed fields only is one trial; a route, or no feed field,
  runs as the trials method; a resume with another method is refused.

The stand-in solvers serve where a test is about the study's mechanics.
"""

from __future__ import annotations

import itertools
import random
import signal
import subprocess
import sys
import time
import uuid

import numpy as np
import optuna
import pytest
from optuna.storages import JournalStorage
from optuna.storages.journal import JournalFileBackend
from optuna.trial import TrialState

from necflow.config.fields import apply
from necflow.engine.response import ResponseCache
from necflow.optimize.problem.cost import score_design
from necflow.optimize.problem.space import load_study_design
from necflow.optimize.storage.backends import open_storage
from necflow.optimize.storage.bookkeeping import FEED, trial_values
from necflow.optimize.strategy.study import (
    FAIL_REASON,
    StudyOptions,
    counted_trials,
    resolve_method,
    run_study,
)
from tests.conftest import dipole_like_solver
from tests.optimize.helpers import (
    CLI_SCRIPT,
    ROOT,
    STUDY,
    cli_env,
    postgres_url,
    rendezvous_solver,
    write_study,
)

optuna.logging.set_verbosity(optuna.logging.WARNING)

BASE = STUDY.split("search:")[0]

#: A 20 m doublet, span and matching-section length on grids (5 x 17 points).
ENGINE_DESIGN = """\
name: nested-engine
bands: [{name: 20m, points: 3}]
antenna: {shape: doublet, span: 10 m, height: 10 m, wire: {diameter: 2 mm, material: copper}}
ground: {model: free-space}
feed:
  - {id: ladder, line: window-450, length: 3 m}
  - {id: coax, line: rg-213, length: 10 m}
goal: {swr_limit: 2.0}
search:
  antenna.span: {range: [8.5 m, 10.5 m], step: 50 cm}
  feed.ladder.length: {range: [6 m, 14 m], step: 50 cm}
"""

#: The study-mechanics design with the feed on a grid (16 x 4 feeds per geometry).
GRID_STUDY = BASE + """\
search:
  antenna.span: [22 m, 40 m]
  feed.ladder.length: {range: [5 m, 20 m], step: 1 m}
  feed.cap.value: {choices: [100 pF, 220 pF, 470 pF, 1000 pF]}
"""


def _run(tmp_path, text, trials, *, method="nested", seed=7, workers=1,
         solver=dipole_like_solver, storage=None, name="s", cache=True):
    design, space = load_study_design(write_study(tmp_path, text))
    opts = StudyOptions(out=tmp_path / "run", study_name=name, trials=trials, seed=seed,
                        workers=workers, storage=storage, method=method, cache=cache)
    study, why = run_study(design, space, opts, solver=solver)
    return design, space, study, why


def _exhaustive(design, space, solver=None):
    """Every grid point of the space scored by the scalar pipeline (one
    evaluation and :func:`score` per design, nothing vectorised); best first."""
    cache = ResponseCache(solver)
    paths = [p.path for p in space.params]
    out = []
    for combo in itertools.product(*(p.grid() for p in space.params)):
        values = {k: (v.item() if hasattr(v, "item") else v) for k, v in zip(paths, combo)}
        out.append((score_design(apply(design, values), cache)[1].cost, values))
    return sorted(out, key=lambda r: r[0])


# ----------------------------------------------------------------------------
# The optimum


@pytest.mark.engine
def test_nested_and_trials_reach_the_exhaustive_optimum(tmp_path):
    design, space = load_study_design(write_study(tmp_path, ENGINE_DESIGN))
    ranked = _exhaustive(design, space)
    best_cost, best_values = ranked[0]
    # a clear optimum inside the grid, so "the same optimum" is one point
    assert ranked[1][0] > best_cost * 1.05
    assert best_values["antenna.span"] not in (8.5, 10.5)
    assert best_values["feed.ladder.length"] not in (6.0, 14.0)
    found = {}
    for method, trials in (("nested", 8), ("trials", 60)):
        _, _, study, _ = _run(tmp_path / method, ENGINE_DESIGN, trials, method=method,
                              seed=4, solver=None)
        found[method] = (study.best_value, trial_values(study.best_trial))
        assert study.user_attrs["necflow.method"] == method
    for method, (cost, values) in found.items():
        # the same grid point through the same scalar pipeline: equal to rounding
        assert cost == pytest.approx(best_cost, rel=1e-9), method
        assert values == pytest.approx(best_values, rel=1e-12), method


def test_each_nested_trial_holds_the_best_feed_of_its_geometry(tmp_path):
    design, space, study, why = _run(tmp_path, GRID_STUDY, 4)
    assert why == "trial budget reached"
    feed = [p for p in space.params if not p.geometry]
    done = study.get_trials(states=(TrialState.COMPLETE,))
    assert len(done) == 4
    cache = ResponseCache(dipole_like_solver)
    for t in done:
        assert set(t.params) == {"antenna.span"}, "the sampler sees the geometry only"
        assert set(t.user_attrs[FEED]) == {p.path for p in feed}
        # brute force over the feed grid of this trial's geometry
        brute = min(
            (score_design(apply(design, {**t.params, **dict(zip([p.path for p in feed],
                                                                 combo))}), cache)[1].cost,
             combo)
            for combo in itertools.product(*(p.grid().tolist() for p in feed)))
        assert t.value == pytest.approx(brute[0], rel=1e-9)
        assert [t.user_attrs[FEED][p.path] for p in feed] == pytest.approx(list(brute[1]),
                                                                             rel=1e-12)


def test_multi_objective_nested_scores_the_feed_of_least_cost(tmp_path):
    """Several objectives: the inner search minimises the combined cost (the
    documented scalarisation); the trial's values are its objectives."""
    text = GRID_STUDY + "cost: {objectives: [worst_swr, loss_db]}\n"
    design, space, study, _ = _run(tmp_path, text, 3)
    cache = ResponseCache(dipole_like_solver)
    for t in study.get_trials(states=(TrialState.COMPLETE,)):
        evaluation, sc = score_design(apply(design, trial_values(t)), cache)
        assert t.values == pytest.approx([sc.worst_swr, sc.loss_db], rel=1e-9)
        assert t.user_attrs["necflow.inner"]["cost"] == pytest.approx(sc.cost, rel=1e-9)


def test_outputs_of_a_nested_study_carry_the_feed(tmp_path):
    import csv

    from necflow.chain import load_design
    from necflow.optimize.outputs import write_outputs

    design, space, study, _ = _run(tmp_path, GRID_STUDY, 3)
    out = write_outputs(study, design, space, tmp_path / "run", storage_shown="x",
                        solver=dipole_like_solver)
    merged = trial_values(out.best_trial)
    assert set(out.values) == {p.path for p in space.params}
    best = load_design(tmp_path / "run" / "best.yaml")
    ladder = best.feed[[e.id for e in best.feed].index("ladder")]
    assert ladder.length == pytest.approx(merged["feed.ladder.length"], rel=1e-12)
    rows = list(csv.DictReader(open(tmp_path / "run" / "leaderboard.csv")))
    assert all(r["feed.ladder.length [m]"] and r["feed.cap.value [pF]"] for r in rows)


# ----------------------------------------------------------------------------
# What runs as what


def test_a_study_of_feed_fields_only_is_one_trial(tmp_path, capsys, monkeypatch):
    import necflow.engine
    from necflow.cli import main

    text = BASE + """\
search:
  feed.ladder.length: {range: [5 m, 20 m], step: 1 m}
  feed.cap.value: {choices: [100 pF, 220 pF, 470 pF, 1000 pF]}
"""
    design, space, study, why = _run(tmp_path / "lib", text, 50)
    assert why == "trial budget reached" and len(study.trials) == 1
    (trial,) = study.trials
    assert trial.state == TrialState.COMPLETE and trial.params == {}
    ranked = _exhaustive(design, space, dipole_like_solver)
    assert trial.value == pytest.approx(ranked[0][0], rel=1e-9)
    assert trial.user_attrs[FEED] == pytest.approx(ranked[0][1], rel=1e-12)
    # the command says so
    monkeypatch.setattr(necflow.engine, "solve_feedpoint", dipole_like_solver)
    path = write_study(tmp_path / "cli", text)
    assert main(["optimize", str(path), "--trials", "50", "--out",
                 str(tmp_path / "cli" / "run")]) == 0
    err = capsys.readouterr().err
    assert "the budget becomes 1" in err and "trials 1/1 done" in err


def test_route_or_no_feed_field_runs_as_trials(tmp_path):
    design, space = load_study_design(ROOT / "configs" / "demo.yaml")
    assert design.route is not None
    opts = StudyOptions(out=tmp_path, study_name="x")
    resolved, notes = resolve_method(design, space, opts)
    assert resolved.method == "trials" and len(notes) == 1 and "route" in notes[0]
    design, space = load_study_design(write_study(tmp_path, BASE + "search:\n"
                                                  "  antenna.span: [22 m, 40 m]\n"))
    resolved, notes = resolve_method(design, space, opts)
    assert resolved.method == "trials" and notes == []
    design, space = load_study_design(write_study(tmp_path, BASE + "search:\n"
                                                  "  antenna.span: [22 m, 40 m]\n"
                                                  "  feed.ladder.velocity_factor: [0.8, 0.9]\n"))
    resolved, notes = resolve_method(design, space, opts)
    assert resolved.method == "trials" and "cannot be varied in a batch" in notes[0]


def test_resume_with_another_method_is_refused(tmp_path, capsys, monkeypatch):
    import necflow.engine
    from necflow.cli import main

    monkeypatch.setattr(necflow.engine, "solve_feedpoint", dipole_like_solver)
    path = write_study(tmp_path, GRID_STUDY)
    run = str(tmp_path / "run")
    assert main(["optimize", str(path), "--trials", "2", "--out", run]) == 0
    capsys.readouterr()
    assert main(["optimize", str(path), "--trials", "3", "--out", run,
                 "--method", "trials"]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("necflow: error: --method: ")
    assert "begun with --method nested" in err
    assert main(["optimize", str(path), "--trials", "3", "--out", run]) == 0


# ----------------------------------------------------------------------------
# Kill and resume


def _journal_study(run):
    storage = JournalStorage(JournalFileBackend(str(run / "study.journal")))
    return optuna.load_study(study_name="study-mechanics", storage=storage)


def _start(tmp_path, design, trials):
    script = tmp_path / "run_necflow.py"
    script.write_text(CLI_SCRIPT)
    return subprocess.Popen([sys.executable, str(script), "optimize", str(design),
                             "--trials", str(trials), "--seed", "5",
                             "--out", str(tmp_path / "run")],
                            env=cli_env(), stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE, text=True)


def _wait_for_complete(proc, run, at_least, limit_s=120.0):
    t_end = time.monotonic() + limit_s
    while time.monotonic() < t_end:
        assert proc.poll() is None, proc.stderr.read()
        if (run / "study.journal").exists():
            try:
                n = len(_journal_study(run).get_trials(states=(TrialState.COMPLETE,)))
            except KeyError:  # the study record is not written yet
                n = 0
            if n >= at_least:
                return
        time.sleep(0.05)
    raise AssertionError("the study made no progress")


def _finished(study) -> dict:
    return {t.number: (t.value, t.params, t.user_attrs[FEED])
            for t in study.get_trials(states=(TrialState.COMPLETE,))}


def test_nested_study_killed_five_times_keeps_every_finished_trial(tmp_path):
    design = write_study(tmp_path)
    run = tmp_path / "run"
    rng = random.Random(20260114)          # seeded: the kill moments are reproducible
    kept: dict = {}
    for _ in range(5):
        proc = _start(tmp_path, design, 100000)
        _wait_for_complete(proc, run, len(kept) + 2)
        time.sleep(rng.uniform(0.0, 0.4))  # a random moment inside the running study
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        proc.stderr.close()
        done = _finished(_journal_study(run))
        assert kept.items() <= done.items(), "a finished trial (or its feed) was lost"
        kept = done
    study = _journal_study(run)
    assert study.user_attrs["necflow.method"] == "nested"
    target = len(kept) + len(study.get_trials(states=(TrialState.FAIL,))) + 3
    proc = _start(tmp_path, design, target)
    assert proc.wait(timeout=300) == 0, proc.stderr.read()
    proc.stderr.close()
    study = _journal_study(run)
    done = _finished(study)
    assert kept.items() <= done.items()
    assert len(done) > len(kept)
    assert not study.get_trials(states=(TrialState.RUNNING,))
    for t in study.get_trials(states=(TrialState.FAIL,)):
        assert t.user_attrs[FAIL_REASON].startswith("interrupted")
    assert (run / "best.yaml").exists()


# ----------------------------------------------------------------------------
# Two workers, exact budget


def _two_workers(tmp_path, monkeypatch, storage, name, budget):
    monkeypatch.setenv("NECFLOW_TEST_RENDEZVOUS", str(tmp_path))
    _run(tmp_path, STUDY, budget, workers=2, solver=rendezvous_solver, storage=storage,
         name=name)
    reread = optuna.load_study(study_name=name, storage=storage
                               or open_storage(None, tmp_path / "run"))
    trials = reread.get_trials(deepcopy=False)
    assert len(trials) == budget, "no trial was started beyond the budget"
    assert all(t.state == TrialState.COMPLETE for t in trials)
    assert len(counted_trials(reread)) == budget
    assert all(set(t.params) == {"antenna.span"} and FEED in t.user_attrs for t in trials)
    assert len({t.user_attrs["necflow.pid"] for t in trials}) == 2, "both processes ran"
    return reread


def test_two_nested_workers_on_the_journal_keep_the_budget(tmp_path, monkeypatch):
    _two_workers(tmp_path, monkeypatch, None, "s", 12)


def test_two_nested_workers_on_postgresql_keep_the_budget(tmp_path, monkeypatch):
    url = postgres_url()
    if not url:
        pytest.skip("set NECFLOW_TEST_POSTGRES_URL to a PostgreSQL database to run this")
    name = f"nested-{uuid.uuid4().hex[:8]}"
    try:
        _two_workers(tmp_path, monkeypatch, url, name, 10)
    finally:
        optuna.delete_study(study_name=name, storage=url)


def test_seeded_nested_runs_reproduce(tmp_path):
    a = _run(tmp_path / "a", STUDY, 6, seed=11)[2]
    b = _run(tmp_path / "b", STUDY, 6, seed=11)[2]
    assert [trial_values(t) for t in a.trials] == [trial_values(t) for t in b.trials]
    assert np.isfinite(a.best_value) and a.best_value == b.best_value
