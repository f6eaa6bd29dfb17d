"""The run folder: everything one evaluation leaves behind.

``runs/<name>-<UTC timestamp>/`` holds ``design.resolved.yaml`` (every default
filled in, with units), ``manifest.json`` (versions, config hash, command
line, times), ``results.json``, ``results.csv``, ``swr.png`` and, with a
tuner in the chain, ``tuning.csv`` (the tuning chart).
"""

from __future__ import annotations

import platform
import re
import sys
from datetime import UTC, datetime
from importlib import metadata
from pathlib import Path

from necflow import __version__, fileio
from necflow.analysis.tuning import chart_csv
from necflow.config.resolve import config_sha256, resolved_yaml
from necflow.errors import ConfigError
from necflow.report import results
from necflow.report.decision import write_report, write_report_inputs
from necflow.report.plots import save_swr_png


def versions() -> dict[str, str]:
    """Versions of necflow and the libraries that shape its numbers."""
    out = {"necflow": __version__, "python": platform.python_version()}
    for dist in ("PyNEC", "numpy", "scipy", "optuna", "pydantic", "pint", "matplotlib"):
        try:
            out[dist] = metadata.version(dist)
        except metadata.PackageNotFoundError:
            out[dist] = "not installed"
    return out


def now_utc() -> datetime:
    return datetime.now(UTC)


def default_run_dir(name: str, base: Path = Path("runs"), when: datetime | None = None) -> Path:
    """``runs/<name>-YYYYmmdd-HHMMSS``, with a suffix if that folder exists."""
    stamp = (when or now_utc()).strftime("%Y%m%d-%H%M%S")
    safe = re.sub(r"[^A-Za-z0-9_.-]+", "-", name).strip("-.")[:60] or "design"
    path = base / f"{safe}-{stamp}"
    n = 1
    while path.exists():
        n += 1
        path = base / f"{safe}-{stamp}-{n}"
    return path


def write_manifest(folder: Path, *, config_sha256: str, config_path: str,
                   started: datetime, finished: datetime, argv: list[str] | None = None,
                   extra: dict | None = None) -> dict:
    doc = {
        "versions": versions(),
        "config_path": config_path,
        "config_sha256": config_sha256,
        "command": " ".join(argv if argv is not None else sys.argv),
        "started_utc": started.isoformat(timespec="seconds"),
        "finished_utc": finished.isoformat(timespec="seconds"),
        "seconds": round((finished - started).total_seconds(), 3),
    }
    doc.update(extra or {})
    fileio.write_json(folder / "manifest.json", doc)
    return doc


def write_run_folder(evaluation, report_doc: dict, folder: Path, *, config_path: str,
                     started: datetime, argv: list[str] | None = None,
                     extra_manifest: dict | None = None) -> dict:
    """Write every output of one evaluation into ``folder``.

    The one writer used by ``necflow evaluate`` and by studies for their best
    design: ``design.resolved.yaml``, ``results.json``/``.csv``, ``swr.png``,
    the report inputs (``report_doc`` as ``report_data.json``, computed by
    the chain's report stage, and the Touchstone files), ``manifest.json``
    and ``report.html``.  Nothing here solves.

    Returns the ``results.json`` document.
    """
    folder = Path(folder)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ConfigError(f"cannot create the run folder {folder}: {exc.strerror}",
                          field="--out") from None
    sha = config_sha256(Path(config_path))
    doc = results.results_document(evaluation, config_sha256=sha)
    fileio.write_text(folder / "design.resolved.yaml", resolved_yaml(evaluation.design))
    results.write_json(doc, folder / "results.json")
    fileio.write_text(folder / "results.csv", results.csv_text(doc))
    if doc.get("tuning"):
        d = evaluation.design
        fileio.write_text(folder / "tuning.csv", chart_csv(doc["tuning"], d.radio.power,
                                                           d.report.worst_case_power))
    save_swr_png(evaluation, folder / "swr.png")
    report_doc = {**report_doc, "config_sha256": sha}
    write_report_inputs(evaluation, report_doc, folder)
    write_manifest(folder, config_sha256=sha, config_path=str(config_path), started=started,
                   finished=now_utc(), argv=argv, extra=extra_manifest)
    write_report(folder)
    return doc
