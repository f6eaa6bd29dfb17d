"""The resolved design reads back into an equal design; the config hash."""

from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np
import pytest
import yaml
from bad_cases import BASE

from necflow import units
from necflow.chain import load_design, load_design_text
from necflow.config.resolve import config_sha256, exact_quantity, resolve_design, resolved_yaml

ROOT = Path(__file__).resolve().parents[2]

_ANTENNA = BASE[BASE.index("antenna:"):BASE.index("ground:")]

DESIGNS = {
    "base": BASE,
    "imperial-units": BASE.replace("span: 20 m", "span: 66 ft").replace(
        "height: 10 m", "height: 33.5 ft").replace("diameter: 2 mm", "diameter: 0.0641 in"),
    "vee-droop": BASE.replace(_ANTENNA, """antenna:
  shape: inverted-v
  apex_height: 11 m
  leg: 10.2 m
  droop: 37.5 deg
"""),
    "vee-end-height": BASE.replace(_ANTENNA, """antenna:
  shape: inverted-v
  apex_height: 11 m
  leg: 10.2 m
  end_height: 3.3 m
  wire: {diameter: 1.6 mm, material: copper-clad-steel}
"""),
    "ocf-percent": BASE.replace(_ANTENNA, """antenna:
  shape: off-centre
  span: 41 m
  height: 12 m
  feed_position: 33.3 %
"""),
    "ocf-distance": BASE.replace(_ANTENNA, """antenna:
  shape: off-centre
  span: 41 m
  height: 12 m
  feed_position: 13.7 m
"""),
    "wires": BASE.replace(_ANTENNA, """antenna:
  shape: wires
  wires:
    - {name: a, start: [-5 m, 0 m, 8 m], end: [5 m, 0 m, 8 m], diameter: 1.2 mm}
    - {start: [5 m, 0 m, 8 m], end: [5 m, 3 m, 6 m]}
  feed: {wire: 1, position: 2.5 m}
""").replace("ground: {model: sommerfeld, surface: medium-dry}", "ground: {model: perfect}"),
    "parts-and-custom-line": BASE.replace(
        "{id: ladder, line: window-450, length: 10 m}",
        "{id: ladder, line: custom, length: 10.37 m, impedance: 380 ohm, "
        "velocity_factor: 0.91, loss: [{frequency: 14 MHz, db: 0.12}, "
        "{frequency: 28 MHz, db: 0.2, per: 30 m}], voltage_rating: 4 kV}").replace(
        "q: 1500}", "esr: 0.05 ohm, current_rating: 6 A}").replace(
        'ratio: "1:1"', 'ratio: "9:2", loss: 0.3, power_rating: 1.5 kW').replace(
        "radio: {impedance: 50 ohm, power: 100 W}",
        "radio: {impedance: 75 ohm, power: 400 W}\ngoal: {swr_limit: 1.5}\n"
        "cautions: {voltage: 2.5 kV}\nmodel: {segments_per_wavelength: 31, max_segments: 3000}"),
    "explicit-bands-region-3": BASE.replace("region: 2", "region: 3").replace(
        "bands: [40m, 20m]", "bands: [80m, {name: net, low: 3.7 MHz, high: 3.75 MHz, "
        "points: 3, weight: 4}]"),
    "study-keys": BASE + "search:\n  antenna.span: [22 m, 30 m]\n  feed.cap.value: "
                         "{range: [100 pF, 2 nF], scale: log}\n  feed.coax.line: "
                         "{choices: [rg-213, rg-8x]}\ncost: {combine: worst, objectives: "
                         "[cost, span]}\n",
    "shunt-inductor": BASE.replace("series: capacitor, value: 330 pF, q: 1500",
                                   "shunt: inductor, value: 1.8 uH, q: 250"),
}
for p in sorted((ROOT / "configs").glob("*.yaml")):
    DESIGNS[f"configs/{p.name}"] = p.read_text(encoding="utf-8")


