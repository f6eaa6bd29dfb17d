"""Glue: the decision report's files in a run folder.

``write_report_inputs`` (before the manifest) writes ``report_data.json``
(computed by the chain's report stage, :func:`necflow.chain.report_data`)
and the two ``.s1p`` files of an evaluation; ``write_report`` (after it)
renders ``report.html`` from the folder alone.  Nothing here solves.
"""

from __future__ import annotations

from pathlib import Path

from necflow.report.html_report import write_report
from necflow.report.report_data import write_report_data
from necflow.report.touchstone import write_s1p

__all__ = ["write_report", "write_report_inputs"]


def write_report_inputs(evaluation, report_doc: dict, folder) -> dict[str, Path]:
    """Write ``report_data.json`` (``report_doc``), ``feedpoint.s1p`` and
    ``radio.s1p``."""
    folder = Path(folder)
    paths = {"report_data": write_report_data(report_doc, folder)}
    s = evaluation.system
    paths.update(write_s1p(folder, evaluation.frequency_hz, s.z_feedpoint, s.z_radio,
                           evaluation.design.radio.impedance))
    return paths
