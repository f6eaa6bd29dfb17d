"""Study mechanics on a stand-in solver: budget, resume, failures, workers,
seeding, outputs.  These are about the runner and its storage, not physics."""

from __future__ import annotations

import csv
import os
import uuid

import optuna
import pytest
from optuna.trial import TrialState

from necflow.chain import load_design
from necflow.errors import ConfigError
from necflow.optimize.outputs import write_outputs
from necflow.optimize.problem.space import load_study_design
from necflow.optimize.storage.backends import open_storage
from necflow.optimize.storage.bookkeeping import trial_values
from necflow.optimize.strategy.study import (
    COUNTED,
    DISCARDED,
    FAIL_REASON,
    StudyOptions,
    counted_trials,
    run_study,
)
from tests.conftest import dipole_like_solver
from tests.optimize.helpers import STUDY, failing_above_34m, rendezvous_solver, write_study

optuna.logging.set_verbosity(optuna.logging.WARNING)


def _run(tmp_path, trials, *, seed=7, workers=1, solver=dipole_like_solver, text=STUDY,
         storage=None, name="s", out=None, method="nested"):
    design, space = load_study_design(write_study(tmp_path, text))
    opts = StudyOptions(out=out or tmp_path / "run", study_name=name, trials=trials,
                        workers=workers, seed=seed, storage=storage, method=method)
    study, why = run_study(design, space, opts, solver=solver)
    return design, space, study, why


def _check_counts(study, trials):
    all_trials = study.get_trials(deepcopy=False)
    numbers = [t.number for t in all_trials]
    assert len(numbers) == len(set(numbers))
    assert not [t for t in all_trials if t.state == TrialState.RUNNING]
    assert len(counted_trials(study)) == trials
    extra = [t for t in all_trials if t.state == TrialState.PRUNED]
    assert all(t.user_attrs.get(DISCARDED) for t in extra)


def test_budget_and_start_design_first(tmp_path):
    design, space, study, why = _run(tmp_path, 12)
    assert why == "trial budget reached"
    _check_counts(study, 12)
    first = study.trials[0]
    assert first.user_attrs.get("necflow.start")
    assert first.params["antenna.span"] == design.antenna.span
    assert study.best_value <= first.value
    # every band's terms are recorded with each trial
    assert set(first.user_attrs["band:80m"]) == {"cost", "swr_term", "loss_db", "swr_max",
                                                  "weight"}


def test_resume_counts_finished_trials(tmp_path):
    _run(tmp_path, 5)
    _, _, study, _ = _run(tmp_path, 9)
    _check_counts(study, 9)


def test_changed_search_is_refused_on_resume(tmp_path):
    _run(tmp_path, 3)
    with pytest.raises(ConfigError) as info:
        _run(tmp_path, 6, text=STUDY.replace("[22 m, 40 m]", "[22 m, 41 m]"))
    assert "antenna.span high (40.0 -> 41.0)" in str(info.value)


def test_changed_design_is_refused_on_resume(tmp_path):
    _run(tmp_path, 3)
    with pytest.raises(ConfigError) as info:
        _run(tmp_path, 6, text=STUDY.replace("height: 10 m", "height: 12 m"))
    assert "antenna.height (10.0 -> 12.0)" in str(info.value)


def test_failed_trials_keep_their_reason_and_the_study_goes_on(tmp_path):
    _, _, study, why = _run(tmp_path, 20, solver=failing_above_34m)
    _check_counts(study, 20)
    failed = study.get_trials(states=(TrialState.FAIL,))
    assert failed, "the search reaches spans above 34 m, so some trials must fail"
    for t in failed:
        assert "stand-in refuses" in t.user_attrs[FAIL_REASON] and t.user_attrs[COUNTED]
    assert study.get_trials(states=(TrialState.COMPLETE,))


@pytest.mark.parametrize("method", ["nested", "trials"])
def test_seeded_runs_reproduce(tmp_path, method):
    a = _run(tmp_path / "a", 15, seed=11, method=method)[2]
    b = _run(tmp_path / "b", 15, seed=11, method=method)[2]
    assert [trial_values(t) for t in a.trials] == [trial_values(t) for t in b.trials]
    assert trial_values(a.best_trial) == trial_values(b.best_trial)
    # the trials method samples every field; the nested one the geometry alone
    sampled = {"antenna.span"} if method == "nested" else \
        {"antenna.span", "feed.ladder.length", "feed.cap.value"}
    assert all(set(t.params) == sampled for t in a.trials)


