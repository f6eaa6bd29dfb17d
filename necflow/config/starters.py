"""Starter designs and the shipped examples.

``necflow new SHAPE`` writes a commented design a builder can start from:
each starter is made here as YAML text for the bands asked (the lengths
scale with the lowest band), and evaluates as written.  The shipped
examples are package data (``necflow/examples/*.yaml``), so a design can be
started without the repository.

The first line of every starter is the editor modeline that points to the
design file's JSON Schema (``necflow schema --out necflow-design.schema.json``).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from importlib import resources

from scipy.constants import speed_of_light

from necflow.catalog.bands import TABLES, unknown_band_message
from necflow.errors import ConfigError

#: The file name the starters' modeline points to.
SCHEMA_FILE = "necflow-design.schema.json"
#: The editor modeline (read by editors with a YAML language server).
MODELINE = f"# yaml-language-server: $schema={SCHEMA_FILE}"

_CAUTION = """\
# Caution: never put a wire, a mast or a throw line where it could touch or fall
# onto a power line. Wire ends, window line and matching parts carry RF voltages of
# hundreds to thousands of volts: keep people away while you transmit.
"""


def _fmt(x: float, step: float = 0.1) -> str:
    """``x`` rounded to ``step`` as plain text (``20.35`` -> ``'20.4'``)."""
    digits = max(0, -math.floor(math.log10(step) + 1e-9))
    text = f"{round(x / step) * step:.{digits}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def _lam(band: str, region: int) -> float:
    """Wavelength [m] at the centre of a built-in band."""
    low, high = TABLES[region].edges[band]
    return speed_of_light / (0.5 * (low + high))


def _bands(bands: list[str]) -> str:
    return "[" + ", ".join(bands) + "]"


def _head(title: str, what: str, bands: list[str], region: int) -> str:
    return (f"{MODELINE}\n"
            f"# {title}\n"
            f"{what}"
            "# Check it with `necflow check FILE`, solve it with `necflow evaluate FILE`;\n"
            "# every physical value carries its unit (m, ft, mm, pF, uH, MHz, ...).\n"
            f"{_CAUTION}")


def _doublet(bands: list[str], region: int) -> str:
    lam = _lam(bands[0], region)
    span = _fmt(0.5 * lam, 0.5)
    return _head(
        "Starter: a doublet fed with window line, a current balun and coax, no tuner.",
        "# The span is about half a wavelength on the lowest band; the window line's\n"
        "# length sets which bands the radio sees a low SWR on. Without a matching unit\n"
        "# the SWR is high on some bands: the report shows where, and compares a tuner\n"
        "# at the radio and at the feed point with this chain.\n", bands, region) + f"""\
name: starter-doublet
description: Doublet at 10 m, window line down to a current balun, coax to the radio.
region: {region}                        # ITU region of the band table (1, 2 or 3)
bands: {_bands(bands)}
antenna:
  shape: doublet
  span: {span} m                      # tip to tip
  height: 10 m                     # above the ground under it
  wire: {{diameter: 14 AWG, material: hard-drawn-copper}}   # or e.g. 2 mm, 1.5 mm2
ground: {{model: sommerfeld, surface: medium-dry}}   # the default; wet, very-dry, ...
feed:                              # from the antenna toward the radio
  - {{id: ladder, line: window-450, length: 12 m}}
  - {{id: balun, transformer: balun, ratio: "1:1", loss: 0.2, balun_kind: current,
     choke: current-balun}}         # stops common-mode current on the coax
  - {{id: coax, line: rg-213, length: 20 m}}
radio: {{impedance: 50 ohm, power: 100 W}}
goal: {{swr_limit: 3.0}}
# The line's path, to put its outside (common-mode current) into the model;
# it makes each solve slower. Uncomment to use it:
# route:
#   points: [[0 m, 0 m, 2 m], [0 m, 15 m, 1 m]]   # down to the balun, over to the house
#   entry: ground                                  # shield bonded at the entry
"""


def _inverted_v(bands: list[str], region: int) -> str:
    lam = _lam(bands[0], region)
    leg = 0.245 * lam
    apex = max(10.0, math.ceil(leg * 0.5 + 2.0))   # leg ends at least 2 m up at 30 deg
    return _head(
        "Starter: an inverted-V fed with coax through a 1:1 current balun.",
        "# Each leg is a little under a quarter wavelength on the lowest band: trim both\n"
        "# legs equally to move the lowest SWR (longer legs, lower frequency). A coax-fed\n"
        "# dipole matches on its band and near its odd harmonics only.\n",
        bands, region) + f"""\
