"""What a study leaves in its run folder.

``best.yaml``        the best design, resolved, that ``necflow evaluate`` reads as it is
``leaderboard.csv``  the best trials: every parameter and every cost term per band
``best-bands.txt``   the best design's per-band table
``best/``            the evaluate outputs of the best design (results.json, results.csv,
                     swr.png, design.resolved.yaml, manifest.json)
"""

from __future__ import annotations

import csv
import io
import math
import sys
from dataclasses import dataclass
from pathlib import Path

from optuna.trial import TrialState
from rich.console import Console

from necflow import fileio, units
from necflow.chain import Chain, report_data
from necflow.config.fields import apply
from necflow.config.resolve import resolved_yaml
from necflow.engine.response import ResponseCache
from necflow.errors import NecflowError
from necflow.optimize.problem.cost import score
from necflow.optimize.problem.robust import robust_plan, robust_score
from necflow.optimize.storage.backends import redact_url
from necflow.optimize.storage.bookkeeping import SCREENING, trial_values
from necflow.report import run_folder
from necflow.report.tables import band_table
from necflow.units import _DISPLAY

LEADERBOARD_ROWS = 25


@dataclass
class StudyOutputs:
    """What :func:`write_outputs` wrote.

    ``best_design`` is the best trial's design at a buildable precision
    (:meth:`Param.buildable`), ``values`` its searched values, and
    ``objective`` the study's objectives of that design as written (the
    trial's own values differ by the rounding).
    """

    best_trial: object
    best_design: object
    evaluation: object
    folder: Path
    values: dict
    objective: tuple


def best_trial(study):
    """The trial to report: the lowest cost, or on a Pareto front the member
    lowest in the first objective."""
    try:
        if len(study.directions) == 1:
            return study.best_trial
        return min(study.best_trials, key=lambda t: t.values[0])
    except ValueError:
        raise NecflowError(f"study '{study.study_name}' has no complete trial yet") from None


def ranked_trials(study, n: int = LEADERBOARD_ROWS) -> list:
    """Complete trials, best first (Pareto front first in multi-objective mode)."""

    done = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
    if len(study.directions) == 1:
        return sorted(done, key=lambda t: (t.value, t.number))[:n]
    front = {t.number for t in study.best_trials}
    return sorted(done, key=lambda t: (t.number not in front, t.values[0], t.number))[:n]


def leaderboard_csv(study, space, objectives) -> str:
    """CSV text: rank, trial, objectives (``objective.<name>``), parameters
    (their display unit in the header), the nominal cost terms, ``full_solve``
    (1: the cost of a full solve; 0: a nested trial's screened estimate, whose
    other terms are not computed) and the band terms; every header once."""
    rows = ranked_trials(study)
    band_keys: list[str] = []
    for t in rows:
        for k, v in t.user_attrs.items():
            if k.startswith("band:"):
                for term in v:
                    key = f"{k[5:]}.{term}"
                    if key not in band_keys:
                        band_keys.append(key)
    # the objectives as the study scored them (robust ones over the cases), apart
    # from the nominal terms below, which share some of their names
    head = ["rank", "trial"] + [f"objective.{o}" + (" [m]" if o == "span" else "")
                                for o in objectives]
    for p in space.params:
        head.append(f"{p.path} [{_DISPLAY[p.dimension]}]" if p.dimension else p.path)
    head += ["cost", "worst_swr", "loss_db", "full_solve"] + band_keys
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(head)
    for rank, t in enumerate(rows, 1):
        row = [rank, t.number] + [f"{v:.6g}" for v in t.values]
        searched = trial_values(t)
        for p in space.params:
            v = searched.get(p.path)
            if p.dimension and isinstance(v, float):
                v = units.format_quantity(v, p.dimension).split()[0]
            elif isinstance(v, float):
                v = f"{v:.6g}"        # as the unit-carrying columns: six significant digits
            row.append(v)
        terms = t.user_attrs.get("necflow.terms", {})
        row += [f"{terms.get(k, math.nan):.6g}" for k in ("cost", "worst_swr", "loss_db")]
        row.append(0 if t.user_attrs.get(SCREENING, {}).get("confirmed") is False else 1)
        for key in band_keys:
            band, term = key.rsplit(".", 1)
            row.append(f"{t.user_attrs.get('band:' + band, {}).get(term, math.nan):.6g}")
        w.writerow(row)
    return buf.getvalue()


def best_yaml(design, study, trial, storage_shown: str, objective=None) -> str:
    """The best design as resolved YAML, with comment lines naming its study
    and its objective as written (``objective``) beside the trial's."""

    searched = ", ".join(f"{v:.6g}" for v in trial.values)
    written = ", ".join(f"{v:.6g}" for v in (objective or trial.values))
    head = (f"# Best design of study '{study.study_name}' (trial {trial.number}), values at a "
            f"buildable precision.\n# Objective of this design as written: {written} (the "
            f"trial's unrounded values: {searched})\n# storage: {redact_url(storage_shown)}\n")
    return head + resolved_yaml(design)


def objective_as_written(design, variant, evaluation, responses=None) -> tuple:
    """The study's objectives of ``variant`` (robust ones over the study's
    cases when ``cost.robust`` is set)."""
    plan = robust_plan(design)
    if plan is None:
        return score(evaluation, design.cost).values
    return robust_score(variant, plan, ResponseCache(responses)
                        if not isinstance(responses, ResponseCache) else responses).values


def band_table_text(evaluation, title: str) -> str:


    buf = io.StringIO()
    Console(file=buf, width=120, highlight=False, color_system=None).print(
        band_table(evaluation.band_summaries(), evaluation.design.goal.swr_limit, title=title))
    return buf.getvalue()


def write_evaluation(chain: Chain, folder: Path, *, config_path: str, started) -> None:
    """The evaluate outputs of one design's chain into ``folder`` (report
    included; the report stage runs here, the writer only writes)."""
    doc = report_data(chain, study_dir=folder.parent)
    run_folder.write_run_folder(
        chain.evaluation, doc, folder, config_path=config_path, started=started,
        argv=[redact_url(a) for a in ["necflow", *sys.argv[1:]]])


def write_outputs(study, design, space, out: Path, *, storage_shown: str,
                  solver=None) -> StudyOutputs:
    """Write best.yaml, leaderboard.csv, best-bands.txt and best/ for a study."""
    started = run_folder.now_utc()
    out.mkdir(parents=True, exist_ok=True)
    trial = best_trial(study)
    searched = trial_values(trial)
    values = {p.path: p.buildable(searched[p.path]) for p in space.params
              if p.path in searched}
    chain = Chain(apply(design, values), solver)
    variant, evaluation = chain.design, chain.evaluation
    objective = objective_as_written(design, variant, evaluation, chain.responses)
    best_path = out / "best.yaml"
    fileio.write_text(best_path, best_yaml(variant, study, trial, storage_shown, objective))
    fileio.write_text(out / "leaderboard.csv",
                      leaderboard_csv(study, space, design.cost.objectives))
    fileio.write_text(out / "best-bands.txt",
                      band_table_text(evaluation, f"best of study '{study.study_name}' (trial "
                                      f"{trial.number}, as written)"))
    write_evaluation(chain, out / "best", config_path=str(best_path), started=started)
    return StudyOutputs(trial, variant, evaluation, out, values, tuple(objective))
