"""The design file's schema: every key, its unit, its default, its checks.

A design is validated by pydantic models.  Physical values are written with
units in YAML (``"27 m"``) and held here as SI floats; :func:`quantity`
declares such a field.  Each field's ``json_schema_extra`` carries the
dimension and display unit, which the README key reference
(:mod:`necflow.config.reference`) and the resolved-design writer read, so
the documentation and the schema cannot drift apart (a test checks it).

Coordinates: x along the span of the antenna, y across it, z up; the ground
plane (when there is one) is z = 0.
"""

from __future__ import annotations

import math
import re
from collections import Counter
from typing import Annotated, Any, Literal

from pydantic import (
    BaseModel,
    BeforeValidator,
    ConfigDict,
    Discriminator,
    Field,
    StrictBool,
    Tag,
    ValidationInfo,
    field_validator,
    model_validator,
)

from necflow import limits, units
from necflow.catalog.chokes import CHOKE_TYPES, DEFAULT_BALUN_CHOKE
from necflow.config.sections import CostSpec, SearchParam, ToleranceSpec

# ----------------------------------------------------------------------------
# Field helpers


def _from_file(info: ValidationInfo | None) -> bool:
    """True while a design file is validated (``context={'from_file': True}``):
    a value there must carry its unit.  Code that builds or edits a design
    gives SI floats, which are taken as they are."""
    return bool(info is not None and info.context and info.context.get("from_file"))


def _si_number(v: Any, info: ValidationInfo | None) -> bool:
    return (isinstance(v, (int, float)) and not isinstance(v, bool)
            and not _from_file(info))


def _to_si(dimension: str):
    def convert(v: Any, info: ValidationInfo) -> float:
        if _si_number(v, info):
            return units.finite(float(v), dimension)
        try:
            return units.parse(v, dimension)
        except units.UnitError as exc:
            raise ValueError(str(exc)) from None
    return convert


def quantity(dimension: str, *, default: Any = ..., unit: str | None = None,
             description: str = "", gt: float | None = None,
             ge: float | None = None, lt: float | None = None,
             le: float | None = None) -> Any:
    """A field that holds a physical value with a unit (SI float inside).

    ``default`` is given as text with a unit (``"50 ohm"``) so that the README
    shows it as the user writes it; it is converted when the model is built.
    """
    display = unit or units._DISPLAY[dimension]
    extra = {"dimension": dimension, "unit": display}
    kwargs: dict[str, Any] = {"description": description, "json_schema_extra": extra}
    for name, bound in (("gt", gt), ("ge", ge), ("lt", lt), ("le", le)):
        if bound is not None:
            kwargs[name] = bound
    if default is ...:
        return Field(..., **kwargs)
    if default is None:
        return Field(None, **kwargs)
    extra["default_text"] = default
    return Field(units.parse(default, dimension), **kwargs)


Length = Annotated[float, BeforeValidator(_to_si("length"))]
Frequency = Annotated[float, BeforeValidator(_to_si("frequency"))]
Resistance = Annotated[float, BeforeValidator(_to_si("resistance"))]
Inductance = Annotated[float, BeforeValidator(_to_si("inductance"))]
Capacitance = Annotated[float, BeforeValidator(_to_si("capacitance"))]
Power = Annotated[float, BeforeValidator(_to_si("power"))]
Conductivity = Annotated[float, BeforeValidator(_to_si("conductivity"))]
Voltage = Annotated[float, BeforeValidator(_to_si("voltage"))]
Current = Annotated[float, BeforeValidator(_to_si("current"))]
Angle = Annotated[float, BeforeValidator(_to_si("angle"))]


def _to_diameter(v: Any, info: ValidationInfo) -> float:
    """A wire's diameter: a length, or a gauge ('14 AWG', '1.5 mm2')."""
    if _si_number(v, info):
        return units.finite(float(v), "length")
    try:
        return units.parse_diameter(v)
    except units.UnitError as exc:
        raise ValueError(str(exc)) from None


Diameter = Annotated[float, BeforeValidator(_to_diameter)]


def _fraction_or_length(v: Any) -> float | tuple[str, float]:
    """A feed position: a plain fraction 0..1 of the wire, a percentage
    (``"33 %"``) or a distance from the wire's start (``"9 m"``); a value
    already read, ``("fraction", x)`` or ``("distance", metres)``, is kept
    (a searched value set on a copy of the design)."""
    if isinstance(v, tuple) and len(v) == 2 and v[0] in ("fraction", "distance") \
            and isinstance(v[1], (int, float)) and not isinstance(v[1], bool) \
            and math.isfinite(v[1]):
        return (v[0], float(v[1]))
    if isinstance(v, (int, float)) and not isinstance(v, bool):
        return ("fraction", float(v))
    if isinstance(v, str) and v.strip().endswith("%"):
        try:
            return ("fraction", float(v.strip()[:-1]) / 100.0)
        except ValueError:
            raise ValueError(f"cannot read '{v}' as a percentage") from None
    try:
        return ("distance", units.parse(v, "length"))
    except units.UnitError:
        raise ValueError(
            f"'{v}' is not a feed position; give a fraction of the wire (0.33), "
            "a percentage ('33 %') or a distance from the wire's start ('9 m')") from None


Position = Annotated[tuple[str, float], BeforeValidator(_fraction_or_length)]


def _duplicates(items) -> list:
    """Items given more than once, sorted (linear in the number of items)."""
    return sorted(k for k, n in Counter(items).items() if n > 1)


class Strict(BaseModel):
    """Base: unknown keys are errors, values are re-validated on assignment."""

    model_config = ConfigDict(extra="forbid", validate_assignment=True,
                              populate_by_name=True, allow_inf_nan=False)


# ----------------------------------------------------------------------------
# Bands


class BandSpec(Strict):
    """One band to evaluate: a name from the band table, or explicit edges."""

    name: str = Field(..., description="Band name: one from the built-in table "
                      "(160m, 80m, 60m, 40m, 30m, 20m, 17m, 15m, 12m, 10m) or your own "
                      "label when you give the edges")
    low: Frequency | None = quantity("frequency", default=None,
                                     description="Lower band edge (default: from the band table)")
    high: Frequency | None = quantity("frequency", default=None,
                                      description="Upper band edge (default: from the band table)")
    points: int = Field(11, ge=2, le=1001,
                        description="Frequencies evaluated across the band, edges included")
    weight: float = Field(1.0, ge=0.0, le=1000.0, description="Weight of the band in scores")

    @model_validator(mode="after")
    def _edges(self) -> BandSpec:
        if (self.low is None) != (self.high is None):
            raise ValueError("give both 'low' and 'high', or neither (edges from the band table)")
        if self.low is not None:
            if self.low <= 0 or self.high <= 0:
                raise ValueError("band edges must be positive frequencies")
            if self.high <= self.low:
                raise ValueError(
                    f"band edges are reversed or equal: low {self.low/1e6:g} MHz is not below "
                    f"high {self.high/1e6:g} MHz")
            lo, hi = limits.F_MIN_HZ, limits.F_MAX_HZ
            for key, v in (("low", self.low), ("high", self.high)):
                if not lo <= v <= hi:
                    raise ValueError(
                        f"{key}: {units.format_quantity(v, 'frequency')} is outside "
                        f"{lo / 1e6:g}-{hi / 1e6:g} MHz, the range this tool is meant for (the "
                        "line catalog's loss figures and the ground constants are for HF)")
        return self


def _band_entry(v: Any) -> Any:
    if isinstance(v, str):
        return {"name": v}
    return v


BandEntry = Annotated[BandSpec, BeforeValidator(_band_entry)]


# ----------------------------------------------------------------------------
# Antenna

