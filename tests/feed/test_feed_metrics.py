"""Match figures against the project's reference values."""

from __future__ import annotations

import numpy as np
import pytest

from necflow.feed import metrics


@pytest.mark.parametrize("s,rl,ml", [
    # [derived] from the Pozar formulas (Microwave Engineering 4th ed., ch. 2):
    # SWR 1.5 / 2 / 3 -> return loss 13.98 / 9.54 / 6.02 dB, mismatch loss
    # 0.177 / 0.512 / 1.249 dB.  Tolerance: half a unit of the last quoted digit.
    (1.5, 13.98, 0.177), (2.0, 9.54, 0.512), (3.0, 6.02, 1.249),
])
def test_return_and_mismatch_loss_for_swr(s, rl, ml):
    g = (s - 1) / (s + 1)
    assert float(metrics.return_loss_db(g)) == pytest.approx(rl, abs=0.005)
    assert float(metrics.mismatch_loss_db(g)) == pytest.approx(ml, abs=0.0005)
    assert float(metrics.swr(g)) == pytest.approx(s, rel=1e-12)


def test_reflection_coefficient_and_swr_of_loads():
    # Pozar, Microwave Engineering 4th ed., eq. (2.35): a 150-ohm load on
    # 50 ohm reflects 0.5 (SWR 3); a 25-ohm load reflects -1/3 (SWR 2).
    g = metrics.reflection_coefficient(np.array([150.0, 25.0, 50.0, 1e-12j]), 50.0)
    np.testing.assert_allclose(g[:3], [0.5, -1 / 3, 0.0], atol=1e-15)
    np.testing.assert_allclose(metrics.swr(g[:3]), [3.0, 2.0, 1.0], rtol=1e-12)
    assert np.isinf(metrics.swr(g[3:]))  # a pure reactance reflects everything


@pytest.mark.parametrize("ml,s_load,total,s_in", [
    # [derived] worked numbers from the total-loss formula (from memory of
    # the ARRL Antenna Book, transmission-line chapter), as in the reference
    # values; tolerance half a unit of the last quoted digit.
    (1.0, 3.0, 1.504, 2.318), (0.5, 10.0, 2.012, 6.386), (2.0, 5.0, 3.707, None),
])
def test_total_line_loss_worked_numbers(ml, s_load, total, s_in):
    g = (s_load - 1) / (s_load + 1)
    assert float(metrics.arrl_total_line_loss_db(ml, g)) == pytest.approx(total, abs=5e-4)
    if s_in is not None:
        g_in = g / 10 ** (ml / 10)
        assert float(metrics.swr(g_in)) == pytest.approx(s_in, abs=5e-4)


def test_total_line_loss_reduces_to_matched_loss():
    # With no reflection the formula gives the matched loss (identity).
    np.testing.assert_allclose(metrics.arrl_total_line_loss_db([0.3, 2.0], 0.0), [0.3, 2.0],
                               rtol=1e-12)


@pytest.mark.parametrize("x,db", [
    # [derived] from S21 = 2 Z0 / (2 Z0 + jX) (from memory of Pozar, tables
    # 4.1 and 4.2): X = 10 / 50 / 100 ohm in 50 ohm -> 0.043 / 0.969 / 3.010 dB.
    # Tolerance half a unit of the last quoted digit.
    (10.0, 0.043), (50.0, 0.969), (100.0, 3.010),
])
def test_series_reactance_insertion_loss(x, db):
    assert float(metrics.series_reactance_insertion_loss_db(x, 50.0)) == pytest.approx(
        db, abs=5e-4)
    assert float(metrics.series_reactance_insertion_loss_db(-x, 50.0)) == pytest.approx(
        db, abs=5e-4)
