"""check_rules and summarize name the modelling rule each finding applies.

Rules and thresholds from memory of G. J. Burke and A. J. Poggio, Numerical
Electromagnetics Code (NEC) - Method of Moments, Part III, LLNL 1981
(references.md, "Method-of-moments modelling rules").
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from necflow.model import GroundModel, Wire, WireModel, build_model, check_rules, summarize
from necflow.model import rules as R

F_MIN, F_MAX = 14.0e6, 14.35e6
DOUBLET = {"shape": "doublet", "span": "20 m", "height": "10 m"}


def _rules(findings, severity=None):
    return {f.rule for f in findings if severity is None or f.severity == severity}


def _uniform(pieces, feed_tag, radius=1e-3):
    """A wire model built by hand: ``pieces`` are (name, start, end, segments)
    of uniformly segmented wires; the checks judge it, whatever built it."""
    wires = tuple(Wire(i + 1, name, np.array(a, float), np.array(b, float), radius, n)
                  for i, (name, a, b, n) in enumerate(pieces))
    return WireModel(wires, feed_tag, 1, GroundModel("free-space"), None)


def test_default_design_breaks_no_rule(make_design):
    d = make_design(DOUBLET, ground={"model": "sommerfeld", "surface": "medium-dry"})
    assert check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX) == []


def test_coarse_segmentation_named_at_the_source(make_design):
    # The builder always cuts a short source; a model cut uniformly in 1.04 m
    # segments (0.05 wavelength at 14.35 MHz, 20 per wavelength) is judged.
    d = make_design(DOUBLET)
    fine = _uniform([("left", (-10, 0, 10), (-0.52, 0, 10), 9),
                     ("source", (-0.52, 0, 10), (0.52, 0, 10), 1),
                     ("right", (0.52, 0, 10), (10, 0, 10), 9)], feed_tag=2)
    assert check_rules(fine, d, F_MIN, F_MAX) == []
    # A 2 m source (0.096 wavelength) between 1.8 m segments: under the guide's
    # 0.1-wavelength limit, over its 0.05 at the source: the source rule only.
    coarse = _uniform([("left", (-10, 0, 10), (-1, 0, 10), 5),
                       ("source", (-1, 0, 10), (1, 0, 10), 1),
                       ("right", (1, 0, 10), (10, 0, 10), 5)], feed_tag=2)
    found = check_rules(coarse, d, F_MIN, F_MAX)
    assert R.RULE_CRITICAL_SEGMENT in _rules(found, "warning")
    assert R.RULE_MAX_SEGMENT not in _rules(found)


def test_segments_over_a_tenth_wavelength_are_an_error(make_design):
    d = make_design({**DOUBLET, "span": "60 m"}, segments_per_wavelength=10)
    m = build_model(d, F_MAX)
    assert check_rules(m, d, F_MIN, F_MAX) == []
    # Solving the same model at twice the frequency makes its longest segments
    # (0.1 wavelength at F_MAX) 0.2 wavelength.
    found = check_rules(m, d, F_MIN, 2 * F_MAX)
    assert R.RULE_MAX_SEGMENT in _rules(found, "error")


def test_builder_follows_a_coarse_setting_and_the_rule_names_it(make_design):
    # The schema allows fewer than 10 segments per wavelength; 4 allows 0.25-wavelength
    # segments, which a 60 m doublet reaches 26 m from its source (segments grow by
    # 0.2 m per metre from 2 cm).  Every piece holding such segments is named, and
    # only those.
    d = make_design({**DOUBLET, "span": "60 m"}, segments_per_wavelength=4)
    m = build_model(d, F_MAX)
    lam = 299_792_458 / F_MAX
    too_long = {w.name for w in m.wires if w.segment_length > 0.1 * lam}
    assert too_long == {"wire (to start)", "wire (to end)"}
    found = [f for f in check_rules(m, d, F_MIN, F_MAX) if f.rule == R.RULE_MAX_SEGMENT]
    assert {f.wire for f in found} == too_long
    assert all(f.severity == "error" for f in found)


def test_fat_wire_named(make_design):
    # 1.04 m segments on a 0.2 m radius: ratio 5.2, legal only with the extended kernel.
    d = make_design({**DOUBLET, "wire": {"diameter": "400 mm"}})
    found = check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX)
    assert R.RULE_THIN_WIRE in _rules(found, "warning")
    # Ratio 1.04 (0.52 m segments, 0.5 m radius) is below even the extended
    # kernel's limit of about 2.
    d = make_design({**DOUBLET, "wire": {"diameter": "1 m"}}, segments_per_wavelength=40)
    found = check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX)
    assert R.RULE_THIN_WIRE in _rules(found, "error")


def test_too_short_segments_at_the_lowest_frequency(make_design):
    d = make_design(DOUBLET, segments_per_wavelength=200)
    m = build_model(d, 30e6)   # 0.05 m segments
    found = check_rules(m, d, 1.0e6, 30e6)   # 0.05 m is 1.7e-4 wavelength at 1 MHz
    assert R.RULE_MIN_SEGMENT in _rules(found, "warning")


def test_reflection_ground_too_low(make_design):
    ground = {"model": "reflection", "surface": "medium-dry"}
    low = make_design({**DOUBLET, "height": "3 m"}, ground=ground)   # 0.14 wavelength
    found = check_rules(build_model(low, F_MAX), low, F_MIN, F_MAX)
    assert R.RULE_REFLECTION_HEIGHT in _rules(found, "warning")
    s = summarize(build_model(low, F_MAX), low, F_MIN, F_MAX)
    assert "does not suit" in s.ground_verdict
    high = make_design({**DOUBLET, "height": "15 m"}, ground=ground)  # 0.70 wavelength
    found = check_rules(build_model(high, F_MAX), high, F_MIN, F_MAX)
    assert R.RULE_REFLECTION_HEIGHT not in _rules(found)
    assert "suits this antenna" in summarize(build_model(high, F_MAX), high, F_MIN,
                                             F_MAX).ground_verdict


def test_ground_contact_needs_sommerfeld_or_perfect(make_design):
    ant = {"shape": "wires", "wires": [{"start": ["0 m", "0 m", "0 m"],
                                        "end": ["0 m", "0 m", "5 m"]}],
           "feed": {"wire": 1, "position": 0.1}}
    d = make_design(ant, ground={"model": "reflection", "surface": "wet"})
    found = check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX)
    assert R.RULE_REFLECTION_CONTACT in _rules(found, "error")
    d = make_design(ant, ground={"model": "sommerfeld", "surface": "wet"})
    assert R.RULE_REFLECTION_CONTACT not in _rules(check_rules(build_model(d, F_MAX), d,
                                                               F_MIN, F_MAX))


def test_junction_ratio_named(make_design):
    # A 0.3 m stub (one 0.3 m segment) joined to a 10 m wire cut in 1.04 m
    # segments: ratio 3.5 at the junction.  (The builder grades both to 2 cm at
    # the bend, so the model is made by hand.)
    d = make_design(DOUBLET)
    m = _uniform([("long", (0, 0, 10), (4.48, 0, 10), 4),
                  ("source", (4.48, 0, 10), (5.52, 0, 10), 1),
                  ("long", (5.52, 0, 10), (10, 0, 10), 4),
                  ("stub", (10, 0, 10), (10, 0, 9.7), 1)], feed_tag=2)
    found = check_rules(m, d, F_MIN, F_MAX)
    assert R.RULE_JUNCTION_RATIO in _rules(found, "warning")
    built = make_design({"shape": "wires", "wires": [
        {"name": "long", "start": ["0 m", "0 m", "10 m"], "end": ["10 m", "0 m", "10 m"]},
        {"name": "stub", "start": ["10 m", "0 m", "10 m"], "end": ["10 m", "0 m", "9.7 m"]}],
        "feed": {"wire": "long"}})
    assert R.RULE_JUNCTION_RATIO not in _rules(check_rules(build_model(built, F_MAX), built,
                                                           F_MIN, F_MAX))


def test_near_miss_ends_named(make_design):
    ant = {"shape": "wires", "wires": [
        {"name": "a", "start": ["0 m", "0 m", "10 m"], "end": ["10 m", "0 m", "10 m"]},
        {"name": "b", "start": ["10.01 m", "0 m", "10 m"], "end": ["15 m", "0 m", "10 m"]}],
        "feed": {"wire": "a"}}
    d = make_design(ant)
    found = check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX)
    assert R.RULE_COINCIDENT_ENDS in _rules(found, "warning")


def test_summary_rows_and_text(make_design):
    d = make_design(DOUBLET, ground={"model": "perfect"})
    m = build_model(d, F_MAX)
    s = summarize(m, d, F_MIN, F_MAX)
    # One row per piece: the graded engine wires of a piece together.
    assert [r.name for r in s.wires] == ["wire (to start)", "wire (source)", "wire (to end)"]
    assert sum(r.segments for r in s.wires) == s.total_segments == m.segment_count == 79
    lam_top = 299_792_458 / F_MAX
    for r in s.wires:
        mine = [w for w in m.wires if w.name == r.name]
        shortest = min(w.segment_length for w in mine)
        assert r.shortest_wavelengths == pytest.approx(shortest / lam_top, rel=1e-12)
        assert r.longest_wavelengths == pytest.approx(
            max(w.segment_length for w in mine) / lam_top, rel=1e-12)
        assert r.length_to_radius == pytest.approx(shortest / 1e-3, rel=1e-12)
    # The source: 1e-3 wavelength at the lowest frequency, 21.4 radii.
    assert s.wires[1].length_to_radius == pytest.approx(299_792_458 / F_MIN, rel=1e-9)
    assert s.lowest_height_wavelengths == pytest.approx(10 / (299_792_458 / F_MIN), rel=1e-12)
    text = s.format()
    assert any(line.startswith("wire (source)") for line in text)
    assert any(line.startswith("wire (to start)") and "-" in line for line in text)
    assert "perfect ground" in text[-1]


def test_summary_carries_the_findings(make_design):
    d = make_design({**DOUBLET, "height": "3 m"}, ground={"model": "reflection",
                                                         "surface": "medium-dry"})
    m = build_model(d, F_MAX)
    s = summarize(m, d, F_MIN, F_MAX)
    assert list(s.findings) == check_rules(m, d, F_MIN, F_MAX)
    assert R.RULE_REFLECTION_HEIGHT in _rules(s.findings)


def test_finding_is_immutable():
    f = R.Finding("rule", "note", "message")
    with pytest.raises(dataclasses.FrozenInstanceError):
        f.rule = "other"
