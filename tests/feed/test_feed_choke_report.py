"""A choke in a design, through evaluation, the report data and the HTML page.

The pipeline around the engine is exercised with the stand-in solver of
tests/conftest.py (no antenna physics is claimed); what is checked is that
a choke element changes none of the ideal-line results (an identity to the
differential mode) and that the report, the stress table and the
alternatives carry it without breaking.
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from necflow.chain import evaluate, load_design_text
from necflow.chain.report import build_report_data
from necflow.engine.far_field import FarField
from necflow.errors import NecflowWarning
from necflow.report.html_report import write_report
from necflow.report.report_data import write_report_data
from necflow.report.results import results_document, write_json
from tests.conftest import demo_text_without_route, dipole_like_solver

CHOKE = "  - {id: cm, choke: {catalog: toroid-coax-low-mix}, power_rating: 1 kW}\n"
ALTERNATIVE = """report:
  alternatives:
    - name: beads at the feedpoint
      feed:
        - {id: beads, choke: {catalog: beads-on-coax}}
        - {id: run, line: rg-213, length: 35 m}
"""


def flat_far_field(model, f, angles):
    """An invented pattern of 5 dBi everywhere (stands in for the engine)."""
    el = np.radians(np.arange(0, 181.0))
    az = np.radians(np.arange(0, 360.0, 2))
    return [FarField(float(fi), math.pi / 2, el, np.full(el.size, 5.0), math.pi / 2,
                     np.full(el.size, 5.0), 5.0, math.radians(30), math.radians(30), az,
                     np.full(az.size, 5.0), np.asarray(angles), np.full(len(angles), 5.0), 0.8)
            for fi in f]


def _demo_texts() -> tuple[str, str]:
    text = demo_text_without_route()
    text = text.replace("bands: [80m, 40m, 20m, 17m, 10m]", "bands: [40m, 20m]")
    anchor = "  - {id: coax, line: rg-213"
    assert anchor in text
    return text, text.replace(anchor, CHOKE + anchor, 1) + ALTERNATIVE


def test_a_choke_in_the_demo_changes_no_result_and_reaches_the_report(tmp_path):
    plain_text, choke_text = _demo_texts()
    plain = evaluate(load_design_text(plain_text), solver=dipole_like_solver)
    ev = evaluate(load_design_text(choke_text), solver=dipole_like_solver)
    # the ideal-line results are those of the design without the choke
    np.testing.assert_array_equal(ev.system.z_radio, plain.system.z_radio)
    np.testing.assert_array_equal(ev.system.loss_db["total"], plain.system.loss_db["total"])
    assert ev.system.stress["cm"].kind == "choke"
    np.testing.assert_allclose(ev.system.loss_db["cm"], 0.0, atol=1e-12)

    with warnings.catch_warnings():
        warnings.simplefilter("error", NecflowWarning)
        doc = build_report_data(ev, far_field_fn=flat_far_field,
                                agt_fn=lambda m, f: np.full(len(f), 2.0))
    row = next(r for r in doc["stress"] if r["id"] == "cm")
    assert row["kind"] == "choke"
    assert "power_rating" in row["margin"] and "voltage rating" in " ".join(row["notes"])
    names = [a["name"] for a in doc["alternatives"]]
    assert "beads at the feedpoint" in names
    ours = next(a for a in doc["alternatives"] if a["name"] == "as designed")
    assert "cm: common-mode choke" in ours["chain"]

    write_json(results_document(ev, config_sha256="0" * 64), tmp_path / "results.json")
    write_report_data(doc, tmp_path)
    html = write_report(tmp_path).read_text(encoding="utf-8")
    assert "<td class=\"l\">cm</td><td class=\"l\">choke</td>" in html
    assert "beads at the feedpoint" in html
