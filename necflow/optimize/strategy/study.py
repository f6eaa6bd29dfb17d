"""The study runner: optuna ask/tell loops in one or several processes.

Overnight safety:

* every trial ends COMPLETE or FAIL with its reason in the user attribute
  ``necflow.fail_reason`` (an invalid variant, a failed solve, a
  non-finite cost, an interruption); the loop goes on after a failure;
* ``trials`` is the study's total: trials that reached a verdict (COMPLETE,
  or FAIL of the design itself) count, interrupted ones do not; a worker
  takes a place in the budget under the study lock before it creates a
  trial, so running + finished never exceeds the budget with any number of
  workers and machines (see :mod:`necflow.optimize.storage.bookkeeping`); a worker
  that finds every place held by running trials waits for them;
* creating the storage tables, the study, its start trial and a session's
  number happen under locks too, so any number of commands may start on an
  empty database at the same moment;
* each run of the command is a new session of the study, numbered in the
  study; the sampler seed of each worker is drawn from ``--seed``, the
  session number and the worker's index, so a resumed study draws new
  points and the same commands in the same order draw the same ones;
* SIGINT/SIGTERM during a trial fail that trial ("interrupted") and stop
  the worker; outside a trial they stop it before the next one;
* a trial left RUNNING by a killed process is failed on the next start
  (journal storage: its process is gone; RDB storage: its heartbeat stopped).

Methods (``StudyOptions.method``, recorded in the study's user attribute
``necflow.method``; a study is resumed only with the method it began with):

* ``nested`` (the default): the sampler sees only the geometry fields
  (``Param.geometry``: those that need a solve); inside each trial the feed
  fields are found for that geometry's antenna response by the vectorised
  inner search (:class:`necflow.optimize.strategy.inner.FeedSearch`, no
  solve), minimising the combined ``cost`` (with several objectives too: the
  documented scalarisation), and the trial's design, geometry plus best feed,
  is evaluated and scored as in the trials method (robust scoring included).
  With one objective and no robust scoring, each geometry is first
  *screened* from few solves (a few frequencies per band, over the
  reflection-coefficient ground when the design's is Sommerfeld-Norton,
  corrected by what the study's full solves taught, stored with each
  confirmed trial): only a geometry
  whose estimate comes near the study's best is solved in full, and only a
  full solve's cost can be the best (:mod:`necflow.optimize.strategy.screen`;
  ``StudyOptions.screen`` False, ``--full-solves``, solves every geometry).
  The feed values go to the trial's user attribute ``necflow.feed``
  (:func:`necflow.optimize.storage.bookkeeping.trial_values` merges them
  with ``trial.params``).  A design with a ``route`` (the feed line in the
  engine model: feed fields that move the line are geometry, and the
  common-mode terms depend on the feed), a search with no feed field, or a
  feed field the batch cannot vary runs as ``trials``; a search of feed
  fields only has one geometry and is one trial;
* ``trials``: the sampler draws every field.
"""

from __future__ import annotations

import math
import multiprocessing
import os
import re
import signal
import socket
import threading
import time
import warnings
from collections.abc import Callable
from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import optuna
from optuna.trial import TrialState

from necflow.chain import Chain
from necflow.config.fields import locate, position_kind
from necflow.engine.cache import SolveStore
from necflow.engine.response import ResponseCache
from necflow.errors import ConfigError, ModelError, NecflowError
from necflow.optimize.problem.constraints import INFEASIBLE, margins, violations
from necflow.optimize.problem.cost import score
from necflow.optimize.problem.robust import robust_plan, robust_score
from necflow.optimize.storage.backends import guard_resume, open_storage, study_lock
from necflow.optimize.storage.bookkeeping import (
    CORRECTION,
    COUNTED,
    DISCARDED,
    FAIL_REASON,
    FEED,
    GEOMETRY,
    SCREENING,
    SOLVES,
    counted_trials,
    fail_orphans,
    stored_corrections,
    take_slot,
)
from necflow.optimize.strategy.inner import FeedSearch
from necflow.optimize.strategy.polish import STEP, refine
from necflow.optimize.strategy.screen import Screening

