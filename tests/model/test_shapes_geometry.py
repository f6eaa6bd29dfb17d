"""Geometry of the sloper, the loops and the bent doublet: lengths, closure,
feed points and refusals, each against a closed form written out here
(Pythagoras, the regular polygon's circumradius and apothem, the triangle's
height), never against the geometry code's own arithmetic."""

from __future__ import annotations

import math

import numpy as np
import pytest

from necflow.chain import load_design_text
from necflow.errors import ConfigError
from necflow.model import build_model, check_geometry, geometry
from necflow.model.clearance import clearance_problems

F_MAX = 14.35e6
PERFECT = {"model": "perfect"}
WIRE = {"diameter": "2 mm", "material": "copper"}


def _length(w) -> float:
    return float(np.linalg.norm(w.end - w.start))


def _feed_point(spans, feed) -> np.ndarray:
    """The point the feed location names: ``distance`` along its wire."""
    w = spans[feed.wire]
    return w.start + feed.distance * (w.end - w.start) / _length(w)


def _field(design) -> str:
    with pytest.raises(ConfigError) as info:
        check_geometry(design, F_MAX)
    return info.value.field


def _assert_closed(spans):
    """Each wire starts on the very point where the one before it ends, and
    the last ends where the first starts."""
    for k, w in enumerate(spans):
        np.testing.assert_array_equal(w.end, spans[(k + 1) % len(spans)].start)


# ----------------------------------------------------------------------------
# Sloper


def test_sloper_slope_and_bottom_height_give_the_same_wire(make_design):
    # 10 m from 12 m at 30 deg: drop 10 sin 30 = 5 m, reach sqrt(10^2 - 5^2) m.
    a = make_design({"shape": "sloper", "length": "10 m", "top_height": "12 m",
                     "slope": "30 deg", "azimuth": "90 deg", "wire": WIRE})
    b = make_design({"shape": "sloper", "length": "10 m", "top_height": "12 m",
                     "bottom_height": "7 m", "azimuth": "90 deg", "wire": WIRE})
    (sa,), fa = geometry(a)
    (sb,), _ = geometry(b)
    for w in (sa, sb):
        np.testing.assert_allclose(w.start, [0, 0, 12], atol=1e-12)
        np.testing.assert_allclose(w.end, [0, math.sqrt(75.0), 7], atol=1e-12)
        assert _length(w) == pytest.approx(10.0, rel=1e-12)
    # Default feed: the centre, 5 m from the upper end.
    assert fa == (0, pytest.approx(5.0, rel=1e-12))
    np.testing.assert_allclose(_feed_point([sa], fa), [0, math.sqrt(75.0) / 2, 9.5], atol=1e-12)


@pytest.mark.parametrize("azimuth, direction", [("0 deg", (1, 0)), ("45 deg", (0.5 ** 0.5,) * 2),
                                                ("-90 deg", (0, -1)), ("180 deg", (-1, 0))])
def test_sloper_runs_toward_its_azimuth(make_design, azimuth, direction):
    # 5 m at 36.87 deg (a 3-4-5 triangle): drop 3 m, reach 4 m.
    d = make_design({"shape": "sloper", "length": "5 m", "top_height": "9 m",
                     "bottom_height": "6 m", "azimuth": azimuth})
    (w,), _ = geometry(d)
    np.testing.assert_allclose(w.end, [4 * direction[0], 4 * direction[1], 6], atol=1e-12)


@pytest.mark.parametrize("position, expected", [(0.2, 2.0), ("35 %", 3.5), ("6 m", 6.0)])
def test_sloper_feed_from_the_upper_end(make_design, position, expected):
    # Vertical wire (slope 90 deg): the feed sits `expected` metres below the top.
    d = make_design({"shape": "sloper", "length": "10 m", "top_height": "15 m",
                     "slope": "90 deg", "feed_position": position})
    spans, feed = geometry(d)
    np.testing.assert_allclose(_feed_point(spans, feed), [0, 0, 15 - expected], atol=1e-9)


