"""Common mode through the chain: the power budget with choke heat, facts of
the trade about chokes and baluns, and the route's user errors.

Each check names its basis beside it (energy conservation, an independent
far-field integration, "common practice" for trade facts).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from necflow.chain.stages import Chain
from necflow.config.schema import Design
from necflow.engine.far_field import far_field, lossless_copy

ROOT = Path(__file__).resolve().parents[2]
BAND = [{"name": "test", "low": "14 MHz", "high": "14.35 MHz", "points": 3}]
LOSSY_CHOKE = {"points": [{"frequency": "1 MHz", "r": "450 ohm", "x": "200 ohm"},
                          {"frequency": "30 MHz", "r": "450 ohm", "x": "200 ohm"}]}


def _offc(material="copper", height="10 m"):
    return {"shape": "off-centre", "span": "20 m", "height": height, "feed_position": 0.3,
            "wire": {"diameter": "2 mm", "material": material}}


def _chain(antenna, feed, route, ground="perfect", spw=14.0) -> Chain:
    g = {"model": ground} if isinstance(ground, str) else ground
    return Chain(Design(name="cm-physics", bands=BAND, antenna=antenna,
                        ground=g, feed=feed, route=route,
                        model={"segments_per_wavelength": spw}))


# ----------------------------------------------------------------------------
# 4. The power budget with a lossy choke


def test_power_identity_with_choke_heat():
    # Basis: energy conservation.  The radio's available power is what the
    # mismatch sends back plus every dissipation in the budget (the
    # elements and the "(common mode)" choke heat) plus what reaches the
    # antenna; and the loss terms in dB chain to the total.  Exact
    # bookkeeping: 1e-9 relative.
    ch = _chain(_offc(), [{"id": "ch", "choke": LOSSY_CHOKE},
                          {"id": "coax", "line": "rg-213", "length": "12 m"}],
                {"run": "6 m", "bearing": "90 deg", "end_height": "1 m", "entry": "ground"},
                ground={"model": "reflection", "surface": "medium-dry"})
    s = ch.system
    cm_keys = [k for k in s.p_dissipated_w if k.endswith("(common mode)")]
    assert cm_keys == ["ch (common mode)"]
    heat = s.p_dissipated_w["ch (common mode)"]
    assert np.all(heat > 0.003 * s.power_available_w)    # a real term (0.5-2.6 % here), not a zero
    total = s.p_mismatch_w + sum(s.p_dissipated_w.values()) + s.p_delivered_w
    np.testing.assert_allclose(total, s.power_available_w, rtol=1e-9)
    terms = sum(v for k, v in s.loss_db.items() if k != "total")
    np.testing.assert_allclose(terms, s.loss_db["total"], rtol=1e-9)
    np.testing.assert_allclose(10 * np.log10(s.power_available_w / s.p_delivered_w),
                               s.loss_db["total"], rtol=1e-9)


def test_choke_heat_against_radiated_power():
    # Basis: an independent route to the choke's heat, energy conservation
    # through the far field (Balanis, Antenna Theory, 3rd ed., sec. 2.6):
    # with lossless wires in free space the only loss is the choke, so the
    # radiated fraction of the power into the feed point (the engine's gain
    # integrated over the sphere, divided by the lossless copy's integral to
    # remove the grid error) must be 1 minus the heat fraction the chain
    # computes from the probe current and the choke's impedance.  The
    # lossless copy itself integrates to 0.982, not 1 (the 5 deg grid
    # explains 0.4 %; the rest is the model's own energy balance, the
    # method-of-moments error around the short source and choke pieces), so
    # the tolerance is 0.01 plus 1.5 times that shortfall (about 0.037);
    # measured: 0.024.  A heat off by a factor of 2 misses by 0.09 or more.
    ch = _chain(_offc("lossless"), [{"id": "ch", "choke": LOSSY_CHOKE},
                                    {"id": "coax", "line": "rg-58", "length": "8 m"}],
                {"points": [[-4.0, 3.0, 4.0]], "entry": "floating"}, ground="free-space")
    cm = ch.common_mode
    heat_fraction = cm.load_power_w["ch"] / cm.p_feed_w
    assert np.all(heat_fraction > 0.05)
    f = ch.frequency_hz
    m = ch.wire_model
    eff = np.array([ff.efficiency for ff in far_field(m, f)])
    eff_lossless = np.array([ff.efficiency for ff in far_field(lossless_copy(m), f)])
    tol = 0.01 + 1.5 * np.abs(1.0 - eff_lossless).max()
    assert tol < 0.05                                    # the model is sound enough
    np.testing.assert_allclose(eff / eff_lossless, 1.0 - heat_fraction, atol=tol)


# ----------------------------------------------------------------------------
# 7. Facts of the trade

EFHW = {"shape": "end-fed", "length": "10.2 m", "feed_height": "8 m",
        "wire": {"diameter": "2 mm", "material": "copper"}}
EFHW_ROUTE = {"run": "8 m", "bearing": "180 deg", "end_height": "1 m", "entry": "ground"}
UNUN = {"id": "unun", "transformer": "unun", "ratio": "49:1", "loss": 0.3}


def _cm_ratio(ch: Chain) -> np.ndarray:
    """Common-mode current at the station entry over the differential
    current at the feed point, both at the radio's power."""
    i_feed = np.abs(ch.system.node_i[:, -1])
    return np.abs(ch.common_mode.currents["entry"]) / i_feed


