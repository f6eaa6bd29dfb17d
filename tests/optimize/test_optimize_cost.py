"""The cost function's terms on hand-computed cases.

The cost is defined in necflow/optimize/problem/cost.py (and the README "Cost"
section); these checks compute its terms by hand from that definition.
The softplus limits used below (ln 2 at 0, x for large x, e^x for very
negative x) are from Goodfellow, Bengio and Courville, *Deep Learning*,
MIT Press 2016, sec. 3.10.
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest

from necflow.config.schema import Design
from necflow.config.sections import CostSpec
from necflow.optimize.problem.cost import (
    SWR_CAP,
    combine_bands,
    horizontal_extent,
    point_cost,
    score,
    swr_penalty,
)

# Float64 arithmetic of a handful of logs and exps: 1e-12 relative is far
# above its round-off and far below any difference that matters.
REL = 1e-12


def test_penalty_at_the_limit_is_softness_ln2():
    assert swr_penalty(2.0, 2.0, 0.1) == pytest.approx(0.1 * math.log(2.0), rel=REL)
    assert swr_penalty(3.0, 3.0, 0.5) == pytest.approx(0.5 * math.log(2.0), rel=REL)


def test_penalty_well_above_the_limit_is_the_excess():
    # 0.1 ln(1 + e^30) = 3 + 0.1 ln(1 + e^-30): the second part is 9.4e-15
    assert swr_penalty(5.0, 2.0, 0.1) == pytest.approx(3.0 + 0.1 * math.log1p(math.exp(-30)),
                                                      rel=REL)


def test_penalty_well_below_the_limit_vanishes():
    # 0.1 ln(1 + e^-10) = 4.5398899e-6
    assert swr_penalty(1.0, 2.0, 0.1) == pytest.approx(0.1 * math.log1p(math.exp(-10.0)),
                                                      rel=REL)
    assert swr_penalty(1.0, 2.0, 0.1) < 5e-6


def test_penalty_caps_swr_and_survives_infinity():
    assert swr_penalty(np.inf, 2.0, 0.1) == pytest.approx(SWR_CAP - 2.0, rel=REL)
    assert swr_penalty(1e9, 2.0, 0.1) == swr_penalty(SWR_CAP, 2.0, 0.1)


def test_penalty_rises_with_swr():
    s = np.linspace(1.0, 6.0, 501)
    assert np.all(np.diff(swr_penalty(s, 2.0, 0.1)) > 0)


def test_point_cost_weights_each_term():
    # SWR 4 against limit 2 (softness 0.1): penalty 2 + 0.1 ln(1 + e^-20) ~ 2.0
    pen = 2.0 + 0.1 * math.log1p(math.exp(-20.0))
    got = point_cost(4.0, 1.5, 2.0, swr_weight=3.0, loss_weight=0.5, softness=0.1)
    assert got == pytest.approx(3.0 * pen + 0.5 * 1.5, rel=REL)


def test_combine_weighted_mean_and_worst():
    assert combine_bands([1.0, 3.0], [1.0, 3.0], "mean") == pytest.approx(2.5, rel=REL)
    assert combine_bands([1.0, 3.0], [1.0, 0.0], "worst") == 1.0
    assert combine_bands([1.0, 3.0, 2.0], [1.0, 1.0, 1.0], "worst") == 3.0
    with pytest.raises(ValueError):
        combine_bands([1.0], [0.0])


def _evaluation(swr, loss, band_index, weights, limit=2.0, span=30.0):
    bands = [SimpleNamespace(name=f"b{i}", weight=w) for i, w in enumerate(weights)]
    design = Design(name="cost", bands=["40m"], ground={"model": "free-space"}, feed=[],
                    antenna={"shape": "doublet", "span": span, "height": 10.0},
                    goal={"swr_limit": limit})
    system = SimpleNamespace(swr=np.asarray(swr, float), loss_db={"total": np.asarray(loss)})
    return SimpleNamespace(design=design, bands=bands, system=system,
                           band_index=np.asarray(band_index))


def test_score_terms_per_band_by_hand():
    # band 0: SWR 1 and 1 (penalty ~0), losses 0.5 and 1.5 dB -> cost ~1.0
    # band 1: SWR 5 and 3 (penalties ~3 and ~1), losses 2 and 4 dB -> cost ~5.0
    ev = _evaluation([1.0, 1.0, 5.0, 3.0], [0.5, 1.5, 2.0, 4.0], [0, 0, 1, 1], [1.0, 3.0])
    sc = score(ev, CostSpec(swr_softness=0.01))
    tiny = 0.01 * math.log1p(math.exp(-100.0))     # below-limit penalty, 3.7e-46
    assert sc.bands["b0"]["swr_term"] == pytest.approx(tiny, abs=1e-40)
    assert sc.bands["b0"]["loss_db"] == pytest.approx(1.0, rel=REL)
    assert sc.bands["b1"]["swr_term"] == pytest.approx(2.0, rel=1e-9)   # (3 + 1) / 2
    assert sc.bands["b1"]["cost"] == pytest.approx(5.0, rel=1e-9)       # 2 + (2 + 4) / 2
    assert sc.bands["b1"]["swr_max"] == 5.0
    assert sc.cost == pytest.approx((1.0 * 1.0 + 3.0 * 5.0) / 4.0, rel=1e-9)
    assert sc.worst_swr == 5.0
    assert sc.loss_db == pytest.approx((1.0 * 1.0 + 3.0 * 3.0) / 4.0, rel=REL)
    assert sc.values == (sc.cost,)


def test_score_worst_band_and_objectives():
    ev = _evaluation([1.0, 1.0, 5.0, 3.0], [0.5, 1.5, 2.0, 4.0], [0, 0, 1, 1], [1.0, 3.0])
    spec = CostSpec(combine="worst", swr_softness=0.01, objectives=["worst_swr", "loss_db",
                                                                     "span"])
    sc = score(ev, spec)
    assert sc.cost == pytest.approx(5.0, rel=1e-9)
    assert sc.values == (5.0, pytest.approx(2.5, rel=REL), 30.0)


def test_zero_weight_band_is_left_out_of_worst_swr():
    ev = _evaluation([1.5, 9.0], [1.0, 1.0], [0, 1], [1.0, 0.0])
    assert score(ev, CostSpec()).worst_swr == 1.5


def test_horizontal_extent_of_an_inverted_v():
    # legs of 10 m dropping 6 m: each reaches sqrt(100 - 36) = 8 m out
    d = Design(name="v", bands=["40m"], ground={"model": "free-space"}, feed=[],
               antenna={"shape": "inverted-v", "leg": 10.0, "apex_height": 12.0,
                        "end_height": 6.0})
    assert horizontal_extent(d) == pytest.approx(16.0, rel=REL)


def test_unmatched_points_add_their_weight_by_hand():
    # A tuner that cannot match at the second point of band 0: that point's
    # cost gains u = 10 (cost.unmatched_weight); SWR and loss as given (the
    # chain's SWR at the radio through the tuner and its total loss).
    from necflow.analysis.powerflow import RelayStress
    ev = _evaluation([1.0, 1.0, 1.0, 1.0], [0.5, 1.5, 2.0, 4.0], [0, 0, 1, 1], [1.0, 1.0])
    net = SimpleNamespace(can_match=np.array([True, False, True, False]))
    ev.system.tuners = {"t": net}
    # the tuner is switched out on the last point: its "cannot match" there
    # does not count (it is not in circuit)
    ev.system.relays = {"t": RelayStress("t", np.array([0, 0, 0, 1], bool),
                                         np.array([0, 0, 0, 1], bool), None, None, 2)}
    sc = score(ev, CostSpec(swr_softness=0.01, unmatched_weight=10.0))
    tiny = 0.01 * math.log1p(math.exp(-100.0))
    assert sc.bands["b0"]["cost"] == pytest.approx((0.5 + 1.5 + 10.0) / 2 + tiny, rel=1e-12)
    assert sc.bands["b1"]["cost"] == pytest.approx((2.0 + 4.0) / 2 + tiny, rel=1e-12)
    assert sc.cost == pytest.approx((6.0 + 3.0) / 2 + tiny, rel=1e-12)
    # weight 0 leaves the cost as without the term
    assert score(ev, CostSpec(swr_softness=0.01, unmatched_weight=0.0)).bands["b0"]["cost"] \
        == pytest.approx(1.0 + tiny, rel=1e-12)
