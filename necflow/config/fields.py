"""Field paths of a design: find a field, its unit and limits, set it, and map
it to a bounded parameter.

One module serves every job that names fields by path: the optimiser's
``search``, the fit's ``uncertain``, trim's ``adjustable``, tolerance cases
and batch overrides.  Paths are ``antenna.span``, ``ground.conductivity``,
``feed.<id>.length``, ``feed.<id>.value``...  Values travel as SI floats
(line types as names) and are set through the schema, so every field limit
and group check runs on the new value; nothing is written out as text and
read back.

A :class:`Param` is one field with its range (or its choices); parameters
map to a unit coordinate ``u`` in [0, 1] (in the logarithm for log ranges,
cell centres for grids), so fields of different units weigh alike in a fit
or a sample.
"""

from __future__ import annotations

import json
import math
from dataclasses import asdict, dataclass, field
from typing import Any

import annotated_types as at
import numpy as np
from pydantic import BaseModel, ValidationError

from necflow import units
from necflow.catalog.grounds import SURFACES
from necflow.catalog.lines import LINE_TYPES
from necflow.config.schema import PART_KINDS, Design, Ground, PartElement, SwitchSpec
from necflow.config.sections import SearchParam
from necflow.errors import ConfigError

#: First parts of a path that change the wire model or the ground (a solve).
GEOMETRY_ROOTS = ("antenna", "ground", "route")
ROOTS = ("antenna", "ground", "feed", "route")
#: Feed fields that move the line's outside when the design has a route
#: (its lengths and sizes, and the chokes on it).
ROUTE_FEED_FIELDS = ("length", "line", "choke", "balun_kind")


def moves_wires(design: Design, path: str) -> bool:
    """True when changing the field at ``path`` changes the wire model (a
    new solve): the antenna, the ground, the route, and with a route the
    feed's line lengths, line types and chokes."""
    parts = path.split(".")
    if parts[0] in GEOMETRY_ROOTS:
        return True
    return design.route is not None and parts[0] == "feed" and len(parts) >= 3 \
        and parts[2] in ROUTE_FEED_FIELDS
#: Plain-number fields (no unit) that may be varied.
NUMERIC_PLAIN = {"permittivity", "q", "velocity_factor", "ratio", "loss", "weight"}


def position_kind(owner: BaseModel, name: str) -> str | None:
    """``"fraction"`` or ``"distance"`` for a position field (a feed or bend
    position, stored as ``(kind, value)``) as the design gives it, else None.

    A position is searched, fitted or trimmed in the form the design gives
    it: a fraction of the wire as a plain number, a distance from the wire's
    start as a length.
    """
    value = getattr(owner, name, None)
    if isinstance(value, tuple) and len(value) == 2 and value[0] in ("fraction", "distance"):
        return value[0]
    return None


def _fraction(raw: Any, what: str) -> float:
    """A fraction of a wire: a plain number or a percentage ('33 %')."""
    if isinstance(raw, str) and raw.strip().endswith("%"):
        try:
            return float(raw.strip()[:-1]) / 100.0
        except ValueError:
            raise ValueError(f"{what}: cannot read '{raw}' as a percentage") from None
    if isinstance(raw, str):
        raise ValueError(f"{what}: the design gives this position as a fraction of the wire, "
                         f"so search it as one (0.3 or '30 %'), not '{raw}'")
    return _number(raw, None, what)


