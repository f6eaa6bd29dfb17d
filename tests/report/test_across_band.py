"""The far field across each band (``report.far_field: across``) in the
report data and the HTML: one entry per computed frequency, a table per band
with one row per entry, and the design's system gain at each frequency equal
to the antenna gain less the feed system's total loss there (results.json).

System gain = antenna power gain less the feed loss from the radio's
available power to the feedpoint: C. A. Balanis, Antenna Theory, 3rd ed.,
sec. 2.9 (power gain against input power).  The checks below are
consistency checks between the report's own documents (references.md
[derived] style): no published figure is claimed.
"""

from __future__ import annotations

import functools
import math
import re
import warnings

import numpy as np
import pytest

from necflow.chain import evaluate, load_design
from necflow.chain.report import build_report_data
from necflow.engine.far_field import FarField
from necflow.errors import NecflowWarning
from necflow.report.html_report import write_report
from necflow.report.report_data import write_report_data
from necflow.report.results import results_document, write_json
from tests.conftest import CONFIGS, design_of, dipole_like_solver

ACROSS_TABLE = re.compile(r'<div class="across"><h3>(.*?)</h3><table class="across">(.*?)'
                          r"</table>", re.S)


def sloped_far_field(model, f, angles):
    """An invented pattern whose gains change with frequency (stands in for
    the engine), so that a row paired with the wrong frequency shows."""
    el = np.radians(np.arange(0, 181.0))
    az = np.radians(np.arange(0, 360.0, 2))
    out = []
    for fi in f:
        g = 3.0 + 0.2 * fi / 1e6                               # dBi, invented
        at = g - np.arange(len(angles), dtype=float)
        out.append(FarField(float(fi), math.pi / 2, el, np.full(el.size, g), math.pi / 2,
                            np.full(el.size, g), g, math.radians(30), math.radians(30), az,
                            np.full(az.size, g), np.asarray(angles), at, 0.8))
    return out


def across(design):
    return design.model_copy(update={"report": design.report.model_copy(
        update={"far_field": "across"})})


def run_folder(evaluation, folder, **kw) -> tuple[dict, dict, str]:
    """results.json, report_data.json and report.html as evaluate leaves them
    (no manifest: the report is rebuilt from these files alone)."""
    res = results_document(evaluation, config_sha256="0" * 64)
    write_json(res, folder / "results.json")
    doc = build_report_data(evaluation, **kw)
    write_report_data(doc, folder)
    html = write_report(folder).read_text(encoding="utf-8")
    return res, doc, html


def check_across(res: dict, doc: dict, html: str, bands) -> None:
    labels = [e["label"] for e in doc["elevations"]]
    tables = ACROSS_TABLE.findall(html)
    assert [t[0] for t in tables] == [b.name for b in bands]
    for b, (_, table) in zip(bands, tables):
        recs = sorted((r for r in doc["far_field"] if r["band"] == b.name),
                      key=lambda r: r["frequency_hz"])
        # Edges and centre, as far_field_frequencies computes them.
        np.testing.assert_array_equal([r["frequency_hz"] for r in recs],
                                      [b.low_hz, 0.5 * (b.low_hz + b.high_hz), b.high_hz])
        rows = re.findall(r"<tr>(.*?)</tr>", table)
        assert len(rows) == 1 + len(recs)                       # header + one per frequency
        points = [p for p in res["points"] if p["band"] == b.name]
        for r, row in zip(recs, rows[1:]):
            # The loss at this frequency, by hand from results.json.  Every
            # band here has an odd number of points, so its centre is an
            # evaluated point up to rounding of the frequency grid: 1e-9
            # relative on the frequency, 1e-9 dB on the loss (the centre's
            # feedpoint impedance is interpolated at a frequency a few ulp
            # away from the evaluated one).
            p = next(p for p in points if math.isclose(p["frequency_hz"], r["frequency_hz"],
                                                       rel_tol=1e-9))
            loss = p["loss_db"]["total"]
            assert r["total_loss_db"] == pytest.approx(loss, abs=1e-9)
            np.testing.assert_allclose(r["system_gain_dbi"],
                                       np.asarray(r["gain_at_angles_dbi"]) - loss, atol=1e-9)
            cells = re.findall(r"<td[^>]*>(.*?)</td>", row)
            assert cells[0].startswith(f"{r['frequency_hz'] / 1e6:.3f}")
            # Shown to 0.1 dB: the page rounds what report_data holds.
            shown = [float(c) for c in cells[-len(labels):]]
            np.testing.assert_allclose(shown, np.round(r["system_gain_dbi"], 1), atol=1e-9)


@pytest.fixture(scope="module")
def demo():
    """The demo on two of its bands (fewer figures to draw)."""
    d = load_design(CONFIGS / "demo.yaml")
    # without its route: the stand-in solver gives impedances only
    return d.model_copy(update={"bands": d.bands[:2], "route": None})


def test_across_band_entries_table_and_system_gain(demo, tmp_path):
    design = across(demo).model_copy(update={"bands": [
        b.model_copy(update={"points": 5}) for b in demo.bands]})
    ev = evaluate(design, solver=dipole_like_solver)
    with warnings.catch_warnings():
        warnings.simplefilter("error", NecflowWarning)
        res, doc, html = run_folder(ev, tmp_path, far_field_fn=sloped_far_field,
                                    agt_fn=lambda m, f: np.full(len(f), 2.0))
    assert len(doc["far_field"]) == 3 * len(ev.bands)
    check_across(res, doc, html, ev.bands)
    # One plot per band besides the report's five (the wires, SWR, Smith
    # charts, loss budget, patterns).
    assert html.count("<img") == 5 + len(ev.bands)
    # The loss does change across a band, so the rows are not copies.
    losses = [r["total_loss_db"] for r in doc["far_field"]]
    assert np.ptp(losses) > 0.01


def test_centre_keeps_one_entry_per_band_and_no_across_section(demo, tmp_path):
    ev = evaluate(demo, solver=dipole_like_solver)
    _, doc, html = run_folder(ev, tmp_path, far_field_fn=sloped_far_field,
                              agt_fn=lambda m, f: np.full(len(f), 2.0))
    assert [r["band"] for r in doc["far_field"]] == [b.name for b in ev.bands]
    assert all(r["centre"] for r in doc["far_field"])
    assert "Across the bands" not in html and 'class="across"' not in html
    assert html.count("<img") == 5       # the wires, SWR, Smith, loss, patterns


@pytest.mark.engine
def test_across_band_with_the_engine(tmp_path):
    """A lossless-wire dipole over perfect ground, one band of three points,
    coarse angular steps: the engine's far field at the edges and centre."""
    from necflow.engine.far_field import far_field

    d = design_of({"shape": "doublet", "span": "10.4 m", "height": "10 m",
                   "wire": {"diameter": "2 mm", "material": "lossless"}},
                  ground={"model": "perfect"})
    d = across(d.model_copy(update={
        "bands": [d.bands[0].model_copy(update={"points": 3})],
        "feed": load_design(CONFIGS / "demo.yaml").feed[-1:]}))   # 25 m of RG-213
    ev = evaluate(d)
    coarse = functools.partial(far_field, average_step_deg=15.0, elevation_step_deg=5.0,
                               azimuth_step_deg=15.0)
    res, doc, html = run_folder(ev, tmp_path, far_field_fn=coarse,
                                agt_fn=lambda m, f: np.full(len(f), 2.0))
    assert len(doc["far_field"]) == 3
    check_across(res, doc, html, ev.bands)
