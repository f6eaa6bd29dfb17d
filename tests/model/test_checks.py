"""check_geometry: each user error names the field to change."""

from __future__ import annotations

import re

import pytest

import necflow.model.build as build_module
from necflow.errors import ConfigError
from necflow.model import build_model, check_geometry, target_segment_length

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


def test_too_many_segments_refused_before_building(make_design, monkeypatch):
    # 2 km of wire at 30 MHz (wavelength 9.993 m) and 200 segments per wavelength
    # needs 40 028 segments, rounded up to the next odd count.
    def no_wires(*args, **kwargs):
        raise AssertionError("a wire was built before the segment limit was checked")

    monkeypatch.setattr(build_module, "Wire", no_wires)
    d = make_design({"shape": "doublet", "span": "2000 m", "height": "10 m"},
                    segments_per_wavelength=200, max_segments=10000)
    with pytest.raises(ConfigError) as info:
        build_model(d, 30e6)
    assert info.value.field == "model.max_segments"
    count = int(re.search(r"needs (\d+) segments", info.value.message).group(1))
    x = 2000.0 / target_segment_length(d, 30e6)
    assert x <= count <= x + 2


def test_limit_is_inclusive(make_design):
    # 21 segments at 14.35 MHz for a 20 m doublet; a limit of 21 passes, 20 refuses.
    ant = {"shape": "doublet", "span": "20 m", "height": "10 m"}
    assert build_model(make_design(ant, max_segments=21), F_MAX).segment_count == 21
    assert _field(make_design(ant, max_segments=20)) == "model.max_segments"
