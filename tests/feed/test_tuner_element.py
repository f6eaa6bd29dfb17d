"""A tuner as a feed-chain element, and elements switched out per band.

Independent checks: the chain's tuner against the ABCD of its lossy parts
multiplied out by hand inside the test (Pozar, *Microwave Engineering*, 4th
ed., table 4.1: series Z ``[[1, Z], [0, 1]]``, shunt Y ``[[1, 0], [Y, 1]]``;
a part of reactance X and unloaded Q has ``Z = |X|/Q + jX``, sec. 6.1) and
against scikit-rf's cascade; the power identity of the budget (available
power = reflected + dissipated + delivered, Pozar sec. 2.6); each part's
stress against V = I Z and P = I^2 ESR; a switched-out element against the
chain without it, bit for bit.
"""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest
import skrf

from necflow.analysis.powerflow import analyse
from necflow.analysis.stress_cautions import cautions, ratings_of
from necflow.analysis.stress_table import stress_rows
from necflow.catalog.bands import Band
from necflow.chain import load_design_text
from necflow.config.schema import LineElement, PartElement, TransformerElement, TunerElement
from necflow.errors import ConfigError
from necflow.feed.batch import FeedBatch
from necflow.feed.chain import build_chain

BANDS = [Band("40m", 7.0e6, 7.3e6, 4, 1.0), Band("30m", 10.1e6, 10.15e6, 3, 1.0),
         Band("20m", 14.0e6, 14.35e6, 3, 1.0)]
F = np.array([7.0e6, 7.1e6, 7.2e6, 7.3e6, 10.1e6, 10.125e6, 10.15e6, 14.0e6, 14.2e6, 14.35e6])
#: An invented feedpoint impedance sweep of a multiband doublet: low and
#: capacitive, high and inductive, middling.
Z_FP = np.array([40 - 600j, 45 - 550j, 50 - 500j, 55 - 450j, 2500 + 1500j, 2600 + 1400j,
                 2700 + 1300j, 120 + 300j, 130 + 320j, 140 + 340j])


def _feed(tuner: dict | None = None, cap_switch=None):
    feed = [LineElement(id="ladder", line="window-450", length=12.0),
            PartElement(id="cap", series="capacitor", value=330e-12, q=2000,
                        **({"switch": cap_switch} if cap_switch else {})),
            TransformerElement(id="balun", transformer="balun", ratio=1.0, loss=0.15),
            LineElement(id="coax", line="rg-213", length=25.0)]
    if tuner is not None:
        feed.append(TunerElement(id="tuner", **tuner))
    return feed


def _hand_abcd(kinds, values, qs, w):
    """Product of the parts' ABCD matrices, radio side first, by hand."""
    m = np.broadcast_to(np.eye(2, dtype=complex), w.shape + (2, 2)).copy()
    for (kind, placement), v, q in zip(kinds, values, qs):
        x = w * v if kind == "L" else -1.0 / (w * v)
        z = abs_x_over_q(x, q) + 1j * x
        p = np.zeros(w.shape + (2, 2), dtype=complex)
        p[..., 0, 0] = p[..., 1, 1] = 1.0
        if placement == "series":
            p[..., 0, 1] = z
        else:
            p[..., 1, 0] = 1.0 / z
        m = m @ p
    return m


def abs_x_over_q(x, q):
    return np.abs(x) / q