__all__ = ["CONSTRAINTS", "COUNTED", "DISCARDED", "FAIL_REASON", "FEED", "GEOMETRY",
           "METHODS", "REFINE", "REVISIT", "SCREENING", "SOLVES", "Interrupted",
           "StudyOptions", "TrialFailure", "begin_session", "counted_trials", "enqueue_start",
           "fail_orphans", "feed_search", "guard_method", "lock_of", "open_study",
           "parse_duration", "resolve_method", "run_study", "run_trial", "worker_loop",
           "worker_seeds"]

SESSIONS = "necflow.sessions"
METHOD = "necflow.method"
#: Trial user attribute: margin of each stated site constraint [m], > 0 broken.
CONSTRAINTS = "necflow.constraints"
METHODS = ("nested", "trials")
#: Feed variants scored by the inner search of each nested trial.
INNER_VARIANTS = 20000
#: Feed variants per screened estimate of a local refinement (its many estimates
#: need only rank geometries; the refined one is searched with INNER_VARIANTS).
REFINE_VARIANTS = 2000
#: Trial user attribute of a queued revisit: the number of the trial whose
#: confirmed geometry it refines again (with the correction that trial taught).
REVISIT = "necflow.revisit"
#: Trial user attribute of a local refinement: estimates at its start and end,
#: evaluations spent, whether it moved the geometry.
REFINE = "necflow.refine"
#: Least relative gain over the previous best for a new best to be revisited.
REVISIT_GAIN = 1e-3
WAIT_S = 0.5          # a worker whose budget places are all held polls this often


@dataclass
class StudyOptions:
    """How to run a study (see ``necflow optimize --help``)."""

    out: Path
    study_name: str
    trials: int | None = None
    timeout_s: float | None = None
    workers: int = 1
    storage: str | None = None
    seed: int | None = None      # as given; each worker's sampler seed is drawn from it
    cache: bool = True           # keep solves in <out>/solves.sqlite for every worker and run
    storage_password_env: str | None = None   # environment variable holding the password
    method: str = "nested"       # nested | trials (see the module notes)
    screen: bool = True          # nested: screen geometries from few solves (see screen.py)


def parse_duration(text: str) -> float:
    """Seconds in ``8h``, ``90m``, ``45s``, ``1h30m`` or ``2d``.

    Raises
    ------
    ConfigError
        If the text is not such a duration.
    """
    t = str(text).strip().lower().replace(" ", "")
    parts = re.findall(r"(\d+(?:\.\d+)?)([dhms])", t)
    if not t or not parts or "".join(a + b for a, b in parts) != t:
        raise ConfigError(f"'{text}' is not a duration; expected e.g. 8h, 90m, 1h30m, 45s",
                          field="--timeout")
    scale = {"d": 86400.0, "h": 3600.0, "m": 60.0, "s": 1.0}
    seconds = sum(float(a) * scale[b] for a, b in parts)
    if seconds <= 0:
        raise ConfigError("the timeout must be positive", field="--timeout")
    return seconds


class TrialFailure(NecflowError):
    """A trial's design is invalid or could not be evaluated."""


class Interrupted(KeyboardInterrupt):
    """SIGINT or SIGTERM arrived during a trial."""


# ----------------------------------------------------------------------------
# The method


def feed_search(design, space) -> FeedSearch:
    """The inner search over the space's feed fields for ``design``'s bands.

    Raises
    ------
    ValueError
        For a feed field the batch cannot vary.
    """
    chain = Chain(design)      # bands and frequencies only: nothing is solved here
    return FeedSearch(design, [p for p in space.params if not p.geometry],
                      chain.frequency_hz, chain.band_index, chain.bands)