def test_two_local_workers_on_the_journal(tmp_path, monkeypatch):
    monkeypatch.setenv("NECFLOW_TEST_RENDEZVOUS", str(tmp_path))
    _, _, study, _ = _run(tmp_path, 24, workers=2, solver=rendezvous_solver)
    reread = optuna.load_study(study_name="s", storage=open_storage(None, tmp_path / "run"))
    _check_counts(reread, 24)
    pids = {t.user_attrs["necflow.pid"] for t in counted_trials(reread)}
    assert len(pids) == 2, "both processes ran trials"


def _postgres_url() -> str | None:
    url = os.environ.get("NECFLOW_TEST_POSTGRES_URL")
    if not url and os.environ.get("CI") == "true":
        pytest.fail("CI=true but NECFLOW_TEST_POSTGRES_URL is not set: .ci/run starts the "
                    "server and sets it")
    return url


def test_two_workers_on_postgresql(tmp_path, monkeypatch):
    monkeypatch.setenv("NECFLOW_TEST_RENDEZVOUS", str(tmp_path))
    url = _postgres_url()
    if not url:
        pytest.skip("set NECFLOW_TEST_POSTGRES_URL to a PostgreSQL database to run this")
    name = f"two-workers-{uuid.uuid4().hex[:8]}"
    _, _, study, _ = _run(tmp_path, 20, workers=2, storage=url, name=name,
                          solver=rendezvous_solver)
    reread = optuna.load_study(study_name=name, storage=url)
    _check_counts(reread, 20)
    assert len({t.user_attrs["necflow.pid"] for t in counted_trials(reread)}) == 2
    optuna.delete_study(study_name=name, storage=url)


def test_outputs_best_design_reads_back(tmp_path):
    design, space, study, _ = _run(tmp_path, 10)
    out = write_outputs(study, design, space, tmp_path / "run", storage_shown="x",
                        solver=dipole_like_solver)
    best = load_design(tmp_path / "run" / "best.yaml")
    for p in space.params:
        assert getattr(best.antenna if p.path.startswith("antenna") else
                       best.feed[[e.id for e in best.feed].index(p.path.split(".")[1])],
                       p.path.split(".")[-1]) == pytest.approx(out.values[p.path],
                                                               rel=1e-12)
        # the written value is the trial's at a buildable precision
        assert out.values[p.path] == pytest.approx(
            p.buildable(trial_values(out.best_trial)[p.path]), rel=1e-12)
    text = (tmp_path / "run" / "best.yaml").read_text()
    assert text.startswith("# Best design of study 's' (trial ")
    rows = list(csv.DictReader(open(tmp_path / "run" / "leaderboard.csv")))
    assert int(rows[0]["trial"]) == out.best_trial.number
    assert "antenna.span [m]" in rows[0] and "40m.swr_term" in rows[0]
    assert float(rows[0]["cost"]) == pytest.approx(study.best_value, rel=1e-5)
    assert (tmp_path / "run" / "best" / "results.json").exists()


def test_password_never_reaches_outputs_or_logs(tmp_path, capsys, monkeypatch):
    url = _postgres_url()
    if not url:
        pytest.skip("set NECFLOW_TEST_POSTGRES_URL to a PostgreSQL database to run this")
    from urllib.parse import urlsplit

    import necflow.engine
    from necflow.cli import main

    password = urlsplit(url).password
    assert password, "the test database URL carries a password"
    monkeypatch.setattr(necflow.engine, "solve_feedpoint", dipole_like_solver)
    name = f"masking-{uuid.uuid4().hex[:8]}"
    design = write_study(tmp_path)
    code = main(["optimize", str(design), "--trials", "4", "--storage", url, "--study", name,
                 "--out", str(tmp_path / "run")])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    assert password not in captured.out + captured.err
    for f in (tmp_path / "run").rglob("*"):
        if f.is_file() and f.suffix in (".yaml", ".json", ".csv", ".txt"):
            assert password not in f.read_text(), f
    assert "***" in (tmp_path / "run" / "best.yaml").read_text()
    optuna.delete_study(study_name=name, storage=url)


def test_multi_objective_pareto_front(tmp_path):
    text = STUDY + "cost: {objectives: [worst_swr, loss_db]}\n"
    design, space, study, _ = _run(tmp_path, 16, text=text)
    front = study.best_trials
    assert front and len(study.directions) == 2
    done = study.get_trials(states=(TrialState.COMPLETE,))
    for t in front:  # no complete trial is better in both objectives
        assert not any(o.values[0] < t.values[0] and o.values[1] < t.values[1] for o in done)
    out = write_outputs(study, design, space, tmp_path / "run", storage_shown="x",
                        solver=dipole_like_solver)
    assert out.best_trial.number in {t.number for t in front}
    rows = list(csv.DictReader(open(tmp_path / "run" / "leaderboard.csv")))
    assert {"worst_swr", "loss_db"} <= set(rows[0])