def test_shack_t_tuner_matches_and_its_matrix_is_its_parts_multiplied_out():
    tuner = {"tuner": "high-pass-t", "capacitor": {"min": "10 pF", "max": "500 pF", "q": 800},
             "inductor": {"max": "30 uH", "q": 120}}
    chain = build_chain(_feed(tuner), 50.0, BANDS)
    s = analyse(chain, F, Z_FP, z_ref=50.0, power_w=100.0)
    net = s.tuners["tuner"]
    assert net.can_match.all()
    # matched to 50 ohm: the radio sees SWR 1 (to the tuner's exactness)
    np.testing.assert_allclose(s.swr, 1.0, atol=1e-5)
    # the tuner's matrix against its parts multiplied out here
    w = 2 * math.pi * F
    hand = _hand_abcd([("C", "series"), ("L", "shunt"), ("C", "series")],
                      [net.settings["C1"], net.settings["L"], net.settings["C2"]],
                      [800.0, 120.0, 800.0], w)
    np.testing.assert_allclose(net.matrices, hand, rtol=1e-12)
    # and against scikit-rf: S-parameters of those matrices (its own ABCD to S
    # conversion) terminated in the load the tuner sees
    load = chain.with_elements(chain.elements[:-1]).input_impedance(F, Z_FP)
    sp = skrf.network.a2s(hand, z0=50.0)
    g_l = (load - 50.0) / (load + 50.0)
    g_in = sp[:, 0, 0] + sp[:, 0, 1] * sp[:, 1, 0] * g_l / (1 - sp[:, 1, 1] * g_l)
    np.testing.assert_allclose(50.0 * (1 + g_in) / (1 - g_in), s.z_radio, rtol=1e-6)


def test_power_identity_closes_with_a_tuner_in_the_chain():
    for where in ("shack", "feedpoint"):
        feed = _feed({"tuner": "high-pass-t"})
        if where == "feedpoint":       # at the feedpoint, the coax behind it
            feed = [feed[-1], feed[-2]]
        chain = build_chain(feed, 50.0, BANDS)
        s = analyse(chain, F, Z_FP, z_ref=50.0, power_w=100.0)
        total = s.p_mismatch_w + sum(s.p_dissipated_w.values()) + s.p_delivered_w
        np.testing.assert_allclose(total, 100.0, rtol=1e-12)
        db = s.loss_db["mismatch"] + sum(s.loss_db[i] for i in s.element_ids)
        np.testing.assert_allclose(db, s.loss_db["total"], atol=1e-9)
        assert (s.loss_db["tuner"][s.tuners["tuner"].can_match] > 0).all()


def test_part_stress_is_v_equals_i_z_and_dissipation_i2_esr():
    tuner = {"tuner": "high-pass-t", "capacitor": {"min": "10 pF", "max": "300 pF", "q": 1000},
             "inductor": {"max": "25 uH", "q": 150, "q_exponent": 0.5, "q_reference": "7 MHz"}}
    s = analyse(build_chain(_feed(tuner), 50.0, BANDS), F, Z_FP, z_ref=50.0, power_w=400.0)
    net, st = s.tuners["tuner"], s.stress["tuner"]
    w = 2 * math.pi * F
    ok = net.can_match
    for name in ("C1", "C2"):
        x = -1.0 / (w * net.settings[name])
        part = st.parts[name]
        # peak V across a capacitor = sqrt2 |I| |Z|, Z = |X|/Q + jX
        z = np.abs(x) / 1000.0 + 1j * x
        np.testing.assert_allclose(part["v_peak"][ok], math.sqrt(2) * part["i_rms"][ok]
                                   * np.abs(z[ok]), rtol=1e-10)
        np.testing.assert_allclose(part["p_diss_w"][ok], part["i_rms"][ok] ** 2
                                   * np.abs(x[ok]) / 1000.0, rtol=1e-10)
    q_l = 150.0 * (F / 7e6) ** 0.5
    xl = w * net.settings["L"]
    pl = st.parts["L"]
    np.testing.assert_allclose(pl["p_diss_w"][ok], pl["i_rms"][ok] ** 2 * xl[ok] / q_l[ok],
                               rtol=1e-10)
    # the parts' dissipation is the element's (Tellegen)
    parts_sum = sum(p["p_diss_w"] for p in st.parts.values())
    np.testing.assert_allclose(parts_sum[ok], s.p_dissipated_w["tuner"][ok], rtol=1e-8)
    # stress rows: one per part, voltages scaled to the worst-case power
    rows = {r.id: r for r in stress_rows(s, {}, 1500.0)}
    assert {"tuner.c1", "tuner.l", "tuner.c2"} <= set(rows)
    assert rows["tuner.c1"].v_peak_worst == pytest.approx(
        rows["tuner.c1"].v_peak * math.sqrt(1500.0 / 400.0), rel=1e-12)