def resolve_method(design, space, options: StudyOptions) -> tuple[StudyOptions, list[str]]:
    """The options a study runs with, and notes for the user on what changed.

    The nested method runs as the trials method with a ``route`` in the
    design, with no feed field searched, or with a feed field the inner
    search cannot vary; with only feed fields searched it has one geometry,
    so its budget becomes one trial.  Idempotent.
    """
    if options.method != "nested":
        return options, []
    geo = [p for p in space.params if p.geometry]
    feed = [p for p in space.params if not p.geometry]
    why = None
    if design.route is not None:
        why = ("the design has a route (its feed line is part of the engine model, and the "
               "common-mode terms depend on the feed)")
    elif not feed:
        return replace(options, method="trials"), []   # the same search: nothing to nest
    else:
        try:
            feed_search(design, space)
        except ValueError as exc:
            why = str(exc)
    if why is not None:
        return replace(options, method="trials"), [
            f"{why}: the nested method runs as the trials method (every field sampled)"]
    notes = []
    if not geo and options.trials != 1:
        notes.append("only feed fields are searched, so there is one geometry: the nested "
                     "study is one trial (the budget becomes 1)")
        options = replace(options, trials=1)
    return options, notes


def guard_method(study, method: str) -> None:
    """Record the study's method; refuse to resume it with another one.

    A study of an earlier version without the record is a ``split`` study if
    its trial says so, else a ``trials`` study.

    Raises
    ------
    ConfigError
        Naming --method.
    """
    recorded = study.user_attrs.get(METHOD)
    if recorded is None:
        trials = study.get_trials(deepcopy=False)
        if trials:
            recorded = "split" if any(t.user_attrs.get(METHOD) == "split" for t in trials) \
                else "trials"
        study.set_user_attr(METHOD, recorded or method)
    if recorded is not None and recorded not in METHODS:
        raise ConfigError(f"study '{study.study_name}' was made by the {recorded} search, "
                          "which is no longer offered (the nested method does its work); "
                          "its trials are kept in the storage; use a new --study name or "
                          "--out folder to search again", field="--method")
    if recorded is not None and recorded != method:
        raise ConfigError(f"study '{study.study_name}' was begun with --method {recorded}; "
                          f"resume it with --method {recorded}, or use a new --study name or "
                          "--out folder to start afresh", field="--method")


# ----------------------------------------------------------------------------
# Opening a study


def make_sampler(seed: int | None):
    """The sampler every worker uses, seeded with its own seed."""

    return optuna.samplers.TPESampler(seed=seed, constant_liar=True, multivariate=True)


def worker_seeds(seed: int | None, session: int, workers: int) -> list[int | None]:
    """Sampler seeds of the workers of one session: drawn from ``(seed,
    session, worker index)`` with numpy's SeedSequence, so every session
    and every worker draws its own points, reproducibly."""
    if seed is None:
        return [None] * workers

    return [int(np.random.SeedSequence([seed, session, i]).generate_state(1)[0])
            for i in range(workers)]


def lock_of(study, options: StudyOptions):
    """A fresh context manager holding the study lock (see
    :func:`necflow.optimize.storage.study_lock`)."""

    return study_lock(study._storage, study.study_name, options.out)


def open_study(design, space, options: StudyOptions):
    """Create or load the study and check it matches this design, space and
    method (:func:`resolve_method`).

    The study is created or loaded under the study lock, so several
    processes and machines may do it at the same moment.
    """
    options, _ = resolve_method(design, space, options)
    robust_plan(design, space)  # a robust setting that cannot work fails before any trial
    storage = open_storage(options.storage, options.out, options.storage_password_env)
    n_obj = len(design.cost.objectives)
    with study_lock(storage, options.study_name, options.out):
        try:
            study = optuna.create_study(storage=storage, study_name=options.study_name,
                                        directions=["minimize"] * n_obj,
                                        sampler=make_sampler(options.seed),
                                        load_if_exists=True)
        except ValueError as exc:  # e.g. directions differ from the stored study
            raise ConfigError(f"study '{options.study_name}' cannot be resumed: {exc}",
                              field="cost.objectives") from None
        guard_resume(study, design, space)
        guard_method(study, options.method)
    return study