WIRE_MATERIALS = ("copper", "hard-drawn-copper", "aluminium", "copper-clad-steel",
                  "stainless-steel", "lossless")


class WireSpec(Strict):
    """Conductor of the radiator."""

    diameter: Diameter = quantity("length", default="2 mm", unit="mm", gt=0, le=1.0,
                                  description="Conductor diameter, or its gauge ('14 AWG', "
                                  "'1.5 mm2')")
    material: str = Field("copper", description="Conductor material, for conductor loss: "
                          + ", ".join(WIRE_MATERIALS))

    @field_validator("material")
    @classmethod
    def _material(cls, v: str) -> str:
        if v not in WIRE_MATERIALS:
            raise ValueError(f"unknown material '{v}'; expected one of {', '.join(WIRE_MATERIALS)}")
        return v


class Doublet(Strict):
    """A straight, horizontal, centre-fed wire."""

    shape: Literal["doublet"]
    span: Length = quantity("length", gt=0, le=2000.0,
                            description="Tip-to-tip length of the wire")
    height: Length = quantity("length", gt=0, le=500.0,
                              description="Height of the wire above ground")
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")


class OffCentre(Strict):
    """A straight, horizontal wire fed away from its centre."""

    shape: Literal["off-centre"]
    span: Length = quantity("length", gt=0, le=2000.0,
                            description="Tip-to-tip length of the wire")
    height: Length = quantity("length", gt=0, le=500.0,
                              description="Height of the wire above ground")
    feed_position: Position = Field(..., description="Feed point from the left tip: a fraction "
                                    "(0.33), a percentage ('33 %') or a distance ('13.4 m')",
                                    json_schema_extra={"unit": "fraction or m"})
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")


class InvertedV(Strict):
    """Two straight legs sloping down from a centre-fed apex."""

    shape: Literal["inverted-v"]
    apex_height: Length = quantity("length", gt=0, le=500.0,
                                   description="Height of the feed point (apex)")
    leg: Length = quantity("length", gt=0, le=1000.0,
                           description="Length of each leg along the wire")
    end_height: Length | None = quantity("length", default=None, ge=0, le=500.0,
                                         description="Height of the leg ends (give this or "
                                         "'droop')")
    droop: Angle | None = quantity("angle", default=None, ge=0,
                                   description="Angle of each leg below horizontal "
                                   "(give this or 'end_height')")
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")

    @model_validator(mode="after")
    def _one_of(self) -> InvertedV:
        if (self.end_height is None) == (self.droop is None):
            raise ValueError("give exactly one of 'end_height' and 'droop'")
        if self.droop is not None and self.droop >= 1.5707963267948966:
            raise ValueError("droop must be below 90 deg")
        return self


#: 90 and 180 degrees [rad], the bounds of the angle fields below.
_RIGHT_ANGLE = math.pi / 2.0
_HALF_TURN = math.pi


class Sloper(Strict):
    """A straight wire with one end higher than the other, fed anywhere along it."""

    shape: Literal["sloper"]
    length: Length = quantity("length", gt=0, le=2000.0,
                              description="Length of the wire, end to end")
    top_height: Length = quantity("length", gt=0, le=500.0,
                                  description="Height of the upper end, which stands above "
                                  "x = y = 0")
    bottom_height: Length | None = quantity("length", default=None, ge=0, le=500.0,
                                            description="Height of the lower end (give this "
                                            "or 'slope')")
    slope: Angle | None = quantity("angle", default=None, ge=0, le=_RIGHT_ANGLE,
                                   description="Angle of the wire below horizontal, 0 to "
                                   "90 deg (give this or 'bottom_height')")
    azimuth: Angle = quantity("angle", default="0 deg", ge=-2 * _HALF_TURN,
                              le=2 * _HALF_TURN,
                              description="Direction of the run from the upper end toward "
                              "the lower, seen from above: 0 deg along +x, 90 deg along +y")
    feed_position: Position = Field(0.5, validate_default=True,
                                    description="Feed point from the upper end: a fraction "
                                    "(0.5 is the centre), a percentage ('33 %') or a distance "
                                    "('6 m')", json_schema_extra={"unit": "fraction or m"})
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")

    @model_validator(mode="after")
    def _one_of(self) -> Sloper:
        if (self.bottom_height is None) == (self.slope is None):
            raise ValueError("give exactly one of 'bottom_height' and 'slope'")
        return self


class Counterpoise(Strict):
    """A wire from the cold side of an end-fed wire's transformer."""

    length: Length = quantity("length", gt=0, le=200.0, description="Length of the wire")
    end_height: Length | None = quantity("length", default=None, ge=0, le=500.0,
                                         description="Height of its far end (default: the "
                                         "height of the feed end: horizontal)")
    azimuth: Angle | None = quantity("angle", default=None, ge=-2 * _HALF_TURN,
                                     le=2 * _HALF_TURN,
                                     description="Direction it runs, seen from above (default: "
                                     "opposite to the radiator)")


class EndFed(Strict):
    """A straight wire fed at one end through a transformer: the other side
    of the transformer is the coax shield (the route) and an optional
    counterpoise."""

    shape: Literal["end-fed"]
    length: Length = quantity("length", gt=0, le=2000.0,
                              description="Length of the radiating wire")
    feed_height: Length = quantity("length", gt=0, le=500.0,
                                   description="Height of the fed end (the transformer), "
                                   "which stands above x = y = 0")
    far_height: Length | None = quantity("length", default=None, ge=0, le=500.0,
                                         description="Height of the far end (default: the "
                                         "feed height: horizontal)")
    azimuth: Angle = quantity("angle", default="0 deg", ge=-2 * _HALF_TURN,
                              le=2 * _HALF_TURN,
                              description="Direction of the wire from the fed end, seen from "
                              "above: 0 deg along +x")
    counterpoise: Counterpoise | None = Field(None, description="A counterpoise wire on the "
                                              "transformer's cold side (without one, the "
                                              "route's coax shield is the only return)")
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")


def _one_height(model: Any) -> None:
    if (model.bottom_height is None) == (model.top_height is None):
        raise ValueError("give exactly one of 'bottom_height' and 'top_height'")


class DeltaLoop(Strict):
    """A triangular loop in a vertical plane (x-z) with one horizontal side, the base."""

    shape: Literal["delta-loop"]
    perimeter: Length = quantity("length", gt=0, le=2000.0,
                                 description="Length of wire around the loop")
    base: Length | None = quantity("length", default=None, gt=0, le=1000.0,
                                   description="Length of the horizontal side, under half the "
                                   "perimeter (default: a third of the perimeter, an "
                                   "equilateral triangle); the two other sides share the rest "
                                   "equally")
    apex: Literal["up", "down"] = Field("up", description="up: the base at the bottom and the "
                                        "opposite corner (the apex) on top; down: the base on "
                                        "top and the apex at the bottom")
    bottom_height: Length | None = quantity("length", default=None, gt=0, le=500.0,
                                            description="Height of the loop's lowest point "
                                            "(give this or 'top_height')")
    top_height: Length | None = quantity("length", default=None, gt=0, le=500.0,
                                         description="Height of the loop's highest point "
                                         "(give this or 'bottom_height')")
    feed: Literal["base-centre", "base-corner", "apex", "side-centre"] = Field(
        "base-centre", description="Feed point: base-centre (middle of the base), base-corner "
        "(the base's corner at -x), apex (the corner opposite the base) or side-centre "
        "(middle of the sloping side at +x)")
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")

    @model_validator(mode="after")
    def _one_of(self) -> DeltaLoop:
        _one_height(self)
        return self


