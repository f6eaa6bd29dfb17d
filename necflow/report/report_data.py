"""``report_data.json`` of a run folder: written and read back.

The data are computed by the chain's report stage
(:func:`necflow.chain.report.build_report_data`); the report only renders
them.
"""

from __future__ import annotations

import json
from pathlib import Path

from necflow import fileio
from necflow.chain.report import FILE_NAME, FORMAT_VERSION
from necflow.errors import NecflowError

__all__ = ["FILE_NAME", "FORMAT_VERSION", "write_report_data", "read_report_data"]


def write_report_data(doc: dict, folder) -> Path:
    path = Path(folder) / FILE_NAME
    fileio.write_json(path, doc)
    return path


def read_report_data(folder) -> dict:
    """Read ``report_data.json`` of a run folder.

    Raises
    ------
    NecflowError
        When it is missing, unreadable or of another format version.
    """
    path = Path(folder) / FILE_NAME
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise NecflowError(f"{path} is missing: run 'necflow evaluate' to make the run "
                           "folder again") from None
    except (OSError, ValueError) as exc:
        raise NecflowError(f"cannot read {path}: {exc}") from None
    if doc.get("format_version") != FORMAT_VERSION:
        raise NecflowError(f"{path} has format version {doc.get('format_version')}; this "
                           f"necflow reads version {FORMAT_VERSION}")
    return doc