def test_end_fed_without_choke_has_common_mode_on_the_coax():
    # Common practice: an end-fed half-wave uses the coax shield as its
    # counterpoise, so without a choke the coax carries a substantial
    # common-mode current (here > 5 % of the feed current at the entry).
    ch = _chain(EFHW, [UNUN, {"id": "coax", "line": "rg-58", "length": "11 m"}], EFHW_ROUTE)
    assert np.all(_cm_ratio(ch) > 0.05)


def test_end_fed_choke_near_transformer_reduces_entry_current():
    # Common practice: a choke a little way down the coax from an end-fed
    # wire's transformer (the short piece above it is the counterpoise)
    # reduces the common-mode current at the station entry.  It does not
    # remove it: the coax below the choke is still a wire in the antenna's
    # field and carries the current that field induces (Balanis, ch. 8,
    # parasitic elements; see the open-circuit check in
    # tests/engine/test_route_physics.py).  Here, with the choke 1 m down,
    # the entry current must fall below 3/4 of the plain line's (measured
    # 0.58-0.64) and the plain line's must be the larger at every point.
    plain = _chain(EFHW, [UNUN, {"id": "coax", "line": "rg-58", "length": "11 m"}], EFHW_ROUTE)
    fixed = _chain(EFHW, [UNUN, {"id": "top", "line": "rg-58", "length": "1 m"},
                          {"id": "ch", "choke": {"catalog": "toroid-coax-low-mix"}},
                          {"id": "coax", "line": "rg-58", "length": "10 m"}], EFHW_ROUTE)
    i_plain = np.abs(plain.common_mode.currents["entry"])
    i_fixed = np.abs(fixed.common_mode.currents["entry"])
    assert np.all(i_fixed < 0.75 * i_plain)


def test_voltage_balun_does_not_choke_current_balun_does():
    # Common practice: a 1:1 voltage balun forces equal and opposite
    # voltages but lets common-mode current flow on the coax; a current
    # balun (a choke) blocks it.  Off-centre feed, coax to a grounded entry:
    # the current balun's entry current is below a third of the voltage
    # balun's, which itself is more than 5 % of the feed current.
    route = {"run": "6 m", "bearing": "90 deg", "end_height": "1 m", "entry": "ground"}
    coax = {"id": "coax", "line": "rg-213", "length": "12 m"}
    volt = _chain(_offc(), [{"id": "balun", "transformer": "balun", "ratio": "1:1",
                             "balun_kind": "voltage"}, coax], route)
    curr = _chain(_offc(), [{"id": "balun", "transformer": "balun", "ratio": "1:1",
                             "balun_kind": "current",
                             "choke": {"catalog": "toroid-coax-low-mix"}}, coax], route)
    assert np.all(_cm_ratio(volt) > 0.05)
    i_v = np.abs(volt.common_mode.currents["entry"])
    i_c = np.abs(curr.common_mode.currents["entry"])
    assert np.all(i_c < i_v / 3)