def begin_session(study) -> int:
    """This run's session number in the study (0 for the first run); call
    under the study lock."""
    n = int(study.user_attrs.get(SESSIONS, 0))
    study.set_user_attr(SESSIONS, n + 1)
    return n


def enqueue_start(study, design, space, *, nested: bool = False) -> bool:
    """Queue the starting design as the first trial of a new study (with
    ``nested``, its geometry: the trial's inner search finds its feed)."""

    if study.get_trials(deepcopy=False):
        return False
    values = {}
    for p in space.params:
        if nested and not p.geometry:
            continue
        owner, name = locate(design, p.path)
        v = getattr(owner, name)
        if position_kind(owner, name) is not None:
            v = v[1]                  # a position: its fraction or distance
        if p.choices is not None:
            if v not in p.choices:
                return False
        else:
            if not (p.low <= v <= p.high):
                return False
            if p.step:
                v = min(p.high, p.low + round((v - p.low) / p.step) * p.step)
        values[p.path] = v
    study.enqueue_trial(values, user_attrs={"necflow.start": True})
    return True


# ----------------------------------------------------------------------------
# One trial


def _feasible(base: Chain, values: dict, trial=None) -> Chain:
    """The variant of ``base`` with ``values``, its site-constraint margins
    recorded on ``trial`` (user attribute ``necflow.constraints``).

    Raises
    ------
    TrialFailure
        ``infeasible: ...`` when its wires cannot be placed or modelled or it
        breaks a stated site constraint.
    """
    try:
        shaped = base.variant(values)
        found = margins(shaped.design)
    except (ConfigError, ModelError) as exc:   # wires that cannot be placed or modelled
        raise TrialFailure(f"{INFEASIBLE}: {exc}") from None
    if found:
        if trial is not None:
            trial.set_user_attr(CONSTRAINTS, found)
        broken = violations(shaped.design, found)
        if broken:
            raise TrialFailure(f"{INFEASIBLE}: {broken}")
    return shaped


def _movable(space) -> list:
    """The geometry fields a local refinement moves: every numeric one (a
    stepped field moves on its grid); a field of choices stays as drawn."""
    return [p for p in space.params if p.geometry and p.choices is None]


def _refine(trial, base: Chain, space, values: dict, start: float, feed: FeedSearch,
            seed: int, screening: Screening, step: float = STEP) -> tuple[dict | None, int]:
    """Refine a promising trial's geometry on screened estimates
    (:mod:`necflow.optimize.strategy.polish`): the continuous geometry fields
    move (a stepped one on its grid), fields of choices stay.  Returns the
    refined geometry values (None when no field can move or nothing better
    was found) and the frequency points the estimates asked of the engine;
    records ``necflow.refine`` on the trial, and ``necflow.geometry`` when
    it moved."""
    free = _movable(space)
    if not free:
        return None, 0
    points = [0]

    def at(x) -> dict:
        return {**values, **{p.path: float(p.from_unit(xi)) for p, xi in zip(free, x)}}

    def estimate(x) -> float:
        v = at(x)
        try:
            shaped = _feasible(base, v)
        except TrialFailure:
            return math.inf
        scr = screening.screen(shaped, v)
        points[0] += scr.solved
        return feed.search(scr.z, max_variants=REFINE_VARIANTS, seed=seed).cost

    x0 = np.array([p.to_unit(values[p.path]) for p in free])   # a grid value: its cell centre
    done = refine(estimate, x0, start, step=step)
    trial.set_user_attr(REFINE, {"start": start, "estimate": done.value,
                                 "evaluations": done.evaluations, "moved": done.value < start})
    if not done.value < start:
        return None, points[0]
    moved = at(done.x)
    trial.set_user_attr(GEOMETRY, {p.path: moved[p.path] for p in free})
    return moved, points[0]