class SquareLoop(Strict):
    """A square loop in a vertical plane (x-z), its bottom side horizontal."""

    shape: Literal["square-loop"]
    side: Length = quantity("length", gt=0, le=500.0, description="Length of each of the four "
                            "sides")
    bottom_height: Length | None = quantity("length", default=None, gt=0, le=500.0,
                                            description="Height of the bottom side (give this "
                                            "or 'top_height')")
    top_height: Length | None = quantity("length", default=None, gt=0, le=500.0,
                                         description="Height of the top side (give this or "
                                         "'bottom_height')")
    feed: Literal["bottom-centre", "side-centre", "bottom-corner"] = Field(
        "bottom-centre", description="Feed point: bottom-centre (middle of the bottom side), "
        "side-centre (middle of the vertical side at +x) or bottom-corner (the bottom corner "
        "at -x)")
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")

    @model_validator(mode="after")
    def _one_of(self) -> SquareLoop:
        _one_height(self)
        return self


class HorizontalLoop(Strict):
    """A horizontal loop shaped as a regular polygon, centred above x = y = 0."""

    shape: Literal["horizontal-loop"]
    sides: int = Field(4, ge=3, le=36, description="Number of equal sides: 3 a triangle, 4 a "
                       "square, more come closer to a circle")
    perimeter: Length = quantity("length", gt=0, le=2000.0,
                                 description="Length of wire around the loop")
    height: Length = quantity("length", gt=0, le=500.0, description="Height of the loop above "
                              "ground")
    feed: Literal["side-centre", "corner"] = Field(
        "side-centre", description="Feed point: side-centre (middle of the side parallel to x "
        "at the -y edge) or corner (that side's corner at -x)")
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")


class Bend(Strict):
    """Where a leg of a bent doublet changes direction, and how."""

    position: Position = Field(..., description="Distance of the bend from the feed point "
                               "along the leg: a fraction of the leg (0.6), a percentage "
                               "('60 %') or a distance ('8 m'); strictly inside the leg",
                               json_schema_extra={"unit": "fraction or m"})
    turn: Angle = quantity("angle", default="0 deg", gt=-_HALF_TURN, lt=_HALF_TURN,
                           description="Horizontal turn of the outer piece at the bend, seen "
                           "from above: positive toward +y, negative toward -y (the same sign "
                           "on both legs bends both ends to the same side); under 180 deg")
    height: Length | None = quantity("length", default=None, ge=0, le=500.0,
                                     description="Height of the bend (default: on the straight "
                                     "line from the feed point to the leg's end)")


class Leg(Strict):
    """One leg of a bent doublet: one straight piece from the feed point, or two with a bend."""

    length: Length = quantity("length", gt=0, le=1000.0,
                              description="Length of the leg along the wire, from the feed "
                              "point to its end")
    end_height: Length | None = quantity("length", default=None, ge=0, le=500.0,
                                         description="Height of the leg's end (default: the "
                                         "feed point's height)")
    bend: Bend | None = Field(None, description="Where the leg bends (default: a straight leg)")


class BentDoublet(Strict):
    """Two legs from a feed point, each straight or bent once; lengths and heights may differ."""

    shape: Literal["bent-doublet"]
    height: Length = quantity("length", gt=0, le=500.0,
                              description="Height of the feed point, which stands above "
                              "x = y = 0")
    left: Leg = Field(..., description="The leg that leaves the feed point toward -x")
    right: Leg = Field(..., description="The leg that leaves the feed point toward +x")
    wire: WireSpec = Field(default_factory=WireSpec, description="Conductor")


def _point(v: Any, info: ValidationInfo) -> tuple[float, float, float]:
    if not isinstance(v, (list, tuple)) or len(v) != 3:
        raise ValueError("a point is a list of three lengths [x, y, z], "
                         "e.g. ['0 m', '0 m', '10 m']")
    try:
        point = tuple(units.finite(float(c), "length") if _si_number(c, info)
                      else units.parse(c, "length") for c in v)
    except units.UnitError as exc:
        raise ValueError(str(exc)) from None
    if max(abs(c) for c in point) > MAX_COORDINATE_M:
        raise ValueError(f"a coordinate is more than {MAX_COORDINATE_M / 1000:g} km from the "
                         "origin; expected a wire antenna's size")
    return point  # type: ignore[return-value]


#: Largest distance of a wire point from the origin [m].
MAX_COORDINATE_M = 5000.0

Point = Annotated[tuple[float, float, float], BeforeValidator(_point)]


class WireItem(Strict):
    """One straight wire of an explicit wire list."""

    name: str | None = Field(None, description="Label to refer to the wire (default: its "
                             "1-based number)")
    start: Point = Field(..., description="Start point [x, y, z]",
                         json_schema_extra={"unit": "m"})
    end: Point = Field(..., description="End point [x, y, z]", json_schema_extra={"unit": "m"})
    diameter: Diameter | None = quantity("length", default=None, unit="mm", gt=0, le=1.0,
                                         description="Diameter or gauge (default: the list's "
                                         "'wire.diameter')")

    @model_validator(mode="after")
    def _length(self) -> WireItem:
        if sum((a - b) ** 2 for a, b in zip(self.start, self.end)) <= 1e-12:
            raise ValueError("wire has zero length: start and end are the same point")
        return self


class FeedPoint(Strict):
    """Where the feed chain connects in an explicit wire list."""

    wire: str | int = Field(..., description="Wire name, or its 1-based number in the list")
    position: Position = Field(0.5, description="Along the wire from its start: a fraction, "
                               "a percentage or a distance",
                               json_schema_extra={"unit": "fraction or m"})


class WireList(Strict):
    """Any structure of straight wires."""

    shape: Literal["wires"]
    wires: list[WireItem] = Field(..., min_length=1, max_length=limits.MAX_WIRES,
                                  description="The wires")
    feed: FeedPoint = Field(..., description="Feed point")
    wire: WireSpec = Field(default_factory=WireSpec, description="Default conductor")

    @model_validator(mode="after")
    def _feed_wire(self) -> WireList:
        names = [w.name for w in self.wires if w.name]
        dup = _duplicates(names)
        if dup:
            raise ValueError(f"duplicate wire name(s): {', '.join(dup)}")
        ref = self.feed.wire
        if isinstance(ref, int):
            if not 1 <= ref <= len(self.wires):
                raise ValueError(f"feed wire {ref} does not exist; the list has "
                                 f"{len(self.wires)} wire(s), numbered from 1")
        elif ref not in names:
            raise ValueError(f"feed wire '{ref}' is not a wire name; names are: "
                             f"{', '.join(names) or '(none given)'}")
        return self

    def feed_index(self) -> int:
        """0-based index of the fed wire."""
        ref = self.feed.wire
        if isinstance(ref, int):
            return ref - 1
        return [w.name for w in self.wires].index(ref)


Antenna = Annotated[Doublet | OffCentre | InvertedV | WireList | Sloper | DeltaLoop
                    | SquareLoop | HorizontalLoop | BentDoublet | EndFed,
                    Field(discriminator="shape")]

# ----------------------------------------------------------------------------
# Ground

GROUND_MODELS = ("free-space", "perfect", "reflection", "sommerfeld")
#: The soil of a real-ground model that names none: the middle of the
#: catalog's range (ITU-R P.527 medium dry ground).
DEFAULT_SURFACE = "medium-dry"


