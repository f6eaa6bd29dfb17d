"""Good design files load, with their units converted to SI and their lines marked."""

from __future__ import annotations

from pathlib import Path

import pytest
from bad_cases import BASE

from necflow.chain import load_design, load_design_text
from necflow.config.load import parse_yaml
from necflow.config.schema import Design
from necflow.errors import ConfigError

ROOT = Path(__file__).resolve().parents[2]
CONFIG_FILES = sorted((ROOT / "configs").glob("*.yaml"))


def test_configs_folder_is_not_empty():
    """Without this, an empty or moved folder would make the next test pass vacuously."""
    assert CONFIG_FILES, f"no design files in {ROOT / 'configs'}"


@pytest.mark.parametrize("path", CONFIG_FILES, ids=lambda p: p.name)
def test_every_shipped_design_loads(path: Path):
    design = load_design(path)
    assert isinstance(design, Design)
    assert design.name


UNITS = """\
name: units
bands: [40m]
antenna:
  shape: doublet
  span: 66 ft
  height: 394 in
  wire: {diameter: 0.08 in}
ground: {model: sommerfeld, permittivity: 13, conductivity: 5 mS/m}
feed:
  - {id: c, series: capacitor, value: 0.33 nF}
  - {id: l, shunt: inductor, value: 2.2 uH, q: 150}
  - {id: r, series: resistor, value: 2.7 kohm}
radio: {impedance: 50 ohm, power: 0.1 kW}
"""


def test_units_are_converted_to_si():
    """Foot and inch: 0.3048 m and 0.0254 m exactly (international yard and
    pound, 1959; from memory of NIST Special Publication 811, Appendix B).
    Prefixes n, u, m, k: 1e-9, 1e-6, 1e-3, 1e3 (from memory of the BIPM SI
    Brochure, 9th ed., table of SI prefixes).  Tolerance rel 1e-12: the
    conversions are exact in decimal, so only float rounding (a few parts
    in 1e16) separates the results from the products below."""
    d = load_design_text(UNITS)
    assert d.antenna.span == pytest.approx(66 * 0.3048, rel=1e-12)
    assert d.antenna.height == pytest.approx(394 * 0.0254, rel=1e-12)
    assert d.antenna.wire.diameter == pytest.approx(0.08 * 0.0254, rel=1e-12)
    assert d.ground.conductivity == pytest.approx(5e-3, rel=1e-12)
    assert d.feed[0].value == pytest.approx(0.33e-9, rel=1e-12)
    assert d.feed[1].value == pytest.approx(2.2e-6, rel=1e-12)
    assert d.feed[2].value == pytest.approx(2.7e3, rel=1e-12)
    assert d.radio.power == pytest.approx(100.0, rel=1e-12)


def _forty(region: int) -> tuple[float, float]:
    from necflow.catalog.bands import resolve_bands
    d = load_design_text(BASE.replace("region: 2", f"region: {region}"))
    return next((b.low_hz, b.high_hz) for b in resolve_bands(d) if b.name == "40m")


def test_region_sets_the_40m_edges():
    """40 m: 7.000-7.300 MHz in Region 2 (47 CFR 97.301); 7.000-7.200 MHz in
    Regions 1 and 3 (from memory of the ITU Radio Regulations, Article 5).
    The table keeps kHz, exact in binary, so the edges compare exactly."""
    assert _forty(2) == (7.0e6, 7.3e6)
    assert _forty(1) == (7.0e6, 7.2e6)
    assert _forty(3) == (7.0e6, 7.2e6)


def test_explicit_edges_need_no_table_name():
    d = load_design_text(BASE.replace("bands: [40m, 20m]",
                                      "bands: [{name: net, low: 3.85 MHz, high: 3.95 MHz, "
                                      "points: 5, weight: 3}]"))
    assert (d.bands[0].low, d.bands[0].high, d.bands[0].points) == (3.85e6, 3.95e6, 5)


def test_percentage_and_distance_feed_positions():
    ocf = """antenna:
  shape: off-centre
  span: 20 m
  height: 10 m
  feed_position: {pos}
"""
    base_antenna = BASE[BASE.index("antenna:"):BASE.index("ground:")]
    pct = load_design_text(BASE.replace(base_antenna, ocf.format(pos="'33 %'")))
    dist = load_design_text(BASE.replace(base_antenna, ocf.format(pos="6.6 m")))
    assert pct.antenna.feed_position == ("fraction", pytest.approx(0.33, rel=1e-12))
    assert dist.antenna.feed_position == ("distance", pytest.approx(6.6, rel=1e-12))


# ----------------------------------------------------------------------------
# The line map


def test_line_map_marks_keys_and_items():
    data, lines = parse_yaml(BASE)
    assert data["feed"][1]["value"] == "330 pF"
    assert lines[("name",)] == 1
    assert lines[("antenna", "span")] == 6
    assert lines[("antenna", "wire", "material")] == 8
    assert lines[("bands", 1)] == 3
    assert lines[("feed", 1)] == 12
    assert lines[("feed", 1, "value")] == 12
    assert lines[("radio", "power")] == 15


def test_line_map_with_anchor_and_merge_key():
    """Anchors, aliases and merge keys are plain YAML; they must not break the marks."""
    text = """\
common: &c {diameter: 2 mm}
wire:
  <<: *c
  material: copper
again: *c
"""
    data, lines = parse_yaml(text)
    assert data["wire"] == {"diameter": "2 mm", "material": "copper"}
    assert lines[("wire", "material")] == 4
    assert lines[("again",)] == 5


def test_duplicate_key_in_nested_flow_mapping():
    with pytest.raises(ConfigError) as info:
        parse_yaml("a:\n  b: {x: 1, x: 2}\n", file="f.yaml")
    assert str(info.value) == ("f.yaml:2: a.b.x: duplicate key 'x' (first given at line 2); "
                               "expected each key once in a mapping")


def test_unsafe_tags_are_refused():
    """Only the safe loader is used: a Python object tag is malformed YAML, not code."""
    with pytest.raises(ConfigError) as info:
        parse_yaml("name: !!python/object/apply:os.system ['true']\n", file="f.yaml")
    assert str(info.value).startswith("f.yaml:1: not valid YAML")
