"""Glue: the decision report's files in a run folder.

``write_report_inputs`` (before the manifest) writes ``report_data.json``
and the two ``.s1p`` files of an evaluation; ``write_report`` (after it)
renders ``report.html`` from the folder alone.  ``necflow evaluate`` calls
both; a study can call them for its best design's folder and pass its own
folder as ``study_dir`` so the report shows the optimised alternative.
"""

from __future__ import annotations

from pathlib import Path

from necflow.report.html_report import write_report
from necflow.report.report_data import build_report_data, write_report_data
from necflow.report.touchstone import write_s1p

__all__ = ["write_report", "write_report_inputs"]


def write_report_inputs(evaluation, folder, *, config_sha256: str = "",
                        study_dir=None) -> dict[str, Path]:
    """Compute the report data (far field included: the engine runs here)
    and write ``report_data.json``, ``feedpoint.s1p`` and ``radio.s1p``."""
    folder = Path(folder)
    doc = build_report_data(evaluation, config_sha256=config_sha256, study_dir=study_dir)
    paths = {"report_data": write_report_data(doc, folder)}
    s = evaluation.system
    paths.update(write_s1p(folder, evaluation.frequency_hz, s.z_feedpoint, s.z_radio,
                           evaluation.design.radio.impedance))
    return paths
