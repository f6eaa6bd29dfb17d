"""Touchstone round trip through scikit-rf (no engine: a stand-in antenna)."""

from __future__ import annotations

import numpy as np
import pytest
import skrf

from necflow.chain import evaluate, load_design
from necflow.report.results import results_document
from necflow.report.touchstone import write_from_results, write_s1p
from tests.conftest import CONFIGS, dipole_like_solver


def test_s1p_round_trip_matches_results(tmp_path):
    # S11 = (Z - Z0)/(Z + Z0) written at full precision and read back by
    # scikit-rf must give the impedances of results.json to 1e-6 relative
    # (the format's text round trip is exact to ~1e-15; 1e-6 is the spec).
    ev = evaluate(load_design(CONFIGS / "demo.yaml").model_copy(update={"route": None}),
                  solver=dipole_like_solver)   # the stand-in gives impedances only
    doc = results_document(ev, config_sha256="0" * 64)
    paths = write_from_results(tmp_path, doc)
    for pos, key in (("feedpoint", "z_feedpoint_ohm"), ("radio", "z_radio_ohm")):
        net = skrf.Network(str(paths[pos]))
        want = {p["frequency_hz"]: complex(*p[key]) for p in doc["points"]}
        assert net.f.tolist() == sorted(want)
        got = net.z[:, 0, 0]
        np.testing.assert_allclose(got, [want[f] for f in net.f], rtol=1e-6)
        assert np.allclose(net.z0, 50.0)


def test_overlapping_frequencies_are_written_once_and_sorted(tmp_path):
    f = np.array([7.2e6, 7.0e6, 7.2e6])
    z = np.array([60 + 10j, 40 - 5j, 60 + 10j])
    paths = write_s1p(tmp_path, f, z, z, 75.0)
    net = skrf.Network(str(paths["radio"]))
    assert net.f.tolist() == [7.0e6, 7.2e6]
    np.testing.assert_allclose(net.z[:, 0, 0], [40 - 5j, 60 + 10j], rtol=1e-12)
    assert np.allclose(net.z0, 75.0)
    assert pytest.approx(float(net.z0[0, 0].real)) == 75.0
