"""Glue of ``necflow optimize``: arguments -> study -> outputs -> text.

Called by :mod:`necflow.cli` with the streams to write to; raises
:class:`necflow.errors.NecflowError` for everything a user can cause.
"""

from __future__ import annotations

import os
import re
from pathlib import Path
from typing import TextIO

from necflow.errors import ConfigError

DEFAULT_TRIALS = 100
WORKERS_PER_CORE = 4
MAX_SEED = 2**32 - 1     # numpy's seed range, which the samplers use


def default_out(name: str) -> Path:
    """``runs/<name>-study``: a stable folder, so the same command resumes."""
    safe = re.sub(r"[^A-Za-z0-9_.-]+", "-", name).strip("-") or "design"
    return Path("runs") / f"{safe}-study"


def options_from_args(args, design):
    from necflow.optimize.study import StudyOptions, parse_duration

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
        from necflow.optimize.storage import check_storage_url, storage_password
        check_storage_url(args.storage)
        storage_password(password_env)
    return StudyOptions(out=out, study_name=args.study or design.name, trials=trials,
                        timeout_s=timeout, workers=args.workers, storage=args.storage,
                        seed=args.seed, cache=not getattr(args, "no_cache", False),
                        storage_password_env=password_env)


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


def start_trial(study):
    """The queued starting design's trial, if it completed."""
    from optuna.trial import TrialState

    for t in study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)):
        if t.user_attrs.get("necflow.start"):
            return t
    return None


def run_optimize(args, out: TextIO, err: TextIO, solver=None) -> int:
    import optuna
    from rich.console import Console

    from necflow.config.resolve import config_sha256
    from necflow.optimize.outputs import band_table_text, write_outputs
    from necflow.optimize.progress import StudyProgress
    from necflow.optimize.space import load_study_design
    from necflow.optimize.storage import describe, redact_url
    from necflow.optimize.study import counted_trials, open_study, run_study
    from necflow.chain import evaluate
    from necflow.report import run_folder

    optuna.logging.set_verbosity(optuna.logging.WARNING)
    started = run_folder.now_utc()
    design, space = load_study_design(args.design)
    from necflow.optimize.robust import check_method
    check_method(design, getattr(args, "method", "trials"))  # before any storage is opened
    opts = options_from_args(args, design)
    shown = describe(opts.storage, opts.out)
    opts.out.mkdir(parents=True, exist_ok=True)
    why = "report only"
    study = open_study(design, space, opts)  # storage and resume checks before any trial
    if not args.report_only:
        print(f"necflow: study '{opts.study_name}' in {shown}: {len(space.params)} "
              f"parameter(s), {opts.workers} worker(s)", file=err, flush=True)
        if getattr(args, "method", "trials") == "split":
            from necflow.optimize.split_command import run_split
            why = run_split(design, space, opts, study, err, solver=solver)
        else:
            progress = StudyProgress(err, opts.trials, opts.timeout_s, live=err.isatty())
            try:
                study, why = run_study(design, space, opts, solver=solver, on_trial=progress)
            finally:
                progress.close()
    counted = counted_trials(study)
    states = [t.state.name for t in study.get_trials(deepcopy=False)]
    result = write_outputs(study, design, space, opts.out, storage_shown=shown, solver=solver)
    first = start_trial(study)
    console = Console(file=out, width=120, highlight=False, color_system=None)
    console.print(f"study '{opts.study_name}': {len(counted)} trial(s) counted "
                  f"({states.count('COMPLETE')} complete, {states.count('FAIL')} failed); "
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
    run_folder.write_manifest(
        opts.out, config_sha256=config_sha256(Path(args.design)), config_path=str(args.design),
        started=started, finished=run_folder.now_utc(),
        argv=[redact_url(a) for a in ["necflow", *_argv()]],
        extra={"study": opts.study_name, "storage": shown, "stopped": why,
               "trials_counted": len(counted), "best_trial": result.best_trial.number,
               "best_values": list(result.best_trial.values)})
    return {"stopped by SIGINT": 130, "stopped by SIGTERM": 143}.get(why, 0)


def _argv() -> list[str]:
    import sys
    return sys.argv[1:]
