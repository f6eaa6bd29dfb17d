"""Trial bookkeeping in the optuna storage: which trials count towards the
budget, taking a place in the budget, who owns a running trial, and closing
trials whose process is gone.

The budget is exact with any number of workers on any number of machines:
a worker takes a place (:func:`take_slot`) under the study lock
(:func:`necflow.optimize.storage.study_lock`), counting the trials that hold
one -- RUNNING, COMPLETE, and FAIL of the design itself -- and creating its
trial only while fewer than the budget do.  A trial that fails from an
interruption (or whose worker died) gives its place back.

The user attributes written here are the study's record of each trial.
The study code (these helpers and the worker loop in
:mod:`necflow.optimize.strategy.study`) relies on these private optuna internals, to
be re-checked when optuna is upgraded: ``study._storage``,
``study._study_id``, ``study._thread_local``, ``trial._trial_id``,
``storage.create_new_trial(..., template_trial=...)``, and on RDB storages
``storage._backend`` (the RDB storage inside optuna's cache wrapper), its
``scoped_session`` and ``optuna.storages._rdb.models.TrialHeartbeatModel``.
"""

from __future__ import annotations

import datetime
import os
import socket
import time
import warnings

import numpy as np
import optuna
from optuna.storages._rdb import models
from optuna.trial import FrozenTrial, TrialState

from necflow.optimize.storage.backends import GRACE_S

FAIL_REASON = "necflow.fail_reason"
COUNTED = "necflow.counted"
DISCARDED = "necflow.discarded"   # studies of earlier versions: started over the budget, not run
HOST = "necflow.host"
PID = "necflow.pid"
#: The feed values the nested method's inner search chose for a trial (SI, by path); the
#: optuna sampler sees only the geometry, so ``trial.params`` holds the geometry alone.
FEED = "necflow.feed"
#: The geometry a nested trial solved when its local refinement moved it from the
#: sampled point (SI, by path; see necflow.optimize.strategy.polish); overrides
#: ``trial.params``.
GEOMETRY = "necflow.geometry"
#: Trial user attribute of a nested trial's screening (estimate, whether it
#: was confirmed by a full solve, errors; see necflow.optimize.strategy.study).
SCREENING = "necflow.screening"
#: Trial user attribute of a confirmed nested trial: the correction its full solve
#: taught the screening, ``{"re": [...], "im": [...]}`` [ohm] at every point (see
#: necflow.optimize.strategy.screen), so every worker and session can learn it.
CORRECTION = "necflow.correction"
#: Trial user attribute: frequency points a nested trial asked of the engine,
#: ``screen`` and ``full``.
SOLVES = "necflow.solves"


def _states():
    return TrialState


def counted_trials(study) -> list:
    """Trials that reached a verdict: COMPLETE, or FAIL of the design itself."""
    S = _states()
    return [t for t in study.get_trials(deepcopy=False, states=(S.COMPLETE, S.FAIL))
            if t.state == S.COMPLETE or t.user_attrs.get(COUNTED)]


def trial_values(trial) -> dict:
    """Every searched value of a trial: its sampled ``params`` and, with the
    nested method, the geometry its local refinement moved to
    (:data:`GEOMETRY`) and the feed values of its inner search (:data:`FEED`)."""
    return {**trial.params, **trial.user_attrs.get(GEOMETRY, {}),
            **trial.user_attrs.get(FEED, {})}


def stored_corrections(study, skip=frozenset()):
    """``(trial number, values, dz, screening error)`` of every COMPLETE trial
    that stored a screening correction (:data:`CORRECTION`) and whose number
    is not in ``skip`` (those already learned: their lists are not decoded
    again), for :meth:`necflow.optimize.strategy.screen.Screening.absorb`."""
    for t in study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)):
        c = t.user_attrs.get(CORRECTION)
        if not c or t.number in skip:
            continue
        dz = np.asarray(c["re"], dtype=float) + 1j * np.asarray(c["im"], dtype=float)
        yield t.number, trial_values(t), dz, (t.user_attrs.get(SCREENING) or {}).get("error")


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _without_heartbeat(storage, trial_ids: list[int]) -> set[int]:
    """Of these trials, those with no heartbeat record at all (RDB storage)."""
    if not trial_ids:
        return set()

    storage = getattr(storage, "_backend", storage)   # optuna wraps an RDB storage in a cache
    session = storage.scoped_session()   # as optuna's own reads: query, commit, close
    try:
        beating = {tid for (tid,) in session.query(models.TrialHeartbeatModel.trial_id)
                   .filter(models.TrialHeartbeatModel.trial_id.in_(trial_ids))}
        session.commit()
    finally:
        session.close()
    return set(trial_ids) - beating


