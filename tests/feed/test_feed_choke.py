"""Common-mode chokes: the impedance functions, the design-file forms, and the
choke as a feed element (an identity to the differential mode).

Sources beside each check: the parallel resonant circuit (from memory of
Pozar, Microwave Engineering 4th ed., sec. 6.1), hand-computed interpolation
values, and the ideal-line model's power bookkeeping (DEVELOPERS.md).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from necflow.analysis.powerflow import analyse
from necflow.analysis.stress_cautions import cautions
from necflow.analysis.stress_table import stress_rows
from necflow.catalog.chokes import CHOKE_TYPES, DEFAULT_BALUN_CHOKE
from necflow.chain import load_design_text
from necflow.config.schema import (
    ChokeElement,
    ChokeSpec,
    LineElement,
    PartElement,
    TransformerElement,
)
from necflow.errors import ConfigError
from necflow.feed import twoport
from necflow.feed.chain import Choke, FeedChain, build_chain, resolve
from necflow.feed.choke import choke_impedance, interpolated_impedance, parallel_rlc_impedance
from tests.config.bad_cases import BASE, _edit
from tests.conftest import CONFIGS

R, L, C = 4.0e3, 150e-6, 2.7e-12
F0 = 1.0 / (2 * math.pi * math.sqrt(L * C))


def z_rational(f, r, l, c):
    """The parallel R-L-C written as one fraction, independently of the
    package: Z = j w L R / (R (1 - w^2 L C) + j w L)."""
    w = 2 * np.pi * np.asarray(f, dtype=float)
    return 1j * w * l * r / (r * (1 - w**2 * l * c) + 1j * w * l)


# ----------------------------------------------------------------------------
# Parallel R-L-C


def test_parallel_rlc_is_r_at_resonance():
    """At f0 = 1/(2 pi sqrt(LC)) the reactive admittances cancel: Z = R."""
    z = parallel_rlc_impedance([F0], R, L, C)
    assert z[0] == pytest.approx(R, rel=1e-12)
    assert abs(z[0].imag) < 1e-9 * R


def test_parallel_rlc_is_inductive_below_and_capacitive_above():
    """Below resonance the inductor's admittance dominates (X > 0), above it
    the capacitor's (X < 0); far away Z tends to j w L and 1/(j w C)."""
    f = np.array([F0 / 4, F0 / 2, 2 * F0, 4 * F0])
    z = parallel_rlc_impedance(f, R, L, C)
    np.testing.assert_allclose(z, z_rational(f, R, L, C), rtol=1e-12)
    assert np.all(z[:2].imag > 0) and np.all(z[2:].imag < 0)
    w = 2 * np.pi
    lo, hi = F0 / 1e4, F0 * 1e4       # relative departures of order 1e-4
    assert parallel_rlc_impedance([lo], R, L, C)[0] == pytest.approx(1j * w * lo * L, rel=1e-3)
    assert parallel_rlc_impedance([hi], R, L, C)[0] == pytest.approx(1 / (1j * w * hi * C),
                                                                     rel=1e-3)


def test_parallel_rlc_per_variant_arrays():
    """Per-variant R, L, C ((nvar,)) give (nvar, nfreq), each row its own circuit."""
    f = np.geomspace(1.8e6, 30e6, 7)
    r = np.array([1e3, 4e3, 8e3])
    l = np.array([20e-6, 150e-6, 8e-6])
    c = np.array([1e-12, 2.7e-12, 16e-12])
    z = parallel_rlc_impedance(f, r, l, c)
    assert z.shape == (3, 7)
    for k in range(3):
        np.testing.assert_allclose(z[k], z_rational(f, r[k], l[k], c[k]), rtol=1e-12)


# ----------------------------------------------------------------------------
# Measured points

PTS_F = [8e6, 2e6]            # given out of order on purpose
PTS_R = [2000.0, 400.0]
PTS_X = [-600.0, 900.0]


def test_points_interpolate_linearly_in_log_frequency_hand_values():
    """Hand values: 4 MHz lies halfway between 2 and 8 MHz on a log axis, so
    R = (400 + 2000)/2 = 1200, X = (900 - 600)/2 = 150; 2 * 4^(1/4) MHz lies a
    quarter of the way: R = 400 + 1600/4 = 800, X = 900 - 1500/4 = 525.  At
    the points the values are the points'."""
    f = np.array([2e6, 2e6 * 4 ** 0.25, 4e6, 8e6])
    z = interpolated_impedance(f, PTS_F, PTS_R, PTS_X)
    np.testing.assert_allclose(z.real, [400, 800, 1200, 2000], rtol=1e-12)
    np.testing.assert_allclose(z.imag, [900, 525, 150, -600], rtol=1e-12, atol=1e-9)