def test_a_range_that_runs_out_is_reported_not_matched_with_the_part_named():
    # C2 at most 30 pF cannot match the low, capacitive 40 m load at the radio
    # end of this chain: the reason names the part
    tuner = {"tuner": "high-pass-t", "capacitor": {"min": "10 pF", "max": "30 pF"},
             "inductor": {"max": "2 uH"}}
    chain = build_chain(_feed(tuner), 50.0, BANDS)
    s = analyse(chain, F, Z_FP)
    net = s.tuners["tuner"]
    assert not net.can_match.all()
    lines = cautions(s)
    line = next(x for x in lines if x.startswith("tuner: cannot match"))
    assert "range runs out" in line or "nearest SWR" in line
    # where it cannot match it is a through connection: no loss in it
    assert np.all(s.loss_db["tuner"][~net.can_match] == 0.0)


def test_ratings_of_the_parts_draw_cautions_and_margins():
    tuner = {"tuner": "high-pass-t", "capacitor": {"min": "10 pF", "max": "300 pF",
                                                   "voltage_rating": "200 V"},
             "inductor": {"max": "25 uH", "current_rating": "0.5 A"}}
    feed = _feed(tuner)
    s = analyse(build_chain(feed, 50.0, BANDS), F, Z_FP, power_w=100.0)
    lines = cautions(s, None, feed)
    assert any(x.startswith("tuner.c1: peak voltage") and "exceeds its 200 V rating" in x
               for x in lines)
    assert any(x.startswith("tuner.l: RMS current") for x in lines)
    rows = {r.id: r for r in stress_rows(s, ratings_of(feed), 1500.0)}
    assert rows["tuner.c2"].margin["voltage_rating"] < 1.0


def test_user_setting_on_a_band_is_used_as_given():
    tuner = {"tuner": "high-pass-t",
             "settings": {"20m": {"c1": "100 pF", "l": "1.5 uH", "c2": "200 pF"}}}
    s = analyse(build_chain(_feed(tuner), 50.0, BANDS), F, Z_FP)
    net = s.tuners["tuner"]
    on = F >= 14e6
    np.testing.assert_array_equal(net.settings["C1"][on], 100e-12)
    np.testing.assert_array_equal(net.settings["L"][on], 1.5e-6)
    # elsewhere least loss (matched)
    np.testing.assert_allclose(s.swr[~on], 1.0, atol=1e-5)


def test_switched_out_element_equals_the_design_without_it_exactly():
    sw = build_chain(_feed({"tuner": "high-pass-t"}, cap_switch={"bypass": ["30m"]}),
                     50.0, BANDS)
    without = build_chain([e for e in _feed({"tuner": "high-pass-t"}) if e.id != "cap"],
                          50.0, BANDS)
    with_cap = build_chain(_feed({"tuner": "high-pass-t"}), 50.0, BANDS)
    a = analyse(sw, F, Z_FP)
    b = analyse(without, F, Z_FP)
    c = analyse(with_cap, F, Z_FP)
    on30 = (F >= 10.1e6) & (F <= 10.15e6)
    for x, y, sel in ((a, b, on30), (a, c, ~on30)):
        np.testing.assert_array_equal(x.z_radio[sel], y.z_radio[sel])
        np.testing.assert_array_equal(x.loss_db["total"][sel], y.loss_db["total"][sel])
        np.testing.assert_array_equal(x.p_delivered_w[sel], y.p_delivered_w[sel])
        for name in ("C1", "L", "C2"):
            np.testing.assert_array_equal(x.tuners["tuner"].settings[name][sel],
                                          y.tuners["tuner"].settings[name][sel])
    assert np.all(a.p_dissipated_w["cap"][on30] == 0.0)
    relay = a.relays["cap"]
    np.testing.assert_array_equal(relay.closed, on30)
    # closed contacts carry the line current; open ones see the part's voltage
    np.testing.assert_allclose(relay.i_closed_rms[on30], np.abs(a.node_i[on30, 2]))
    np.testing.assert_allclose(relay.v_open_peak[~on30], c.stress["cap"].v_peak[~on30],
                               rtol=1e-9)