class Ground(Strict):
    """The ground under the antenna."""

    model: Literal["free-space", "perfect", "reflection", "sommerfeld"] = Field(
        "sommerfeld", description="free-space; perfect; reflection (reflection-coefficient "
        "approximation, for wires well above ground); sommerfeld (Sommerfeld-Norton, "
        "accurate near the ground)")
    surface: str | None = Field(None, description="Named surface from the ground catalog "
                                "(ITU-R P.527), e.g. medium-dry; or give permittivity and "
                                "conductivity (with neither: medium-dry)")
    permittivity: float | None = Field(None, ge=1, le=100, description="Relative permittivity "
                                       "of the soil (1 to 100; sea water is about 70-81)")
    conductivity: Conductivity | None = quantity("conductivity", default=None, gt=0, le=10.0,
                                                 description="Soil conductivity")

    @model_validator(mode="before")
    @classmethod
    def _default_soil(cls, data: Any) -> Any:
        """A real-soil model with no soil given stands on DEFAULT_SURFACE."""
        if isinstance(data, dict) and data.get("model", "sommerfeld") in ("reflection",
                                                                          "sommerfeld") \
                and not {"surface", "permittivity", "conductivity"} & data.keys():
            return {**data, "surface": DEFAULT_SURFACE}
        return data

    @model_validator(mode="after")
    def _constants(self) -> Ground:
        finite = self.model in ("reflection", "sommerfeld")
        given = (self.permittivity is not None, self.conductivity is not None)
        if not finite:
            if self.surface or any(given):
                raise ValueError(f"a '{self.model}' ground takes no surface, permittivity or "
                                 "conductivity")
            return self
        if self.surface and any(given):
            raise ValueError("give either 'surface' or 'permittivity' and 'conductivity', not both")
        if not self.surface and not all(given):
            raise ValueError(f"a '{self.model}' ground needs 'surface' (e.g. medium-dry) or both "
                             "'permittivity' and 'conductivity'")
        return self


# ----------------------------------------------------------------------------
# Feed chain


#: Highest matched loss a line may have [dB/m] (about 90 dB per 100 ft; the
#: thinnest common coax loses a tenth of that at 30 MHz, common practice).
MAX_LINE_DB_PER_M = 3.0


class LossPoint(Strict):
    """One matched-loss figure of a custom line."""

    frequency: Frequency = quantity("frequency", gt=0, le=10e9,
                                    description="Frequency of the figure")
    db: float = Field(..., ge=0, le=1000, description="Matched loss in dB over the length 'per'")
    per: Length = quantity("length", default="100 ft", unit="ft", gt=0, le=10_000.0,
                           description="Length the loss figure refers to")

    @model_validator(mode="after")
    def _plausible(self) -> LossPoint:
        if self.db / self.per > MAX_LINE_DB_PER_M:
            raise ValueError(f"db: {self.db:g} dB over {units.format_quantity(self.per, 'length')}"
                             f" is {self.db / self.per:.3g} dB/m, more than the "
                             f"{MAX_LINE_DB_PER_M:g} dB/m of any feed line (thin coax loses "
                             "under 0.3 dB/m at HF)")
        return self


class SwitchSpec(Strict):
    """A relay that takes an element out of the chain on some bands.

    Out of circuit a series element (line, series part, transformer, tuner)
    is bridged by the relay's closed contacts and a shunt part is
    disconnected: the chain on that band is the chain without it.
    """

    bypass: list[str] = Field(default_factory=list, max_length=limits.MAX_BANDS,
                              description="Bands on which the relay takes the element out of "
                              "circuit (in circuit on the others)")
    only: list[str] | None = Field(None, max_length=limits.MAX_BANDS,
                                   description="Instead of bypass: the bands on which the "
                                   "element is switched in (out of circuit on the others)")

    @model_validator(mode="after")
    def _one_form(self) -> SwitchSpec:
        if self.only is not None and self.bypass:
            raise ValueError("give 'bypass' or 'only', not both")
        for name in ("bypass", "only"):
            dup = _duplicates(getattr(self, name) or [])
            if dup:
                raise ValueError(f"{name}: band '{dup[0]}' is listed twice")
        return self

    def is_out(self, band: str) -> bool:
        """True when the element is out of circuit on ``band``."""
        return band not in self.only if self.only is not None else band in self.bypass

    def bands_named(self) -> list[tuple[str, int, str]]:
        """(key, index, band name) of every band the spec names."""
        return [(k, i, b) for k in ("bypass", "only") for i, b in
                enumerate(getattr(self, k) or [])]

    def set_state(self, band: str, state: str) -> None:
        """Set the state on one band: 'in' or 'out' (a search sets it)."""
        if state not in ("in", "out"):
            raise ValueError(f"a switch state is 'in' or 'out', not '{state}'")
        if self.only is not None:
            only = [b for b in self.only if b != band] + ([band] if state == "in" else [])
            object.__setattr__(self, "only", only)
        else:
            out = [b for b in self.bypass if b != band] + ([band] if state == "out" else [])
            object.__setattr__(self, "bypass", out)


class LineElement(Strict):
    """A length of transmission line: from the catalog, or custom."""

    id: str = Field(..., description="Unique name of the element")
    line: str = Field(..., description="Line type from the catalog (e.g. window-450, rg-213) "
                      "or 'custom'")
    length: Length = quantity("length", gt=0, le=5000.0, description="Physical length")
    impedance: Resistance | None = quantity("resistance", default=None, gt=0, le=2000.0,
                                            description="Characteristic impedance (custom lines; "
                                            "overrides the catalog)")
    velocity_factor: float | None = Field(None, gt=0, le=1,
                                          description="Velocity factor (custom lines; overrides "
                                          "the catalog)")
    loss: list[LossPoint] | None = Field(None, max_length=50,
                                         description="Matched loss at one or more "
                                         "frequencies (custom lines; overrides the catalog)")
    balanced: StrictBool | None = Field(None, description="Whether the line is balanced (two-wire) "
                                  "rather than coax (default: the catalog type's; false for "
                                  "custom lines)")
    voltage_rating: Voltage | None = quantity("voltage", default=None, gt=0, le=1e6,
                                              description="Peak voltage rating, for stress margins")
    switch: SwitchSpec | None = Field(None, description="A relay that takes the element "
                                      "out of circuit on some bands (see Band-switched feeds)")

    @model_validator(mode="after")
    def _custom(self) -> LineElement:
        if self.line == "custom":
            missing = [k for k in ("impedance", "velocity_factor", "loss")
                       if getattr(self, k) is None]
            if missing:
                raise ValueError("a custom line needs " + ", ".join(f"'{m}'" for m in missing))
        return self


# Common-mode chokes


class ChokePoint(Strict):
    """One measured common-mode impedance of a choke."""

    frequency: Frequency = quantity("frequency", gt=0, le=10e9,
                                    description="Frequency of the measurement")
    r: Resistance = quantity("resistance", ge=0, le=1e6,
                             description="Resistance (real part of the common-mode impedance)")
    x: Resistance = quantity("resistance", ge=-1e6, le=1e6,
                             description="Reactance (imaginary part; positive inductive)")


class ParallelRLC(Strict):
    """A choke as R, L and C in parallel (the usual model of a ferrite choke)."""

    r: Resistance = quantity("resistance", unit="kohm", ge=1.0, le=1e6,
                             description="Parallel resistance: the impedance at resonance")
    l: Inductance = quantity("inductance", ge=1e-9, le=10e-3,
                             description="Parallel inductance")
    c: Capacitance = quantity("capacitance", ge=0.01e-12, le=10e-9,
                              description="Parallel capacitance")


CHOKE_FORMS = ("catalog", "points", "parallel")