@pytest.mark.parametrize("text", DESIGNS.values(), ids=DESIGNS.keys())
def test_round_trip_gives_an_equal_design(text):
    design = load_design_text(text)
    resolved = resolved_yaml(design)
    again = load_design_text(resolved, file="resolved.yaml")
    assert again == resolve_design(design)
    assert resolved_yaml(again) == resolved, "writing a resolved design again changes nothing"


def test_resolved_design_has_every_default_and_every_unit():
    data = yaml.safe_load(resolved_yaml(load_design_text(BASE)))
    from necflow.config.schema import Design
    # every top-level key in schema order; 'route' is optional (absent: the line is ideal),
    # and so is 'constraints' (absent: the site sets no limits)
    assert list(data) == [k for k in Design.model_fields if k not in ("route", "constraints")]
    assert data["antenna"]["span"] == "20 m"
    assert data["antenna"]["wire"] == {"diameter": "2 mm", "material": "copper"}
    assert data["bands"][0] == {"name": "40m", "low": "7 MHz", "high": "7.3 MHz",
                                "points": 11, "weight": 1.0}
    assert data["feed"][1]["value"] == "330 pF"
    assert data["feed"][2]["ratio"] == "1:1"
    assert data["feed"][2]["loss"] == 0.1  # dB, the schema default
    assert data["radio"] == {"impedance": "50 ohm", "power": "100 W"}
    assert data["cautions"] == {"voltage": "1000 V", "common_mode_current": "0.1 A",
                                "choke_heat": "5 W"}
    assert data["model"] == {"segments_per_wavelength": 20.0, "max_segments": 2000}


def test_resolved_wire_points_and_positions():
    data = yaml.safe_load(resolved_yaml(load_design_text(DESIGNS["wires"])))
    assert data["antenna"]["wires"][0]["start"] == ["-5 m", "0 m", "8 m"]
    assert data["antenna"]["feed"] == {"wire": 1, "position": "2.5 m"}
    ocf = yaml.safe_load(resolved_yaml(load_design_text(DESIGNS["ocf-percent"])))
    assert ocf["antenna"]["feed_position"] == pytest.approx(0.333, rel=1e-12)


@pytest.mark.parametrize("dimension", sorted(units.DIMENSIONS))
def test_exact_quantity_reads_back_to_the_same_float(dimension):
    """Seeded random values over 24 decades (full 17-digit floats, the hardest
    case): parse(exact_quantity(v)) == v exactly."""
    rng = np.random.default_rng(20240611)
    for v in 10.0 ** rng.uniform(-12, 12, size=40):
        text = exact_quantity(float(v), dimension)
        assert units.parse(text, dimension) == float(v), text


def test_exact_quantity_is_short_when_it_can_be():
    assert exact_quantity(4.7e-10, "capacitance") == "470 pF"
    assert exact_quantity(66 * 0.3048, "length") == "20.1168 m"
    assert exact_quantity(2e-3, "length", "mm") == "2 mm"


def test_config_sha256_of_a_file(tmp_path):
    path = tmp_path / "d.yaml"
    path.write_bytes(BASE.encode())
    expected = hashlib.sha256(BASE.encode()).hexdigest()
    assert config_sha256(path) == expected
    assert config_sha256(str(path)) == expected
    assert config_sha256(BASE) == expected
    assert config_sha256(BASE.encode()) == expected
    assert config_sha256(BASE + " ") != expected


def test_loaded_file_and_its_hash_agree(tmp_path):
    """The hash is of the bytes read, so a file saved with a BOM hashes differently
    from the same text without one, while both load to the same design."""
    a, b = tmp_path / "a.yaml", tmp_path / "b.yaml"
    a.write_bytes(BASE.encode())
    b.write_bytes(b"\xef\xbb\xbf" + BASE.encode())
    assert load_design(a) == load_design(b)
    assert config_sha256(a) != config_sha256(b)
