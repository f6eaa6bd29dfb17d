"""``necflow report``: rebuild the decision report of a run folder (no solve)."""

from __future__ import annotations

import sys
from pathlib import Path

from necflow import fileio
from necflow.cli.progress import steps_of
from necflow.cli.status import OK
from necflow.report.decision import write_report


def cmd_report(args) -> int:
    steps = steps_of(args, "report", sys.stderr)
    folder = Path(args.run_dir)
    text = f"rendering report.html of {folder} (figures and tables)"
    if (folder / "results.json").is_file():
        steps(0, None, text)
    else:
        steps.note(text)          # not a run folder: the error is the only line
    path = write_report(folder)
    steps.close()
    if getattr(args, "json", False):
        sys.stdout.write(fileio.json_text({"run_folder": str(folder), "report": str(path)}))
    else:
        print(f"report: {path}")
    return OK