@pytest.mark.parametrize("f", [1.99e6, 8.01e6, 30e6])
def test_points_refuse_frequencies_outside_them(f):
    with pytest.raises(ValueError, match="outside its measured points"):
        interpolated_impedance([4e6, f], PTS_F, PTS_R, PTS_X)


def test_points_need_two_distinct_frequencies():
    with pytest.raises(ValueError, match="at least two"):
        interpolated_impedance([2e6], [2e6], [100.0], [0.0])
    with pytest.raises(ValueError, match="distinct"):
        interpolated_impedance([2e6], [2e6, 2e6], [100.0, 200.0], [0.0, 0.0])


# ----------------------------------------------------------------------------
# choke_impedance on each form

F = np.geomspace(3e6, 20e6, 9)


def test_choke_impedance_of_each_form():
    cat = CHOKE_TYPES["toroid-coax-low-mix"]
    expect = z_rational(F, cat.r, cat.l, cat.c)
    np.testing.assert_allclose(choke_impedance(F, "toroid-coax-low-mix"), expect, rtol=1e-12)
    np.testing.assert_allclose(choke_impedance(F, cat), expect, rtol=1e-12)
    np.testing.assert_allclose(choke_impedance(F, ChokeSpec(catalog=cat.name)), expect,
                               rtol=1e-12)
    par = ChokeSpec(parallel={"r": R, "l": L, "c": C})
    np.testing.assert_allclose(choke_impedance(F, par), z_rational(F, R, L, C), rtol=1e-12)
    pts = ChokeSpec(points=[{"frequency": 2e6, "r": 400.0, "x": 900.0},
                            {"frequency": 32e6, "r": 2000.0, "x": -600.0}])
    # 8 MHz is halfway between 2 and 32 MHz on a log axis
    assert choke_impedance([8e6], pts)[0] == pytest.approx(1200 + 150j)
    with pytest.raises(KeyError):
        choke_impedance(F, "no-such-choke")


# ----------------------------------------------------------------------------
# Design file: each form accepted


def _with(line: str, text: str = BASE) -> str:
    return _edit("radio:", line + "radio:", text=text)


@pytest.mark.parametrize("line", [
    "  - {id: ch, choke: {catalog: beads-on-coax}, power_rating: 1.5 kW}\n",
    "  - {id: ch, choke: {parallel: {r: 4 kohm, l: 150 uH, c: 2.7 pF}}}\n",
    "  - id: ch\n    choke:\n      points:\n"
    "        - {frequency: 7 MHz, r: 2.1 kohm, x: 300 ohm}\n"
    "        - {frequency: 14.35 MHz, r: 3 kohm, x: -1.2 kohm}\n",
])
def test_design_file_accepts_each_choke_form(line):
    d = load_design_text(_with(line))
    el = d.feed[-1]
    assert isinstance(el, ChokeElement)
    z = choke_impedance([7.1e6, 14.2e6], el.choke)       # the design's two bands
    assert np.all(z.real > 100.0) and np.all(np.isfinite(z))
    ch = build_chain(d.feed)
    assert ch.elements[-1].kind == "choke"


def test_design_file_reads_choke_units():
    d = load_design_text(_with("  - {id: ch, choke: {parallel: {r: 4 kohm, l: 0.15 mH, "
                               "c: 2700 fF}}}\n"))
    p = d.feed[-1].choke.parallel
    assert (p.r, p.l, p.c) == pytest.approx((4000.0, 150e-6, 2.7e-12))


def test_balun_kind_and_default_choke():
    """A balun is a current balun unless told, with the catalog's current-balun
    choke unless given one; a voltage balun, an unun and a transformer have
    no choke unless given one."""
    cur = TransformerElement(id="b", transformer="balun", ratio="1:1")
    assert cur.effective_balun_kind == "current"
    assert cur.common_mode_choke == ChokeSpec(catalog=DEFAULT_BALUN_CHOKE)
    volt = TransformerElement(id="b", transformer="balun", ratio="4:1", balun_kind="voltage")
    assert volt.effective_balun_kind == "voltage" and volt.common_mode_choke is None
    unun = TransformerElement(id="u", transformer="unun", ratio="49:1", balun_kind="current")
    assert unun.effective_balun_kind is None and unun.common_mode_choke is None
    own = TransformerElement(id="u", transformer="unun", ratio="49:1",
                             choke={"catalog": "toroid-coax-low-mix"})
    assert own.common_mode_choke.catalog == "toroid-coax-low-mix"
    d = load_design_text(_edit('{id: balun, transformer: balun, ratio: "1:1"}',
                               '{id: balun, transformer: balun, ratio: "1:1", '
                               "balun_kind: current, choke: {catalog: coax-coil-air}}"))
    t = build_chain(d.feed).elements[2]
    assert (t.kind, t.balun_kind, t.choke.catalog) == ("transformer", "current", "coax-coil-air")
    t = build_chain(load_design_text(BASE).feed).elements[2]
    assert (t.balun_kind, t.choke.catalog) == ("current", DEFAULT_BALUN_CHOKE)