@dataclass(frozen=True)
class Param:
    """One field with its range, in SI.

    Attributes
    ----------
    path : str
        Field path as in the design file.
    dimension : str or None
        Unit dimension of the field (``"length"``...), None for plain numbers
        and line types.
    low, high : float or None
        Range [SI unit of ``dimension``]; None for choices.
    log : bool
        Sample in the logarithm.
    step : float or None
        Grid spacing [SI], linear ranges only.
    choices : tuple or None
        Allowed values (SI floats, or line-type names).
    geometry : bool
        True when the field changes the wire model or ground (needs a solve).
    """

    path: str
    dimension: str | None
    low: float | None = None
    high: float | None = None
    log: bool = False
    step: float | None = None
    choices: tuple | None = None
    geometry: bool = False

    def suggest(self, trial) -> Any:
        """Ask an optuna trial for this parameter's value."""
        if self.choices is not None:
            return trial.suggest_categorical(self.path, list(self.choices))
        return trial.suggest_float(self.path, self.low, self.high, log=self.log, step=self.step)

    def grid(self) -> np.ndarray | None:
        """Every value of a gridded parameter (choices, or a stepped range as
        optuna suggests it), else None."""
        if self.choices is not None:
            return np.array(self.choices,
                            dtype=object if isinstance(self.choices[0], str) else float)
        if self.step:
            n = int(np.floor((self.high - self.low) / self.step + 1e-9)) + 1
            return self.low + self.step * np.arange(n)
        return None

    def from_unit(self, u, snap: bool = True) -> np.ndarray:
        """Values at unit coordinates ``u`` (array): the cell of a grid (with
        ``snap``; a fit moves continuously and passes False), the logarithm
        of a log range, else linear."""
        u = np.asarray(u, dtype=float)
        g = self.grid() if snap or self.choices is not None else None
        if g is not None:
            return g[np.minimum((u * g.size).astype(int), g.size - 1)]
        if self.log:
            return np.exp(np.log(self.low) + u * (np.log(self.high) - np.log(self.low)))
        return self.low + u * (self.high - self.low)

    def to_unit(self, value, snap: bool = True) -> float:
        """The unit coordinate of ``value`` (with ``snap``, a grid value: its
        cell centre), clipped into [0, 1]."""
        g = self.grid() if snap or self.choices is not None else None
        if g is not None:
            k = (list(g).index(value) if g.dtype == object
                 else int(np.argmin(np.abs(g - float(value)))))
            return (k + 0.5) / g.size
        v = float(value)
        if self.log:
            u = (math.log(v) - math.log(self.low)) / (math.log(self.high) - math.log(self.low))
        else:
            u = (v - self.low) / (self.high - self.low)
        return min(max(u, 0.0), 1.0)

    def unit_scale(self, value: float) -> float:
        """d(value)/du at ``value`` [SI per unit of u] (ranges only)."""
        return value * math.log(self.high / self.low) if self.log else self.high - self.low

    def buildable(self, value: Any) -> Any:
        """``value`` at the precision a builder can cut or buy.

        A choice is kept; a value on a stepped range snaps to the nearest
        step; otherwise a length is rounded to 1 mm (a tape measure's
        resolution, common practice) and anything else (part values,
        velocity factors, ground constants) to three significant figures (a
        part's marked value rarely has more; common practice).  The result
        stays within the range.
        """
        if self.choices is not None or not isinstance(value, (int, float)):
            return value
        v = float(value)
        if self.step:
            v = self.low + round((v - self.low) / self.step) * self.step
            v = float(f"{v:.12g}")
        elif self.dimension == "length":
            v = round(v, 3)
        elif v != 0.0 and math.isfinite(v):
            v = float(f"{v:.3g}")
        if self.low is not None and self.high is not None:
            v = min(max(v, self.low), self.high)
        return v

    def text(self, value: Any) -> str:
        """A value of this parameter as the user writes it."""
        if self.dimension and isinstance(value, (int, float)):
            return units.format_quantity(float(value), self.dimension)
        return f"{value:g}" if isinstance(value, float) else str(value)


