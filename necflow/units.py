"""Units at the edges: parse ``"27 m"``, ``"470 pF"``, ``"5 mS/m"`` into SI floats.

Inside necflow every physical value is a plain float (or numpy array) in SI
units: metres, hertz, farads, henries, ohms, watts, siemens per metre,
radians.  Only the design file and the reports carry units; this module is
the single place where text becomes SI and SI becomes text again.
"""

from __future__ import annotations

import functools
import math
import re

import pint

#: Dimension name -> (pint dimensionality string, SI unit, example shown in errors)
DIMENSIONS: dict[str, tuple[str, str, str]] = {
    "length": ("[length]", "m", "27 m"),
    "frequency": ("1/[time]", "Hz", "3.5 MHz"),
    "capacitance": ("[current] ** 2 * [time] ** 4 / [length] ** 2 / [mass]", "F", "470 pF"),
    "inductance": ("[length] ** 2 * [mass] / [current] ** 2 / [time] ** 2", "H", "2.2 uH"),
    "resistance": ("[length] ** 2 * [mass] / [current] ** 2 / [time] ** 3", "ohm", "50 ohm"),
    "power": ("[length] ** 2 * [mass] / [time] ** 3", "W", "100 W"),
    "conductivity": ("[current] ** 2 * [time] ** 3 / [length] ** 3 / [mass]", "S/m", "5 mS/m"),
    "voltage": ("[length] ** 2 * [mass] / [current] / [time] ** 3", "V", "1 kV"),
    "current": ("[current]", "A", "2 A"),
    "angle": ("", "rad", "30 deg"),
}


@functools.lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """The package-wide unit registry (created once)."""
    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    # Shorthands the trade writes that pint does not know by default.
    ureg.define("mho = siemens")
    return ureg


_NUMBER = re.compile(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$")
#: A number and a unit, nothing else: the unit parser evaluates arithmetic
#: (``9**9**9 m`` would never finish), so only this form reaches it.
_QUANTITY = re.compile(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d{1,4})?\s*"
                       r"[A-Za-z][A-Za-z0-9_]*(\s*/\s*[A-Za-z][A-Za-z0-9_]*)?\s*$")
#: Longest text read as a quantity.
_MAX_TEXT = 64


class UnitError(ValueError):
    """A value whose unit is missing, unknown or of the wrong dimension."""


def _normalise(text: str) -> str:
    t = text.strip()
    # Common spellings: ohm symbol, micro sign, "ohms", "µH"
    t = t.replace("Ω", " ohm").replace("µ", "u").replace("μ", "u")
    t = re.sub(r"\bohms\b", "ohm", t)
    t = re.sub(r"\bmhz\b", "MHz", t)
    t = re.sub(r"\bkhz\b", "kHz", t)
    # "88'" / 6" style feet and inches are ambiguous in YAML; not accepted.
    return t


def parse(value: object, dimension: str) -> float:
    """Convert a value with a unit into an SI float.

    Parameters
    ----------
    value : str or number
        Text such as ``"27 m"`` or ``"470 pF"``.  A bare number is refused
        for every dimension: a missing unit is the commonest slip.
    dimension : str
        A key of :data:`DIMENSIONS`.

    Returns
    -------
    float
        The value in the SI unit of that dimension.

    Raises
    ------
    UnitError
        With a one-line message saying what was expected.
    """
    dim, si, example = DIMENSIONS[dimension]
    if isinstance(value, bool) or value is None:
        raise UnitError(f"expected {_a(dimension)} with a unit, e.g. '{example}'")
    if isinstance(value, (int, float)):
        raise UnitError(f"'{value}' has no unit; expected {_a(dimension)} with a unit, "
                        f"e.g. '{example}'")
    if not isinstance(value, str):
        raise UnitError(f"expected {_a(dimension)} with a unit as text, e.g. '{example}'")
    if len(value) > _MAX_TEXT:
        raise UnitError(f"a value of {len(value)} characters is not {_a(dimension)}; expected "
                        f"e.g. '{example}'")
    text = _normalise(value)
    if _NUMBER.match(text):
        raise UnitError(f"'{value}' has no unit; expected {_a(dimension)} with a unit, "
                        f"e.g. '{example}'")
    if not _QUANTITY.match(text):
        raise UnitError(f"cannot read '{value}' as {_a(dimension)}; expected a number and a "
                        f"unit, e.g. '{example}'")
    ureg = registry()
    try:
        q = ureg.Quantity(text)
    except Exception:  # pint raises several unrelated types for bad text
        raise UnitError(f"cannot read '{value}' as {_a(dimension)}; "
                        f"expected e.g. '{example}'") from None
    if not isinstance(q, ureg.Quantity):
        raise UnitError(f"'{value}' has no unit; expected {_a(dimension)} with a unit, "
                        f"e.g. '{example}'")
    if dimension == "angle":
        if not q.dimensionless or q.unitless:
            raise UnitError(f"'{value}' is not an angle; expected e.g. '{example}'")
        out = float(q.to("radian").magnitude)
    else:
        try:
            out = float(q.to(si).magnitude)
        except pint.DimensionalityError:
            raise UnitError(
                f"'{value}' is a {_describe(q)}, not {_a(dimension)}; "
                f"expected e.g. '{example}'") from None
    if not math.isfinite(out):
        raise UnitError(f"'{value}' is not a finite number")
    return out


def finite(value: float, dimension: str) -> float:
    """``value`` [SI] if it is a finite number, else a UnitError."""
    if not math.isfinite(value):
        raise UnitError(f"{value!r} is not a finite {dimension}")
    return float(value)


def _a(word: str) -> str:
    return ("an " if word[0] in "aeiou" else "a ") + word


def _describe(q) -> str:
    for name, (_, si, _) in DIMENSIONS.items():
        if name == "angle":
            continue
        try:
            q.to(si)
            return name
        except Exception:
            continue
    return f"quantity in {q.units:~}" if not q.dimensionless else "plain number"


#: Preferred display units for reports and resolved designs.
_DISPLAY = {
    "length": "m",
    "frequency": "MHz",
    "capacitance": "pF",
    "inductance": "uH",
    "resistance": "ohm",
    "power": "W",
    "conductivity": "S/m",
    "voltage": "V",
    "current": "A",
    "angle": "deg",
}


def format_quantity(si_value: float, dimension: str, unit: str | None = None,
                    digits: int = 6) -> str:
    """Render an SI float as text with a unit that :func:`parse` reads back.

    ``format_quantity(4.7e-10, "capacitance") == "470 pF"``.
    """
    unit = unit or _DISPLAY[dimension]
    ureg = registry()
    si = "radian" if dimension == "angle" else DIMENSIONS[dimension][1]
    mag = ureg.Quantity(si_value, si).to(unit).magnitude
    return f"{float(mag):.{digits}g} {unit}"
