"""Many workers, commands and machines on one study at the same moment:
creating the tables and the study on an empty database, an exact trial
budget, resumed sessions drawing new points, and passwords that never show.

These are about the study runner and its storage (stand-in solver unless
marked ``engine``), not about antenna physics.  The PostgreSQL tests need
NECFLOW_TEST_POSTGRES_URL (CI sets it); each works in a schema of its own
(created and dropped here), so it starts on an empty database.
"""

from __future__ import annotations

import contextlib
import importlib.util
import os
import random
import sys
import threading
import time
import uuid
from urllib.parse import quote, unquote, urlsplit

import optuna
import pytest
from optuna.trial import TrialState

from necflow.optimize.problem.space import load_study_design
from necflow.optimize.storage.bookkeeping import COUNTED, slots_taken, take_slot
from necflow.optimize.strategy.study import StudyOptions, open_study, run_study, worker_loop
from tests.conftest import dipole_like_solver
from tests.optimize.helpers import ROOT, STUDY, fresh_schema_url, postgres_url, write_study

optuna.logging.set_verbosity(optuna.logging.WARNING)


def _url() -> str:
    url = postgres_url()
    if not url:
        pytest.skip("set NECFLOW_TEST_POSTGRES_URL to a PostgreSQL database to run this")
    return url


@contextlib.contextmanager
def _fresh_schema(url: str):
    """A new empty schema of the test database; yields a URL that uses it."""
    import sqlalchemy

    name = f"necflow_t_{uuid.uuid4().hex[:10]}"
    admin = sqlalchemy.create_engine(url, poolclass=sqlalchemy.pool.NullPool,
                                     isolation_level="AUTOCOMMIT")
    with admin.connect() as c:
        c.execute(sqlalchemy.text(f'CREATE SCHEMA "{name}"'))
    try:
        yield fresh_schema_url(url, name)
    finally:
        with admin.connect() as c:
            c.execute(sqlalchemy.text(f'DROP SCHEMA IF EXISTS "{name}" CASCADE'))
        admin.dispose()