@dataclass(frozen=True)
class ParamSet:
    """Parameters in the order of the design file (a study's search space,
    a fit's uncertain fields, trim's adjustable ones)."""

    params: tuple[Param, ...] = field(default_factory=tuple)

    def __iter__(self):
        return iter(self.params)

    def __len__(self) -> int:
        return len(self.params)

    @property
    def geometry_paths(self) -> list[str]:
        return [p.path for p in self.params if p.geometry]

    def as_dict(self) -> list[dict]:
        """Plain data (JSON-ready) describing the set; stored with a study."""
        return [{k: (list(v) if isinstance(v, tuple) else v) for k, v in asdict(p).items()}
                for p in self.params]

    def canonical(self) -> str:
        return json.dumps(self.as_dict(), sort_keys=True, separators=(",", ":"))

    def suggest(self, trial) -> dict[str, Any]:
        return {p.path: p.suggest(trial) for p in self.params}

    def corners(self) -> list[dict[str, Any]]:
        """Two variants: every parameter at its low end, every one at its high end."""
        lo = {p.path: (p.choices[0] if p.choices else p.low) for p in self.params}
        hi = {p.path: (p.choices[-1] if p.choices else p.high) for p in self.params}
        return [lo, hi]

    def decode(self, u, snap: bool = True) -> dict[str, np.ndarray]:
        """Unit-cube points ``(n, nparams)`` -> parameter values by path."""
        u = np.atleast_2d(np.asarray(u, dtype=float))
        return {p.path: p.from_unit(u[:, j], snap) for j, p in enumerate(self.params)}

    def encode(self, values: dict[str, Any], snap: bool = True) -> np.ndarray:
        """Parameter values -> their unit coordinates ``(nparams,)``."""
        return np.array([p.to_unit(values[p.path], snap) for p in self.params])

    def values_at(self, u, snap: bool = True) -> dict[str, Any]:
        """The values of one point ``u`` ``(nparams,)`` (floats, or names)."""
        return {k: v[0].item() if hasattr(v[0], "item") else v[0]
                for k, v in self.decode(np.asarray(u)[None, :], snap).items()}

    def unit_scale(self, values: dict[str, float]) -> np.ndarray:
        """d(value)/du of each parameter at ``values`` [SI per unit of u]."""
        return np.array([p.unit_scale(float(values[p.path])) for p in self.params])


# ----------------------------------------------------------------------------
# Paths


def _split(path: str) -> list[str]:
    parts = path.split(".")
    if len(parts) < 2 or parts[0] not in ROOTS or any(not p for p in parts):
        raise ValueError(f"'{path}' is not a searchable field; paths start with "
                         f"{', '.join(ROOTS)}, e.g. antenna.span, feed.<id>.length, "
                         "ground.conductivity")
    return parts


def locate(design: Design, path: str) -> tuple[BaseModel, str]:
    """The model owning the field at ``path`` and the field's name.

    Raises
    ------
    ValueError
        If the path does not name a field of this design.
    """
    parts = _split(path)
    if parts[0] == "feed":
        ids = [e.id for e in design.feed]
        if parts[1] not in ids:
            raise ValueError(f"no feed element with id '{parts[1]}'; ids are "
                             f"{', '.join(ids) or '(none)'}")
        owner: Any = design.feed[ids.index(parts[1])]
        rest = parts[2:]
        if not rest:
            raise ValueError(f"'{path}' names an element; add its field, e.g. "
                             f"feed.{parts[1]}.length or feed.{parts[1]}.value")
    else:
        owner = design
        rest = parts
    for name in rest[:-1]:
        child = getattr(owner, name, None) if name in type(owner).model_fields else None
        if name == "switch" and child is None and "switch" in type(owner).model_fields:
            child = SwitchSpec()        # an element without a switch: in on every band
        if not isinstance(child, BaseModel):
            raise ValueError(f"'{path}': '{name}' is not a group of fields here")
        owner = child
    name = rest[-1]
    if isinstance(owner, SwitchSpec) and name not in type(owner).model_fields:
        return owner, name              # a band's state: feed.<id>.switch.<band>
    if name not in type(owner).model_fields:
        raise ValueError(f"'{path}': this {type(owner).__name__} has no field '{name}'; "
                         f"its fields are {', '.join(type(owner).model_fields)}")
    return owner, name


def dimension_of(owner: BaseModel, name: str) -> str | None:
    """Unit dimension of a field (a part's ``value``: by the part's kind)."""
    if isinstance(owner, PartElement) and name == "value":
        return PART_KINDS[owner.kind]
    extra = type(owner).model_fields[name].json_schema_extra
    return extra.get("dimension") if isinstance(extra, dict) else None


def field_limits(owner: BaseModel, name: str) -> list[tuple[str, float]]:
    """The schema's bounds of a field: ``[('gt', 0.0), ('le', 2000.0), ...]``."""
    out = []
    for m in type(owner).model_fields[name].metadata:
        for attr in ("gt", "ge", "lt", "le"):
            if isinstance(m, getattr(at, attr.capitalize())):
                out.append((attr, float(getattr(m, attr))))
    if isinstance(owner, PartElement) and name == "value":
        out.append(("gt", 0.0))
    return out


