"""Trial bookkeeping in the optuna storage: which trials count towards the
budget, who owns a running trial, and closing trials whose process is gone.

The user attributes written here are the study's record of each trial.
The study code (these helpers and the worker loop in
:mod:`necflow.optimize.study`) relies on these private optuna internals, to
be re-checked when optuna is upgraded: ``study._storage``,
``study._study_id``, ``study._thread_local``, ``trial._trial_id`` and
``storage.create_new_trial(..., template_trial=...)``.
"""

from __future__ import annotations

import os
import socket
import time
import warnings

FAIL_REASON = "necflow.fail_reason"
COUNTED = "necflow.counted"
DISCARDED = "necflow.discarded"
HOST = "necflow.host"
PID = "necflow.pid"


def _states():
    from optuna.trial import TrialState
    return TrialState


def counted_trials(study) -> list:
    """Trials that reached a verdict: COMPLETE, or FAIL of the design itself."""
    S = _states()
    return [t for t in study.get_trials(deepcopy=False, states=(S.COMPLETE, S.FAIL))
            if t.state == S.COMPLETE or t.user_attrs.get(COUNTED)]


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def fail_orphans(study) -> int:
    """Fail trials left RUNNING by a process that is gone; returns how many."""
    import optuna

    S = _states()
    storage = study._storage
    if hasattr(storage, "get_heartbeat_interval") and storage.get_heartbeat_interval():
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", optuna.exceptions.ExperimentalWarning)
            before = len(study.get_trials(deepcopy=False, states=(S.FAIL,)))
            optuna.storages.fail_stale_trials(study)
            return len(study.get_trials(deepcopy=False, states=(S.FAIL,))) - before
    host, n = socket.gethostname(), 0
    now = time.time()
    for t in study.get_trials(deepcopy=False, states=(S.RUNNING,)):
        pid, thost = t.user_attrs.get(PID), t.user_attrs.get(HOST)
        started = t.datetime_start.timestamp() if t.datetime_start else now
        dead = (pid is not None and thost == host and not _alive(int(pid))) or \
            (pid is None and now - started > 30)
        if dead:
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
    import datetime

    import optuna
    from optuna.trial import FrozenTrial

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


def running_before(study, number: int) -> int:
    """How many trials numbered below ``number`` are still RUNNING."""
    S = _states()
    return sum(1 for t in study.get_trials(deepcopy=False, states=(S.RUNNING,))
               if t.number < number)
