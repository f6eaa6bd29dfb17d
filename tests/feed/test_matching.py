"""The matching unit (lossy L-network) against closed forms.

Q formula: loss = 10 log10(1 + Q_L / Q_U), Q_L = sqrt(R_high / R_low - 1),
references.md "Matching networks and series reactance" [derived]; lossless
L-network design, D. M. Pozar, Microwave Engineering, 4th ed., sec. 5.1.
"""

from __future__ import annotations

import numpy as np
import pytest

from necflow.feed import twoport
from necflow.feed.matching import lossless_l_networks, network_loss_db, tune_l_network

NO_LOSS = 1e12  # a Q so high the part is lossless to rounding


@pytest.mark.parametrize("r_load, q_u, expected_db", [(12.5, 100.0, 0.075), (200.0, 100.0, 0.075)])
def test_loss_against_the_q_formula(r_load, q_u, expected_db):
    # references.md [derived]: 12.5 -> 50 ohm with Q_U 100 is 0.075 dB (and the
    # mirror case 200 -> 50 has the same Q_L).  The formula treats the loss as
    # a small series resistance; the exact power flow differs by about Q_L/Q_U
    # of itself (0.6 % here): 2 %.
    m = tune_l_network([7e6], [r_load], 50.0, q_inductor=q_u, q_capacitor=NO_LOSS)
    q_l = np.sqrt(max(r_load, 50.0) / min(r_load, 50.0) - 1.0)
    assert m.loss_db[0] == pytest.approx(10 * np.log10(1 + q_l / q_u), rel=0.02)
    assert m.loss_db[0] == pytest.approx(expected_db, abs=0.001)


def test_high_ratio_loss_near_the_q_formula():
    # references.md: 2 -> 50 ohm with Q_U 50: formula 0.406 dB, exact check
    # 0.42 dB; the approximation drops second-order terms in Q_L/Q_U = 0.1, so
    # the exact figure sits a few percent above the formula: 0.39-0.45 dB.
    m = tune_l_network([7e6], [2.0], 50.0, q_inductor=50.0, q_capacitor=NO_LOSS,
                       max_swr=np.inf)
    assert 0.39 < m.loss_db[0] < 0.45


def test_lossy_network_still_matches_exactly():
    # The lossy correction makes the input exactly the source resistance
    # (Newton on the exact network): 1e-9 relative.
    z = np.array([10 - 300j, 300 + 800j, 3000.0, 0.5 + 1j, 5000 - 4000j])
    f = np.linspace(3.5e6, 30e6, z.size)
    m = tune_l_network(f, z, 50.0, max_swr=np.inf)
    assert m.can_match.all()
    np.testing.assert_allclose(twoport.input_impedance(m.matrices, z), 50.0, rtol=1e-9)
    assert (m.loss_db > 0).all()


def test_lossless_design_matches_pozar_closed_form():
    # Pozar sec. 5.1: every finite solution of the lossless design presents
    # exactly R0 (rounding: 1e-9).
    z = np.array([100 + 50j, 20 - 10j])
    x, b = lossless_l_networks(z, 50.0)
    for j in range(4):
        ok = np.isfinite(x[:, j])
        zs = twoport.series_impedance(1j * x[ok, j])
        yp = twoport.shunt_admittance(1j * b[ok, j])
        m = zs @ yp if j < 2 else yp @ zs
        np.testing.assert_allclose(twoport.input_impedance(m, z[ok]), 50.0, rtol=1e-9)
    # 100 + j50 is outside the unit circle R = R0: only shunt-at-load solutions;
    # 20 - j10 has R < R0: series-at-load solutions exist.
    assert np.isfinite(x[0, :2]).all() and np.isnan(x[0, 2:]).all()
    assert np.isfinite(x[1, 2:]).all()


def test_out_of_range_load_is_a_through_connection():
    # Matching range SWR 10: a 1000-ohm load (SWR 20) cannot be matched; the
    # unit then passes the load unchanged and loses nothing.
    m = tune_l_network([7e6, 7e6], [1000.0, 150.0], 50.0, max_swr=10.0)
    assert list(m.can_match) == [False, True]
    assert twoport.input_impedance(m.matrices, [1000.0, 150.0])[0] == pytest.approx(1000.0)
    assert m.loss_db[0] == 0.0


def test_network_loss_of_a_series_resistor():
    # Pozar table 4.1: series R into a load R_L dissipates R/R_L of the output
    # power: 10 log10(1 + R/R_L), exact to rounding.
    m = twoport.series_impedance([5.0])
    assert network_loss_db(m, np.array([50.0]))[0] == pytest.approx(10 * np.log10(1.1), rel=1e-12)
