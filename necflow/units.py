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
    return t


#: Foot and inch marks: ``100'``, ``6"``, ``5' 6"`` (the typewriter marks and
#: the typographic prime, double prime and curly quotes).
_MARKS = re.compile(r"^\s*(?:(?P<ft>\d+\.?\d*|\.\d+)\s*['′’])?\s*"
                    r"(?:(?P<inch>\d+\.?\d*|\.\d+)\s*[\"″”])?\s*$")
_FOOT, _INCH = 0.3048, 0.0254   # m; exact by the 1959 international yard


def _marks(text: str) -> float | None:
    """``100'`` -> 30.48 [m], ``6"`` -> 0.1524, ``5' 6"`` -> 1.6764; else None."""
    m = _MARKS.match(text)
    if not m or (m.group("ft") is None and m.group("inch") is None):
        return None
    return float(m.group("ft") or 0) * _FOOT + float(m.group("inch") or 0) * _INCH


# ----------------------------------------------------------------------------
# Wire gauges

#: ``14 AWG``, ``AWG 14``, ``#14 AWG``, ``4/0 AWG``, ``0000 AWG``.
_AWG = re.compile(r"^\s*(?:#?\s*(?P<a>\d{1,2}|[1-4]/0|0{2,4})\s*AWG|AWG\s*#?\s*"
                  r"(?P<b>\d{1,2}|[1-4]/0|0{2,4}))\s*$", re.IGNORECASE)
#: ``1.5 mm2``, ``2.5 mm^2``, ``4 mm²``, ``6 sq mm``, ``10 sqmm``.
_SECTION = re.compile(r"^\s*(?P<a>\d+\.?\d*|\.\d+)\s*(?:mm\s*(?:2|\^2|\*\*2|²)|sq\.?\s*mm)"
                      r"\s*$", re.IGNORECASE)
#: Gauge numbers read (4/0 to 40); beyond them no wire antenna is built.
AWG_RANGE = (-3, 40)


def awg_diameter(n: int | float) -> float:
    """Diameter of an American Wire Gauge size [m].

    Parameters
    ----------
    n : int
        Gauge number; 0 for 1/0, -1 for 2/0, -2 for 3/0, -3 for 4/0.

    Returns
    -------
    float
        d = 0.127 mm * 92 ** ((36 - n) / 39): 36 AWG is 0.005 in, 4/0 is
        0.46 in, and the 39 steps between them are a geometric progression.

    References
    ----------
    .. [1] ASTM B258, Standard Specification for Standard Nominal Diameters
       and Cross-Sectional Areas of AWG Sizes of Solid Round Wires Used as
       Electrical Conductors (the definition of the gauge).
    """
    return 0.127e-3 * 92.0 ** ((36.0 - n) / 39.0)


def section_diameter(area_mm2: float) -> float:
    """Diameter [m] of a round conductor of the given cross-section [mm^2]:
    d = sqrt(4 A / pi) (metric wire is sold by its conductor cross-section,
    IEC 60228).  For stranded wire this is the solid conductor of the same
    area, a little thinner than the strands' bundle."""
    return math.sqrt(4.0 * area_mm2 / math.pi) * 1e-3


def gauge_diameter(value: object) -> float | None:
    """The diameter [m] a wire gauge names (``14 AWG``, ``AWG 14``,
    ``1.5 mm2``), or None when ``value`` is no gauge.

    AWG sizes go by their definition (:func:`awg_diameter`); a stranded
    wire's gauge is its copper area, so this is the solid wire of that area.

    Raises
    ------
    UnitError
        A gauge number outside 4/0 to 40, or a cross-section of zero.
    """
    if not isinstance(value, str) or len(value) > _MAX_TEXT:
        return None
    m = _AWG.match(value)
    if m:
        g = m.group("a") or m.group("b")
        n = 1 - int(g[0]) if "/" in g else 1 - len(g) if set(g) == {"0"} and len(g) > 1 \
            else int(g)
        if not AWG_RANGE[0] <= n <= AWG_RANGE[1]:
            raise UnitError(f"'{value}' is outside the gauges read (4/0 to 40 AWG)")
        return awg_diameter(n)
    m = _SECTION.match(value)
    if m:
        area = float(m.group("a"))
        if area <= 0:
            raise UnitError(f"'{value}' is no cross-section; expected e.g. '1.5 mm2'")
        return section_diameter(area)
    return None


def parse_diameter(value: object) -> float:
    """A wire's diameter [m]: a length with a unit (``"2 mm"``, ``"0.08 in"``)
    or a wire gauge (``"14 AWG"``, ``"AWG 14"``, ``"1.5 mm2"``).

    Raises
    ------
    UnitError
        As :func:`parse` for a length, naming the gauges as well.
    """
    d = gauge_diameter(value)
    if d is not None:
        return d
    bare = (isinstance(value, (int, float)) and not isinstance(value, bool)
            or isinstance(value, str) and _NUMBER.match(value))
    if bare:
        shown = f"{value:g}" if isinstance(value, float) else str(value).strip()
        raise UnitError(f"'{shown}' has no unit; expected a diameter with a unit, e.g. "
                        f"'{shown} mm', or a wire gauge such as '14 AWG' or '1.5 mm2'")
    try:
        return parse(value, "length")
    except UnitError as exc:
        raise UnitError(f"{exc}, or a wire gauge such as '14 AWG' or '1.5 mm2'") from None


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
        raise UnitError(_bare(value, dimension))
    if not isinstance(value, str):
        raise UnitError(f"expected {_a(dimension)} with a unit as text, e.g. '{example}'")
    if len(value) > _MAX_TEXT:
        raise UnitError(f"a value of {len(value)} characters is not {_a(dimension)}; expected "
                        f"e.g. '{example}'")
    text = _normalise(value)
    if _NUMBER.match(text):
        raise UnitError(_bare(text.strip(), dimension))
    marked = _marks(text)
    if marked is not None:
        if dimension == "length":
            return marked
        raise UnitError(f"'{value}' is a length in feet (') or inches (\"), not "
                        f"{_a(dimension)}; expected e.g. '{example}'")
    if dimension == "length" and gauge_diameter(value) is not None:
        raise UnitError(f"'{value}' is a wire gauge, read only for a wire's diameter; "
                        f"expected a length here, e.g. '{example}'")
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


def _bare(number: object, dimension: str) -> str:
    """The message for a number without its unit, with the number written
    the way it is read (``'100' has no unit; ... e.g. '100 m' or '100 ft'``)."""
    _, si, example = DIMENSIONS[dimension]
    unit = example.split()[-1]
    shown = f"{number:g}" if isinstance(number, float) else str(number)
    also = f" or '{shown} ft' (also {shown}')" if dimension == "length" else ""
    return (f"'{shown}' has no unit; expected {_a(dimension)} with a unit, e.g. "
            f"'{shown} {unit}'{also}")


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


def display_unit(dimension: str) -> str:
    """The unit reports show a dimension in (``"capacitance"`` -> ``"pF"``)."""
    return _DISPLAY[dimension]


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
