"""Conveniences of the design file: wire gauges for diameters, foot and inch
marks, the default ground, and nearest-name hints for catalog names."""

from __future__ import annotations

import math

import pytest
from bad_cases import BASE

from necflow import units
from necflow.chain import load_design_text
from necflow.config.load import LINE_WORDS, SURFACE_WORDS
from necflow.config.messages import closest
from necflow.errors import ConfigError

# ----------------------------------------------------------------------------
# Wire gauges


# American Wire Gauge diameters, from memory of the ASTM B258 table as the
# handbooks print it (inches to four places; mm to three): the table rounds,
# so the tolerance is half a unit in the last place printed.
AWG_TABLE_MM = {"4/0 AWG": 11.684, "10 AWG": 2.588, "12 AWG": 2.053, "14 AWG": 1.628,
                "16 AWG": 1.291, "18 AWG": 1.024, "22 AWG": 0.644, "36 AWG": 0.127}


@pytest.mark.parametrize("text,mm", AWG_TABLE_MM.items())
def test_awg_diameter_matches_the_wire_table(text, mm):
    assert units.parse_diameter(text) * 1e3 == pytest.approx(mm, abs=0.0006)


def test_awg_anchors_of_the_definition():
    """ASTM B258 defines the gauge by two sizes: 36 AWG = 0.0050 in and
    4/0 AWG = 0.4600 in, with 39 geometric steps between them."""
    assert units.awg_diameter(36) == pytest.approx(0.0050 * 0.0254, rel=1e-12)
    assert units.awg_diameter(-3) == pytest.approx(0.4600 * 0.0254, rel=1e-12)
    # every six gauges the diameter halves (common practice): 92 ** (6/39) = 2.006
    assert units.awg_diameter(20) / units.awg_diameter(26) == pytest.approx(2.0, rel=0.005)


@pytest.mark.parametrize("text", ["14 AWG", "AWG 14", "14 awg", "#14 AWG", "AWG #14"])
def test_awg_spellings(text):
    assert units.parse_diameter(text) == units.parse_diameter("14 AWG")


@pytest.mark.parametrize("text,same", [("1/0 AWG", "0 AWG"), ("00 AWG", "2/0 AWG"),
                                       ("0000 AWG", "4/0 AWG")])
def test_aught_sizes(text, same):
    assert units.parse_diameter(text) == units.parse_diameter(same)
    assert units.parse_diameter("0 AWG") > units.parse_diameter("1 AWG")


@pytest.mark.parametrize("text,area", [("1.5 mm2", 1.5), ("2.5 mm^2", 2.5), ("4 mm²", 4.0),
                                       ("6 sq mm", 6.0)])
def test_metric_cross_section(text, area):
    """Metric wire is named by its conductor area (IEC 60228): the solid wire
    of that area has d = 2 sqrt(A / pi); computed here from the area."""
    d = units.parse_diameter(text)
    assert math.pi * (d * 1e3 / 2) ** 2 == pytest.approx(area, rel=1e-12)


def test_a_gauge_is_not_a_length_elsewhere():
    with pytest.raises(units.UnitError, match="wire gauge, read only for a wire's diameter"):
        units.parse("14 AWG", "length")


def test_gauge_out_of_range():
    with pytest.raises(units.UnitError, match="4/0 to 40 AWG"):
        units.parse_diameter("56 AWG")


def test_gauges_in_a_design():
    text = BASE.replace("wire: {diameter: 2 mm, material: copper}",
                        "wire: {diameter: 12 AWG, material: copper}")
    assert load_design_text(text).antenna.wire.diameter == pytest.approx(2.053e-3, abs=6e-7)


def test_bare_number_diameter_says_mm():
    with pytest.raises(units.UnitError, match=r"e\.g\. '2 mm', or a wire gauge"):
        units.parse_diameter(2)


# ----------------------------------------------------------------------------
# Feet and inches


@pytest.mark.parametrize("text,same", [("100'", "100 ft"), ('6"', "6 in"),
                                       ("5' 6\"", "66 in"), ("88.5'", "88.5 ft"),
                                       ("12\u2032", "12 ft")])