def run_trial(trial, base: Chain, space, robust=None, feed: FeedSearch | None = None,
              seed: int = 0, screening: Screening | None = None,
              best: Callable[[], float | None] | None = None) -> tuple[float, ...]:
    """Suggest, build, check, evaluate and score one variant of ``base``'s
    design (over the cases of ``robust``, a
    :class:`~necflow.optimize.robust.RobustPlan`, if given).  A variant that
    changes only feed fields shares the base chain's antenna response.

    With ``feed`` (the nested method) the trial suggests the geometry fields
    only; the feed fields are those of ``feed.search`` on the geometry's
    antenna response (seeded with ``seed``, the same in every worker, so the
    trial's outcome is a function of its geometry alone), recorded in the user
    attribute ``necflow.feed``; the design of both is then evaluated and scored.
    With ``screening`` as well (:mod:`necflow.optimize.strategy.screen`) the
    geometry is first screened from few solves; unless the screen's estimate
    comes within the margin of ``best()`` (the study's best cost, None when
    there is none) the trial reports that estimate, unconfirmed (user
    attribute ``necflow.screening``); otherwise it is confirmed as above.
    A geometry whose estimate promises a new best (or the study's first, or a
    queued revisit, user attribute ``necflow.revisit``) is first refined
    locally on screened estimates (:mod:`necflow.optimize.strategy.polish`;
    the refined values go to ``necflow.geometry``), and a confirmed new best
    queues a revisit of its geometry, refined again with the correction its
    full solve taught.  ``necflow.solves`` counts the frequency points the
    trial asked of the engine: ``screen`` (refinement included) and ``full``.

    A variant whose wires cannot be placed or modelled, or that breaks a
    stated site constraint (the design's ``constraints``, whose margins go
    to the user attribute ``necflow.constraints``), fails before any solve
    with a reason starting ``infeasible:``.

    Raises
    ------
    TrialFailure
        With the reason, when the variant is invalid or cannot be evaluated.
    """
    if feed is None:
        values = space.suggest(trial)
    else:
        values = {p.path: p.suggest(trial) for p in space.params if p.geometry}
    shaped = _feasible(base, values, trial)
    try:
        if feed is None:
            variant = shaped
        else:
            geometry = shaped
            if screening is not None:
                screen = screening.screen(geometry, values)
                quick = feed.search(screen.z, max_variants=INNER_VARIANTS, seed=seed)
                screened = screen.solved
                b = best() if best else None
                revisit = trial.user_attrs.get(REVISIT) is not None
                if revisit or b is None or quick.cost < b:
                    moved, points = _refine(trial, base, space, values, quick.cost, feed, seed,
                                            screening, step=STEP / 2 if revisit else STEP)
                    screened += points
                    if moved is not None:
                        values = moved
                        geometry = _feasible(base, values, trial)
                        screen = screening.screen(geometry, values)
                        quick = feed.search(screen.z, max_variants=INNER_VARIANTS, seed=seed)
                record = {"confirmed": False, "estimate": quick.cost,
                          "interp_error": screen.interp_error, "corrected": screen.corrected,
                          "ground": screen.ground}
                if not screening.confirm(screen, quick.cost, best() if best else None):
                    trial.set_user_attr(FEED, quick.values)
                    trial.set_user_attr(SCREENING, record)
                    trial.set_user_attr(SOLVES, {"screen": screened, "full": 0})
                    trial.set_user_attr("necflow.inner", {"cost": quick.cost,
                                                          "variants": quick.evaluated})
                    trial.set_user_attr("necflow.terms", {"cost": quick.cost})
                    return (quick.cost,)
            inner = feed.search(geometry.antenna, max_variants=INNER_VARIANTS, seed=seed)
            trial.set_user_attr(FEED, inner.values)
            trial.set_user_attr("necflow.inner", {"cost": inner.cost,
                                                  "variants": inner.evaluated})
            variant = geometry.variant(inner.values)
        if robust is None:
            sc = score(variant.evaluation, variant.design.cost)
            result = sc.values
        else:
            rs = robust_score(variant.design, robust, base.responses)
            sc, result = rs.nominal, rs.values
    except TrialFailure:
        raise
    except Exception as exc:  # any failure of one variant must not end the study
        raise TrialFailure(f"{type(exc).__name__}: {exc}") from None
    if not all(math.isfinite(v) for v in result):
        raise TrialFailure(f"the cost is not finite: {result}")
    if feed is not None and screening is not None:
        dz = screening.learn(values, screen, geometry.antenna, quick.cost, sc.cost,
                             key=trial.number)
        trial.set_user_attr(CORRECTION, {"re": dz.real.tolist(), "im": dz.imag.tolist()})
        record.update(confirmed=True, cost=sc.cost,
                      error=abs(quick.cost - sc.cost) / abs(sc.cost) if sc.cost else 0.0)
        if not screen.corrected:
            record["error"] = None       # nothing learned yet: not a screening estimate
        trial.set_user_attr(SCREENING, record)
        trial.set_user_attr(SOLVES, {"screen": screened,
                                     "full": int(geometry.frequency_hz.size)})
        if (b is None or sc.cost < b - REVISIT_GAIN * abs(b)) and _movable(space):
            # a new best: queue its geometry to be refined again with what it taught
            trial.study.enqueue_trial({p.path: values[p.path] for p in space.params
                                       if p.geometry}, user_attrs={REVISIT: trial.number})
    if robust is not None:
        trial.set_user_attr("necflow.robust", rs.attrs())
    for band, terms in sc.bands.items():
        trial.set_user_attr(f"band:{band}", terms)
    trial.set_user_attr("necflow.terms", {"cost": sc.cost, "worst_swr": sc.worst_swr,
                                          "loss_db": sc.loss_db})
    return result