def fail_orphans(study) -> int:
    """Fail trials left RUNNING by a process that is gone; returns how many.

    RDB storage (several machines): a trial whose heartbeat has been silent
    for the grace period, or that never sent one and started longer than the
    grace period ago.  Journal storage (one machine): a trial whose process
    is gone, or that has no owner and started more than 30 s ago.
    """

    S = _states()
    storage = study._storage
    beats = hasattr(storage, "get_heartbeat_interval") and storage.get_heartbeat_interval()
    n = 0
    if beats:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", optuna.exceptions.ExperimentalWarning)
            before = len(study.get_trials(deepcopy=False, states=(S.FAIL,)))
            optuna.storages.fail_stale_trials(study)
            n = len(study.get_trials(deepcopy=False, states=(S.FAIL,))) - before
    host, now = socket.gethostname(), time.time()
    running = study.get_trials(deepcopy=False, states=(S.RUNNING,))
    if beats:

        old = [t._trial_id for t in running
               if t.datetime_start and now - t.datetime_start.timestamp() > GRACE_S]
        silent = _without_heartbeat(storage, old)
        orphans = [t for t in running if t._trial_id in silent]
    else:
        orphans = []
        for t in running:
            pid, thost = t.user_attrs.get(PID), t.user_attrs.get(HOST)
            started = t.datetime_start.timestamp() if t.datetime_start else now
            if (pid is not None and thost == host and not _alive(int(pid))) or \
                    (pid is None and now - started > 30):
                orphans.append(t)
    for t in orphans:
        try:
            storage.set_trial_user_attr(t._trial_id, FAIL_REASON,
                                        "interrupted: its worker stopped without finishing")
            storage.set_trial_state_values(t._trial_id, S.FAIL)
            n += 1
        except Exception:  # another worker closed it first
            pass
    return n


def ask_owned(study, host: str, pid: int):
    """``study.ask()``, with this process recorded as the trial's owner in the
    very record that creates the trial, so a kill at any moment leaves no
    RUNNING trial without an owner to check (a queued trial is popped first
    and marked right after)."""


    S = _states()
    if study.get_trials(deepcopy=False, states=(S.WAITING,)):
        trial = study.ask()
        study._storage.set_trial_user_attr(trial._trial_id, HOST, host)
        study._storage.set_trial_user_attr(trial._trial_id, PID, pid)
        return trial
    template = FrozenTrial(
        number=-1, state=S.RUNNING, value=None, datetime_start=datetime.datetime.now(),
        datetime_complete=None, params={}, distributions={},
        user_attrs={HOST: host, PID: pid}, system_attrs={},
        intermediate_values={}, trial_id=-1)
    trial_id = study._storage.create_new_trial(study._study_id, template_trial=template)
    if hasattr(study, "_thread_local"):
        study._thread_local.cached_all_trials = None   # as ask() does: read storage afresh
    return optuna.trial.Trial(study, trial_id)


def slots_taken(study) -> int:
    """Trials holding a place in the budget: RUNNING, COMPLETE, and FAIL of
    the design itself (read in one pass, so no trial is missed while it
    finishes)."""
    S = _states()
    return sum(1 for t in study.get_trials(deepcopy=False,
                                           states=(S.RUNNING, S.COMPLETE, S.FAIL))
               if t.state != S.FAIL or t.user_attrs.get(COUNTED))


def take_slot(study, budget: int | None, lock, host: str, pid: int):
    """A new trial owned by this process, or ``None`` when the budget is held.

    Under ``lock`` (a context manager over every process and machine on the
    study): count the trials holding a place; if fewer than ``budget``,
    create the trial (a queued one first) and send its first heartbeat, so
    that running + finished never exceeds the budget.
    """
    with lock:
        if budget is not None and slots_taken(study) >= budget:
            return None
        trial = ask_owned(study, host, pid)
        storage = study._storage
        if hasattr(storage, "get_heartbeat_interval") and storage.get_heartbeat_interval():
            storage.record_heartbeat(trial._trial_id)
        return trial
