"""``necflow report``: rebuild the decision report of a run folder (no solve)."""

from __future__ import annotations

from pathlib import Path

from necflow.cli.status import OK
from necflow.report.decision import write_report


def cmd_report(args) -> int:

    print(f"report: {write_report(Path(args.run_dir))}")
    return OK