name: starter-inverted-v
description: Inverted-V on a {apex:g} m mast, legs drooping 30 degrees, coax to the radio.
region: {region}
bands: {_bands(bands)}
antenna:
  shape: inverted-v
  apex_height: {apex:g} m                # the feed point, on top of the mast
  leg: {_fmt(leg, 0.05)} m                   # along each wire, apex to end
  droop: 30 deg                    # each leg below horizontal (or give end_height)
  wire: {{diameter: 1.5 mm, material: copper}}
ground: {{model: sommerfeld, surface: medium-dry}}
feed:                              # from the antenna toward the radio
  - {{id: balun, transformer: balun, ratio: "1:1", loss: 0.1}}
  - {{id: coax, line: rg-8x, length: 20 m}}
radio: {{impedance: 50 ohm, power: 100 W}}
goal: {{swr_limit: 2.0}}
"""


def _end_fed(bands: list[str], region: int) -> str:
    lam = _lam(bands[0], region)
    cp = round(0.06 * lam, 1)                      # counterpoise, sloping down along a guy
    cp_end = _fmt(9.0 - 0.6 * cp, 0.1)
    return _head(
        "Starter: an end-fed half-wave wire through a 49:1 transformer, with its coax.",
        "# The wire is about half a wavelength on the lowest band and works near its\n"
        "# harmonics. The coax shield is part of the antenna here: the route puts it in\n"
        "# the model, and the report gives the common-mode current it carries.\n",
        bands, region) + f"""\
name: starter-end-fed
description: End-fed wire from a 9 m mast to a tree, coax down the mast to the radio.
region: {region}
bands: {_bands(bands)}
antenna:
  shape: end-fed
  length: {_fmt(0.475 * lam, 0.1)} m                 # the radiating wire
  feed_height: 9 m                 # the transformer, at the top of the mast
  far_height: 7 m                  # the far end, in the tree
  azimuth: 0 deg                   # the wire runs along +x
  counterpoise: {{length: {_fmt(cp, 0.1)} m, end_height: {cp_end} m}}   # the cold side
  wire: {{diameter: 1 mm, material: copper-clad-steel}}
ground: {{model: sommerfeld, surface: medium-dry}}
feed:                              # from the antenna toward the radio
  - {{id: xfmr, transformer: unun, ratio: "49:1", loss: 0.5, power_rating: 100 W}}
  - {{id: drop, line: rg-8x, length: 8 m}}     # down the mast
  - {{id: choke, choke: toroid-coax-low-mix}}  # at the foot of the mast
  - {{id: run, line: rg-8x, length: 10 m}}     # over the ground to the radio
route:                             # the coax's path: its outside is part of the antenna
  points: [[0 m, 0 m, 1 m], [-1 m, -8 m, 0.3 m]]   # down the mast, then along the ground
  entry: floating                  # no ground rod at the radio (ground: bonded to one)
radio: {{impedance: 50 ohm, power: 100 W}}
goal: {{swr_limit: 2.5}}
"""


def _off_centre(bands: list[str], region: int) -> str:
    lam = _lam(bands[0], region)
    return _head(
        "Starter: an off-centre-fed wire through a 4:1 current balun and coax.",
        "# About half a wavelength on the lowest band, fed a third of the way along:\n"
        "# there the impedance is a few hundred ohms on the fundamental and its even\n"
        "# harmonics, which the 4:1 balun brings near 50 ohm.\n", bands, region) + f"""\
name: starter-off-centre
description: Off-centre-fed wire at 10 m, 4:1 current balun, coax to the radio.
region: {region}
bands: {_bands(bands)}
antenna:
  shape: off-centre
  span: {_fmt(0.49 * lam, 0.5)} m                      # tip to tip
  height: 10 m
  feed_position: 33 %              # from the left tip; or a distance, e.g. 13 m
  wire: {{diameter: 14 AWG, material: copper}}
ground: {{model: sommerfeld, surface: medium-dry}}
feed:                              # from the antenna toward the radio
  - {{id: balun, transformer: balun, ratio: "4:1", loss: 0.3, choke: current-balun}}
  - {{id: coax, line: rg-213, length: 25 m}}