class ChokeSpec(Strict):
    """A common-mode choke: a catalog name, measured points, or a parallel R-L-C."""

    catalog: str | None = Field(None, description="Choke from the catalog: "
                                + ", ".join(CHOKE_TYPES))
    points: list[ChokePoint] | None = Field(
        None, min_length=2, max_length=200, description="Measured common-mode impedance, "
        "interpolated in log frequency; the design's bands must lie within them")
    parallel: ParallelRLC | None = Field(None, description="Parallel R-L-C: "
                                         "Z = 1 / (1/R + 1/(jwL) + jwC)")

    @model_validator(mode="before")
    @classmethod
    def _catalog_name(cls, data: Any) -> Any:
        """A plain name is short for ``{catalog: name}``."""
        return {"catalog": data} if isinstance(data, str) else data

    @model_validator(mode="after")
    def _one_form(self) -> ChokeSpec:
        given = [k for k in CHOKE_FORMS if getattr(self, k) is not None]
        if len(given) != 1:
            raise ValueError("give exactly one of 'catalog', 'points' and 'parallel'"
                             + (f", not {' and '.join(repr(k) for k in given)}" if given else ""))
        if self.points is not None:
            dup = _duplicates(p.frequency for p in self.points)
            if dup:
                raise ValueError(f"points: {units.format_quantity(dup[0], 'frequency')} is "
                                 "given twice; expected one point per frequency")
        return self

    @property
    def span_hz(self) -> tuple[float, float] | None:
        """Lowest and highest frequency of measured points [Hz]; None for the
        other forms (valid at any frequency)."""
        if self.points is None:
            return None
        f = [p.frequency for p in self.points]
        return min(f), max(f)


PART_KINDS = {"capacitor": "capacitance", "inductor": "inductance", "resistor": "resistance"}
#: Plausible values of each part [F, H, ohm].
PART_RANGES = {"capacitor": (0.01e-12, 100e-6), "inductor": (1e-9, 100e-3),
               "resistor": (1e-3, 10e6)}


class PartElement(Strict):
    """A lumped capacitor, inductor or resistor in series or across the line."""

    id: str = Field(..., description="Unique name of the element")
    series: Literal["capacitor", "inductor", "resistor"] | None = Field(
        None, description="A part in series with the line: capacitor, inductor or resistor")
    shunt: Literal["capacitor", "inductor", "resistor"] | None = Field(
        None, description="A part across the line: capacitor, inductor or resistor")
    value: float = Field(..., description="Capacitance (pF, nF), inductance (uH) or "
                         "resistance (ohm), with its unit",
                         json_schema_extra={"unit": "pF / uH / ohm"})
    q: float | None = Field(None, gt=0, le=1e6, description="Unloaded Q of a capacitor or inductor "
                            "(default: 1000 for capacitors, 200 for inductors)")
    esr: Resistance | None = quantity("resistance", default=None, ge=0,
                                      description="Equivalent series resistance (instead of Q)")
    voltage_rating: Voltage | None = quantity("voltage", default=None, gt=0, le=1e6,
                                              description="Peak voltage rating")
    current_rating: Current | None = quantity("current", default=None, gt=0, le=1e4,
                                              description="RMS current rating")
    power_rating: Power | None = quantity("power", default=None, gt=0, le=1e6,
                                          description="Dissipation rating")
    switch: SwitchSpec | None = Field(None, description="A relay that takes the element "
                                      "out of circuit on some bands (see Band-switched feeds)")

    @model_validator(mode="before")
    @classmethod
    def _value_unit(cls, data: Any, info: ValidationInfo) -> Any:
        if not isinstance(data, dict):
            return data
        kind = data.get("series") or data.get("shunt")
        if kind in PART_KINDS and "value" in data:
            try:
                data = dict(data)
                v = data["value"]
                data["value"] = (units.finite(float(v), PART_KINDS[kind]) if _si_number(v, info)
                                 else units.parse(v, PART_KINDS[kind]))
            except units.UnitError as exc:
                raise ValueError(f"value: {exc}") from None
        return data

    @model_validator(mode="after")
    def _placement(self) -> PartElement:
        if (self.series is None) == (self.shunt is None):
            raise ValueError("give exactly one of 'series' and 'shunt'")
        if self.value <= 0:
            raise ValueError("value must be positive")
        lo, hi = PART_RANGES[self.kind]
        dim = PART_KINDS[self.kind]
        if not lo <= self.value <= hi:
            raise ValueError(f"value: {units.format_quantity(self.value, dim)} is outside "
                             f"{units.format_quantity(lo, dim)} to "
                             f"{units.format_quantity(hi, dim)}, the range of parts in a feed "
                             "system")
        if self.q is not None and self.esr is not None:
            raise ValueError("give 'q' or 'esr', not both")
        if self.kind == "resistor" and (self.q is not None or self.esr is not None):
            raise ValueError("a resistor takes no 'q' or 'esr'")
        return self

    @property
    def kind(self) -> str:
        return self.series or self.shunt  # type: ignore[return-value]

    @property
    def placement(self) -> str:
        return "series" if self.series else "shunt"


#: Impedance ratios a transformer may have (antenna side : radio side); the
#: high-ratio transformers of end-fed wires reach about 64:1 (common practice).
RATIO_RANGE = (1.0 / 200.0, 200.0)
_RATIO_TEXT = re.compile(r"\s*([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)\s*:\s*"
                         r"([0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)\s*")


def _ratio(v: Any, info: ValidationInfo) -> float:
    """An impedance ratio written as text 'A:B' (antenna side : radio side).

    In a design file the ratio must be text: a plain number there is refused
    (``ratio: 4`` could mean 4:1 or 1:4), and so is anything a YAML 1.1
    reader would have turned into a number.  Code that sets a ratio (a
    search, a tolerance case) may give the number antenna/radio.
    """
    from_file = bool(info.context and info.context.get("from_file"))
    if isinstance(v, bool):
        pass
    elif isinstance(v, (int, float)):
        if not from_file:
            return _ratio_in_range(float(v), v)
        raise ValueError(f"got the number {v!r}; write the ratio as text, antenna side : radio "
                         "side, e.g. '4:1' (4 times the impedance at the antenna side)")
    elif isinstance(v, str):
        m = _RATIO_TEXT.fullmatch(v)
        if m:
            a, b = float(m.group(1)), float(m.group(2))
            if a > 0 and b > 0 and math.isfinite(a) and math.isfinite(b):
                return _ratio_in_range(a / b, v)
    raise ValueError(f"'{v}' is not an impedance ratio; write it as '4:1' (antenna side : "
                     "radio side)")


def _ratio_in_range(r: float, given: Any) -> float:
    lo, hi = RATIO_RANGE
    if not (math.isfinite(r) and lo <= r <= hi):
        raise ValueError(f"ratio {given} is outside 1:{1 / lo:g} to {hi:g}:1, the range of "
                         "transformers and baluns this tool models")
    return r


class TransformerElement(Strict):
    """An impedance transformer or balun."""

    id: str = Field(..., description="Unique name of the element")
    transformer: Literal["balun", "unun", "transformer"] = Field(
        ..., description="Kind: balun, unun or transformer (for the report; the model is the same)")
    ratio: Annotated[float, BeforeValidator(_ratio)] = Field(
        1.0, gt=0, description="Impedance ratio, antenna side : radio side (e.g. '4:1')",
        json_schema_extra={"default_text": "1:1"})
    loss: float = Field(0.1, ge=0, lt=10, description="Matched insertion loss in dB")
    loss_model: Literal["series", "pad"] = Field(
        "series", description="Where the loss is dissipated: series (winding resistance, the "
        "differential-mode loss of a current balun) or pad (a matched attenuator, part of it "
        "as shunt core loss of a voltage transformer)")
    voltage_rating: Voltage | None = quantity("voltage", default=None, gt=0, le=1e6,
                                              description="Peak voltage rating")
    power_rating: Power | None = quantity("power", default=None, gt=0, le=1e6,
                                          description="Power rating")
    balun_kind: Literal["current", "voltage"] | None = Field(
        None, description="Current or voltage balun (default: current for a balun; ignored "
        "for an unun or transformer)", json_schema_extra={"default_text": "current (balun)"})
    choke: ChokeSpec | None = Field(
        None, description="Common-mode impedance of the balun (or of a choke built into the "
        "transformer), used when the feed line is modelled as a conductor (default: the "
        "catalog's current-balun for a current balun, none otherwise)")
    switch: SwitchSpec | None = Field(None, description="A relay that takes the element "
                                      "out of circuit on some bands (see Band-switched feeds)")

    @property
    def effective_balun_kind(self) -> str | None:
        """'current' or 'voltage' for a balun (current unless given), else None."""
        if self.transformer != "balun":
            return None
        return self.balun_kind or "current"

    @property
    def common_mode_choke(self) -> ChokeSpec | None:
        """The choke given, else the catalog's current-balun choke for a
        current balun, else None."""
        if self.choke is not None:
            return self.choke
        if self.effective_balun_kind == "current":
            return ChokeSpec(catalog=DEFAULT_BALUN_CHOKE)
        return None


