"""Segmentation of built models against the NEC-2 user's guide rules.

Rules from memory of G. J. Burke and A. J. Poggio, Numerical Electromagnetics
Code (NEC) - Method of Moments, Part III, LLNL 1981: segments no longer than
the chosen fraction of a wavelength; source on a segment of its own; nearly
equal segment lengths at junctions; connected ends coincide.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import speed_of_light

from necflow.model import build_model, geometry, target_segment_length

F_MAX = 14.35e6
SHAPES = {
    "doublet": {"shape": "doublet", "span": "20 m", "height": "10 m"},
    "off-centre": {"shape": "off-centre", "span": "41 m", "height": "10 m",
                   "feed_position": "13.3 m"},
    "inverted-v": {"shape": "inverted-v", "apex_height": "12 m", "leg": "10 m",
                   "droop": "35 deg"},
    "wires": {"shape": "wires", "wires": [
        {"name": "vert", "start": ["0 m", "0 m", "0 m"], "end": ["0 m", "0 m", "5.2 m"]},
        {"name": "top", "start": ["0 m", "0 m", "5.2 m"], "end": ["9.7 m", "0 m", "5.2 m"]},
        {"name": "tail", "start": ["9.7 m", "0 m", "5.2 m"], "end": ["9.7 m", "0 m", "0.4 m"]}],
        "feed": {"wire": "top", "position": 0.5}},
}


@pytest.fixture(params=sorted(SHAPES))
def built(request, make_design):
    d = make_design(SHAPES[request.param], ground={"model": "perfect"})
    return d, build_model(d, F_MAX)


def test_no_segment_longer_than_the_target(built):
    d, m = built
    target = speed_of_light / F_MAX / d.model.segments_per_wavelength
    assert target == pytest.approx(target_segment_length(d, F_MAX), rel=1e-12)
    for w in m.wires:
        # Round-off only: the builder never exceeds the target.
        assert w.segment_length <= target * (1 + 1e-9), w.name
        assert w.segments >= 1


def test_source_is_one_segment_centred_on_the_feed(built):
    d, m = built
    src = m.feed_wire
    assert src.segments == 1 and m.feed_segment == 1
    spans, feed = geometry(d)
    w = spans[feed.wire]
    u = (w.end - w.start) / np.linalg.norm(w.end - w.start)
    np.testing.assert_allclose(m.feed_point(), w.start + feed.distance * u, atol=1e-9)


def test_junction_segments_nearly_equal(built):
    # The builder picks counts so both sides of the source match it; 1.35 is the
    # worst ratio a uniform count can leave on wires of three or more segments
    # (n/(n-1) rounding plus the shortened legs of the inverted-V).
    _, m = built
    src = m.feed_wire
    for w in m.wires:
        if w is src:
            continue
        touches = any(np.array_equal(p, q) for p in (w.start, w.end) for q in (src.start, src.end))
        if touches:
            r = w.segment_length / src.segment_length
            assert 1 / 1.35 <= r <= 1.35, (w.name, r)


def test_connected_ends_coincide_exactly(built):
    d, m = built
    ends = [p for w in m.wires for p in (w.start, w.end)]
    # Every source-wire end is bit-identical to one end of a neighbour.
    for p in (m.feed_wire.start, m.feed_wire.end):
        assert sum(np.array_equal(p, q) for q in ends) == 2


def test_symmetric_doublet_has_odd_mirror_segmentation(make_design):
    d = make_design(SHAPES["doublet"])
    m = build_model(d, F_MAX)
    assert m.segment_count % 2 == 1
    first, src, last = m.wires
    assert first.segments == last.segments
    np.testing.assert_allclose(first.start * [-1, 1, 1], last.end, atol=1e-12)
    np.testing.assert_allclose(src.start * [-1, 1, 1], src.end, atol=1e-12)


def test_inverted_v_stays_symmetric(make_design):
    m = build_model(make_design(SHAPES["inverted-v"]), F_MAX)
    left, src, right = m.wires
    assert left.segments == right.segments
    np.testing.assert_allclose(left.start * [-1, 1, 1], right.end, atol=1e-12)
    np.testing.assert_allclose(m.feed_point(), [0, 0, 12.0], atol=1e-12)


def test_off_centre_feed_near_a_tip_still_gets_its_own_segment(make_design):
    # A feed 0.3 m from a tip at 14 MHz (target segment 1.04 m): the source is
    # shortened to fit, 0.2 m, with one equal segment between it and the tip.
    d = make_design({"shape": "off-centre", "span": "20 m", "height": "10 m",
                     "feed_position": "0.3 m"})
    m = build_model(d, F_MAX)
    tip, src, rest = m.wires
    assert src.segment_length == pytest.approx(0.2, rel=1e-9)
    assert tip.segments == 1 and tip.segment_length == pytest.approx(0.2, rel=1e-9)
    assert m.feed_point()[0] == pytest.approx(-10 + 0.3, rel=1e-12)


@pytest.mark.parametrize("f", [3.5e6, 7e6, 14e6, 28e6])
def test_segment_count_is_the_fewest_that_meet_the_target(make_design, f):
    # A centre-fed 20 m wire needs at least span/target segments; an odd count
    # and the source cut can add at most 2 (one per side).
    d = make_design(SHAPES["doublet"])
    n = build_model(d, f).segment_count
    x = 20.0 / target_segment_length(d, f)
    assert x <= n <= x + 2


def test_explicit_wire_list_keeps_unfed_wires_whole(make_design):
    d = make_design(SHAPES["wires"], ground={"model": "perfect"})
    m = build_model(d, F_MAX)
    names = [w.name for w in m.wires]
    assert names == ["vert", "top (to start)", "top (source)", "top (to end)", "tail"]
    # The ground end of the vertical wire stays at z = 0 (ground connection).
    assert m.wires[0].start[2] == 0.0


def test_key_tracks_what_determines_a_solve(make_design):
    base = SHAPES["doublet"]
    k = build_model(make_design(base), F_MAX).key()
    assert build_model(make_design(base), F_MAX).key() == k
    assert build_model(make_design({**base, "span": "20.5 m"}), F_MAX).key() != k
    assert build_model(make_design(base, ground={"model": "perfect"}), F_MAX).key() != k
    lossless = {**base, "wire": {"material": "lossless"}}
    assert build_model(make_design(lossless), F_MAX).key() != k
    # The feed chain does not enter the wire model.
    d = make_design(base)
    d2 = d.model_copy(update={"feed": [{"id": "c", "series": "capacitor", "value": 1e-10}]})
    assert build_model(d2, F_MAX).key() == k
