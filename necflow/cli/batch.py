"""``necflow batch``: a matrix of variants of a design, evaluated or optimised."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import TextIO

from rich.console import Console
from rich.table import Table

from necflow import fileio
from necflow.cli.optimize import check_workers
from necflow.cli.progress import steps_of
from necflow.cli.status import OK
from necflow.optimize.batch import run_batch, summary_rows


def cmd_batch(args) -> int:
    return run_batch_command(args, sys.stdout)


def run_batch_command(args, out: TextIO) -> int:
    """Run ``necflow batch`` with its parsed arguments; prints the summary
    table (or with ``--json`` the summary as JSON) to ``out``."""
    check_workers(args.workers, getattr(args, "force_workers", False))
    steps = steps_of(args, "batch", sys.stderr)
    steps.note(f"reading {args.batch_file}")
    spec, summaries, skipped, folder = run_batch(
        args.batch_file, Path(args.out) if args.out else None, workers=args.workers,
        storage=args.storage, on_step=steps)
    steps.close()
    files = {"folder": str(folder), "summary_csv": str(folder / "summary.csv"),
             "summary_png": str(folder / "summary.png"),
             "cells": {s["cell"]: str(folder / "cells" / s["cell"]) for s in summaries}}
    if getattr(args, "json", False):
        out.write(fileio.json_text({"batch": spec.name, "mode": spec.mode,
                                    "matrix": spec.matrix, "cells": summaries,
                                    "skipped": skipped, "files": files}))
        return OK
    head, rows = summary_rows(spec, summaries)
    n = len(spec.matrix) + 4  # cell, matrix keys, cost, worst SWR, loss (bands: summary.csv)
    head, rows = head[:n], [r[:n] for r in rows]
    rows = [[r[0][:3], *r[1:]] for r in rows]
    t = Table(title=f"batch {spec.name} ({spec.mode}); {len(skipped)} cell(s) done before, "
              "skipped", title_justify="left")
    for h in head:
        t.add_column(h, justify="left" if h == "cell" else "right")
    for r in rows:
        t.add_row(*(f"{v:.4g}" if isinstance(v, float) else str(v) for v in r))
    console = Console(file=out, width=120, highlight=False, color_system=None)
    console.print(t)
    console.print(f"batch folder: {folder}")
    console.print(f"summary: {files['summary_csv']} (every band), {files['summary_png']}")
    return OK