class ChokeElement(Strict):
    """A common-mode choke on the feed line (passes the differential mode unchanged)."""

    id: str = Field(..., description="Unique name of the element")
    choke: ChokeSpec = Field(..., description="Its common-mode impedance: catalog, points or "
                             "parallel; used when the feed line is modelled as a conductor")
    voltage_rating: Voltage | None = quantity("voltage", default=None, gt=0, le=1e6,
                                              description="Peak voltage rating")
    power_rating: Power | None = quantity("power", default=None, gt=0, le=1e6,
                                          description="Power rating, compared with the power "
                                          "passing through (as for a transformer)")
    switch: SwitchSpec | None = Field(None, description="A relay that takes the element "
                                      "out of circuit on some bands (see Band-switched feeds)")


# Band-switched states and matching networks (tuners)


class CapacitorSpec(Strict):
    """A tuner's capacitor: a variable range or one fixed value."""

    min: Capacitance | None = quantity("capacitance", default=None, gt=0, le=100e-9,
                                       unit="pF", description="Smallest setting (a variable "
                                       "capacitor never reaches 0 pF; typically 10-30 pF)")
    max: Capacitance | None = quantity("capacitance", default=None, gt=0, le=100e-9,
                                       unit="pF", description="Largest setting")
    value: Capacitance | None = quantity("capacitance", default=None, gt=0, le=100e-9,
                                         unit="pF", description="A fixed capacitor instead "
                                         "of min and max")
    q: float = Field(1000.0, gt=0, le=1e6, description="Unloaded Q at the reference frequency")
    q_exponent: float = Field(0.0, ge=-2, le=2, description="Q varies as (f / q_reference) "
                              "to this power (0: constant)")
    q_reference: Frequency = quantity("frequency", default="10 MHz", gt=0, le=1e9,
                                      description="Frequency at which q is given")
    voltage_rating: Voltage | None = quantity("voltage", default=None, gt=0, le=1e6,
                                              description="Peak voltage rating")

    @model_validator(mode="after")
    def _form(self) -> CapacitorSpec:
        ranged = self.min is not None or self.max is not None
        if ranged == (self.value is not None):
            raise ValueError("give 'min' and 'max' (a variable capacitor) or 'value' (a "
                             "fixed one)")
        if ranged and (self.min is None or self.max is None):
            raise ValueError("a variable capacitor needs both 'min' and 'max'")
        if ranged and not self.min <= self.max:
            raise ValueError("min: the minimum is above the maximum")
        return self


class InductorSpec(Strict):
    """A tuner's inductor: a roller up to a maximum, a list of taps, or one
    fixed value."""

    max: Inductance | None = quantity("inductance", default=None, gt=0, le=1e-3, unit="uH",
                                      description="Largest setting of a continuously "
                                      "variable (roller) inductor")
    min: Inductance = quantity("inductance", default="0.1 uH", gt=0, le=1e-3, unit="uH",
                               description="What a roller leaves at its end stop")
    taps: list[Inductance] | None = Field(None, min_length=1, max_length=64,
                                          description="Values of a tapped inductor",
                                          json_schema_extra={"unit": "uH",
                                                             "dimension": "inductance"})
    value: Inductance | None = quantity("inductance", default=None, gt=0, le=1e-3, unit="uH",
                                        description="A fixed inductor")
    q: float = Field(100.0, gt=0, le=1e6, description="Unloaded Q at the reference "
                     "frequency (100-300 for an air-wound or roller coil, common practice)")
    q_exponent: float = Field(0.0, ge=-2, le=2, description="Q varies as (f / q_reference) "
                              "to this power (0.5: skin-effect loss of an air-wound coil)")
    q_reference: Frequency = quantity("frequency", default="10 MHz", gt=0, le=1e9,
                                      description="Frequency at which q is given")
    current_rating: Current | None = quantity("current", default=None, gt=0, le=1e4,
                                              description="RMS current rating")

    @model_validator(mode="after")
    def _form(self) -> InductorSpec:
        given = [k for k in ("max", "taps", "value") if getattr(self, k) is not None]
        if len(given) != 1:
            raise ValueError("give one of 'max' (a roller), 'taps' or 'value' (fixed)")
        if self.taps is not None and any(t <= 0 for t in self.taps):
            raise ValueError("taps: every tap must be positive")
        if self.max is not None and not self.min <= self.max:
            raise ValueError("max: below the roller's minimum")
        return self


#: Part names of each tuner network, radio side first.
TUNER_PARTS = {"high-pass-t": ("c1", "l", "c2"), "pi": ("c1", "l", "c2"),
               "l-network": ("l", "c")}


class TunerElement(Strict):
    """An adjustable matching network (antenna tuner) of lossy parts."""

    id: str = Field(..., description="Unique name of the element")
    tuner: Literal["high-pass-t", "pi", "l-network"] = Field(
        ..., description="Network: high-pass-t (series c1 at the radio side, shunt l, series "
        "c2 at the antenna side), pi (shunt c1, series l, shunt c2) or l-network (one l, "
        "one c)")
    filter: Literal["low-pass", "high-pass"] = Field(
        "low-pass", description="L-network only: low-pass (series l, shunt c) or high-pass "
        "(series c, shunt l)")
    shunt_side: Literal["antenna", "radio"] = Field(
        "antenna", description="L-network only: the side its shunt part is on")
    capacitor: CapacitorSpec = Field(default_factory=lambda: CapacitorSpec(
        min=15e-12, max=250e-12), description="Every capacitor of the network (c1 and c2, "
        "or c)", json_schema_extra={"default_text": "15 pF to 250 pF, Q 1000"})
    c1: CapacitorSpec | None = Field(None, description="The radio-side capacitor, if it "
                                     "differs from 'capacitor'")
    c2: CapacitorSpec | None = Field(None, description="The antenna-side capacitor, if it "
                                     "differs from 'capacitor'")
    inductor: InductorSpec = Field(default_factory=lambda: InductorSpec(max=20e-6),
                                   description="The inductor",
                                   json_schema_extra={"default_text": "roller to 20 uH, Q 100"})
    match_to: Resistance | None = quantity("resistance", default=None, gt=0, le=2000.0,
                                           description="Resistance the network presents on "
                                           "its radio side (default: the radio's impedance)")
    swr_tolerance: float = Field(1.1, ge=1, le=10, description="Where no exact match lies "
                                 "within the ranges, the setting of least SWR is accepted up "
                                 "to this SWR")
    settings: dict[str, dict[str, float | str]] = Field(
        default_factory=dict, description="Your own settings per band: band name -> part "
        "name (c1, l, c2 or c) -> value with unit; other bands are set for least loss",
        json_schema_extra={"unit": "pF / uH"})
    power_rating: Power | None = quantity("power", default=None, gt=0, le=1e6,
                                          description="Rating of the power passing through")
    switch: SwitchSpec | None = Field(None, description="A relay that takes the element "
                                      "out of circuit on some bands (see Band-switched feeds)")

    @model_validator(mode="after")
    def _parts(self) -> TunerElement:
        names = TUNER_PARTS[self.tuner]
        if self.tuner == "l-network" and (self.c1 is not None or self.c2 is not None):
            raise ValueError("c1: an l-network has one capacitor; give 'capacitor'")
        parsed = {}
        for band, given in self.settings.items():
            missing = [k for k in names if k not in given]
            extra = [k for k in given if k not in names]
            if extra or missing:
                raise ValueError(f"settings: band '{band}' needs exactly the parts "
                                 f"{', '.join(names)} of the {self.tuner}")
            vals = {}
            for k, v in given.items():
                dim = "inductance" if k == "l" else "capacitance"
                try:
                    vals[k] = (float(v) if isinstance(v, (int, float))
                               and not isinstance(v, bool) else units.parse(v, dim))
                except units.UnitError as exc:
                    raise ValueError(f"settings: band '{band}' part {k}: {exc}") from None
            parsed[band] = vals
        object.__setattr__(self, "settings", parsed)
        return self

    def capacitor_for(self, name: str) -> CapacitorSpec:
        """The spec of capacitor ``name`` (c1, c2 or c)."""
        own = getattr(self, name, None) if name in ("c1", "c2") else None
        return own or self.capacitor


