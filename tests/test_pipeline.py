"""The pipeline around the engine: bookkeeping of results.json, band summaries.

The antenna physics has its own reference tests (tests/engine); here a smooth
stand-in solver keeps these checks fast and independent of PyNEC.
"""

from __future__ import annotations

import numpy as np
import pytest

from necflow.chain import Chain, band_points, evaluate, load_design, load_design_text
from necflow.config.schema import Design
from necflow.report import results
from tests.conftest import CONFIGS, dipole_like_solver

DESIGN = """
name: bookkeeping
bands: [80m, 40m, 20m, {name: net, low: 7.05 MHz, high: 7.15 MHz, points: 5}]
antenna: {shape: doublet, span: 30 m, height: 10 m}
ground: {model: free-space}
feed:
  - {id: ladder, line: window-450, length: 10 m}
  - {id: cap, series: capacitor, value: 400 pF}
  - {id: balun, transformer: balun, ratio: "4:1", loss: 0.2}
  - {id: coax, line: rg-213, length: 30 m}
radio: {impedance: 50 ohm, power: 100 W}
"""


@pytest.fixture(scope="module")
def evaluation():
    return evaluate(load_design_text(DESIGN), solver=dipole_like_solver)


def test_points_are_band_after_band(evaluation):
    f, idx = band_points(evaluation.bands)
    assert np.array_equal(f, evaluation.frequency_hz)
    assert list(np.unique(idx)) == [0, 1, 2, 3]
    assert np.all(np.diff(idx) >= 0)


def test_overlapping_bands_solve_each_frequency_once():
    calls = []

    def counting(model, f):
        calls.append(np.array(f))
        return dipole_like_solver(model, f)

    design = Design(name="overlap", ground={"model": "free-space"}, feed=[],
                    antenna={"shape": "doublet", "span": "20 m", "height": "10 m"},
                    bands=[{"name": "a", "low": "7.0 MHz", "high": "7.2 MHz", "points": 3},
                           {"name": "b", "low": "7.1 MHz", "high": "7.2 MHz", "points": 2}])
    chain = Chain(design, counting)
    z = chain.antenna
    assert chain.frequency_hz.size == 5
    assert len(calls) == 1 and len(calls[0]) == 3
    assert z[1] == z[3] and z[2] == z[4]


def test_results_contract_keys(evaluation):
    doc = results.results_document(evaluation, config_sha256="0" * 64)
    for key in ("design", "necflow_version", "config_sha256", "points", "bands"):
        assert key in doc
    for p in doc["points"]:
        assert set(results.POINT_KEYS) <= set(p)
        assert set(p["loss_db"]) == {"mismatch", "ladder", "cap", "balun", "coax", "total"}
        assert set(p["stress"]) == {"ladder", "cap", "balun", "coax"}
        for st in p["stress"].values():
            assert {"v_peak", "i_rms", "p_diss_w"} <= set(st)
    for b in doc["bands"]:
        assert set(results.BAND_KEYS) <= set(b)


def test_loss_terms_add_up_and_match_delivered_fraction(evaluation):
    # The acceptance rule of results.json: terms sum to total within 0.01 dB and
    # delivered_fraction = 10^(-total/10).  Exact bookkeeping should do far better.
    doc = results.results_document(evaluation, config_sha256="0" * 64)
    for p in doc["points"]:
        terms = sum(v for k, v in p["loss_db"].items() if k != "total")
        assert terms == pytest.approx(p["loss_db"]["total"], abs=1e-6)
        assert p["delivered_fraction"] == pytest.approx(10 ** (-p["loss_db"]["total"] / 10),
                                                        rel=1e-9)


def test_band_summary_matches_points(evaluation):
    for i, b in enumerate(evaluation.band_summaries()):
        sel = evaluation.band_index == i
        swr = evaluation.system.swr[sel]
        assert b.swr_min == pytest.approx(swr.min())
        assert b.swr_max == pytest.approx(swr.max())
        assert b.swr_low_edge == pytest.approx(swr[0])
        assert evaluation.bands[i].low_hz <= b.frequency_swr_min_hz <= evaluation.bands[i].high_hz


def test_csv_has_a_row_per_point(evaluation):
    doc = results.results_document(evaluation, config_sha256="0" * 64)
    lines = results.csv_text(doc).strip().splitlines()
    assert len(lines) == 1 + len(doc["points"])
    assert "loss_total_db" in lines[0] and "cap_v_peak" in lines[0]


def test_every_shipped_config_loads():
    files = sorted(CONFIGS.glob("*.yaml"))
    assert len(files) >= 3
    for path in files:
        assert load_design(path).name
