"""``necflow report``: rebuild the decision report of a run folder (no solve)."""

from __future__ import annotations

from pathlib import Path

from necflow.cli import OK


def add_parsers(sub) -> None:
    """Add ``report`` to the command's sub-parsers."""
    r = sub.add_parser("report", help="rebuild report.html of a run folder (no solve)")
    r.add_argument("run_dir", metavar="RUN_DIR", help="run folder written by evaluate")
    r.set_defaults(func=cmd_report)


def cmd_report(args) -> int:
    from necflow.report.decision import write_report  # lazy: start-up time

    print(f"report: {write_report(Path(args.run_dir))}")
    return OK
