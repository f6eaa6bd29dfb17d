"""Bad design files and the one-line error each must produce.

Plain data, shared by the loader tests and the command-line tests: each case
is a small YAML text, the 1-based line the error must name (None for
file-level problems that have no line), the field path it must name (None
when there is none) and a phrase the message must contain.

Most cases are edits of :data:`BASE`, a valid design; :func:`_edit` refuses
an edit whose text is not in BASE, so a change of BASE cannot silently turn
a case into a valid file.
"""

from __future__ import annotations

from typing import NamedTuple


class BadCase(NamedTuple):
    id: str
    text: str | bytes
    line: int | None
    field: str | None
    phrase: str


BASE = """\
name: test-doublet
region: 2
bands: [40m, 20m]
antenna:
  shape: doublet
  span: 20 m
  height: 10 m
  wire: {diameter: 2 mm, material: copper}
ground: {model: sommerfeld, surface: medium-dry}
feed:
  - {id: ladder, line: window-450, length: 10 m}
  - {id: cap, series: capacitor, value: 330 pF, q: 1500}
  - {id: balun, transformer: balun, ratio: "1:1"}
  - {id: coax, line: rg-213, length: 20 m}
radio: {impedance: 50 ohm, power: 100 W}
"""

DOUBLET = """\
antenna:
  shape: doublet
  span: 20 m
  height: 10 m
  wire: {diameter: 2 mm, material: copper}
"""


def _edit(*pairs: str, text: str = BASE) -> str:
    for old, new in zip(pairs[::2], pairs[1::2]):
        if old not in text:
            raise ValueError(f"edit target not in the base design: {old!r}")
        text = text.replace(old, new, 1)
    return text


def _antenna(block: str) -> str:
    """BASE with its antenna (lines 4-8) replaced by ``block``."""
    return _edit(DOUBLET, block)


_WIRES = """\
antenna:
  shape: wires
  wires:
    - {name: top, start: [0 m, 0 m, 10 m], end: [20 m, 0 m, 10 m]}
    - {name: drop, start: [20 m, 0 m, 10 m], end: [20 m, 0 m, -1 m]}
  feed: {wire: top, position: 0.5}
"""

_VEE = """\
antenna:
  shape: inverted-v
  apex_height: 10 m
  leg: 10 m
  end_height: 4 m
  droop: 30 deg
"""

_OCF = """\
antenna:
  shape: off-centre
  span: 20 m
  height: 10 m
  feed_position: {pos}
"""

_LONG = """\
name: very-long-wire
bands: [{name: top, low: 29 MHz, high: 30 MHz}]
antenna: {shape: doublet, span: 1.9 km, height: 10 m}
ground: {model: free-space}
feed: []
model:
  segments_per_wavelength: 40
  max_segments: 5000
"""

