"""One run on a study, in steps: open the study in its run folder, the split
search recorded as a trial, the outcome with the outputs, the manifest.

The trials method runs between the first and the third step with
:func:`necflow.optimize.study.run_study`.  ``necflow optimize``
(:mod:`necflow.cli.optimize`) calls the steps in order and prints between
them; nothing here prints or decides an exit status.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from optuna.distributions import CategoricalDistribution, FloatDistribution
from optuna.trial import FrozenTrial, TrialState, create_trial

from necflow.config.resolve import config_sha256
from necflow.engine.cache import SolveStore
from necflow.engine.parallel import ParallelSolver
from necflow.engine.response import ResponseCache
from necflow.optimize.outputs import StudyOutputs, write_outputs
from necflow.optimize.problem.cost import score
from necflow.optimize.storage.backends import describe, redact_url
from necflow.optimize.storage.bookkeeping import FEED
from necflow.optimize.strategy.split import SplitResult, split_search
from necflow.optimize.strategy.study import StudyOptions, counted_trials, open_study
from necflow.report import run_folder

__all__ = ["SPLIT_FINISHED", "SearchOutcome", "SplitRun", "distribution", "finish_search",
           "open_search", "run_split", "start_trial", "write_search_manifest"]

#: Why a split search stopped (it always runs to its end).
SPLIT_FINISHED = "split search finished (best design confirmed with a full solve)"


def open_search(design, space, options: StudyOptions) -> tuple[object, str]:
    """Create the run folder and open (or resume) the study in it.

    The storage and resume checks run here, before any trial.

    Returns
    -------
    study : optuna.Study
    shown : str
        The storage as shown to the user (no password).
    """
    shown = describe(options.storage, options.out)
    options.out.mkdir(parents=True, exist_ok=True)
    return open_study(design, space, options), shown


def distribution(p):
    """The optuna distribution :meth:`Param.suggest` samples from."""
    if p.choices is not None:
        return CategoricalDistribution(list(p.choices))
    return FloatDistribution(p.low, p.high, log=p.log, step=p.step)


@dataclass
class SplitRun:
    """What :func:`run_split` did.

    Attributes
    ----------
    result : SplitResult
    cost : float
        Cost of the confirmed best design (solved at every frequency).
    solves : int
        Frequency points solved.
    stopped : str
        Why the search stopped (:data:`SPLIT_FINISHED`).
    """

    result: SplitResult
    cost: float
    solves: int
    stopped: str = SPLIT_FINISHED


def run_split(design, space, options: StudyOptions, study, *, solver=None,
              on_stage: Callable[[str], None] | None = None) -> SplitRun:
    """Split search with ``options.workers`` processes; its confirmed best
    design is added to ``study`` as a complete trial, so the outputs, the
    leaderboard and later resumes see it like any other trial.

    ``on_stage`` is called with a short text as each stage starts.
    """
    store = SolveStore(options.out) if options.cache else None
    with ParallelSolver(workers=options.workers, solver=solver) as ps:
        cache = ResponseCache(ps, store=store)
        res = split_search(design, space, cache, seed=options.seed or 0, on_stage=on_stage)
    sc = score(res.evaluation, design.cost)
    params = {p.path: res.values[p.path] for p in space.params}
    attrs = {"necflow.method": "split", "necflow.confirmed": res.confirmed,
             "necflow.screen_cost_error": res.screen_cost_error,
             "necflow.terms": {"cost": sc.cost, "worst_swr": sc.worst_swr,
                               "loss_db": sc.loss_db}}
    attrs.update({f"band:{b}": t for b, t in sc.bands.items()})
    study.add_trial(create_trial(params=params, value=sc.cost, user_attrs=attrs,
                                 distributions={p.path: distribution(p)
                                                for p in space.params}))
    return SplitRun(result=res, cost=sc.cost, solves=ps.solves)


def start_trial(study) -> FrozenTrial | None:
    """The queued starting design's trial, if it completed (a nested study
    has none: its first trial is the starting geometry with its feed
    searched, not the design as written)."""
    for t in study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)):
        if t.user_attrs.get("necflow.start") and FEED not in t.user_attrs:
            return t
    return None


@dataclass
class SearchOutcome:
    """The study after a run, and the outputs written from it.

    Attributes
    ----------
    counted : int
        Trials counted in the study's budget.
    complete, failed : int
        Trials of the study in those states.
    outputs : StudyOutputs
        best.yaml, the leaderboard and the best design's run folder.
    start : FrozenTrial or None
        The starting design's trial, if it completed.
    """

    counted: int
    complete: int
    failed: int
    outputs: StudyOutputs
    start: FrozenTrial | None


def finish_search(study, design, space, options: StudyOptions, shown: str, *,
                  solver=None) -> SearchOutcome:
    """Count the study's trials and write its outputs into ``options.out``."""
    counted = counted_trials(study)
    states = [t.state.name for t in study.get_trials(deepcopy=False)]
    outputs = write_outputs(study, design, space, options.out, storage_shown=shown,
                            solver=solver)
    return SearchOutcome(counted=len(counted), complete=states.count("COMPLETE"),
                         failed=states.count("FAIL"), outputs=outputs,
                         start=start_trial(study))


def write_search_manifest(design_path: str | Path, options: StudyOptions, shown: str,
                          outcome: SearchOutcome, *, stopped: str, started: datetime,
                          argv: list[str]) -> None:
    """The run folder's manifest; passwords in ``argv`` are redacted."""
    best = outcome.outputs.best_trial
    run_folder.write_manifest(
        options.out, config_sha256=config_sha256(Path(design_path)),
        config_path=str(design_path), started=started, finished=run_folder.now_utc(),
        argv=[redact_url(a) for a in argv],
        extra={"study": options.study_name, "storage": shown, "stopped": stopped,
               "trials_counted": outcome.counted, "best_trial": best.number,
               "best_values": list(best.values)})