# ----------------------------------------------------------------------------
# 8. Route errors: one line naming the field

_BASE = """name: route-error
bands: [20m]
antenna: {ANT}
ground: {GROUND}
feed:
  - {id: coax, line: rg-213, length: 12 m}
"""
_DOUBLET = "{shape: doublet, span: 20 m, height: 10 m}"
_EFHW = "{shape: end-fed, length: 10.2 m, feed_height: 8 m}"


@pytest.mark.parametrize("text,field", [
    (_BASE.replace("{ANT}", _DOUBLET).replace("{GROUND}", "{model: perfect}")
     + "route: {points: [[0, 0, -1]]}\n", "route"),
    (_BASE.replace("{ANT}", _DOUBLET).replace("{GROUND}", "{model: perfect}")
     + "route: {run: 5 m, entry: ground, entry_resistance: 100 ohm}\n", "entry_resistance"),
    (_BASE.replace("{ANT}", _DOUBLET).replace("{GROUND}", "{model: free-space}")
     + "route: {run: 5 m, entry: ground}\n", "route"),
    (_BASE.replace("{ANT}", _EFHW).replace("{GROUND}", "{model: perfect}"), "route"),
], ids=["below-ground", "resistance-without-entry", "free-space-ground-entry",
        "end-fed-without-route"])
def test_route_errors_are_one_line_with_field(tmp_path, text, field):
    # Project rule: every error a user can cause is one line naming the
    # file, line and field, exit status 2, no traceback.
    path = tmp_path / "design.yaml"
    path.write_text(text)
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    r = subprocess.run([sys.executable, "-m", "necflow", "check", str(path)], cwd=ROOT,
                       env=env, capture_output=True, text=True, timeout=120)
    out = r.stdout + r.stderr
    assert r.returncode == 2, out
    assert "Traceback" not in out
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1, out
    assert field in lines[0] and "design.yaml" in lines[0], out


# ----------------------------------------------------------------------------
# The power the line's outside radiates on its own


def _line_record(antenna, route, feed=None):
    from necflow.chain.report import _line_radiation
    ch = _chain(antenna, feed or [{"id": "l1", "line": "rg-213", "length": "12 m"}], route,
                ground="free-space")
    ev = ch.evaluation
    return _line_radiation(ev, 0, 14.175e6), ev


def test_line_radiation_vanishes_by_symmetry_and_is_bounded_otherwise():
    # Basis: symmetry (a balanced line in the symmetry plane of a symmetric
    # doublet carries no common-mode current, so its outside radiates
    # nothing), and energy: with an off-centre feed the line's own
    # radiation is positive and, for a line a quarter of the antenna's
    # length carrying a fraction of its current, a small share of the power
    # at the feed point (it is not a share of the total: the line and the
    # antenna interfere, so only 0 < P < P_feed is asserted).
    doublet = {"shape": "doublet", "span": "20 m", "height": "10 m",
               "wire": {"diameter": "2 mm", "material": "copper"}}
    window = [{"id": "l1", "line": "window-450", "length": "8 m"}]
    sym, _ = _line_record(doublet, {"points": [[0.0, 0.0, 4.0]], "entry": "floating"}, window)
    asym, ev = _line_record(_offc(), {"points": [[-4.0, 3.0, 4.0]], "entry": "floating"})
    assert sym["line_radiated_fraction"] < 1e-9
    assert 1e-4 < asym["line_radiated_fraction"] < 1.0
    assert asym["line_radiated_w"] < float(ev.system.p_delivered_w.max())