def test_sloper_refusals_name_the_field(make_design):
    base = {"shape": "sloper", "length": "10 m", "top_height": "8 m"}
    assert _field(make_design({**base, "bottom_height": "9 m"})) == "antenna.bottom_height"
    # 10 m of wire cannot drop 8 m -> 20 m.
    assert _field(make_design({**base, "top_height": "20 m", "bottom_height": "1 m"})
                  ) == "antenna.length"
    # 10 m at 60 deg drops 8.66 m from 8 m: below a ground, fine in free space.
    steep = {**base, "slope": "60 deg"}
    assert _field(make_design(steep, ground=PERFECT)) == "antenna.length"
    check_geometry(make_design(steep), F_MAX)
    assert _field(make_design({**base, "slope": "20 deg", "feed_position": 1.0})
                  ) == "antenna.feed_position"


def test_sloper_needs_exactly_one_of_bottom_height_and_slope():
    text = """\
name: s
bands: [20m]
antenna:
  shape: sloper
  length: 10 m
  top_height: 12 m
  bottom_height: 4 m
  slope: 30 deg
ground: {model: free-space}
feed: []
"""
    with pytest.raises(ConfigError) as info:
        load_design_text(text, file="s.yaml")
    assert "exactly one of 'bottom_height' and 'slope'" in str(info.value)


# ----------------------------------------------------------------------------
# Delta loop


def test_equilateral_delta_loop(make_design):
    # Perimeter 21 m, base defaulted to a third: three 7 m sides, the triangle
    # 7 sqrt(3)/2 m tall, the base at the bottom height.
    d = make_design({"shape": "delta-loop", "perimeter": "21 m", "bottom_height": "4 m"},
                    ground=PERFECT)
    spans, feed = geometry(d)
    assert len(spans) == 3
    _assert_closed(spans)
    assert [_length(w) for w in spans] == pytest.approx([7.0] * 3, rel=1e-12)
    assert sum(_length(w) for w in spans) == pytest.approx(21.0, rel=1e-12)
    tall = 7 * math.sqrt(3) / 2
    np.testing.assert_allclose([spans[0].start, spans[0].end, spans[1].end],
                               [[-3.5, 0, 4], [3.5, 0, 4], [0, 0, 4 + tall]], atol=1e-12)
    np.testing.assert_allclose(_feed_point(spans, feed), [0, 0, 4], atol=1e-12)
    assert all(min(w.start[2], w.end[2]) > 0 for w in spans)


def test_apex_down_delta_hung_from_its_top(make_design):
    # Perimeter 21 m, base 8 m: sloping sides 6.5 m, triangle sqrt(6.5^2 - 4^2)
    # = sqrt(26.25) m tall; base on top at 12 m, apex below it.
    d = make_design({"shape": "delta-loop", "perimeter": "21 m", "base": "8 m", "apex": "down",
                     "top_height": "12 m", "feed": "apex"}, ground=PERFECT)
    spans, feed = geometry(d)
    _assert_closed(spans)
    assert [_length(w) for w in spans] == pytest.approx([8.0, 6.5, 6.5], rel=1e-12)
    z_apex = 12 - math.sqrt(26.25)
    np.testing.assert_allclose(_feed_point(spans, feed), [0, 0, z_apex], atol=1e-12)
    assert min(min(w.start[2], w.end[2]) for w in spans) == pytest.approx(z_apex, rel=1e-12)


@pytest.mark.parametrize("apex", ["up", "down"])
@pytest.mark.parametrize("feed, where", [("base-centre", "base-centre"),
                                         ("base-corner", "left"),
                                         ("apex", "apex"),
                                         ("side-centre", "side")])