def _threads(n, target):
    """Run ``target(i)`` in n threads released together; returns their errors."""
    gate, errors = threading.Barrier(n), []

    def run(i):
        gate.wait()
        try:
            target(i)
        except BaseException as exc:
            errors.append(f"{type(exc).__name__}: {exc}")

    threads = [threading.Thread(target=run, args=(i,)) for i in range(n)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    return errors


# ----------------------------------------------------------------------------
# Creating the tables and the study


def test_many_workers_open_an_empty_database_at_once(tmp_path):
    url = _url()
    design, space = load_study_design(write_study(tmp_path))
    for round_ in range(3):        # the collision was intermittent: several empty databases
        with _fresh_schema(url) as fresh:
            studies = {}

            def opener(i, round_=round_, fresh=fresh, studies=studies):
                opts = StudyOptions(out=tmp_path / f"r{round_}-w{i}", study_name="together",
                                    storage=fresh)
                studies[i] = open_study(design, space, opts)

            assert _threads(8, opener) == []
            assert optuna.get_all_study_names(fresh) == ["together"]
            assert len({s._study_id for s in studies.values()}) == 1


# ----------------------------------------------------------------------------
# The exact budget


def _slow_stand_in(model, frequency_hz):
    """The stand-in, a few milliseconds slower at random, so trials overlap."""
    time.sleep(random.uniform(0.0, 0.01))
    return dipole_like_solver(model, frequency_hz)


def _race_workers(tmp_path, storage, budget, n):
    design, space = load_study_design(write_study(tmp_path))
    opts = StudyOptions(out=tmp_path / "run", study_name="race", trials=budget,
                        storage=storage, cache=False)
    why = {}

    def worker(i):
        why[i] = worker_loop(design, space, opts, solver=_slow_stand_in)

    assert _threads(n, worker) == []
    assert set(why.values()) == {"trial budget reached"}
    return optuna.load_study(study_name="race", storage=open_study(design, space, opts)._storage)


def _assert_exact(study, budget):
    trials = study.get_trials(deepcopy=False)
    assert len(trials) == budget, "no trial was started beyond the budget"
    assert all(t.state == TrialState.COMPLETE for t in trials)
    assert sorted(t.number for t in trials) == list(range(budget))


# optuna's experimental-feature warning, which the study code silences with
# catch_warnings, can slip through when threads enter and leave it together
RACE_WARNINGS = pytest.mark.filterwarnings("ignore::optuna.exceptions.ExperimentalWarning")


@RACE_WARNINGS
def test_budget_is_exact_when_workers_race_on_the_journal(tmp_path):
    _assert_exact(_race_workers(tmp_path, None, 30, 6), 30)


@RACE_WARNINGS
def test_budget_is_exact_when_workers_race_on_postgresql(tmp_path):
    with _fresh_schema(_url()) as fresh:
        _assert_exact(_race_workers(tmp_path, fresh, 30, 6), 30)


def test_places_in_the_budget():
    study = optuna.create_study()
    for _ in range(2):
        study.tell(study.ask(), 1.0)                       # complete: counted
    t = study.ask()
    study._storage.set_trial_user_attr(t._trial_id, COUNTED, True)
    study.tell(t, state=TrialState.FAIL)                   # the design failed: counted
    study.tell(study.ask(), state=TrialState.FAIL)         # interrupted: place given back
    study.ask()                                            # running: holds a place
    assert slots_taken(study) == 4
    lock = contextlib.nullcontext()
    assert take_slot(study, 4, lock, "here", os.getpid()) is None
    trial = take_slot(study, 5, lock, "here", os.getpid())
    assert trial is not None and trial.number == 5
    assert take_slot(study, 5, lock, "here", os.getpid()) is None


# ----------------------------------------------------------------------------
# Resumed sessions


def _sessions(folder, seed, budgets):
    design, space = load_study_design(write_study(folder, STUDY))
    study = None
    for n in budgets:
        opts = StudyOptions(out=folder / "run", study_name="s", trials=n, seed=seed)
        study, _ = run_study(design, space, opts, solver=dipole_like_solver)
    return [t.params for t in study.trials]


def test_resumed_study_draws_new_points_reproducibly(tmp_path):
    a = _sessions(tmp_path / "a", 5, [4, 8])
    b = _sessions(tmp_path / "b", 5, [4, 8])
    assert a == b, "the same commands in the same order draw the same points"
    # trial 0 is the starting design; 1-7 are random start-up draws (the sampler's first
    # 10 trials); the second session must not repeat the first one's
    first, second = a[1:4], a[4:8]
    assert len(second) == 4 and not any(p in first for p in second)


# ----------------------------------------------------------------------------
# Passwords with reserved characters


PASSWORDS = ["ab#cd/Secret?7", "ab@cd/Secret?7"]


def _pgpass_field(text: str) -> str:
    # libpq's password file: ':' and '\\' inside a field are escaped with '\\'
    # (PostgreSQL documentation, "The Password File")
    return text.replace("\\", "\\\\").replace(":", "\\:")


@pytest.mark.parametrize("password", PASSWORDS)
def test_reserved_password_never_shows(tmp_path, capfd, monkeypatch, password):
    """The test role cannot create roles in CI, but any role may change its own
    password (PostgreSQL documentation, ALTER ROLE): the role takes the test
    password for the length of this test, through a connection opened with the
    old one that stays open to put the old one back."""
    import psycopg
    from psycopg import sql

    import necflow.engine
    from necflow.cli import main

    url = _url()
    parts = urlsplit(url)
    if parts.password is None:
        pytest.skip("the test URL carries no password to put back afterwards")
    user, old = unquote(parts.username), unquote(parts.password)
    host, port, db = parts.hostname, parts.port or 5432, parts.path.lstrip("/")
    monkeypatch.setattr(necflow.engine, "solve_feedpoint", dipole_like_solver)
    for var in ("PGPASSWORD", "PGPASSFILE"):
        monkeypatch.delenv(var, raising=False)
    tag = uuid.uuid4().hex[:8]
    design = write_study(tmp_path)
    runs = tmp_path / "runs"
    base = f"postgresql://{user}@{host}:{port}/{db}"
    encoded = f"postgresql://{user}:{quote(password, safe='')}@{host}:{port}/{db}"
    written = f"postgresql://{user}:{password}@{host}:{port}/{db}"
    wrong = password.replace("7", "8")
    seen, codes = [], {}

    def run(case, *extra):
        codes[case] = main(["optimize", str(design), "--trials", "2", "--study",
                            f"pw-{tag}-{case}", "--out", str(runs / case), *extra])
        out = capfd.readouterr()
        seen.append(out.out + out.err)
        return out.err

    admin = psycopg.connect(host=host, port=port, dbname=db, user=user, password=old,
                            autocommit=True)
    try:
        admin.execute(sql.SQL("ALTER ROLE CURRENT_USER PASSWORD {}").format(
            sql.Literal(password)))
        err_written = run("written", "--storage", written)
        err_wrong_written = run("wrong-written", "--storage",
                                f"postgresql://{user}:{wrong}@{host}:{port}/{db}")
        run("encoded", "--storage", encoded)
        err_wrong = run("wrong-encoded", "--storage",
                        f"postgresql://{user}:{quote(wrong, safe='')}@{host}:{port}/{db}")
        monkeypatch.setenv("PGPASSWORD", password)
        run("pgpassword", "--storage", base)
        monkeypatch.delenv("PGPASSWORD")
        monkeypatch.setenv("NECFLOW_TEST_STORAGE_PW", password)
        run("named-env", "--storage", base, "--storage-password-env", "NECFLOW_TEST_STORAGE_PW")
        pgpass = tmp_path / "pgpass"
        pgpass.write_text(":".join([host, str(port), db, _pgpass_field(user),
                                    _pgpass_field(password)]) + "\n")
        pgpass.chmod(0o600)
        monkeypatch.setenv("PGPASSFILE", str(pgpass))
        run("pgpass-file", "--storage", base)
        monkeypatch.delenv("PGPASSFILE")
    finally:
        admin.execute(sql.SQL("ALTER ROLE CURRENT_USER PASSWORD {}").format(sql.Literal(old)))
        admin.close()
    pgpass.unlink()
    for case in ("encoded", "pgpassword", "named-env", "pgpass-file"):
        with contextlib.suppress(KeyError):
            optuna.delete_study(study_name=f"pw-{tag}-{case}", storage=url)

    assert codes == {"written": 2, "wrong-written": 2, "encoded": 0, "wrong-encoded": 2,
                     "pgpassword": 0, "named-env": 0, "pgpass-file": 0}, seen
    for err in (err_written, err_wrong_written):
        assert err.count("\n") == 1 and "percent-encode" in err
    assert "password authentication failed" in err_wrong
    for case in ("encoded", "pgpassword", "named-env", "pgpass-file"):
        for name in ("best.yaml", "manifest.json", "best/manifest.json", "best/report.html"):
            assert (runs / case / name).is_file(), (case, name)
    # the password, its encoded form (either case of hex digits), and a piece of it
    forms = {password, quote(password, safe=""), quote(password, safe="").lower(),
             wrong, quote(wrong, safe=""), "Secret"}
    text = "".join(seen)
    files = [f for f in runs.rglob("*") if f.is_file()]
    assert len(files) > 20
    for form in forms:
        assert form not in text, form
        for f in files:
            assert form.encode() not in f.read_bytes(), (form, f)


# ----------------------------------------------------------------------------
# The acceptance run, smaller: commands started together on empty databases


def _acceptance_module():
    spec = importlib.util.spec_from_file_location("pg_concurrency",
                                                  ROOT / "scripts" / "pg_concurrency.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module          # its dataclasses look their module up there
    spec.loader.exec_module(module)
    return module


@pytest.mark.engine
def test_commands_started_together_on_empty_databases(tmp_path):
    """4 commands x 2 workers, --trials 20, twice (scripts/pg_concurrency.py runs
    the full 4 x 2 x 80, ten times): every command exits 0 and the study ends
    with exactly 20 complete trials, none started beyond the budget."""
    url = _url()
    lines = []
    results = _acceptance_module().run_acceptance(
        url, commands=4, workers=2, trials=20, repetitions=2, folder=tmp_path,
        start_delay_s=6.0, say=lines.append)
    assert [r.ok(20) for r in results] == [True, True], lines
    assert all(r.complete == 20 and r.codes == [0, 0, 0, 0] for r in results)