# ----------------------------------------------------------------------------
# The worker loop


class _Signals:
    """SIGINT/SIGTERM: raise inside a trial, else ask the loop to stop."""

    def __init__(self):
        self.stop: str | None = None
        self.in_trial = False
        self._old: dict = {}

    def __enter__(self):
        if threading.current_thread() is threading.main_thread():
            for s in (signal.SIGINT, signal.SIGTERM):
                self._old[s] = signal.signal(s, self._handle)
        return self

    def __exit__(self, *exc):
        for s, h in self._old.items():
            signal.signal(s, h)

    def _handle(self, signum, frame):
        self.stop = signal.Signals(signum).name
        if self.in_trial:
            self.in_trial = False
            raise Interrupted(self.stop)


def _heartbeat(storage, trial_id: int, stop: threading.Event) -> None:
    """Beat every interval (the first beat is sent when the trial is taken)."""
    interval = storage.get_heartbeat_interval()
    while not stop.wait(interval):
        try:
            storage.record_heartbeat(trial_id)
        except Exception:
            pass


def worker_loop(design, space, options: StudyOptions, *, study=None, solver=None,
                on_trial: Callable | None = None, deadline: float | None = None) -> str:
    """Run trials until the budget, the deadline or a signal; returns why it stopped."""


    options, _ = resolve_method(design, space, options)
    study = study or open_study(design, space, options)
    robust = robust_plan(design, space)   # drawn once: the same cases for every trial
    feed = feed_search(design, space) if options.method == "nested" else None
    screening = None
    if feed is not None and options.screen and robust is None and \
            len(design.cost.objectives) == 1:
        screening = Screening([p for p in space.params if p.geometry])

    def best() -> float | None:
        try:
            return float(study.best_value)
        except ValueError:       # no complete trial yet
            return None
    store = None
    if options.cache:
        store = SolveStore(options.out)
    cache = ResponseCache(solver, store=store)
    base = Chain(design, cache)
    storage = study._storage
    beats = hasattr(storage, "get_heartbeat_interval") and storage.get_heartbeat_interval()
    host, pid = socket.gethostname(), os.getpid()
    with _Signals() as sig, warnings.catch_warnings():
        # ask/tell is used on purpose; the heartbeat is recorded by this loop
        warnings.filterwarnings("ignore", message="Heartbeat of storage")
        while True:
            if sig.stop:
                return f"stopped by {sig.stop}"
            fail_orphans(study)
            if deadline is not None and time.time() >= deadline:
                return "timeout reached"
            if options.trials is not None and len(counted_trials(study)) >= options.trials:
                return "trial budget reached"
            if screening is not None:   # what other workers and sessions solved in full
                screening.absorb(stored_corrections(study, screening.learned))
            trial = take_slot(study, options.trials, lock_of(study, options), host, pid)
            if trial is None:  # the other places are held by running trials: wait for them
                time.sleep(WAIT_S)
                continue
            stop_beat = threading.Event()
            if beats:
                threading.Thread(target=_heartbeat, args=(storage, trial._trial_id, stop_beat),
                                 daemon=True).start()
            state, values, reason = TrialState.FAIL, None, None
            try:
                sig.in_trial = True
                values = run_trial(trial, base, space, robust, feed, screening=screening,
                                   best=best)
                sig.in_trial = False
                state = TrialState.COMPLETE
            except TrialFailure as exc:
                sig.in_trial = False
                reason = str(exc)
                trial.set_user_attr(COUNTED, True)
            except Interrupted as exc:
                reason = f"interrupted by {exc}"
            finally:
                sig.in_trial = False
                stop_beat.set()
                if reason:
                    trial.set_user_attr(FAIL_REASON, reason)
                study.tell(trial, values if state == TrialState.COMPLETE else None,
                           state=state)
            if on_trial is not None:
                on_trial(study, trial.number, state, reason)