def _number(raw: Any, dimension: str | None, what: str) -> float:
    if dimension:
        try:
            return units.parse(raw, dimension)
        except units.UnitError as exc:
            raise ValueError(f"{what}: {exc}") from None
    if isinstance(raw, bool) or not isinstance(raw, (int, float)) or not math.isfinite(raw):
        raise ValueError(f"{what}: expected a plain number, got '{raw}'")
    return float(raw)


def check_limits(value: float, limits, dimension, what: str) -> None:
    """Raise ValueError when ``value`` breaks one of ``limits`` (field_limits)."""
    ops = {"gt": (lambda a, b: a > b, "above"), "ge": (lambda a, b: a >= b, "at least"),
           "lt": (lambda a, b: a < b, "below"), "le": (lambda a, b: a <= b, "at most")}
    for key, bound in limits:
        ok, words = ops[key]
        if not ok(value, bound):
            shown = units.format_quantity(bound, dimension) if dimension and bound else f"{bound:g}"
            raise ValueError(f"{what} must be {words} {shown}, the field's own limit")


def param(design: Design, path: str, spec: SearchParam) -> Param:
    """The parameter a section entry (range or choices) makes of a field.

    Raises
    ------
    ValueError
        With what is wrong (the caller adds file, line and section).
    """
    owner, name = locate(design, path)
    geometry = moves_wires(design, path)
    if isinstance(owner, SwitchSpec) and name not in type(owner).model_fields:
        if name not in [b.name for b in design.bands]:
            raise ValueError(f"'{name}' is not one of the design's bands")
        if spec.choices is None or not set(spec.choices) <= {"in", "out"} \
                or len(set(spec.choices)) != len(spec.choices):
            raise ValueError("a switch state is searched over 'choices' of in and out")
        return Param(path, None, choices=tuple(spec.choices), geometry=False)
    if name == "line" and path.startswith("feed."):
        if spec.choices is None:
            raise ValueError("a line type is searched over 'choices' of catalog names")
        bad = [c for c in spec.choices if c not in LINE_TYPES]
        if bad:
            raise ValueError(f"unknown line type(s) {', '.join(map(str, bad))}; expected "
                             f"catalog names: {', '.join(LINE_TYPES)}")
        return Param(path, None, choices=tuple(spec.choices), geometry=False)
    kind = position_kind(owner, name)
    if kind is not None:
        return _position_param(path, spec, kind, geometry)
    dimension = dimension_of(owner, name)
    whole = type(owner).model_fields[name].annotation is int
    if dimension is None and name not in NUMERIC_PLAIN and not whole:
        raise ValueError(f"'{path}' is not a numeric field that can be searched")
    limits = field_limits(owner, name)
    if whole:                           # a count (a loop's sides): whole numbers only
        vals = spec.choices if spec.choices is not None else [*spec.range, spec.step or 1]
        if any(isinstance(v, bool) or not isinstance(v, (int, float)) or v != int(v)
               for v in vals):
            raise ValueError(f"'{path}' is a count: search it over whole numbers "
                             "(a range's step, 1 by default, is whole too)")
        if spec.choices is None and spec.step is None:
            spec = spec.model_copy(update={"step": 1})
    if spec.choices is not None:
        vals = tuple(_number(c, dimension, "choice") for c in spec.choices)
        for v in vals:
            check_limits(v, limits, dimension, "every choice")
        if len(set(vals)) != len(vals):
            raise ValueError("a value is listed twice in 'choices'")
        return Param(path, dimension, choices=vals, geometry=geometry)
    low = _number(spec.range[0], dimension, "low bound")
    high = _number(spec.range[1], dimension, "high bound")
    if not high > low:
        raise ValueError("the range is empty or reversed; write [low, high] with low < high")
    check_limits(low, limits, dimension, "the low bound")
    check_limits(high, limits, dimension, "the high bound")
    log = spec.scale == "log"
    if log and low <= 0:
        raise ValueError("a log range needs a positive low bound")
    step = None
    if spec.step is not None:
        step = _number(spec.step, dimension, "step")
        if not 0 < step <= high - low:
            raise ValueError("the step must be positive and no larger than the range")
    return Param(path, dimension, low=low, high=high, log=log, step=step, geometry=geometry)