def test_only_switches_a_stub_in_on_its_bands():
    stub = PartElement(id="stub", shunt="inductor", value=5e-6, switch={"only": ["20m"]})
    base = _feed()
    a = analyse(build_chain(base[:2] + [stub] + base[2:], 50.0, BANDS), F, Z_FP)
    b = analyse(build_chain(base, 50.0, BANDS), F, Z_FP)
    on20 = F >= 14e6
    np.testing.assert_array_equal(a.z_radio[~on20], b.z_radio[~on20])
    assert np.all(a.z_radio[on20] != b.z_radio[on20])
    # a shunt part's relay is in series with it: closed where it is in
    np.testing.assert_array_equal(a.relays["stub"].closed, on20)


def test_batch_sets_the_tuner_for_each_variant_as_the_single_path():
    chain = build_chain(_feed({"tuner": "high-pass-t"}), 50.0, BANDS)
    batch = FeedBatch(chain, F, [("ladder", "length")])
    lengths = np.array([8.0, 12.0, 16.0])
    r = batch.response({("ladder", "length"): lengths}, Z_FP)
    for k, length in enumerate(lengths):
        feed = _feed({"tuner": "high-pass-t"})
        feed[0] = LineElement(id="ladder", line="window-450", length=float(length))
        s = analyse(build_chain(feed, 50.0, BANDS), F, Z_FP)
        exact = s.tuners["tuner"].swr <= 1.0 + 1e-6      # exact matches (no near ones)
        np.testing.assert_allclose(r.loss_db[k][exact], s.loss_db["total"][exact], rtol=1e-9)
        np.testing.assert_array_equal(r.unmatched[k], ~exact)


def test_tuner_loss_grows_with_the_swr_it_matches():
    # common practice: the more mismatch a tuner takes out, the more it loses
    tuner = build_chain([TunerElement(id="t", tuner="high-pass-t")], 50.0, BANDS)
    f = np.full(5, 7.1e6)
    z = 50.0 / np.array([1.5, 3.0, 6.0, 12.0, 24.0])     # resistive, below 50 ohm
    s = analyse(tuner, f, z)
    assert s.tuners["t"].can_match.all()
    assert np.all(np.diff(s.loss_db["t"]) > 0)


DESIGN = textwrap.dedent("""\
    name: t
    bands: [40m, 30m]
    antenna: {shape: doublet, span: 30 m, height: 12 m}
    ground: {model: free-space}
    feed:
      - {id: ladder, line: window-450, length: 10 m}
      - {id: cap, series: capacitor, value: 330 pF, switch: {bypass: [30m]}}
      - {id: coax, line: rg-213, length: 20 m}
      - id: tuner
        tuner: high-pass-t
        capacitor: {min: 15 pF, max: 250 pF}
        inductor: {max: 20 uH}
    """)


@pytest.mark.parametrize("old,new,line,field,phrase", [
    ("bypass: [30m]", "bypass: [17m]", 7, "feed[1].switch.bypass[0]",
     "'17m' is not one of the design's bands"),
    ("{min: 15 pF, max: 250 pF}", "{min: 300 pF, max: 250 pF}", 11, "feed[3].capacitor.min",
     "minimum is above the maximum"),
    ("{max: 20 uH}", "{max: 20 uH, taps: [1 uH]}", 12, "feed[3].inductor",
     "give one of 'max'"),
    ("tuner: high-pass-t", "tuner: tee", 10, "feed[3].tuner", "high-pass-t"),
])
def test_design_errors_are_one_line_with_file_line_and_field(old, new, line, field, phrase):
    text = DESIGN.replace(old, new)
    with pytest.raises(ConfigError) as exc:
        load_design_text(text, file="d.yaml")
    e = exc.value
    assert (e.line, e.field) == (line, field), str(e)
    assert phrase in str(e) and "\n" not in str(e)
    assert str(e).startswith(f"d.yaml:{line}: {field}: ")


