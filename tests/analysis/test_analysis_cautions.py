"""Cautions: high voltage and exceeded ratings, one line each."""

from __future__ import annotations

import math

import numpy as np

from necflow.analysis.powerflow import analyse
from necflow.analysis.stress_cautions import cautions, ratings_of
from necflow.config.schema import PartElement, TransformerElement
from necflow.feed.chain import build_chain

F = np.array([3.6e6, 7.1e6, 14.2e6])


def _system(power_w=1500.0):
    feed = [PartElement(id="cap", series="capacitor", value="100 pF", voltage_rating="500 V",
                        current_rating="1 A", power_rating="5 W"),
            TransformerElement(id="bal", transformer="balun", ratio="1:1", power_rating="100 W")]
    zfp = np.array([30 - 500j, 60 + 20j, 90 + 300j])
    return feed, analyse(build_chain(feed), F, zfp, power_w=power_w)


def test_voltage_threshold_names_element_voltage_and_worst_frequency():
    feed, s = _system()
    vmax = s.stress["cap"].v_peak
    k = int(np.argmax(vmax))
    lines = cautions(s, voltage_threshold=float(vmax.max()) * 0.9)
    cap = [x for x in lines if x.startswith("cap:") and "caution level" in x]
    assert len(cap) == 1
    assert f"{vmax[k]:.0f} V" in cap[0] and f"{F[k] / 1e6:.4g} MHz" in cap[0]
    assert cautions(s, voltage_threshold=float(vmax.max()) * 1.1 + 1e6) == []


def test_ratings_from_schema_elements_and_mappings_agree():
    feed, s = _system()
    from_schema = cautions(s, ratings=feed)
    from_map = cautions(s, ratings=ratings_of(feed))
    assert from_schema == from_map
    st = s.stress["cap"]
    # The chosen loads put the capacitor above its 500 V and 1 A ratings and
    # below its 5 W one; check that premise, then the cautions it implies.
    assert st.v_peak.max() > 500 and st.i_rms.max() > 1.0 and st.p_diss_w.max() < 5.0
    assert sum("exceeds its 500 V rating" in x for x in from_schema) == 1
    assert sum("exceeds its 1.00 A rating" in x for x in from_schema) == 1
    assert not any("dissipation" in x for x in from_schema)
    # 1500 W through a balun rated 100 W: its through-power caution must fire.
    assert any(x.startswith("bal:") and "through-power" in x for x in from_schema)
    assert all("\n" not in x for x in from_schema)


def test_low_power_draws_no_caution():
    feed, s = _system(power_w=0.01)
    assert cautions(s, voltage_threshold=1000.0, ratings=feed) == []


def test_part_current_rating_against_ohms_law():
    # 100 W into a matched 50-ohm load through a series part: I = sqrt(P/R)
    # = 1.414 A (Ohm's law), above a 1 A rating and below a 2 A one.
    feed = [PartElement(id="r", series="resistor", value="0.001 ohm")]
    s = analyse(build_chain(feed), F[:1], 50.0, power_w=100.0)
    assert math.isclose(float(s.stress["r"].i_rms[0]), math.sqrt(2), rel_tol=1e-4)
    assert len(cautions(s, ratings={"r": {"current_rating": 1.0}})) == 1
    assert cautions(s, ratings={"r": {"current_rating": 2.0}}) == []