def _position_param(path: str, spec: SearchParam, kind: str, geometry: bool) -> Param:
    """The parameter of a position field: a fraction in (0, 1) when the
    design gives a fraction, a length above 0 when it gives a distance (a
    distance beyond its wire is refused per variant, as in a design)."""
    if kind == "fraction":
        dimension, limits = None, [("gt", 0.0), ("lt", 1.0)]

        def read(raw, what):
            return _fraction(raw, what)
    else:
        dimension, limits = "length", [("gt", 0.0)]

        def read(raw, what):
            try:
                return _number(raw, "length", what)
            except ValueError:
                raise ValueError(f"{what}: the design gives this position as a distance from "
                                 f"the wire's start, so search it as a length ('12 m'), not "
                                 f"'{raw}'") from None
    if spec.choices is not None:
        vals = tuple(read(c, "choice") for c in spec.choices)
        for v in vals:
            check_limits(v, limits, dimension, "every choice")
        if len(set(vals)) != len(vals):
            raise ValueError("a value is listed twice in 'choices'")
        return Param(path, dimension, choices=vals, geometry=geometry)
    low, high = read(spec.range[0], "low bound"), read(spec.range[1], "high bound")
    if not high > low:
        raise ValueError("the range is empty or reversed; write [low, high] with low < high")
    check_limits(low, limits, dimension, "the low bound")
    check_limits(high, limits, dimension, "the high bound")
    if spec.scale == "log":
        raise ValueError("a position is searched on a linear scale")
    step = None
    if spec.step is not None:
        step = read(spec.step, "step")
        if not 0 < step <= high - low:
            raise ValueError("the step must be positive and no larger than the range")
    return Param(path, dimension, low=low, high=high, step=step, geometry=geometry)


def ground_explicit(design: Design) -> Design:
    """A copy whose ground names its permittivity and conductivity instead of
    a catalog surface (so either can be changed on its own)."""
    g = design.ground
    out = design.model_copy(deep=True)
    if g.surface is not None and g.surface in SURFACES:
        s = SURFACES[g.surface]
        out.ground = Ground(model=g.model, permittivity=s.permittivity,
                            conductivity=float(s.conductivity))
    return out


def build_params(design: Design, section: dict[str, SearchParam], *, key: str,
                 file: str | None = None, lines: dict | None = None) -> ParamSet:
    """Check a section of ranges (``search``, ``uncertain``, ``adjustable``)
    against the design and return its parameters in SI.

    Raises
    ------
    ConfigError
        ``FILE:LINE: <key>.<path>: what is wrong`` for the first bad entry.
    """
    lines = lines or {}
    params = []
    base = ground_explicit(design)
    for path, spec in section.items():
        where = {"file": file, "line": lines.get((key, path)), "field": f"{key}.{path}"}
        if path.startswith("ground.") and design.ground.model in ("free-space", "perfect"):
            raise ConfigError(f"a '{design.ground.model}' ground has no constants to vary",
                              **where)
        try:
            p = param(base, path, spec)
        except ValueError as exc:
            raise ConfigError(str(exc), **where) from None
        if p.choices is not None and key == "uncertain":
            raise ConfigError("a fitted field takes a range, not choices", **where)
        params.append(p)
    return ParamSet(tuple(params))


def parse_range_option(text: str, option: str = "--vary") -> tuple[str, SearchParam]:
    """``'antenna.height=10 m,13 m'`` -> (path, SearchParam) for the command line;
    ``'path=a,b,log'`` samples in the logarithm.  ``option`` names the
    command-line option in errors."""
    if "=" not in text:
        raise ConfigError(f"'{text}' is not PATH=LOW,HIGH (e.g. 'antenna.height=10 m,13 m')",
                          field=option)
    path, rng = text.split("=", 1)
    parts = [p.strip() for p in rng.split(",")]
    scale = "linear"
    if len(parts) == 3 and parts[2] == "log":
        scale = "log"
        parts = parts[:2]
    if len(parts) != 2:
        raise ConfigError(f"'{text}': give two bounds, PATH=LOW,HIGH", field=option)
    vals: list[Any] = []
    for v in parts:
        try:
            vals.append(float(v))
        except ValueError:
            vals.append(v)
    return path.strip(), SearchParam(range=tuple(vals), scale=scale)


