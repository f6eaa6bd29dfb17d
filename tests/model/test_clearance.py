"""Wires that cross, overlap, repeat or nearly touch are refused before the
engine, naming both wires."""

from __future__ import annotations

import numpy as np
import pytest

from necflow.chain import load_design_text
from necflow.errors import ConfigError
from necflow.model.clearance import clearance_problems, segment_distances
from necflow.model.types import WireSpan


def test_segment_distance_against_brute_force_sampling():
    """The closed form (Ericson 2005, sec. 5.1.9) against the smallest
    distance over 2001 x 2001 sampled points of each pair, computed here; the
    sampling step bounds the brute-force error by about |d|/2000."""
    rng = np.random.default_rng(4)
    p0, p1, q0, q1 = (rng.uniform(-5, 5, (40, 3)) for _ in range(4))
    q1[:5] = q0[:5] + 0.7 * (p1[:5] - p0[:5])          # some parallel pairs
    got, _, _ = segment_distances(p0, p1, q0, q1)
    u = np.linspace(0, 1, 2001)
    for k in range(40):
        a = p0[k] + np.outer(u, p1[k] - p0[k])
        b = q0[k] + np.outer(u, q1[k] - q0[k])
        best = np.inf
        for chunk in np.array_split(np.arange(u.size), 8):
            d = np.linalg.norm(a[chunk, None, :] - b[None, :, :], axis=-1)
            best = min(best, float(d.min()))
        step = max(np.linalg.norm(p1[k] - p0[k]), np.linalg.norm(q1[k] - q0[k])) / 2000
        assert got[k] <= best + 1e-12 and best - got[k] <= step


def _w(name, a, b, r=0.001):
    return WireSpan(name, np.array(a, float), np.array(b, float), r)


@pytest.mark.parametrize("wires, phrase", [
    ([_w("a", [-5, 0, 10], [5, 0, 10]), _w("b", [0, -5, 10], [0, 5, 10])], "crosses"),
    ([_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [5, 0, 10], [15, 0, 10])], "overlaps"),
    ([_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [0, 0.001, 10], [10, 0.001, 10])],
     "overlaps"),                                       # 1 mm apart, 1 mm radii: touching
    ([_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [0, 0.003, 10], [10, 0.003, 10])],
     "closer than"),                                    # 3 mm apart: under 2 x (1 + 1) mm
    ([_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [0, 0, 10], [10, 0, 10])], "same wire"),
    ([_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [10, 0, 10], [0, 0, 10])], "same wire"),
    ([_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [5, 0, 10], [5, 0, 0])], "touches"),
    ([_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [10, 0, 10], [4, 0, 10])], "overlaps"),
])
def test_bad_pairs(wires, phrase):
    found = clearance_problems(wires)
    assert len(found) == 1 and found[0][:2] == (0, 1) and phrase in found[0][2], found


@pytest.mark.parametrize("wires", [
    [_w("a", [-5, 0, 10], [0, 0, 12]), _w("b", [0, 0, 12], [5, 0, 10])],      # inverted V
    [_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [10, 0, 10], [10, 0, 0])],     # an L
    [_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [0, 0.05, 10], [10, 0.05, 10])],  # 50 mm apart
    [_w("a", [0, 0, 10], [10, 0, 10]), _w("b", [0, 0, 10], [-10, 0, 10])],    # collinear, end on
])
def test_sound_geometry_passes(wires):
    assert clearance_problems(wires) == []


def test_a_design_names_both_wires_and_the_line():
    text = """\
name: crossed
bands: [20m]
antenna:
  shape: wires
  wires:
    - {name: east-west, start: [-5 m, 0 m, 10 m], end: [5 m, 0 m, 10 m]}
    - {name: north-south, start: [0 m, -5 m, 10 m], end: [0 m, 5 m, 10 m]}
  feed: {wire: east-west}
ground: {model: free-space}
feed: []
"""
    with pytest.raises(ConfigError) as info:
        load_design_text(text, file="x.yaml")
    msg = str(info.value)
    assert msg.startswith("x.yaml:7: antenna.wires[1]:"), msg
    assert "antenna.wires[0]" in msg and "crosses" in msg and "north-south" in msg