def test_delta_feed_points(make_design, apex, feed, where):
    # Base 6 m, sides 5 m: a 3-4-5 triangle 4 m tall, lowest point at 2 m.
    d = make_design({"shape": "delta-loop", "perimeter": "16 m", "base": "6 m", "apex": apex,
                     "bottom_height": "2 m", "feed": feed})
    spans, loc = geometry(d)
    z_base, z_apex = (2.0, 6.0) if apex == "up" else (6.0, 2.0)
    expected = {"base-centre": [0, 0, z_base], "left": [-3, 0, z_base],
                "apex": [0, 0, z_apex], "side": [1.5, 0, (z_base + z_apex) / 2]}[where]
    np.testing.assert_allclose(_feed_point(spans, loc), expected, atol=1e-12)
    if where in ("left", "apex"):
        # A corner feed sits on a wire end shared by exactly two wires.
        assert loc.distance in (0.0, pytest.approx(_length(spans[loc.wire])))


@pytest.mark.parametrize("base", ["10.5 m", "12 m"])
def test_delta_base_too_long_for_the_perimeter(make_design, base):
    d = make_design({"shape": "delta-loop", "perimeter": "21 m", "base": base,
                     "bottom_height": "3 m"})
    assert _field(d) == "antenna.base"


def test_delta_bottom_below_ground_names_top_height(make_design):
    # 21 m equilateral: 6.06 m tall, so a top at 5 m puts the base 1.06 m under.
    ant = {"shape": "delta-loop", "perimeter": "21 m", "top_height": "5 m"}
    with pytest.raises(ConfigError) as info:
        check_geometry(make_design(ant, ground=PERFECT), F_MAX)
    assert info.value.field == "antenna.top_height"
    assert "1.06 m below ground" in info.value.message
    check_geometry(make_design(ant), F_MAX)  # free space: no ground to reach


# ----------------------------------------------------------------------------
# Square loop


@pytest.mark.parametrize("feed, expected", [("bottom-centre", [0, 0, 3]),
                                            ("side-centre", [2.5, 0, 5.5]),
                                            ("bottom-corner", [-2.5, 0, 3])])
def test_square_loop(make_design, feed, expected):
    d = make_design({"shape": "square-loop", "side": "5 m", "bottom_height": "3 m",
                     "feed": feed}, ground=PERFECT)
    spans, loc = geometry(d)
    assert len(spans) == 4
    _assert_closed(spans)
    assert [_length(w) for w in spans] == pytest.approx([5.0] * 4, rel=1e-12)
    corners = np.array([w.start for w in spans])
    np.testing.assert_allclose(corners, [[-2.5, 0, 3], [2.5, 0, 3], [2.5, 0, 8], [-2.5, 0, 8]],
                               atol=1e-12)
    np.testing.assert_allclose(_feed_point(spans, loc), expected, atol=1e-12)


def test_square_loop_top_height(make_design):
    d = make_design({"shape": "square-loop", "side": "5 m", "top_height": "12 m"},
                    ground=PERFECT)
    spans, _ = geometry(d)
    assert min(w.start[2] for w in spans) == pytest.approx(7.0)
    assert max(w.start[2] for w in spans) == pytest.approx(12.0)
    # A 5 m square under a 5 m top rests its bottom side on the ground: refused.
    low = make_design({"shape": "square-loop", "side": "5 m", "top_height": "5 m"},
                      ground=PERFECT)
    with pytest.raises(ConfigError) as info:
        check_geometry(low, F_MAX)
    assert info.value.field == "antenna.top_height" and "on the ground" in info.value.message


def test_vertical_loop_needs_one_height():
    text = """\
name: q
bands: [20m]
antenna: {shape: square-loop, side: 5 m}
ground: {model: free-space}
feed: []
"""
    with pytest.raises(ConfigError) as info:
        load_design_text(text, file="q.yaml")
    assert "exactly one of 'bottom_height' and 'top_height'" in str(info.value)


# ----------------------------------------------------------------------------
# Horizontal loop


