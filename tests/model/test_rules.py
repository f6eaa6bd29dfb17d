"""check_rules and summarize name the modelling rule each finding applies.

Rules and thresholds from memory of G. J. Burke and A. J. Poggio, Numerical
Electromagnetics Code (NEC) - Method of Moments, Part III, LLNL 1981
(references.md, "Method-of-moments modelling rules").
"""

from __future__ import annotations

import dataclasses

import pytest

from necflow.model import build_model, check_rules, summarize
from necflow.model import rules as R

F_MIN, F_MAX = 14.0e6, 14.35e6
DOUBLET = {"shape": "doublet", "span": "20 m", "height": "10 m"}


def _rules(findings, severity=None):
    return {f.rule for f in findings if severity is None or f.severity == severity}


def test_default_design_breaks_no_rule(make_design):
    d = make_design(DOUBLET, ground={"model": "sommerfeld", "surface": "medium-dry"})
    assert check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX) == []


def test_coarse_segmentation_named_at_the_source(make_design):
    d = make_design(DOUBLET, segments_per_wavelength=10)
    found = check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX)
    assert R.RULE_CRITICAL_SEGMENT in _rules(found, "warning")
    # Ten per wavelength is exactly the 0.1-wavelength limit: not broken.
    assert R.RULE_MAX_SEGMENT not in _rules(found)


def test_segments_over_a_tenth_wavelength_are_an_error(make_design):
    d = make_design(DOUBLET, segments_per_wavelength=10)
    m = build_model(d, F_MAX)
    # Solving the same model at twice the frequency makes its segments 0.2 wavelength.
    found = check_rules(m, d, F_MIN, 2 * F_MAX)
    assert R.RULE_MAX_SEGMENT in _rules(found, "error")


def test_builder_follows_a_coarse_setting_and_the_rule_names_it(make_design):
    # The schema allows fewer than 10 segments per wavelength; 4 gives 0.25-wavelength
    # segments, over the 0.1-wavelength limit, on every wire.
    d = make_design(DOUBLET, segments_per_wavelength=4)
    m = build_model(d, F_MAX)
    found = [f for f in check_rules(m, d, F_MIN, F_MAX) if f.rule == R.RULE_MAX_SEGMENT]
    assert {f.wire for f in found} == {w.name for w in m.wires}
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
    # segments: ratio 3.5 at the junction.
    ant = {"shape": "wires", "wires": [
        {"name": "long", "start": ["0 m", "0 m", "10 m"], "end": ["10 m", "0 m", "10 m"]},
        {"name": "stub", "start": ["10 m", "0 m", "10 m"], "end": ["10 m", "0 m", "9.7 m"]}],
        "feed": {"wire": "long"}}
    d = make_design(ant)
    found = check_rules(build_model(d, F_MAX), d, F_MIN, F_MAX)
    assert R.RULE_JUNCTION_RATIO in _rules(found, "warning")


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
    assert [r.name for r in s.wires] == [w.name for w in m.wires]
    assert s.total_segments == m.segment_count == 21
    lam_top = 299_792_458 / F_MAX
    for r, w in zip(s.wires, m.wires):
        assert r.segment_wavelengths == pytest.approx(w.segment_length / lam_top, rel=1e-12)
        assert r.length_to_radius == pytest.approx(w.segment_length / 1e-3, rel=1e-12)
    assert s.lowest_height_wavelengths == pytest.approx(10 / (299_792_458 / F_MIN), rel=1e-12)
    text = s.format()
    assert any(line.startswith("wire (source)") for line in text)
    assert "perfect ground" in text[-1]


def test_summary_carries_the_findings(make_design):
    d = make_design(DOUBLET, segments_per_wavelength=10)
    m = build_model(d, F_MAX)
    s = summarize(m, d, F_MIN, F_MAX)
    assert list(s.findings) == check_rules(m, d, F_MIN, F_MAX)
    assert R.RULE_CRITICAL_SEGMENT in _rules(s.findings)


def test_finding_is_immutable():
    f = R.Finding("rule", "note", "message")
    with pytest.raises(dataclasses.FrozenInstanceError):
        f.rule = "other"
