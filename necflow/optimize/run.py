"""One run on a study, in steps: open the study in its run folder, the
outcome with the outputs, the manifest.

The study runs between the first and the second step with
:func:`necflow.optimize.strategy.study.run_study`.  ``necflow optimize``
(:mod:`necflow.cli.optimize`) calls the steps in order and prints between
them; nothing here prints or decides an exit status.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from pathlib import Path

from optuna.trial import FrozenTrial, TrialState

from necflow.config.resolve import config_sha256
from necflow.optimize.outputs import StudyOutputs, write_outputs
from necflow.optimize.storage.backends import describe, redact_url
from necflow.optimize.storage.bookkeeping import FEED
from necflow.optimize.strategy.study import StudyOptions, counted_trials, open_study
from necflow.report import run_folder

__all__ = ["SearchOutcome", "finish_search", "open_search", "start_trial",
           "write_search_manifest"]

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
