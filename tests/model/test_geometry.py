"""Straight-wire geometry of each antenna shape (exact arithmetic checks)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from necflow.model import geometry

WIRE = {"diameter": "2 mm", "material": "copper"}


def test_doublet_spans_x_centred_at_height(make_design):
    d = make_design({"shape": "doublet", "span": "20 m", "height": "10 m", "wire": WIRE})
    spans, feed = geometry(d)
    assert len(spans) == 1
    name, start, end, radius = spans[0]
    np.testing.assert_allclose(start, [-10, 0, 10], atol=1e-12)
    np.testing.assert_allclose(end, [10, 0, 10], atol=1e-12)
    assert radius == pytest.approx(1e-3, rel=1e-12)
    assert feed == (0, pytest.approx(10.0, rel=1e-12))


@pytest.mark.parametrize("position, expected", [(0.33, 13.2), ("33 %", 13.2), ("9 m", 9.0)])
def test_off_centre_feed_from_the_left_tip(make_design, position, expected):
    d = make_design({"shape": "off-centre", "span": "40 m", "height": "10 m",
                     "feed_position": position})
    spans, feed = geometry(d)
    assert spans[0].start[0] == pytest.approx(-20.0)
    assert feed.wire == 0 and feed.distance == pytest.approx(expected, rel=1e-12)


def test_inverted_v_end_height_and_droop_give_the_same_wire(make_design):
    apex, leg, end = 12.0, 10.0, 7.0
    droop = math.degrees(math.asin((apex - end) / leg))  # 30 deg
    a = make_design({"shape": "inverted-v", "apex_height": f"{apex} m", "leg": f"{leg} m",
                     "end_height": f"{end} m"})
    b = make_design({"shape": "inverted-v", "apex_height": f"{apex} m", "leg": f"{leg} m",
                     "droop": f"{droop!r} deg"})
    (sa, fa), (sb, _fb) = geometry(a), geometry(b)
    for wa, wb in zip(sa, sb):
        np.testing.assert_allclose(wa.start, wb.start, atol=1e-9)
        np.testing.assert_allclose(wa.end, wb.end, atol=1e-9)
    left, right = sa
    # Legs meet at the apex, have the given length and end at the given height.
    np.testing.assert_array_equal(left.end, right.start)
    np.testing.assert_allclose(left.end, [0, 0, apex])
    for w in sa:
        assert np.linalg.norm(w.end - w.start) == pytest.approx(leg, rel=1e-12)
    assert left.start[2] == pytest.approx(end) and right.end[2] == pytest.approx(end)
    # Horizontal reach leg cos(droop) = sqrt(10^2 - 5^2).
    assert right.end[0] == pytest.approx(math.sqrt(75.0), rel=1e-12)
    assert fa == (0, pytest.approx(leg))


def test_wire_list_names_diameters_and_feed(make_design):
    d = make_design({"shape": "wires", "wire": {"diameter": "2 mm"},
                     "wires": [{"start": ["0 m", "0 m", "0 m"], "end": ["0 m", "0 m", "5 m"],
                                "diameter": "4 mm"},
                               {"name": "top", "start": ["0 m", "0 m", "5 m"],
                                "end": ["8 m", "0 m", "5 m"]}],
                     "feed": {"wire": "top", "position": "2 m"}},
                    ground={"model": "perfect"})
    spans, feed = geometry(d)
    assert [s.name for s in spans] == ["1", "top"]
    assert [s.radius for s in spans] == pytest.approx([2e-3, 1e-3])
    assert feed == (1, pytest.approx(2.0))


def test_wire_list_default_position_is_the_middle(make_design):
    d = make_design({"shape": "wires", "wires": [
        {"start": ["0 m", "0 m", "10 m"], "end": ["6 m", "0 m", "10 m"]}], "feed": {"wire": 1}})
    _, feed = geometry(d)
    assert feed == (0, pytest.approx(3.0))