def test_unknown_catalog_choke_built_in_code_is_a_config_error():
    with pytest.raises(ConfigError) as exc:
        build_chain([LineElement(id="run", line="rg-213", length="5 m"),
                     ChokeElement(id="ch", choke={"catalog": "beads-on-coaks"})])
    assert exc.value.field == "feed[1].choke.catalog"


# ----------------------------------------------------------------------------
# The choke element in the ideal-line model


def test_choke_element_is_an_identity_two_port():
    ch = Choke("ch", ChokeSpec(catalog="beads-on-coax"))
    m = ch.abcd(F)
    assert m.shape == (F.size, 2, 2)
    np.testing.assert_array_equal(m, twoport.identity(F.size))
    np.testing.assert_allclose(ch.common_mode_impedance(F), choke_impedance(F, "beads-on-coax"))
    assert ch.metadata == {"choke": "beads-on-coax"}
    assert Choke("c", ChokeSpec(parallel={"r": R, "l": L, "c": C})).metadata == {
        "choke": "parallel"}


def test_a_choke_leaves_every_shipped_design_unchanged():
    """Inserting a choke anywhere in a shipped design's feed leaves the
    chain's matrix, hence every result, exactly as it was (a tuner set for
    the load it sees through the choke: the same load, the same setting)."""
    f = np.geomspace(1.8e6, 30e6, 25)
    zfp = np.full(f.size, 300.0 - 150.0j)       # any load: the tuners are set for it
    for path in sorted(CONFIGS.glob("*.yaml")):
        feed = load_design_text(path.read_text(encoding="utf-8")).feed
        base = resolve(build_chain(feed), f, zfp).abcd(f)
        for k in range(len(feed) + 1):
            with_choke = list(feed[:k]) + [ChokeElement(id="cm", choke={"catalog":
                                                                         "current-balun"})]
            with_choke += list(feed[k:])
            np.testing.assert_array_equal(resolve(build_chain(with_choke), f, zfp).abcd(f),
                                          base, err_msg=path.name)


def test_power_flow_stress_and_ratings_of_a_choke():
    """A choke dissipates nothing in the ideal-line model (0 dB), the budget
    still adds up, its stress figures are its terminal figures (equal on both
    sides), and its power rating is compared with the power passing through,
    as a transformer's is."""
    f = np.array([7.0e6, 7.15e6, 7.3e6])
    zfp = np.array([45 - 10j, 52 + 3j, 60 + 12j])
    parts = [LineElement(id="run", line="rg-213", length="10 m"),
             ChokeElement(id="ch", choke={"catalog": "toroid-coax-low-mix"},
                          power_rating="50 W", voltage_rating="5 kV"),
             PartElement(id="cap", series="capacitor", value="3300 pF")]
    chain = build_chain(parts)
    plain = build_chain([parts[0], parts[2]])
    s = analyse(chain, f, zfp, z_ref=50.0, power_w=100.0)
    s0 = analyse(plain, f, zfp, z_ref=50.0, power_w=100.0)
    np.testing.assert_array_equal(s.z_radio, s0.z_radio)
    np.testing.assert_array_equal(s.loss_db["total"], s0.loss_db["total"])
    st = s.stress["ch"]
    assert st.kind == "choke"
    np.testing.assert_allclose(st.p_diss_w, 0.0, atol=1e-12)
    np.testing.assert_allclose(s.loss_db["ch"], 0.0, atol=1e-12)
    np.testing.assert_allclose(st.v_rms_in, st.v_rms_out, rtol=1e-12)
    np.testing.assert_allclose(st.v_peak, math.sqrt(2) * st.v_rms_in, rtol=1e-12)
    total = s.p_mismatch_w + sum(s.p_dissipated_w.values()) + s.p_delivered_w
    np.testing.assert_allclose(total, 100.0, rtol=1e-9)
    row = next(r for r in stress_rows(s, {"ch": {"power_rating": 50.0,
                                                 "voltage_rating": 5000.0}}, 1500.0)
               if r.id == "ch")
    # through-power at 1500 W, not the (zero) dissipation
    assert row.margin["power_rating"] == pytest.approx(
        50.0 / (st.p_in_w.max() * 15.0), rel=1e-12)
    assert "power rating exceeded at 1500 W" in row.notes
    lines = cautions(s, ratings=parts)
    assert any(m.startswith("ch: through-power") for m in lines)


def test_chain_of_a_choke_alone_is_a_direct_feed():
    z = np.array([30 - 20j, 70 + 5j, 400 + 900j])
    ch = FeedChain((Choke("ch", "coax-coil-air"),))
    np.testing.assert_allclose(ch.input_impedance(F[:3], z), z, rtol=1e-15)
