"""check_geometry: each user error names the field to change."""

from __future__ import annotations

import math
import re

import pytest

import necflow.model.build as build_module
from necflow.errors import ConfigError
from necflow.model import build_model, check_geometry, target_segment_length
from necflow.model.segments import GROWTH

F_MAX = 14.35e6
PERFECT = {"model": "perfect"}


def _wires(*ends, feed=None):
    wires = [{"start": [f"{v} m" for v in a], "end": [f"{v} m" for v in b]} for a, b in ends]
    return {"shape": "wires", "wires": wires, "feed": feed or {"wire": 1}}


def _field(design):
    with pytest.raises(ConfigError) as info:
        check_geometry(design, F_MAX)
    return info.value.field


def test_wire_below_ground(make_design):
    ant = _wires(((0, 0, 5), (10, 0, 5)), ((10, 0, 5), (12, 0, -1)))
    assert _field(make_design(ant, ground=PERFECT)) == "antenna.wires[1].end"
    ant = _wires(((0, 0, -0.5), (0, 0, 5)))
    assert _field(make_design(ant, ground=PERFECT)) == "antenna.wires[0].start"


def test_below_ground_is_fine_in_free_space(make_design):
    ant = _wires(((0, 0, 5), (10, 0, 5)), ((10, 0, 5), (12, 0, -1)))
    check_geometry(make_design(ant), F_MAX)  # no ground: no error


def test_end_exactly_at_ground_is_a_connection(make_design):
    ant = _wires(((0, 0, 0), (0, 0, 5)), feed={"wire": 1, "position": 0.1})
    check_geometry(make_design(ant, ground=PERFECT), F_MAX)


def test_inverted_v_end_above_apex(make_design):
    ant = {"shape": "inverted-v", "apex_height": "10 m", "leg": "10 m", "end_height": "11 m"}
    assert _field(make_design(ant, ground=PERFECT)) == "antenna.end_height"


def test_inverted_v_legs_too_short_for_end_height(make_design):
    ant = {"shape": "inverted-v", "apex_height": "10 m", "leg": "3 m", "end_height": "2 m"}
    assert _field(make_design(ant, ground=PERFECT)) == "antenna.leg"


def test_inverted_v_legs_below_ground(make_design):
    # 20 m legs at 45 deg drop 14.1 m from a 10 m apex.
    ant = {"shape": "inverted-v", "apex_height": "10 m", "leg": "20 m", "droop": "45 deg"}
    assert _field(make_design(ant, ground=PERFECT)) == "antenna.leg"
    check_geometry(make_design(ant), F_MAX)  # in free space there is no ground to hit


@pytest.mark.parametrize("position", [1.2, 0.0, "0 %", "41 m", "0 m"])
def test_off_centre_feed_off_the_wire(make_design, position):
    ant = {"shape": "off-centre", "span": "40 m", "height": "10 m", "feed_position": position}
    assert _field(make_design(ant)) == "antenna.feed_position"


@pytest.mark.parametrize("position", [1.0, "10 m", "12 m"])
def test_wire_list_feed_off_the_wire(make_design, position):
    ant = _wires(((0, 0, 5), (10, 0, 5)), feed={"wire": 1, "position": position})
    assert _field(make_design(ant)) == "antenna.feed.position"


def _doublet_count(span, longest, finest, growth):
    """Segments of a centre-fed doublet graded from its source: per side the
    ceiling of the integral of dx / min(longest, finest + growth x), closed form."""
    side = span / 2 - finest / 2
    reach = (longest - finest) / growth
    phi = (math.log1p(growth * side / finest) / growth if side <= reach else
           math.log(longest / finest) / growth + (side - reach) / longest)
    return 2 * math.ceil(phi - 1e-9) + 1


def test_too_many_segments_refused_before_building(make_design, monkeypatch):
    # 2 km of wire at 30 MHz (wavelength 9.993 m) and 200 segments per wavelength
    # needs about 40 000 segments of 0.05 m, plus the graded ones near the source.
    def no_wires(*args, **kwargs):
        raise AssertionError("a wire was built before the segment limit was checked")

    monkeypatch.setattr(build_module, "Wire", no_wires)
    d = make_design({"shape": "doublet", "span": "2000 m", "height": "10 m"},
                    segments_per_wavelength=200, max_segments=10000)
    with pytest.raises(ConfigError) as info:
        build_model(d, 30e6)
    assert info.value.field == "model.max_segments"
    count = int(re.search(r"needs (\d+) segments", info.value.message).group(1))
    longest = target_segment_length(d, 30e6)
    # Finest: 1e-3 wavelength at 14.0 MHz (the design's 20 m band), above 16 radii.
    finest = 1e-3 * 299_792_458 / 14.0e6
    assert count == _doublet_count(2000.0, longest, finest, GROWTH)
    assert 2000.0 / longest <= count <= 2000.0 / longest + 40


def test_limit_is_inclusive(make_design):
    # A 20 m doublet at 14.35 MHz: 79 segments by the closed-form count (per side
    # ln(1 + 0.1 * 9.989 / 0.02141) / 0.1 = 38.6, so 39); a limit of 79 passes,
    # 78 refuses.
    ant = {"shape": "doublet", "span": "20 m", "height": "10 m"}
    d = make_design(ant)
    n = _doublet_count(20.0, target_segment_length(d, F_MAX), 1e-3 * 299_792_458 / 14.0e6,
                       GROWTH)
    assert n == 79
    assert build_model(make_design(ant, max_segments=n), F_MAX).segment_count == n
    assert _field(make_design(ant, max_segments=n - 1)) == "model.max_segments"


def test_refined_model_honours_the_limit(make_design):
    # The convergence check's model (segments doubled) is counted against the same
    # limit before it is built, and the message says it is the refined one.
    ant = {"shape": "doublet", "span": "20 m", "height": "10 m"}
    d = make_design(ant, max_segments=79)
    build_model(d, F_MAX)
    with pytest.raises(ConfigError) as info:
        build_model(d, F_MAX, density=2)
    assert info.value.field == "model.max_segments"
    assert "convergence check" in info.value.message