#: The keys that say what a feed element is, in the order they are looked for
#: (a transformer may carry a 'choke' key of its own).
ELEMENT_KEYS = ("tuner", "line", "series", "shunt", "transformer", "choke")


def _element_tag(v: Any) -> str | None:
    if isinstance(v, dict):
        for key in ELEMENT_KEYS:
            if key in v:
                return "part" if key in ("series", "shunt") else key
        return None
    for key, tag in (("tuner", "tuner"), ("line", "line"), ("transformer", "transformer"),
                     ("choke", "choke")):
        if hasattr(v, key) and getattr(v, key) is not None:
            return tag
    return "part"


Element = Annotated[Annotated[LineElement, Tag("line")]
                    | Annotated[PartElement, Tag("part")]
                    | Annotated[TransformerElement, Tag("transformer")]
                    | Annotated[ChokeElement, Tag("choke")]
                    | Annotated[TunerElement, Tag("tuner")],
                    Discriminator(_element_tag, custom_error_type="element_kind",
                                  custom_error_message="an element needs one of 'line', "
                                  "'series', 'shunt', 'transformer', 'choke' or 'tuner'")]


# ----------------------------------------------------------------------------
# Radio, goal, model settings


class Radio(Strict):
    """The radio at the end of the feed chain."""

    impedance: Resistance = quantity("resistance", default="50 ohm", ge=1.0, le=1000.0,
                                     description="Reference impedance the radio wants")
    power: Power = quantity("power", default="100 W", gt=0, le=100e3,
                            description="Available power (carrier or PEP) for stress figures")


class Goal(Strict):
    """What a usable result is."""

    swr_limit: float = Field(2.0, gt=1, le=100, description="Highest acceptable SWR at the radio")


class Cautions(Strict):
    """Thresholds at which reports warn."""

    voltage: Voltage = quantity("voltage", default="1 kV", unit="V", gt=0,
                                description="Peak RF voltage on any part or line that draws a "
                                "caution")
    common_mode_current: Current = quantity("current", default="0.1 A", gt=0, le=100.0,
                                            description="RMS common-mode current at the "
                                            "station entry that draws a caution (with a "
                                            "route; common practice: RF in the shack)")
    choke_heat: Power = quantity("power", default="5 W", gt=0, le=1e5,
                                 description="Heat in a common-mode choke that draws a caution "
                                 "(with a route; a ferrite choke runs hot at a few watts, "
                                 "common practice)")


class ModelSettings(Strict):
    """How the wires are cut into segments."""

    segments_per_wavelength: float = Field(
        20.0, ge=2, le=200, description="Segments per wavelength at the highest frequency "
        "(20 keeps segments at 0.05 wavelength; below 10 breaks the 0.1-wavelength rule "
        "and 'necflow check' says so)")
    max_segments: int = Field(2000, ge=10, le=10000,
                              description="Refuse a model needing more segments than this")


# ----------------------------------------------------------------------------
# Report settings


class ElevationOfInterest(Strict):
    """An elevation angle at which the report gives antenna and system gain."""

    label: str = Field(..., min_length=1, description="What the angle stands for "
                       "(e.g. long distance, short-range net)")
    elevation: Angle = quantity("angle", gt=0, le=1.5707963267948966 + 1e-12,
                                description="Elevation above the horizon, above 0 and at "
                                "most 90 deg")


def _default_angles() -> list[ElevationOfInterest]:
    return [ElevationOfInterest(label="long distance", elevation="10 deg"),
            ElevationOfInterest(label="medium range", elevation="30 deg"),
            ElevationOfInterest(label="short range", elevation="70 deg")]


class TunerSpec(Strict):
    """The tuner the report's alternatives add (a shack tuner after the
    chain, a remote one at the feedpoint): the design's own tuner element
    when it has one, else a high-pass T of these parts."""

    capacitor_min: Capacitance = quantity("capacitance", default="15 pF", gt=0, le=100e-9,
                                          unit="pF", description="Smallest setting of each "
                                          "capacitor")
    capacitor_max: Capacitance = quantity("capacitance", default="250 pF", gt=0, le=100e-9,
                                          unit="pF", description="Largest setting of each "
                                          "capacitor")
    inductor_max: Inductance = quantity("inductance", default="20 uH", gt=0, le=1e-3,
                                        unit="uH", description="Largest setting of its "
                                        "roller inductor")
    inductor_q: float = Field(100.0, gt=0, description="Unloaded Q of its inductor "
                              "(100 is common practice for a roller or tapped coil)")
    capacitor_q: float = Field(1000.0, gt=0, description="Unloaded Q of its capacitors")
    remote_line: str | None = Field(None, description="Unbalanced line type from the unit "
                                    "at the feedpoint to the radio (default: the design's "
                                    "first unbalanced line, else rg-213)")
    remote_length: Length | None = quantity("length", default=None, gt=0, le=5000.0,
                                            description="Length of that run (default: the "
                                            "total length of the design's lines)")


class AlternativeSpec(Strict):
    """A named alternative feed system for the same antenna."""

    name: str = Field(..., min_length=1, description="Name shown in the report")
    feed: list[Element] = Field(..., max_length=limits.MAX_FEED_ELEMENTS,
                                description="Its feed chain from the antenna toward the "
                                "radio, with the keys of 'feed'")
    tuner: Literal["none", "radio", "feedpoint"] = Field(
        "none", description="Add the report's tuner (report.tuner) at the radio or at the "
        "feedpoint")

    @model_validator(mode="after")
    def _unique_ids(self) -> AlternativeSpec:
        dup = _duplicates(e.id for e in self.feed)
        if dup:
            raise ValueError(f"duplicate element id(s) in feed: {', '.join(dup)}")
        return self


