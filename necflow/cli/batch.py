"""``necflow batch``: a matrix of variants of a design, evaluated or optimised."""

from __future__ import annotations

import sys
from pathlib import Path
from typing import TextIO

from necflow.cli import OK
from necflow.cli.optimize import check_workers


def add_parsers(sub) -> None:
    """Add ``batch`` to the command's sub-parsers."""
    b = sub.add_parser("batch", help="evaluate or optimise a matrix of variants of a design")
    b.add_argument("study", help="batch file (YAML): base design, matrix of overrides, mode")
    b.add_argument("--workers", type=int, default=1, metavar="N",
                   help="cells run in parallel (default 1; at most 4 per core unless "
                   "--force-workers)")
    b.add_argument("--force-workers", action="store_true",
                   help="allow more than 4 workers per core")
    b.add_argument("--storage", metavar="URL", help="shared storage for optimised cells")
    b.add_argument("--out", metavar="DIR", help="batch folder (default runs/<batch>-batch)")
    b.set_defaults(func=cmd_batch)


def cmd_batch(args) -> int:
    return run_batch_command(args, sys.stdout)


def run_batch_command(args, out: TextIO) -> int:
    """Run ``necflow batch`` with its parsed arguments; prints the summary
    table to ``out``."""
    from rich.console import Console  # lazy: start-up time
    from rich.table import Table  # lazy: start-up time

    from necflow.optimize.batch import run_batch, summary_rows  # lazy: start-up time

    check_workers(args.workers, getattr(args, "force_workers", False))
    spec, summaries, skipped, folder = run_batch(
        args.study, Path(args.out) if args.out else None, workers=args.workers,
        storage=args.storage)
    head, rows = summary_rows(spec, summaries)
    n = len(spec.matrix) + 4  # cell, matrix keys, cost, worst SWR, loss (bands: summary.csv)
    head, rows = head[:n], [r[:n] for r in rows]
    rows = [[r[0][:3], *r[1:]] for r in rows]
    t = Table(title=f"batch {spec.name} ({spec.mode}); {len(skipped)} cell(s) done before, "
              "skipped", title_justify="left")
    for h in head:
        t.add_column(h, justify="left" if h == "cell" else "right")
    for r in rows:
        t.add_row(*map(str, r))
    console = Console(file=out, width=120, highlight=False, color_system=None)
    console.print(t)
    console.print(f"batch folder: {folder} (summary.csv with every band, summary.png)")
    return OK