@pytest.mark.parametrize("n", [3, 4, 5, 6, 8, 12, 36])
def test_horizontal_loop_is_a_regular_polygon(make_design, n):
    # Side s = P / n; circumradius s / (2 sin(pi/n)); apothem s / (2 tan(pi/n)).
    p, h = 42.0, 9.0
    d = make_design({"shape": "horizontal-loop", "sides": n, "perimeter": f"{p} m",
                     "height": f"{h} m"}, ground=PERFECT)
    spans, feed = geometry(d)
    assert len(spans) == n
    _assert_closed(spans)
    s = p / n
    assert [_length(w) for w in spans] == pytest.approx([s] * n, rel=1e-12)
    assert sum(_length(w) for w in spans) == pytest.approx(p, rel=1e-12)
    corners = np.array([w.start for w in spans])
    np.testing.assert_allclose(corners[:, 2], h, atol=0)
    np.testing.assert_allclose(np.hypot(corners[:, 0], corners[:, 1]),
                               s / (2 * math.sin(math.pi / n)), rtol=1e-12)
    apothem = s / (2 * math.tan(math.pi / n))
    # Side 1 lies along x at the -y edge, and the feed is its middle.
    np.testing.assert_allclose([spans[0].start, spans[0].end],
                               [[-s / 2, -apothem, h], [s / 2, -apothem, h]], atol=1e-12)
    np.testing.assert_allclose(_feed_point(spans, feed), [0, -apothem, h], atol=1e-12)


def test_horizontal_loop_corner_feed(make_design):
    d = make_design({"shape": "horizontal-loop", "sides": 4, "perimeter": "20 m",
                     "height": "10 m", "feed": "corner"})
    spans, feed = geometry(d)
    np.testing.assert_allclose(_feed_point(spans, feed), [-2.5, -2.5, 10], atol=1e-12)
    assert feed.distance == 0.0


# ----------------------------------------------------------------------------
# Bent doublet


def test_bent_doublet_legs_add_up(make_design):
    # Feed at 10 m.  Left: 10 m straight to an end at 6 m (reach sqrt(100 - 16)).
    # Right: 8 m, bent 60 % out (4.8 m) at 9 m high, the outer 3.2 m turned
    # 90 deg toward +y and climbing back to 10 m.
    d = make_design({"shape": "bent-doublet", "height": "10 m",
                     "left": {"length": "10 m", "end_height": "6 m"},
                     "right": {"length": "8 m", "end_height": "10 m",
                               "bend": {"position": 0.6, "turn": "90 deg", "height": "9 m"}}},
                    ground=PERFECT)
    spans, feed = geometry(d)
    assert [w.name for w in spans] == ["left leg", "right leg, inner piece",
                                       "right leg, outer piece"]
    left, inner, outer = spans
    assert _length(left) == pytest.approx(10.0, rel=1e-12)
    assert _length(inner) + _length(outer) == pytest.approx(8.0, rel=1e-12)
    assert _length(inner) == pytest.approx(4.8, rel=1e-12)
    np.testing.assert_allclose(left.start, [-math.sqrt(84.0), 0, 6], atol=1e-12)
    r_in, r_out = math.sqrt(4.8 ** 2 - 1.0), math.sqrt(3.2 ** 2 - 1.0)
    np.testing.assert_allclose(inner.end, [r_in, 0, 9], atol=1e-12)
    np.testing.assert_allclose(outer.end, [r_in, r_out, 10], atol=1e-12)
    # The legs meet at the feed point, which the feed location names.
    np.testing.assert_array_equal(left.end, inner.start)
    np.testing.assert_allclose(_feed_point(spans, feed), [0, 0, 10], atol=1e-12)
    assert feed.wire == 0 and feed.distance == pytest.approx(10.0, rel=1e-12)
    assert all(min(w.start[2], w.end[2]) > 0 for w in spans)