class ReportSpec(Strict):
    """What the decision report shows."""

    elevations: list[ElevationOfInterest] = Field(max_length=limits.MAX_ELEVATIONS,
        default_factory=_default_angles, description="Elevation angles of interest: antenna "
        "and system gain are reported at each",
        json_schema_extra={"default_text": "long distance 10 deg, medium range 30 deg, "
                           "short range 70 deg"})
    worst_case_power: Power = quantity("power", default="1500 W", gt=0, le=100e3,
                                       description="Power for the worst-case stress figures")
    far_field: Literal["centre", "across"] = Field(
        "centre", description="Far field at each band's centre, or across the band (edges "
        "and centre)")
    exposure_duty: float = Field(1.0, gt=0, le=1, description="Duty factor of the mode for "
                                 "the RF exposure estimate (1, a continuous carrier, is the "
                                 "cautious choice)")
    tuner: TunerSpec = Field(default_factory=TunerSpec, description="The tuner of the "
                             "alternatives")
    alternatives: list[AlternativeSpec] = Field(default_factory=list,
                                                max_length=limits.MAX_ALTERNATIVES,
                                                description="Your own "
                                                "alternative feed systems to compare")

    @model_validator(mode="after")
    def _names(self) -> ReportSpec:
        dup = _duplicates(a.name for a in self.alternatives)
        if dup:
            raise ValueError(f"alternative name(s) listed twice: {', '.join(dup)}")
        if not self.elevations:
            raise ValueError("give at least one elevation of interest")
        return self


class Route(Strict):
    """The feed line's path from the feed point to the station entry: its
    outside (the common-mode path) is then modelled as wires with the
    antenna, chokes as loads on it.  Without a route the line is an ideal
    two-port (differential mode only)."""

    run: Length | None = quantity("length", default=None, ge=0, le=5000.0,
                                  description="Horizontal distance from the feed point to the "
                                  "station entry (the line runs straight, sloping down to "
                                  "'end_height'); or give 'points'")
    bearing: Angle = quantity("angle", default="90 deg", ge=-2 * _HALF_TURN, le=2 * _HALF_TURN,
                              description="Direction of the run seen from above, from +x "
                              "toward +y (90 deg: at right angles to a wire along x)")
    end_height: Length = quantity("length", default="1 m", ge=0, le=500.0,
                                  description="Height of the line where it reaches the station "
                                  "entry")
    points: list[Point] | None = Field(None, min_length=1, max_length=limits.MAX_WIRES,
                                       description="Instead of run, bearing and end_height: "
                                       "the path as points after the feed point, ending at "
                                       "the station entry", json_schema_extra={"unit": "m"})
    entry: Literal["ground", "floating", "resistance"] = Field(
        "ground", description="How the shield meets the station ground at the entry: a wire "
        "straight down to the ground, a resistance in that wire, or not at all (floating)")
    entry_resistance: Resistance | None = quantity("resistance", default=None, gt=0, le=1e6,
                                                   description="The resistance of that "
                                                   "connection (with entry: resistance)")

    @model_validator(mode="after")
    def _one_form(self) -> Route:
        if (self.run is None) == (self.points is None):
            raise ValueError("give 'run' (with 'bearing' and 'end_height') or 'points', "
                             "not both")
        if (self.entry == "resistance") != (self.entry_resistance is not None):
            raise ValueError("entry_resistance: give it with entry: resistance, and only then")
        return self


class SiteLimits(Strict):
    """What a site allows the antenna's wires (the route's feed line not
    counted); a searched design outside them is recorded as infeasible,
    never solved."""

    min_height: Length | None = quantity("length", default=None, ge=0, le=500.0,
                                         description="Lowest point of any wire at least this "
                                         "high above ground (people walking under it, "
                                         "animals, a lawnmower)")
    max_height: Length | None = quantity("length", default=None, gt=0, le=500.0,
                                         description="Highest point of any wire at most this "
                                         "high (the mast or tree that holds it)")
    max_span: Length | None = quantity("length", default=None, gt=0, le=5000.0,
                                       description="Largest horizontal distance between two "
                                       "wire ends at most this (the distance between the "
                                       "supports, the plot's size)")

    def stated(self) -> dict[str, float]:
        """The limits given, by key."""
        return {k: v for k in type(self).model_fields if (v := getattr(self, k)) is not None}


class Design(Strict):
    """A complete antenna system: radiator, ground, feed chain and radio."""

    name: str = Field(..., min_length=1, max_length=200,
                      description="Name of the design (used in run folders)")
    description: str = Field("", description="Free text")
    region: Literal[1, 2, 3] = Field(2, description="ITU region of the built-in band table")
    bands: list[BandEntry] = Field(..., min_length=1, max_length=limits.MAX_BANDS,
                                   description="Bands to evaluate: names "
                                   "from the band table, or entries with "
                                   "name/low/high/points/weight")
    antenna: Antenna = Field(..., description="The radiator")
    ground: Ground = Field(default_factory=Ground, description="The ground (default: "
                           "Sommerfeld-Norton over medium-dry soil, which suits any height)")
    feed: list[Element] = Field(..., max_length=limits.MAX_FEED_ELEMENTS,
                                description="Feed chain from the antenna toward the radio "
                                "(an empty list feeds the antenna directly)")
    radio: Radio = Field(default_factory=Radio, description="The radio")
    goal: Goal = Field(default_factory=Goal, description="What counts as usable")
    cautions: Cautions = Field(default_factory=Cautions, description="Warning thresholds")
    model: ModelSettings = Field(default_factory=ModelSettings, description="Segmentation")
    search: dict[str, SearchParam] = Field(
        default_factory=dict, description="Study search space: field path (antenna.span, "
        "feed.<id>.length, feed.<id>.value, ground.conductivity...) -> range or choices; "
        "used by 'necflow optimize', ignored by 'evaluate'")
    cost: CostSpec = Field(default_factory=CostSpec, description="How 'necflow optimize' "
                           "scores a design")
    constraints: SiteLimits | None = Field(
        None, description="Limits a site sets on the wires (min_height, max_height, "
        "max_span); 'necflow optimize' records a searched design outside them as infeasible "
        "instead of solving it")
    uncertain: dict[str, SearchParam] = Field(
        default_factory=dict, description="Fields 'necflow fit' may adjust to match measured "
        "sweeps: field path (antenna.height, ground.conductivity, feed.<id>.velocity_factor, "
        "feed.<id>.value...) -> range; ignored by 'evaluate'")
    adjustable: dict[str, SearchParam] = Field(
        default_factory=dict, description="Fields 'necflow trim' may change: field path -> "
        "range (or choices); ignored by 'evaluate'")
    targets: dict[str, str] = Field(
        default_factory=dict, description="Band name -> where 'necflow trim' should put the "
        "lowest SWR: a frequency ('7.1 MHz') or 'centre' (the band's centre)",
        json_schema_extra={"unit": "MHz or centre"})
    tolerances: ToleranceSpec = Field(default_factory=ToleranceSpec,
                                      description="How 'necflow tolerance' varies the design")
    report: ReportSpec = Field(default_factory=ReportSpec, description="What the decision "
                               "report shows")
    route: Route | None = Field(None, description="The feed line's path, to model its "
                                "common-mode current (not set: an ideal line)")

    @model_validator(mode="after")
    def _unique_ids(self) -> Design:
        dup = _duplicates(e.id for e in self.feed)
        if dup:
            raise ValueError(f"duplicate element id(s) in feed: {', '.join(dup)}")
        total = sum(b.points for b in self.bands)
        if total > limits.MAX_POINTS_TOTAL:
            raise ValueError(f"bands: {total} frequency points in all, more than "
                             f"{limits.MAX_POINTS_TOTAL:,}; give fewer points per band")
        if self.antenna.shape == "end-fed" and self.route is None \
                and self.antenna.counterpoise is None:
            raise ValueError("route: an end-fed wire needs a return: give 'route' (the coax "
                             "shield then carries it) or 'antenna.counterpoise'")
        if self.route is not None and self.route.entry != "floating" \
                and self.ground.model == "free-space":
            raise ValueError("route: in free space there is no ground to connect the line to; "
                             "give route.entry: floating")
        dupb = _duplicates(b.name for b in self.bands)
        if dupb:
            raise ValueError(f"band(s) listed twice: {', '.join(dupb)}")
        return self
