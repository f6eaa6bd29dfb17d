"""``necflow optimize``: arguments -> study -> outputs -> text.

The options are checked here and become a
:class:`necflow.optimize.study.StudyOptions`; the steps of the run are in
:mod:`necflow.optimize.run` and :func:`necflow.optimize.study.run_study`.
"""

from __future__ import annotations

import dataclasses
import os
import re
import sys
from dataclasses import replace
from pathlib import Path
from typing import TextIO

import optuna
from rich.console import Console

from necflow import fileio
from necflow.chain import evaluate
from necflow.cli.progress import StudyProgress
from necflow.cli.status import INTERRUPTED, OK, TERMINATED
from necflow.errors import ConfigError
from necflow.limits import WORKERS_PER_CORE
from necflow.optimize import run
from necflow.optimize.outputs import band_table_text
from necflow.optimize.problem.space import load_study_design
from necflow.optimize.storage.backends import check_storage_url, storage_password
from necflow.optimize.strategy.study import (
    StudyOptions,
    counted_trials,
    parse_duration,
    resolve_method,
    run_study,
)
from necflow.report import run_folder

DEFAULT_TRIALS = 100
MAX_SEED = 2**32 - 1     # numpy's seed range, which the samplers use


def default_out(name: str) -> Path:
    """``runs/<name>-study``: a stable folder, so the same command resumes."""
    safe = re.sub(r"[^A-Za-z0-9_.-]+", "-", name).strip("-") or "design"
    return Path("runs") / f"{safe}-study"


def options_from_args(args, design) -> StudyOptions:
    """The study options of the command line, checked.

    Raises
    ------
    ConfigError
        Naming the option at fault.
    """
    if args.trials is not None and args.trials < 1:
        raise ConfigError(f"--trials must be at least 1, got {args.trials}", field="--trials")
    check_workers(args.workers, getattr(args, "force_workers", False))
    if args.seed is not None and not 0 <= args.seed <= MAX_SEED:
        raise ConfigError(f"--seed must be a whole number from 0 to {MAX_SEED}, got {args.seed}",
                          field="--seed")
    timeout = parse_duration(args.timeout) if args.timeout else None
    trials = args.trials if args.trials is not None or timeout else DEFAULT_TRIALS
    out = Path(args.out) if args.out else default_out(design.name)
    existing = next((p for p in (out, *out.parents) if p.exists()), None)
    if existing is not None and not existing.is_dir():
        raise ConfigError(f"'{existing}' is a file; the run folder must be a folder (new or "
                          "existing)", field="--out")
    password_env = getattr(args, "storage_password_env", None)
    if password_env and not args.storage:
        raise ConfigError("a password is only used with --storage (the journal file has "
                          "none)", field="--storage-password-env")
    if args.storage:
        check_storage_url(args.storage)
        storage_password(password_env)
    return StudyOptions(out=out, study_name=args.study or design.name, trials=trials,
                        timeout_s=timeout, workers=args.workers, storage=args.storage,
                        seed=args.seed, cache=not getattr(args, "no_cache", False),
                        storage_password_env=password_env,
                        screen=not getattr(args, "full_solves", False))


def check_workers(workers: int, force: bool = False) -> None:
    """Refuse a worker count below 1, or above ``WORKERS_PER_CORE`` per core
    unless forced.

    Raises
    ------
    ConfigError
        Naming --workers and, for a large count, --force-workers.
    """
    if workers < 1:
        raise ConfigError(f"--workers must be at least 1, got {workers}", field="--workers")
    cores = os.cpu_count() or 1
    if workers > WORKERS_PER_CORE * cores and not force:
        raise ConfigError(f"--workers {workers} is more than {WORKERS_PER_CORE} per core "
                          f"({cores} core(s) here); add --force-workers to run that many",
                          field="--workers")


def cmd_optimize(args) -> int:
    return run_optimize(args, sys.stdout, sys.stderr)