@pytest.mark.parametrize("turn", [30.0, -45.0, 135.0])
def test_bend_turns_the_outer_piece_by_its_angle(make_design, turn):
    # Level legs: the outer piece's direction, seen from above, is the inner
    # one's turned by `turn` (positive toward +y on either leg).
    d = make_design({"shape": "bent-doublet", "height": "10 m",
                     "left": {"length": "10 m", "bend": {"position": "4 m",
                                                         "turn": f"{turn} deg"}},
                     "right": {"length": "10 m", "bend": {"position": "4 m",
                                                          "turn": f"{turn} deg"}}})
    spans, _ = geometry(d)
    outer_left, inner_left, inner_right, outer_right = spans
    t = math.radians(turn)
    np.testing.assert_allclose(inner_left.start, [-4, 0, 10], atol=1e-12)
    np.testing.assert_allclose(outer_left.start, [-4 - 6 * math.cos(t), 6 * math.sin(t), 10],
                               atol=1e-12)
    np.testing.assert_allclose(outer_right.end, [4 + 6 * math.cos(t), 6 * math.sin(t), 10],
                               atol=1e-12)


def test_straight_bent_doublet_is_the_doublet(make_design):
    # The same wire in the same place: the same model, key for key, with no
    # bend, and with a bend that turns by 0 deg at the height of the line.
    doublet = build_model(make_design({"shape": "doublet", "span": "20 m",
                                       "height": "10 m", "wire": WIRE}), F_MAX)
    for left in ({"length": "10 m"},
                 {"length": "10 m", "bend": {"position": 0.5}},
                 {"length": "10 m", "bend": {"position": "3 m", "turn": "0 deg",
                                             "height": "10 m"}}):
        d = make_design({"shape": "bent-doublet", "height": "10 m", "left": left,
                         "right": {"length": "10 m"}, "wire": WIRE})
        assert len(geometry(d)[0]) == 2
        assert build_model(d, F_MAX).key() == doublet.key()


def test_drooping_bent_doublet_is_the_inverted_v(make_design):
    vee = build_model(make_design({"shape": "inverted-v", "apex_height": "12 m",
                                   "leg": "10 m", "end_height": "7 m"}), F_MAX)
    leg = {"length": "10 m", "end_height": "7 m"}
    d = make_design({"shape": "bent-doublet", "height": "12 m", "left": leg, "right": leg})
    assert build_model(d, F_MAX).key() == vee.key()


@pytest.mark.parametrize("position", [1.0, 0.0, "100 %", "10 m", "12 m"])
def test_bend_beyond_the_leg(make_design, position):
    d = make_design({"shape": "bent-doublet", "height": "10 m",
                     "left": {"length": "10 m", "bend": {"position": position}},
                     "right": {"length": "10 m"}})
    with pytest.raises(ConfigError) as info:
        check_geometry(d, F_MAX)
    assert info.value.field == "antenna.left.bend.position"
    assert "off the leg" in info.value.message


def test_unreachable_heights(make_design):
    # An end 12 m below a 13 m feed on a 10 m leg.
    d = make_design({"shape": "bent-doublet", "height": "13 m",
                     "left": {"length": "10 m", "end_height": "1 m"},
                     "right": {"length": "10 m"}})
    assert _field(d) == "antenna.left.end_height"
    # A bend 3 m out cannot be 4 m lower than the feed.
    d = make_design({"shape": "bent-doublet", "height": "10 m", "left": {"length": "10 m"},
                     "right": {"length": "10 m", "bend": {"position": "3 m", "height": "6 m"}}})
    assert _field(d) == "antenna.right.bend.height"


def test_bent_legs_that_cross_are_refused(make_design):
    # Level legs at 10 m.  Left: bend 2 m out, outer 8 m turned 120 deg, heading
    # (+0.5, +0.866); right: bend 5 m out, outer 9 m turned 120 deg, heading
    # (-0.5, +0.866).  The outer pieces meet 7 m past their bends, at (1.5, 6.06).
    d = make_design({"shape": "bent-doublet", "height": "10 m",
                     "left": {"length": "10 m", "bend": {"position": "2 m", "turn": "120 deg"}},
                     "right": {"length": "14 m", "bend": {"position": "5 m",
                                                          "turn": "120 deg"}}})
    with pytest.raises(ConfigError) as info:
        check_geometry(d, F_MAX)
    assert info.value.field == "antenna" and "crosses" in info.value.message