BAD_CASES: list[BadCase] = [
    # --- the file as a whole
    BadCase("yaml-colon", _edit("span: 20 m", "span: 20 m: 3"), 6, None, "not valid YAML"),
    BadCase("yaml-tab", _edit("  span: 20 m", "\tspan: 20 m"), 6, None, "tabs"),
    BadCase("yaml-unclosed-flow", _edit("length: 10 m}", "length: 10 m"), 12, None,
            "not valid YAML"),
    BadCase("empty-file", "", None, None, "empty"),
    BadCase("only-comments", "# a design will go here\n\n", None, None, "empty"),
    BadCase("top-level-list", "- name: x\n- bands: [40m]\n", 1, None, "top level"),
    BadCase("top-level-text", "just a sentence\n", 1, None, "top level"),
    BadCase("duplicate-yaml-key", _edit("  height: 10 m\n", "  height: 10 m\n  span: 21 m\n"),
            8, "antenna.span", "duplicate key 'span' (first given at line 6)"),
    BadCase("not-utf8", BASE.encode() .replace(b"test-doublet", b"caf\xe9-doublet"), 1, None,
            "not UTF-8"),
    # --- structure and keys
    BadCase("antenna-is-list", _antenna("antenna:\n  - doublet\n  - 20 m\n"), 4, "antenna",
            "expected a mapping (key: value), got a list"),
    BadCase("feed-is-mapping", _edit("feed:\n  - {id: ladder", "feed:\n  x: {id: ladder",
                                     "  - {id: cap", "  y: {id: cap", "  - {id: balun",
                                     "  z: {id: balun", "  - {id: coax", "  w: {id: coax"),
            10, "feed", "expected a list, got a mapping"),
    BadCase("unknown-key-top", _edit("region: 2", "regoin: 2"), 2, "regoin",
            "unknown key 'regoin'; did you mean 'region'?"),
    BadCase("unknown-key-nested", _edit("height: 10 m", "heigth: 10 m"), 7, "antenna.heigth",
            "did you mean 'height'?"),
    BadCase("unknown-key-no-match", _edit("power: 100 W}", "power: 100 W, colour: red}"), 15,
            "radio.colour", "valid keys here are impedance, power"),
    BadCase("missing-name", _edit("name: test-doublet\n", ""), 1, "name",
            "missing required field 'name'"),
    BadCase("missing-bands", _edit("bands: [40m, 20m]\n", ""), 1, "bands",
            "missing required field 'bands'"),
    BadCase("missing-antenna", _antenna(""), 1, "antenna", "missing required field 'antenna'"),
    BadCase("ground-not-a-mapping", _edit("ground: {model: sommerfeld, surface: medium-dry}",
                                          "ground: sommerfeld"),
            9, "ground", "expected a mapping"),
    BadCase("missing-feed", _edit(BASE[BASE.index("feed:"):BASE.index("radio:")], ""), 1,
            "feed", "missing required field 'feed'"),
    BadCase("missing-span", _edit("  span: 20 m\n", ""), 4, "antenna.span",
            "missing required field 'span'"),
    BadCase("missing-shape", _edit("  shape: doublet\n", ""), 4, "antenna.shape",
            "missing required field 'shape'; expected one of doublet, off-centre"),
    BadCase("unknown-shape", _edit("shape: doublet", "shape: dipole"), 5, "antenna.shape",
            "unknown shape 'dipole'"),
    BadCase("name-is-number", _edit("name: test-doublet", "name: 1234"), 1, "name",
            "expected text, got the number 1234"),
    BadCase("region-4", _edit("region: 2", "region: 4"), 2, "region",
            "expected one of 1, 2, 3"),
    # --- units and values
    BadCase("missing-unit", _edit("span: 20 m", "span: 20"), 6, "antenna.span", "has no unit"),
    BadCase("length-in-mhz", _edit("span: 20 m", "span: 20 MHz"), 6, "antenna.span",
            "is a frequency, not a length"),
    BadCase("capacitor-in-metres", _edit("value: 330 pF", "value: 330 m"), 12, "feed[1].value",
            "is a length, not a capacitance"),
    BadCase("unknown-unit", _edit("height: 10 m", "height: 10 furlongz"), 7, "antenna.height",
            "cannot read '10 furlongz' as a length"),
    BadCase("zero-length", _edit("span: 20 m", "span: 0 m"), 6, "antenna.span",
            "must be positive, got '0 m'"),
    BadCase("negative-line-length", _edit("length: 20 m", "length: -20 m"), 14, "feed[3].length",
            "must be positive, got '-20 m'"),
    BadCase("unknown-material", _edit("material: copper", "material: gold"), 8,
            "antenna.wire.material", "unknown material 'gold'"),
    # --- bands
    BadCase("reversed-band", _edit("bands: [40m, 20m]",
                                   "bands: [{name: net, low: 7.2 MHz, high: 7.1 MHz}]"),
            3, "bands[0]", "reversed"),
    BadCase("zero-frequency", _edit("bands: [40m, 20m]",
                                    "bands: [40m, {name: low, low: 0 MHz, high: 1 MHz}]"),
            3, "bands[1]", "positive"),
    BadCase("negative-frequency", _edit("bands: [40m, 20m]",
                                        "bands:\n  - 40m\n  - {name: x, low: -2 MHz, high: 1 MHz}"),
            5, "bands[1]", "positive"),
    BadCase("unknown-band", _edit("bands: [40m, 20m]", "bands:\n  - 40m\n  - 20 m"), 5,
            "bands[1]", "unknown band '20 m'; did you mean '20m'?"),
    BadCase("band-twice", _edit("bands: [40m, 20m]", "bands:\n  - 40m\n  - 20m\n  - 40m"), 6,
            "bands[2]", "listed twice"),
    BadCase("no-bands", _edit("bands: [40m, 20m]", "bands: []"), 3, "bands",
            "needs at least 1 entry"),
    # --- antenna geometry
    BadCase("wire-below-ground", _antenna(_WIRES), 8, "antenna.wires[1].end", "below ground"),
    BadCase("wire-point-two-coordinates", _antenna(_WIRES.replace("[20 m, 0 m, -1 m]",
                                                                  "[20 m, 0 m]")),
            8, "antenna.wires[1].end", "three lengths"),
    BadCase("feed-wire-unknown", _antenna(_WIRES.replace("wire: top", "wire: tip")), 9,
            "antenna.feed.wire", "feed wire 'tip' is not a wire name"),
    BadCase("duplicate-wire-name", _antenna(_WIRES.replace("name: drop", "name: top")), 8,
            "antenna.wires[1].name", "duplicate wire name(s): top"),
    BadCase("vee-both", _antenna(_VEE), 4, "antenna", "exactly one of 'end_height' and 'droop'"),
    BadCase("vee-neither", _antenna(_VEE.replace("  end_height: 4 m\n  droop: 30 deg\n", "")),
            4, "antenna", "exactly one of 'end_height' and 'droop'"),
    BadCase("feed-fraction-off-wire", _antenna(_OCF.format(pos=1.2)), 8,
            "antenna.feed_position", "off the wire"),
    BadCase("feed-distance-off-wire", _antenna(_OCF.format(pos="25 m")), 8,
            "antenna.feed_position", "off the wire"),
    BadCase("too-many-segments", _LONG, 8, "model.max_segments", "more than the limit of 5000"),
    # --- ground
    BadCase("ground-model-typo", _edit("model: sommerfeld", "model: sommerfield"), 9,
            "ground.model", "did you mean 'sommerfeld'?"),
    BadCase("sommerfeld-half-constants", _edit("{model: sommerfeld, surface: medium-dry}",
                                               "{model: sommerfeld, permittivity: 13}"),
            9, "ground", "needs 'surface'"),
    BadCase("ground-surface-word", _edit("surface: medium-dry", "surface: average"), 9,
            "ground.surface", "did you mean 'medium-dry'?"),
    BadCase("gauge-as-length", _edit("span: 20 m", "span: 14 AWG"), 6, "antenna.span",
            "a wire gauge, read only for a wire's diameter"),
    BadCase("feet-mark-as-capacitance", _edit("value: 330 pF", "value: 100'"), 12,
            "feed[1].value", "a length in feet"),
    BadCase("unknown-surface", _edit("surface: medium-dry", "surface: medium-dri"), 9,
            "ground.surface", "did you mean 'medium-dry'?"),
    # --- feed chain
    BadCase("duplicate-element-id", _edit("{id: coax", "{id: ladder"), 14, "feed[3].id",
            "duplicate element id"),
    BadCase("element-without-kind", _edit("{id: coax, line: rg-213, length: 20 m}",
                                          "{id: coax, length: 20 m}"),
            14, "feed[3]",
            "needs one of 'line', 'series', 'shunt', 'transformer', 'choke' or 'tuner'"),
    BadCase("element-kind-typo", _edit("series: capacitor", "seriez: capacitor"), 12, "feed[1]",
            "did you mean 'series'"),
    BadCase("unknown-line-type", _edit("line: rg-213", "line: rg-214"), 14, "feed[3].line",
            "unknown line type 'rg-214'; did you mean 'rg-213'?"),
    BadCase("custom-line-incomplete", _edit("line: window-450, length: 10 m",
                                            "line: custom, length: 10 m, impedance: 450 ohm"),
            11, "feed[0]", "a custom line needs 'velocity_factor', 'loss'"),
    BadCase("custom-line-zero-frequency", _edit(
        "line: window-450, length: 10 m",
        "line: custom, length: 10 m, impedance: 450 ohm, velocity_factor: 0.9,\n"
        "     loss: [{frequency: 0 MHz, db: 0.1}]"), 12, "feed[0].loss[0].frequency",
        "must be positive, got '0 MHz'"),
    BadCase("q-and-esr", _edit("q: 1500}", "q: 1500, esr: 0.1 ohm}"), 12, "feed[1].esr",
            "give 'q' or 'esr', not both"),
    BadCase("ratio-malformed", _edit('ratio: "1:1"', 'ratio: "4-1"'), 13, "feed[2].ratio",
            "write it as '4:1'"),
    # --- common-mode chokes
    BadCase("choke-unknown-catalog", _edit("radio:", "  - {id: ch, choke: {catalog: "
                                           "beads-on-coaks}}\nradio:"),
            15, "feed[4].choke.catalog", "unknown choke 'beads-on-coaks'; did you mean "
            "'beads-on-coax'?"),
    BadCase("choke-two-forms", _edit("radio:", "  - {id: ch, choke: {catalog: beads-on-coax, "
                                     "parallel: {r: 4 kohm, l: 150 uH, c: 2.7 pF}}}\nradio:"),
            15, "feed[4].choke", "give exactly one of 'catalog', 'points' and 'parallel'"),
    BadCase("choke-resistance-too-low", _edit("radio:", "  - {id: ch, choke: {parallel: "
                                              "{r: 0.5 ohm, l: 150 uH, c: 2.7 pF}}}\nradio:"),
            15, "feed[4].choke.parallel.r", "must be at least"),
    BadCase("choke-capacitance-in-henries", _edit("radio:", "  - {id: ch, choke: {parallel: "
                                                  "{r: 4 kohm, l: 150 uH, c: 2.7 uH}}}\n"
                                                  "radio:"),
            15, "feed[4].choke.parallel.c", "not a capacitance"),
    BadCase("choke-points-miss-a-band", _edit(
        "radio:", "  - {id: ch, choke: {points: [{frequency: 10 MHz, r: 2 kohm, x: 0 ohm}, "
        "{frequency: 20 MHz, r: 3 kohm, x: -1 kohm}]}}\nradio:"),
        15, "feed[4].choke.points", "give points across every band"),
    BadCase("choke-kind-typo", _edit("radio:", "  - {id: ch, chok: {catalog: beads-on-coax}}\n"
                                     "radio:"),
            15, "feed[4]", "did you mean 'choke'"),
    BadCase("alternative-choke-unknown", BASE + "report:\n  alternatives:\n    - name: choked\n"
            "      feed:\n        - {id: c1, choke: {catalog: beads-on-coks}}\n", 20,
            "report.alternatives[0].feed[0].choke.catalog", "did you mean 'beads-on-coax'?"),
    BadCase("balun-kind-typo", _edit('ratio: "1:1"}', 'ratio: "1:1", balun_kind: curent}'), 13,
            "feed[2].balun_kind", "did you mean 'current'?"),
    BadCase("balun-choke-unknown", _edit('ratio: "1:1"}', 'ratio: "1:1", choke: {catalog: '
                                         'current-baloon}}'), 13,
            "feed[2].choke.catalog", "did you mean 'current-balun'?"),
    # --- study keys
    BadCase("search-range-one-value", BASE + "search:\n  antenna.span: [22 m]\n", 17,
            "search[antenna.span]", "a range is two values [low, high]"),
    BadCase("search-key-typo", BASE + "search:\n  antenna.span: {range: [22 m, 30 m], "
            "scal: log}\n", 17, "search[antenna.span].scal", "did you mean 'scale'?"),
    BadCase("cost-combine-unknown", BASE + "cost:\n  combine: best\n", 17, "cost.combine",
            "expected one of mean, worst"),
    BadCase("transformer-kind-typo", _edit("transformer: balun", "transformer: balum"), 13,
            "feed[2].transformer", "did you mean 'balun'?"),
]