radio: {{impedance: 50 ohm, power: 100 W}}
goal: {{swr_limit: 2.5}}
"""


def _wires(bands: list[str], region: int) -> str:
    lam = _lam(bands[0], region)
    half = _fmt(0.167 * lam, 0.05)                  # half the flat top
    tail = 0.085 * lam                             # each end hangs down this far
    h = max(8.0, math.ceil(tail + 2.0))
    low = _fmt(h - tail, 0.05)
    return _head(
        "Starter: a list of wires, here a dipole whose ends hang down (a short garden).",
        "# Each wire is a straight line from start to end, [x, y, z] with z up and the\n"
        "# ground at z = 0; wires that share an end point are joined there. The feed sits\n"
        "# on one wire, at a fraction, a percentage or a distance from its start.\n",
        bands, region) + f"""\
name: starter-wires
description: Dipole at {h:g} m with its ends hanging down, 1:1 balun and coax.
region: {region}
bands: {_bands(bands)}
antenna:
  shape: wires
  wire: {{diameter: 2 mm, material: copper}}      # every wire unless it gives its own
  wires:
    - {{name: top, start: [-{half} m, 0 m, {h:g} m], end: [{half} m, 0 m, {h:g} m]}}
    - {{name: left-tail, start: [-{half} m, 0 m, {h:g} m], end: [-{half} m, 0 m, {low} m]}}
    - {{name: right-tail, start: [{half} m, 0 m, {h:g} m], end: [{half} m, 0 m, {low} m]}}
  feed: {{wire: top, position: 0.5}}              # the middle of the top wire
ground: {{model: sommerfeld, surface: medium-dry}}
feed:                              # from the antenna toward the radio
  - {{id: balun, transformer: balun, ratio: "1:1", loss: 0.1}}
  - {{id: coax, line: rg-8x, length: 15 m}}
radio: {{impedance: 50 ohm, power: 100 W}}
goal: {{swr_limit: 2.0}}
"""


#: Starter shape -> (what it is, default bands, the function writing it).
STARTERS: dict[str, tuple[str, list[str], Callable[[list[str], int], str]]] = {
    "doublet": ("doublet with window line, current balun and coax (no tuner)",
                ["80m", "40m", "20m", "15m", "10m"], _doublet),
    "inverted-v": ("inverted-V with a 1:1 balun and coax", ["40m"], _inverted_v),
    "end-fed": ("end-fed half-wave wire, 49:1 transformer, coax in the model (route)",
                ["40m", "20m", "15m", "10m"], _end_fed),
    "off-centre": ("off-centre-fed wire with a 4:1 current balun and coax",
                   ["80m", "40m", "20m", "10m"], _off_centre),
    "wires": ("a list of straight wires: a dipole with its ends hanging down",
              ["20m"], _wires),
}


def starter(shape: str, bands: list[str] | None = None, region: int = 2) -> str:
    """The YAML text of a starter design.

    Parameters
    ----------
    shape : str
        A key of :data:`STARTERS`.
    bands : list of str, optional
        Built-in band names (default: the starter's own); the lengths scale
        with the lowest of them.
    region : int
        ITU region of the band table.

    Raises
    ------
    ConfigError
        An unknown shape, region or band name (field ``--bands``).
    """
    if shape not in STARTERS:
        raise ConfigError(f"unknown starter '{shape}'; expected one of {', '.join(STARTERS)}",
                          field="SHAPE")
    if region not in TABLES:
        raise ConfigError(f"unknown region {region}; expected 1, 2 or 3", field="--region")
    _, default, write = STARTERS[shape]
    names = list(bands) if bands else default
    table = TABLES[region].edges
    for b in names:
        if b not in table:
            raise ConfigError(unknown_band_message(b, region), field="--bands")
    if len(set(names)) != len(names):
        raise ConfigError("a band is named twice", field="--bands")
    order = list(table)
    return write(sorted(names, key=order.index), region)


def _examples():
    return resources.files("necflow") / "examples"


def example_names() -> list[str]:
    """Names of the shipped example designs (``demo``, ``end-fed``, ...)."""
    return sorted(p.name[:-5] for p in _examples().iterdir() if p.name.endswith(".yaml"))


def example(name: str) -> str:
    """The text of a shipped example design.

    Raises
    ------
    ConfigError
        No example of that name (field ``--example``).
    """
    names = example_names()
    if name not in names:
        raise ConfigError(f"no example '{name}'; expected one of {', '.join(names)}",
                          field="--example")
    return (_examples() / f"{name}.yaml").read_text(encoding="utf-8")


__all__ = ["MODELINE", "SCHEMA_FILE", "STARTERS", "example", "example_names", "starter"]