def test_foot_and_inch_marks(text, same):
    """The marks read as the unit names do (pint's foot and inch: the
    international foot of 1959, 0.3048 m exactly)."""
    assert units.parse(text, "length") == pytest.approx(units.parse(same, "length"),
                                                        rel=1e-12)


def test_marks_in_a_design():
    text = BASE.replace("span: 20 m", "span: 66'").replace("height: 10 m", "height: 32' 9\"")
    design = load_design_text(text)
    assert design.antenna.span == pytest.approx(66 * 0.3048)
    assert design.antenna.height == pytest.approx(32 * 0.3048 + 9 * 0.0254)


def test_marks_are_not_other_quantities():
    with pytest.raises(units.UnitError, match="a length in feet"):
        units.parse("100'", "capacitance")


def test_a_bare_number_hint_says_what_to_write():
    with pytest.raises(units.UnitError) as info:
        units.parse(100, "length")
    assert "'100 m' or '100 ft'" in str(info.value)
    with pytest.raises(units.UnitError, match="e.g. '470 pF'"):
        units.parse("470", "capacitance")


# ----------------------------------------------------------------------------
# The default ground


def _without_ground(text: str) -> str:
    out = text.replace("ground: {model: sommerfeld, surface: medium-dry}\n", "")
    assert out != text
    return out


def test_a_design_without_ground_stands_on_sommerfeld_medium_dry():
    design = load_design_text(_without_ground(BASE))
    assert (design.ground.model, design.ground.surface) == ("sommerfeld", "medium-dry")


@pytest.mark.parametrize("ground,model,surface", [
    ("{model: reflection}", "reflection", "medium-dry"),
    ("{surface: wet}", "sommerfeld", "wet"),
    ("{model: free-space}", "free-space", None),
    ("{permittivity: 13, conductivity: 5 mS/m}", "sommerfeld", None)])
def test_ground_keys_default_one_by_one(ground, model, surface):
    text = BASE.replace("{model: sommerfeld, surface: medium-dry}", ground)
    g = load_design_text(text).ground
    assert (g.model, g.surface) == (model, surface)


def test_check_says_the_ground_is_the_default(tmp_path, capsys):
    from necflow.cli import main
    path = tmp_path / "d.yaml"
    path.write_text(_without_ground(BASE), encoding="utf-8")
    assert main(["check", "--no-convergence", str(path)]) == 0
    out = capsys.readouterr().out
    assert "the default ground" in out and "'reflection' would suit" in out


# ----------------------------------------------------------------------------
# Nearest names


@pytest.mark.parametrize("word,options,aliases,expected", [
    ("average", "surfaces", SURFACE_WORDS, "medium-dry"),
    ("Medium Dry", "surfaces", SURFACE_WORDS, "medium-dry"),
    ("salt water", "surfaces", SURFACE_WORDS, "sea-water"),
    ("RG213", "lines", LINE_WORDS, "rg-213"),
    ("RG-8X", "lines", LINE_WORDS, "rg-8x"),
    ("ladder line", "lines", LINE_WORDS, "window-450"),
    ("450 ohm", "lines", LINE_WORDS, "window-450"),
    ("twinlead", "lines", LINE_WORDS, "twin-lead-300"),
])
def test_closest_catalog_name(word, options, aliases, expected):
    from necflow.catalog.grounds import SURFACES
    from necflow.catalog.lines import LINE_TYPES
    names = SURFACES if options == "surfaces" else LINE_TYPES
    assert closest(word, names, aliases) == expected


def test_alias_targets_are_catalog_names():
    from necflow.catalog.grounds import SURFACES
    from necflow.catalog.lines import LINE_TYPES
    assert set(SURFACE_WORDS.values()) <= set(SURFACES)
    assert set(LINE_WORDS.values()) <= set(LINE_TYPES)


def test_a_line_type_hint_in_a_design():
    with pytest.raises(ConfigError, match="did you mean 'window-450'"):
        load_design_text(BASE.replace("line: window-450", "line: ladder line"))


def test_choke_name_with_spaces():
    text = BASE.replace('ratio: "1:1"}', 'ratio: "1:1", choke: current balun}')
    with pytest.raises(ConfigError, match="did you mean 'current-balun'"):
        load_design_text(text)