def test_a_leg_folded_back_on_itself_is_refused(make_design):
    # 179.99 deg: the outer piece runs back 4 m along the inner one and ends
    # 4 sin(0.01 deg) = 0.7 mm from it, inside the two 1 mm radii.
    d = make_design({"shape": "bent-doublet", "height": "10 m", "left": {"length": "10 m"},
                     "right": {"length": "10 m", "bend": {"position": "6 m",
                                                          "turn": "179.99 deg"}}})
    with pytest.raises(ConfigError) as info:
        check_geometry(d, F_MAX)
    assert info.value.field == "antenna" and "overlaps" in info.value.message


def test_nested_error_is_placed_at_its_line():
    text = """\
name: bent
bands: [40m]
antenna:
  shape: bent-doublet
  height: 10 m
  left: {length: 10 m}
  right:
    length: 10 m
    bend:
      position: 11 m
ground: {model: free-space}
feed: []
"""
    with pytest.raises(ConfigError) as info:
        load_design_text(text, file="b.yaml")
    assert str(info.value).startswith("b.yaml:10: antenna.right.bend.position:"), str(info.value)


# ----------------------------------------------------------------------------
# Every new shape's own junctions pass the clearance check


SOUND = [
    {"shape": "sloper", "length": "10 m", "top_height": "12 m", "slope": "45 deg",
     "azimuth": "30 deg", "feed_position": 0.25},
    *({"shape": "delta-loop", "perimeter": "21 m", "bottom_height": "3 m", "apex": apex,
       "feed": feed} for apex in ("up", "down")
      for feed in ("base-centre", "base-corner", "apex", "side-centre")),
    {"shape": "delta-loop", "perimeter": "21 m", "base": "10 m", "top_height": "12 m"},
    {"shape": "delta-loop", "perimeter": "21 m", "base": "2 m", "bottom_height": "2 m",
     "feed": "apex"},
    *({"shape": "square-loop", "side": "5 m", "bottom_height": "3 m", "feed": feed}
      for feed in ("bottom-centre", "side-centre", "bottom-corner")),
    *({"shape": "horizontal-loop", "sides": n, "perimeter": "42 m", "height": "10 m",
       "feed": feed} for n in (3, 4, 7, 36) for feed in ("side-centre", "corner")),
    {"shape": "bent-doublet", "height": "10 m",
     "left": {"length": "10 m", "bend": {"position": 0.7, "turn": "90 deg"}},
     "right": {"length": "10 m", "bend": {"position": 0.7, "turn": "90 deg"}}},
    {"shape": "bent-doublet", "height": "10 m",      # ends hanging straight down
     "left": {"length": "10 m", "end_height": "3 m", "bend": {"position": "3 m",
                                                             "height": "10 m"}},
     "right": {"length": "12 m", "end_height": "6 m", "bend": {"position": "6 m",
                                                              "height": "10 m"}}},
    {"shape": "bent-doublet", "height": "10 m",      # one end climbing to a tree
     "left": {"length": "9 m", "end_height": "14 m"},
     "right": {"length": "11 m", "end_height": "5 m",
               "bend": {"position": 0.4, "turn": "-150 deg", "height": "8 m"}}},
]


@pytest.mark.parametrize("antenna", SOUND, ids=lambda a: a["shape"])
def test_own_junctions_pass_the_clearance_check(make_design, antenna):
    d = make_design({**antenna, "wire": WIRE}, ground=PERFECT)
    spans, _ = geometry(d)
    assert clearance_problems(spans) == []
    assert all(min(w.start[2], w.end[2]) > 0 for w in spans)
    model = build_model(d, F_MAX)        # the whole check, the plan and the feed
    assert model.segment_count > len(spans)