def _child(design, space, options: StudyOptions, index: int, solver) -> None:
    """Entry of a spawned worker process (``options.seed`` is its own seed)."""

    optuna.logging.set_verbosity(optuna.logging.WARNING)
    deadline = None if options.timeout_s is None else time.time() + options.timeout_s
    try:
        worker_loop(design, space, options, solver=solver, deadline=deadline)
    except NecflowError:
        return  # a worker process stops quietly; nothing reads its exit status


def run_study(design, space, options: StudyOptions, *, solver=None,
              on_trial: Callable | None = None) -> tuple[object, str]:
    """Run a study with ``options.workers`` processes; returns (study, why it stopped).

    This process is worker 0; workers 1..N-1 are spawned processes, each with
    its own storage connection.  SIGTERM to this process is passed on to them.
    Under the study lock the run takes its session number and, on a new
    study, queues the starting design as the first trial.
    """
    options, _ = resolve_method(design, space, options)
    study = open_study(design, space, options)
    with lock_of(study, options):
        session = begin_session(study)
        enqueue_start(study, design, space, nested=options.method == "nested")
    seeds = worker_seeds(options.seed, session, max(1, options.workers))
    study.sampler = make_sampler(seeds[0])
    deadline = None if options.timeout_s is None else time.time() + options.timeout_s
    ctx = multiprocessing.get_context("spawn")
    children = [ctx.Process(target=_child,
                            args=(design, space, replace(options, seed=seeds[i]), i, solver),
                            daemon=False) for i in range(1, max(1, options.workers))]
    for c in children:
        c.start()
    why = "stopped"
    try:
        why = worker_loop(design, space, options, study=study, solver=solver,
                          on_trial=on_trial, deadline=deadline)
    finally:
        _join(children, forward=why.startswith("stopped"))
    return study, why


def _join(children, forward: bool) -> None:
    """Wait for the workers, passing a stop request on to them."""
    def stop_children(signum=signal.SIGTERM, frame=None):
        for c in children:
            if c.is_alive():
                try:
                    os.kill(c.pid, signal.SIGTERM)
                except ProcessLookupError:
                    pass

    if not children:
        return
    main = threading.current_thread() is threading.main_thread()
    old = {s: signal.signal(s, stop_children) for s in (signal.SIGINT, signal.SIGTERM)} \
        if main else {}
    try:
        if forward:
            stop_children()
        for c in children:
            c.join()
    finally:
        for s, h in old.items():
            signal.signal(s, h)