def test_a_design_with_a_tuner_loads():
    d = load_design_text(DESIGN)
    assert d.feed[3].tuner == "high-pass-t" and d.feed[1].switch.bypass == ["30m"]


def test_a_search_sets_a_switch_state_per_band():
    from necflow.config.fields import apply, current_value, param
    from necflow.config.sections import SearchParam
    d = load_design_text(DESIGN)
    p = param(d, "feed.cap.switch.40m", SearchParam(choices=["in", "out"]))
    assert p.choices == ("in", "out") and not p.geometry
    assert current_value(d, "feed.cap.switch.30m") == "out"
    assert current_value(d, "feed.cap.switch.40m") == "in"
    d2 = apply(d, {"feed.cap.switch.40m": "out", "feed.cap.switch.30m": "in"})
    assert d2.feed[1].switch.bypass == ["40m"]
    # an element without a switch gets one
    d3 = apply(d, {"feed.ladder.switch.30m": "out"})
    assert d3.feed[0].switch.bypass == ["30m"] and d.feed[0].switch is None
    with pytest.raises(ValueError, match="not one of the design's bands"):
        param(d, "feed.cap.switch.17m", SearchParam(choices=["in", "out"]))
    with pytest.raises(ValueError, match="choices"):
        param(d, "feed.cap.switch.40m", SearchParam(choices=["on", "off"]))


def test_tuning_chart_rows_csv_and_report_tables():
    from necflow.analysis.tuning import WHERE, chart_csv, chart_frequencies, tuning_chart
    from necflow.report.html_report import _switching, _tuning
    bands = BANDS[:2]
    f3 = chart_frequencies(bands)
    assert f3.tolist() == [7.0e6, 7.15e6, 7.3e6, 10.1e6, 10.125e6, 10.15e6]
    z3 = np.array([40 - 600j, 47 - 525j, 55 - 450j, 2500 + 1500j, 2600 + 1400j, 2700 + 1300j])
    feed = _feed({"tuner": "high-pass-t", "switch": {"bypass": ["30m"]},
                  "capacitor": {"min": "15 pF", "max": "250 pF", "voltage_rating": "300 V"}})
    s = analyse(build_chain(feed, 50.0, bands), f3, z3, power_w=100.0)
    rows = tuning_chart(s, bands, 1500.0, ratings_of(feed))
    assert [(r["band"], r["where"]) for r in rows] == [(b.name, w) for b in bands for w in WHERE]
    r = rows[1]
    assert r["settings"]["c2"] == s.tuners["tuner"].settings["C2"][1]
    assert r["v_peak_worst"]["c1"] == pytest.approx(r["v_peak"]["c1"] * math.sqrt(15.0))
    assert "exceeds its 300 V rating" in r["caution"]
    assert not rows[4]["in_circuit"] and "switched out" in rows[4]["caution"]
    text = chart_csv(rows, 100.0, 1500.0)
    head = text.splitlines()[0].split(",")
    assert head[4:7] == ["c1_pf", "c2_pf", "l_uh"] and "c1_v_peak_at_1500w" in head
    assert float(text.splitlines()[2].split(",")[4]) == pytest.approx(
        r["settings"]["c1"] * 1e12, rel=1e-3)
    html = _tuning({"tuning": rows}, {"radio_power_w": 100.0, "worst_case_power_w": 1500.0})
    assert "Tuning chart" in html and "switched out on this band" in html
    relays = [{"id": "tuner", "relays": 2, "bands": [
        {"band": "40m", "closed": False, "element_out": False, "v_open_peak": 123.0,
         "i_closed_rms": None},
        {"band": "30m", "closed": True, "element_out": True, "v_open_peak": None,
         "i_closed_rms": 1.5}]}]
    sw = _switching({"relays": relays})
    assert "closed, out" in sw and "open, in" in sw and "2 relay(s) in all" in sw