def run_optimize(args, out: TextIO, err: TextIO, solver=None) -> int:
    """Run ``necflow optimize`` with its parsed arguments, writing the
    summary to ``out`` and progress to ``err``; returns the exit status
    (130 or 143 when a signal stopped the study, else 0)."""


    def say(text: str) -> None:
        print(f"necflow: {text}", file=err, flush=True)

    optuna.logging.set_verbosity(optuna.logging.WARNING)
    started = run_folder.now_utc()
    design, space = load_study_design(args.design)
    method = getattr(args, "method", "nested")
    opts, notes = resolve_method(design, space, replace(options_from_args(args, design),
                                                        method=method))
    for note in notes:
        say(note)
    study, shown = run.open_search(design, space, opts)  # storage and resume checks first
    why = "report only"
    if not args.report_only:
        say(f"study '{opts.study_name}' in {shown}: {len(space.params)} "
            f"parameter(s), {opts.workers} worker(s)")
        progress = StudyProgress(err, opts.trials, opts.timeout_s, live=err.isatty(),
                                 count=lambda s: len(counted_trials(s)))
        try:
            study, why = run_study(design, space, opts, solver=solver, on_trial=progress)
        finally:
            progress.close()
    outcome = run.finish_search(study, design, space, opts, shown, solver=solver)
    result, first = outcome.outputs, outcome.start
    files = {"run_folder": str(opts.out), "best_yaml": str(opts.out / "best.yaml"),
             "leaderboard_csv": str(opts.out / "leaderboard.csv"),
             "best_bands": str(opts.out / "best-bands.txt"),
             "best_run_folder": str(opts.out / "best")}
    if getattr(args, "json", False):
        before = None if args.report_only else evaluate(design, solver=solver)
        out.write(fileio.json_text({
            "study": opts.study_name, "storage": shown, "stopped": why,
            "trials": {"counted": outcome.counted, "complete": outcome.complete,
                       "failed": outcome.failed},
            "start": None if first is None else {"trial": first.number,
                                                 "objective": list(first.values)},
            "best": {"trial": result.best_trial.number, "values": result.values,
                     "values_text": {p.path: p.text(result.values[p.path])
                                     for p in space.params if p.path in result.values},
                     "objective": list(result.objective),
                     "objective_unrounded": list(result.best_trial.values),
                     "bands": [dataclasses.asdict(b)
                               for b in result.evaluation.band_summaries()]},
            "before": None if before is None else {
                "bands": [dataclasses.asdict(b) for b in before.band_summaries()]},
            "files": files}))
        run.write_search_manifest(args.design, opts, shown, outcome, stopped=why,
                                  started=started, argv=["necflow", *sys.argv[1:]])
        return {"stopped by SIGINT": INTERRUPTED, "stopped by SIGTERM": TERMINATED}.get(why, OK)
    console = Console(file=out, width=120, highlight=False, color_system=None)
    console.print(f"study '{opts.study_name}': {outcome.counted} trial(s) counted "
                  f"({outcome.complete} complete, {outcome.failed} failed); "
                  f"stopped: {why}")
    if first is not None:
        console.print(f"starting design: objective "
                      f"{', '.join(f'{v:.4g}' for v in first.values)} (trial {first.number})")
    console.print(f"best design (trial {result.best_trial.number}) at a buildable precision: "
                  f"objective {', '.join(f'{v:.4g}' for v in result.objective)} as written "
                  f"({', '.join(f'{v:.4g}' for v in result.best_trial.values)} unrounded)")
    for p in space.params:
        if p.path in result.values:
            console.print(f"  {p.path} = {p.text(result.values[p.path])}")
    if not args.report_only:
        before = evaluate(design, solver=solver)
        out.write(band_table_text(before, f"before: {design.name} as written"))
    out.write(band_table_text(result.evaluation, f"after: best of study "
                              f"'{opts.study_name}' (trial {result.best_trial.number})"))
    console.print(f"best design: {opts.out / 'best.yaml'}; leaderboard: "
                  f"{opts.out / 'leaderboard.csv'}; run folder: {opts.out}")
    run.write_search_manifest(args.design, opts, shown, outcome, stopped=why,
                              started=started, argv=["necflow", *sys.argv[1:]])
    return {"stopped by SIGINT": INTERRUPTED, "stopped by SIGTERM": TERMINATED}.get(why, OK)
