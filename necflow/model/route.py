"""The feed line's outside as wires: its common-mode path.

A line carries two independent modes: the differential mode, the wave
between its conductors that carries the power, and the common mode, current
flowing the same way on both conductors (or on a coax shield's outside),
which radiates and is picked up like any wire.  An ideal line couples the two
only at its ends.  So the model keeps the differential mode exact outside the
engine (the catalog's lossy two-port in :mod:`necflow.feed`) and puts the
common-mode path into the method-of-moments model as wires:

* at the feed point the line's common-mode wire meets the antenna: a
  balanced line (or a balun) at the midpoint of a source split in two
  halves of half the drive each, so a symmetric antenna drives no common
  mode; an unbalanced line (coax, or an end-fed wire's transformer) on the
  cold side of the source;
* along the route the wire's radius is the line's common-mode radius
  (:func:`necflow.catalog.lines.common_mode_radius`): the coax shield, or
  the equivalent radius of a two-wire line;
* a choke (a current balun's, or a choke element) is a short piece loaded
  with the choke's common-mode impedance;
* at the station entry the shield goes straight down to the ground, through
  a resistance, or ends (floating).

The engine's impedance at the split source is the impedance the line's
differential mode sees with the common-mode path in place; the currents on
the route's pieces, per volt of drive, scale with the differential voltage
the feed chain delivers.

References
----------
.. [1] G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code (NEC) -
   Method of Moments*, Part III, LLNL 1981 (modelling transmission lines and
   their outside as wires; loads on segments); from memory.
.. [2] Common practice: a current balun passes the differential mode and
   chokes the common mode; a voltage balun does not choke it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from necflow.catalog.chokes import DEFAULT_BALUN_CHOKE
from necflow.catalog.lines import common_mode_radius, resolve_line_type
from necflow.config.schema import Design, EndFed
from necflow.errors import ConfigError

#: The route may be this much longer than the lines (rounding of lengths).
_TOL = 1e-6


@dataclass(frozen=True)
class RouteLoad:
    """A load on the common-mode path.

    ``name`` is the feed element's id (or ``entry``), ``kind`` 'choke' (with
    ``spec`` a ChokeSpec, catalog entry or name) or 'resistance' (``spec``
    in ohm), ``at`` the distance along the route from the feed point [m]
    (None: at the foot of the entry wire)."""

    name: str
    kind: str
    spec: Any
    at: float | None


@dataclass(frozen=True)
class RoutePlan:
    """The common-mode path of a design's feed line.

    Attributes
    ----------
    attach : {'split', 'cold'}
        How it meets the antenna at the feed point.
    points : list of ndarray
        The route's path from the feed point (first) to the station entry.
    sections : list of (float, float)
        ``(distance where the section ends [m], radius [m])`` along the path.
    loads : list of RouteLoad
    entry : {'ground', 'floating', 'resistance'}
    indoors : list of str
        Feed elements past the route's end (inside the station): not wires.
    """

    attach: str
    points: list[np.ndarray]
    sections: list[tuple[float, float]]
    loads: list[RouteLoad]
    entry: str
    indoors: list[str] = field(default_factory=list)

    @property
    def length(self) -> float:
        return float(sum(np.linalg.norm(b - a) for a, b in zip(self.points, self.points[1:])))

    def radius_at(self, d: float) -> float:
        for end, r in self.sections:
            if d <= end + _TOL:
                return r
        return self.sections[-1][1]


def _path(design: Design, feed_point: np.ndarray) -> list[np.ndarray]:
    r = design.route
    if r.points is not None:
        pts = [feed_point] + [np.asarray(p, dtype=float) for p in r.points]
    else:
        end = feed_point + np.array([r.run * math.cos(r.bearing), r.run * math.sin(r.bearing),
                                     0.0])
        end[2] = r.end_height
        pts = [feed_point, end]
    out = [pts[0]]
    for p in pts[1:]:
        if np.linalg.norm(p - out[-1]) > 1e-6:
            out.append(p)
    if len(out) < 2:
        raise ConfigError("the route goes nowhere: its end is the feed point",
                          field="route")
    if design.ground.model != "free-space" and min(p[2] for p in out) < 0:
        raise ConfigError("the route goes below ground (z < 0)", field="route")
    return out


def route_plan(design: Design, feed_point: np.ndarray) -> RoutePlan | None:
    """The common-mode path of ``design``'s feed line, or None without a route.

    Raises
    ------
    ConfigError
        A route longer than the feed's lines, one below ground, or a line
        type whose physical data the catalog lacks (a custom line).
    """
    if design.route is None:
        return None
    points = _path(design, feed_point)
    sections: list[tuple[float, float]] = []
    loads: list[RouteLoad] = []
    pos = 0.0
    attach = "cold" if isinstance(design.antenna, EndFed) else None
    for i, el in enumerate(design.feed):
        if getattr(el, "line", None) is not None:
            lt = resolve_line_type(el.line, el.impedance, el.velocity_factor, el.loss,
                                   el.balanced)
            try:
                radius = common_mode_radius(lt)
            except (ValueError, KeyError):
                raise ConfigError("a custom line has no physical size in the catalog, so its "
                                  "outside cannot be modelled; use a catalog line type with a "
                                  "route", field=f"feed[{i}].line") from None
            if attach is None:
                attach = "split" if lt.balanced else "cold"
            pos += el.length
            sections.append((pos, radius))
        elif getattr(el, "transformer", None) is not None:
            if attach is None:
                attach = "split" if el.transformer == "balun" else "cold"
            if el.transformer == "balun" and (el.balun_kind or "current") == "current":
                loads.append(RouteLoad(el.id, "choke", el.choke or DEFAULT_BALUN_CHOKE, pos))
        elif getattr(el, "choke", None) is not None and getattr(el, "series", None) is None \
                and getattr(el, "shunt", None) is None:
            loads.append(RouteLoad(el.id, "choke", el.choke, pos))
    if not sections:
        raise ConfigError("a route needs a line in the feed chain (its outside is the path "
                          "the route models)", field="route")
    plan = RoutePlan(attach or "cold", points, sections, [], design.route.entry)
    length = plan.length
    if length > pos + _TOL * max(1.0, pos):
        raise ConfigError(f"the route is {length:.3f} m long but the feed's lines add up to "
                          f"{pos:.3f} m; lengthen a line or shorten the route", field="route")
    indoors = [ld.name for ld in loads if ld.at > length - _TOL]
    loads = [ld for ld in loads if ld.at <= length - _TOL]
    if design.route.entry == "resistance":
        loads.append(RouteLoad("entry", "resistance", float(design.route.entry_resistance),
                               None))
    return RoutePlan(plan.attach, points, sections, loads, design.route.entry, indoors)


__all__ = ["RouteLoad", "RoutePlan", "route_plan"]
