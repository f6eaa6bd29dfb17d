"""The best design is written at a buildable precision, and the cost
reported is that of the design as written."""

from __future__ import annotations

import io
import math
from types import SimpleNamespace

import numpy as np
import pytest
import yaml

from necflow import units
from necflow.chain import evaluate, load_design
from necflow.config.fields import Param
from tests.conftest import dipole_like_solver
from tests.optimize.helpers import STUDY, write_study


@pytest.mark.parametrize("param, value, expected", [
    (Param("antenna.span", "length", 22.0, 40.0), 41.5574813021151 - 2.0, 39.557),
    (Param("antenna.span", "length", 22.0, 40.0), 39.99999, 40.0),
    (Param("feed.ladder.length", "length", 5.0, 20.0, step=0.01), 11.234567, 11.23),
    (Param("feed.cap.value", "capacitance", 100e-12, 2e-9, log=True), 4.71829e-10, 4.72e-10),
    (Param("feed.coil.value", "inductance", 1e-7, 1e-4), 2.2449e-06, 2.24e-06),
    (Param("feed.l.velocity_factor", None, 0.6, 0.95), 0.873456, 0.873),
])
def test_buildable_precision(param, value, expected):
    """1 mm for lengths, the step where there is one, three significant
    figures otherwise (hand-rounded expectations)."""
    assert param.buildable(value) == pytest.approx(expected, rel=1e-12, abs=1e-15)


def _cost_by_hand(results: dict, limit: float, w: float = 0.1) -> float:
    """The README's cost formula, written out here: per point
    w ln(1 + exp((min(s, 1000) - L) / w)) + T, mean per band, mean of bands
    (all weights 1)."""
    by_band: dict[str, list[float]] = {}
    for p in results["points"]:
        s = min(p["swr"], 1000.0)
        term = w * math.log1p(math.exp((s - limit) / w))
        by_band.setdefault(p["band"], []).append(term + p["loss_db"]["total"])
    return float(np.mean([np.mean(v) for v in by_band.values()]))


def test_best_yaml_is_buildable_and_its_reported_cost_is_its_own(tmp_path):
    from necflow.cli.optimize import run_optimize

    text = STUDY.replace("feed.cap.value: {range: [100 pF, 2 nF], scale: log}",
                         "feed.cap.value: {range: [100 pF, 2 nF], scale: log}\n"
                         "goal: {swr_limit: 2.5}")
    design = write_study(tmp_path, text)
    out = tmp_path / "run"
    args = SimpleNamespace(design=str(design), trials=12, timeout=None, workers=1, storage=None,
                           storage_password_env=None, study=None, seed=3, out=str(out),
                           report_only=False, method="trials", no_cache=True,
                           force_workers=False)
    buf = io.StringIO()
    assert run_optimize(args, buf, io.StringIO(), solver=dipole_like_solver) == 0
    best = yaml.safe_load((out / "best.yaml").read_text())
    span = units.parse(best["antenna"]["span"], "length")
    assert span == pytest.approx(round(span, 3), abs=1e-12)          # whole millimetres
    cap = units.parse(best["feed"][1]["value"], "capacitance")
    assert cap == pytest.approx(float(f"{cap:.3g}"), rel=1e-12)      # three figures
    # The reported objective is the cost of best.yaml evaluated afresh,
    # computed here by the README formula from its own results.
    header = (out / "best.yaml").read_text().splitlines()[1]
    reported = float(header.split("as written: ")[1].split(" ")[0])
    fresh = evaluate(load_design(out / "best.yaml"), solver=dipole_like_solver)
    from necflow.report.results import results_document
    by_hand = _cost_by_hand(results_document(fresh, config_sha256=""), 2.5)
    assert reported == pytest.approx(by_hand, rel=1e-5)
    assert f"{reported:.4g}" in buf.getvalue()
