"""Report data without the engine: stand-in far fields, the average gain
warning, system gain per band and the JSON round trip."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest

from necflow.chain import evaluate, load_design_text
from necflow.chain.report import build_report_data
from necflow.engine.far_field import FarField
from necflow.errors import NecflowWarning
from necflow.report.report_data import read_report_data, write_report_data
from tests.conftest import demo_text_without_route, dipole_like_solver


def flat_far_field(model, f, angles):
    """An invented pattern of 5 dBi everywhere (stands in for the engine)."""
    el = np.radians(np.arange(0, 181.0))
    az = np.radians(np.arange(0, 360.0, 2))
    return [FarField(float(fi), math.pi / 2, el, np.full(el.size, 5.0), math.pi / 2,
                     np.full(el.size, 5.0), 5.0, math.radians(30), math.radians(30), az,
                     np.full(az.size, 5.0), np.asarray(angles), np.full(len(angles), 5.0), 0.8)
            for fi in f]


@pytest.fixture(scope="module")
def evaluation():
    return evaluate(load_design_text(demo_text_without_route()), solver=dipole_like_solver)


def test_system_gain_is_gain_less_loss_at_band_centre(evaluation, tmp_path):
    with warnings.catch_warnings():
        warnings.simplefilter("error", NecflowWarning)
        doc = build_report_data(evaluation, far_field_fn=flat_far_field,
                                agt_fn=lambda m, f: np.full(len(f), 2.01))
    for alt in doc["alternatives"]:
        for b in alt["bands"]:
            np.testing.assert_allclose(b["system_gain_dbi"], 5.0 - b["loss_db"]["total"],
                                       rtol=1e-12)
    write_report_data(doc, tmp_path)
    assert read_report_data(tmp_path) == doc


def test_average_gain_off_by_more_than_a_few_percent_warns(evaluation):
    # Common practice: 2.0 over ground within a few percent; 1.8 is 10 % off.
    with pytest.warns(NecflowWarning, match="average gain test"):
        doc = build_report_data(evaluation, far_field_fn=flat_far_field,
                                agt_fn=lambda m, f: np.full(len(f), 1.8))
    assert not any(r["average_gain_ok"] for r in doc["far_field"])


def test_exposure_and_efficiency_conventions_in_the_report_data(evaluation):
    """The demo is over a ground: the pattern's 5 dBi already holds the ground
    reflection, so the distance is the plain far-field one.  By hand at the
    40 m centre (7.15 MHz): limit 180 / 7.15^2 mW/cm^2 = 35.21 W/m^2,
    G = 10^0.5 = 3.1623, R = sqrt(100 * 3.1623 / (4 pi * 35.21)) = 0.8454 m
    (47 CFR 1.1310 Table 1; far-field S = P G / (4 pi R^2)).  The efficiency
    is the integrated 0.8 over the stand-in average gain test's 2.01/2:
    0.8 / 1.005 = 0.79602 (hand division)."""
    doc = build_report_data(evaluation, far_field_fn=flat_far_field,
                            agt_fn=lambda m, f: np.full(len(f), 2.01))
    forty = next(x for x in doc["exposure"] if x["band"] == "40m")
    assert forty["reflection_factor"] == 1.0
    p = doc["radio_power_w"] * doc["exposure_duty"]
    limit = 180.0 / (forty["frequency_hz"] / 1e6) ** 2 * 10.0
    assert forty["distance_m"] == pytest.approx(
        math.sqrt(p * 10 ** 0.5 / (4 * math.pi * limit)), rel=1e-12)
    assert forty["frequency_hz"] == pytest.approx(7.15e6)
    assert forty["distance_m"] == pytest.approx(0.8454, rel=1e-3)
    assert "already holds the ground reflection" in doc["exposure_basis"]
    for r in doc["far_field"]:
        assert r["efficiency_integrated"] == 0.8
        assert r["efficiency"] == pytest.approx(0.79602, rel=1e-4)
    assert "lossless copy" in doc["efficiency_convention"]