def current_value(design: Design, path: str) -> Any:
    """The value of the field at ``path`` (SI), ground surfaces resolved and a
    catalog line's nominal velocity factor or impedance filled in."""
    owner, name = locate(ground_explicit(design), path)
    if isinstance(owner, SwitchSpec) and name not in type(owner).model_fields:
        return "out" if owner.is_out(name) else "in"
    value = getattr(owner, name)
    if position_kind(owner, name) is not None:
        return value[1]                 # a position: its fraction or distance
    if value is None and name in ("velocity_factor", "impedance") and hasattr(owner, "line"):
        lt = LINE_TYPES.get(owner.line)
        if lt is not None:
            value = lt.velocity_factor if name == "velocity_factor" else lt.z0
    if value is None:
        raise ConfigError(f"{path} has no value in this design to start from; give it one",
                          field=path)
    return value


def apply(design: Design, values: dict[str, Any], *, keep_search: bool = False) -> Design:
    """A validated copy of ``design`` with the fields at ``values`` set.

    Values are SI floats (line types: names).  Each is assigned through the
    schema, so the field's limits and its group's checks run; the ground is
    made explicit first when a ground constant is set.  The copy's
    ``search`` section is dropped unless ``keep_search``.

    Raises
    ------
    ConfigError
        With the field path, when a value or the combination is invalid.
    """
    base = ground_explicit(design) if any(k.startswith("ground.") for k in values) else design
    out = base.model_copy(deep=True)
    out.search = dict(design.search) if keep_search else {}
    for path, value in values.items():
        try:
            owner, name = locate(out, path)
        except ValueError as exc:
            raise ConfigError(str(exc), field=path) from None
        if isinstance(value, np.generic):
            value = value.item()
        if isinstance(owner, SwitchSpec) and name not in type(owner).model_fields:
            el = locate(out, path.rsplit(".", 2)[0] + ".id")[0]
            if el.switch is None:
                el.switch = SwitchSpec()
            try:
                el.switch.set_state(name, value)
            except ValueError as exc:
                raise ConfigError(str(exc), field=path) from None
            continue
        kind = position_kind(owner, name)
        if kind is not None and isinstance(value, (int, float)) \
                and not isinstance(value, bool):
            value = (kind, float(value))    # a position keeps the design's form
        try:
            setattr(owner, name, value)
        except ValidationError as exc:
            msg = "; ".join(e["msg"].removeprefix("Value error, ")
                            for e in exc.errors(include_url=False))
            raise ConfigError(msg, field=path) from None
    return out


def to_unit(params, values: dict[str, float]) -> np.ndarray:
    """Continuous unit coordinates of ``values`` for a sequence of range
    parameters (a fit or a trim moves continuously, steps ignored)."""
    return np.array([p.to_unit(values[p.path], snap=False) for p in params])


def from_unit(params, u) -> dict[str, float]:
    """SI values at continuous unit coordinates ``u`` ``(nparams,)``."""
    return {p.path: float(p.from_unit(x, snap=False)) for p, x in
            zip(params, np.asarray(u, dtype=float))}


def unit_scale(params, values: dict[str, float]) -> np.ndarray:
    """d(value)/du of each parameter at ``values`` [SI per unit of u]."""
    return np.array([p.unit_scale(float(values[p.path])) for p in params])


def set_values(design: Design, values: dict[str, Any]) -> Design:
    """:func:`apply` keeping the design's own ``search`` section (a
    calibrated or trimmed design stays a complete design file)."""
    return apply(design, values, keep_search=True)


__all__ = ["to_unit", "from_unit", "unit_scale", "set_values", "Param", "ParamSet", "locate",
           "dimension_of", "field_limits", "check_limits", "position_kind",
           "param", "ground_explicit", "build_params", "parse_range_option",
           "current_value", "apply", "GEOMETRY_ROOTS", "ROOTS"]
