"""Search-space checks: every bad path or bound is one ConfigError with the
file, the line and the field, raised before any solve."""

from __future__ import annotations

import pytest

from necflow.config.fields import apply
from necflow.errors import ConfigError
from necflow.optimize.problem.space import load_study_design
from tests.optimize.helpers import STUDY, write_study

BASE = STUDY.split("search:")[0]


def _load(tmp_path, search: str):
    return load_study_design(write_study(tmp_path, BASE + "search:\n" + search))


def _error(tmp_path, search: str) -> ConfigError:
    with pytest.raises(ConfigError) as info:
        _load(tmp_path, search)
    return info.value


def test_good_space_in_si(tmp_path):
    design, space = load_study_design(write_study(tmp_path))
    p = {x.path: x for x in space.params}
    assert (p["antenna.span"].low, p["antenna.span"].high) == (22.0, 40.0)
    assert p["antenna.span"].geometry and not p["feed.cap.value"].geometry
    assert p["feed.ladder.length"].step == pytest.approx(0.01, rel=1e-15)
    assert p["feed.cap.value"].log
    assert p["feed.cap.value"].low == pytest.approx(100e-12, rel=1e-15)


@pytest.mark.parametrize("search, field, words", [
    ("  antena.span: [22 m, 30 m]\n", "search.antena.span", "not a searchable field"),
    ("  feed.tuner.length: [1 m, 2 m]\n", "search.feed.tuner.length", "no feed element"),
    ("  antenna.spam: [22 m, 30 m]\n", "search.antenna.spam", "no field 'spam'"),
    ("  feed.ladder.id: [1, 2]\n", "search.feed.ladder.id", "not a numeric field"),
    ("  antenna.span: [22, 30]\n", "search.antenna.span", "has no unit"),
    ("  antenna.span: [22 pF, 30 pF]\n", "search.antenna.span", "not a length"),
    ("  antenna.span: [30 m, 22 m]\n", "search.antenna.span", "empty or reversed"),
    ("  antenna.height: [-1 m, 12 m]\n", "search.antenna.height", "field's own limit"),
    ("  feed.cap.value: {range: [0 pF, 1 nF], scale: log}\n", "search.feed.cap.value",
     "field's own limit"),
    ("  feed.ladder.length: {range: [5 m, 6 m], step: 2 m}\n", "search.feed.ladder.length",
     "step"),
    ("  feed.coax.line: {choices: [rg-213, rg-999]}\n", "search.feed.coax.line",
     "unknown line type"),
])
def test_bad_search_is_one_error_with_line(tmp_path, search, field, words):
    err = _error(tmp_path, search)
    assert err.field == field
    assert words in err.message
    assert err.line == BASE.count("\n") + 2          # the search key's own line
    assert str(err).startswith(f"{tmp_path / 'design.yaml'}:{err.line}: {field}: ")


def test_a_surface_grounds_constant_can_be_searched(tmp_path):
    # A ground named by its surface is made explicit before one of its
    # constants is set (as fit does): the other constant keeps the surface's
    # value, 15 for medium-dry ground (ITU-R P.527, references.md).
    from necflow.config.fields import apply

    text = BASE.replace("ground: {model: free-space}",
                        "ground: {model: sommerfeld, surface: medium-dry}")
    design, space = load_study_design(write_study(tmp_path, text + "search:\n"
                                                  "  ground.conductivity: [1 mS/m, 10 mS/m]\n"))
    low = apply(design, space.corners()[0])
    assert low.ground.surface is None and low.ground.permittivity == 15
    assert low.ground.conductivity == pytest.approx(1e-3)


def test_shorthand_needs_two_values(tmp_path):
    with pytest.raises(ConfigError) as info:
        _load(tmp_path, "  antenna.span: [22 m, 26 m, 30 m]\n")
    assert "two values" in str(info.value)


def test_no_search_section_is_an_error(tmp_path):
    with pytest.raises(ConfigError, match="no 'search' section"):
        load_study_design(write_study(tmp_path, BASE))


def test_apply_sets_values_and_keeps_the_original(tmp_path):
    design, space = load_study_design(write_study(tmp_path))
    v = apply(design, {"antenna.span": 25.25, "feed.ladder.length": 7.31,
                       "feed.cap.value": 2.2e-10})
    assert v.antenna.span == 25.25 and design.antenna.span == 30.0
    assert v.feed[0].length == 7.31
    assert v.feed[1].value == 2.2e-10 and design.feed[1].value == pytest.approx(4e-10)
    assert v.search == {}
    with pytest.raises(ConfigError) as info:
        apply(design, {"antenna.span": -1.0})
    assert info.value.field == "antenna.span"


def test_line_type_choices(tmp_path):
    design, space = _load(tmp_path, "  feed.coax.line: {choices: [rg-213, rg-58]}\n")
    assert space.params[0].choices == ("rg-213", "rg-58")
    assert apply(design, {"feed.coax.line": "rg-58"}).feed[2].line == "rg-58"
