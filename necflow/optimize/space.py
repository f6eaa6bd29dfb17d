"""The search space: field paths of a design, their bounds in SI, and variants.

A path names one numeric field (or a line's catalog type) of a design:
``antenna.span``, ``antenna.wire.diameter``, ``ground.conductivity``,
``feed.<element id>.length``, ``feed.<element id>.value``,
``feed.<element id>.line``.  Paths under ``antenna`` and ``ground`` change
the wire model and need a solve (geometry parameters); paths under ``feed``
do not (feed parameters).

Everything here is checked before any solve: the path exists and is
numeric, the bounds have the field's unit and lie within the field's own
limits, and the designs at the corners of the space pass the whole schema.
"""

from __future__ import annotations

import math

import json
from dataclasses import asdict, dataclass, field
from typing import Any

import annotated_types as at
from pydantic import BaseModel, ValidationError

from necflow import units
from necflow.config.schema import PART_KINDS, Design, PartElement
from necflow.errors import ConfigError, ModelError

GEOMETRY_ROOTS = ("antenna", "ground")
ROOTS = ("antenna", "ground", "feed")


@dataclass(frozen=True)
class Param:
    """One searched field, bounds in SI.

    Attributes
    ----------
    path : str
        Field path as in the design file's ``search`` section.
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
        lo, hi = self.low, self.high
        if lo is not None and hi is not None:
            v = min(max(v, lo), hi)
        return v

    def text(self, value: Any) -> str:
        """A value of this parameter as the user writes it."""
        if self.dimension and isinstance(value, (int, float)):
            return units.format_quantity(float(value), self.dimension)
        return f"{value:g}" if isinstance(value, float) else str(value)


@dataclass(frozen=True)
class SearchSpace:
    """The parameters of a study, in the order of the design file."""

    params: tuple[Param, ...] = field(default_factory=tuple)

    @property
    def geometry_paths(self) -> list[str]:
        return [p.path for p in self.params if p.geometry]

    def as_dict(self) -> list[dict]:
        """Plain data (JSON-ready) describing the space; stored with a study."""
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
        if not isinstance(child, BaseModel):
            raise ValueError(f"'{path}': '{name}' is not a group of fields here")
        owner = child
    name = rest[-1]
    if name not in type(owner).model_fields:
        raise ValueError(f"'{path}': this {type(owner).__name__} has no field '{name}'; "
                         f"its fields are {', '.join(type(owner).model_fields)}")
    return owner, name


def _dimension(owner: BaseModel, name: str) -> str | None:
    if isinstance(owner, PartElement) and name == "value":
        return PART_KINDS[owner.kind]
    extra = type(owner).model_fields[name].json_schema_extra
    return extra.get("dimension") if isinstance(extra, dict) else None


_NUMERIC_PLAIN = {"permittivity", "q", "velocity_factor", "ratio", "loss", "weight"}


def _limits(owner: BaseModel, name: str) -> list[tuple[str, float]]:
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
    if isinstance(raw, bool) or not isinstance(raw, (int, float)):
        raise ValueError(f"{what}: expected a plain number, got '{raw}'")
    return float(raw)


def _check_limits(value: float, limits, dimension, what: str) -> None:
    ops = {"gt": (lambda a, b: a > b, "above"), "ge": (lambda a, b: a >= b, "at least"),
           "lt": (lambda a, b: a < b, "below"), "le": (lambda a, b: a <= b, "at most")}
    for key, bound in limits:
        ok, words = ops[key]
        if not ok(value, bound):
            shown = units.format_quantity(bound, dimension) if dimension and bound else f"{bound:g}"
            raise ValueError(f"{what} must be {words} {shown}, the field's own limit")


def _param(design: Design, path: str, spec) -> Param:
    owner, name = locate(design, path)
    geometry = path.split(".")[0] in GEOMETRY_ROOTS
    if name == "line" and path.startswith("feed."):
        from necflow.catalog.lines import LINE_TYPES
        if spec.choices is None:
            raise ValueError("a line type is searched over 'choices' of catalog names")
        bad = [c for c in spec.choices if c not in LINE_TYPES]
        if bad:
            raise ValueError(f"unknown line type(s) {', '.join(map(str, bad))}; expected "
                             f"catalog names: {', '.join(LINE_TYPES)}")
        return Param(path, None, choices=tuple(spec.choices), geometry=False)
    dimension = _dimension(owner, name)
    if dimension is None and name not in _NUMERIC_PLAIN:
        raise ValueError(f"'{path}' is not a numeric field that can be searched")
    limits = _limits(owner, name)
    if spec.choices is not None:
        vals = tuple(_number(c, dimension, "choice") for c in spec.choices)
        for v in vals:
            _check_limits(v, limits, dimension, "every choice")
        if len(set(vals)) != len(vals):
            raise ValueError("a value is listed twice in 'choices'")
        return Param(path, dimension, choices=vals, geometry=geometry)
    low = _number(spec.range[0], dimension, "low bound")
    high = _number(spec.range[1], dimension, "high bound")
    if not high > low:
        raise ValueError("the range is empty or reversed; write [low, high] with low < high")
    _check_limits(low, limits, dimension, "the low bound")
    _check_limits(high, limits, dimension, "the high bound")
    log = spec.scale == "log"
    if log and low <= 0:
        raise ValueError("a log range needs a positive low bound")
    step = None
    if spec.step is not None:
        step = _number(spec.step, dimension, "step")
        if not 0 < step <= high - low:
            raise ValueError("the step must be positive and no larger than the range")
    return Param(path, dimension, low=low, high=high, log=log, step=step, geometry=geometry)


# ----------------------------------------------------------------------------
# Variants


def apply(design: Design, values: dict[str, Any]) -> Design:
    """A copy of ``design`` with the searched fields set, validated.

    Each value is assigned through the schema (field limits and the owning
    group's checks run), so an impossible combination raises.

    Raises
    ------
    ConfigError
        With the field path, when a value or the combination is invalid.
    """
    out = design.model_copy(deep=True)
    out.search = {}
    for path, value in values.items():
        owner, name = locate(out, path)
        dimension = _dimension(owner, name)
        if dimension and isinstance(value, (int, float)):
            assigned: Any = units.format_quantity(float(value), dimension, digits=15)
        else:
            assigned = value
        if isinstance(owner, PartElement) and name == "value":
            # assignment re-runs the element's unit conversion on the old
            # data; set the SI float directly after the element's own check
            if not float(value) > 0:
                raise ConfigError("value must be positive", field=path)
            owner.__dict__[name] = float(value)
            continue
        if isinstance(owner, PartElement):
            # the same for a part's other numbers (q, esr, ratings): check
            # the field's own limits, then set the SI float
            try:
                _check_limits(float(value), _limits(owner, name), dimension, name)
            except ValueError as exc:
                raise ConfigError(str(exc), field=path) from None
            owner.__dict__[name] = float(value)
            continue
        try:
            setattr(owner, name, assigned)
        except ValidationError as exc:
            msg = "; ".join(e["msg"].removeprefix("Value error, ")
                            for e in exc.errors(include_url=False))
            raise ConfigError(msg, field=path) from None
    return out


def check_variant(design: Design) -> None:
    """Whole-design checks a variant must pass (geometry against the bands).

    Raises ConfigError or ModelError.
    """
    from necflow.catalog.bands import resolve_bands
    from necflow.model import check_geometry

    check_geometry(design, max(b.high_hz for b in resolve_bands(design)))


def build_space(design: Design, *, file: str | None = None,
                lines: dict | None = None) -> SearchSpace:
    """Check the design's ``search`` section and return it in SI.

    Parameters
    ----------
    design : Design
        The validated design.
    file : str, optional
        Design file name, for messages.
    lines : dict, optional
        Line map of the YAML (:func:`necflow.config.load.parse_yaml`).

    Raises
    ------
    ConfigError
        ``FILE:LINE: search.<path>: what is wrong`` for the first problem.
    """
    lines = lines or {}
    params = []
    for path, spec in design.search.items():
        try:
            params.append(_param(design, path, spec))
        except ValueError as exc:
            raise ConfigError(str(exc), file=file, line=lines.get(("search", path)),
                              field=f"search.{path}") from None
    space = SearchSpace(tuple(params))
    for which, corner in zip(("low", "high"), space.corners()):
        try:
            variant = apply(design, corner)
            check_variant(variant)
        except (ConfigError, ModelError) as exc:
            path = getattr(exc, "field", None) or ""
            key = path if path in design.search else next(iter(design.search), "")
            msg = getattr(exc, "message", str(exc))
            raise ConfigError(f"the design with every searched value at its {which} end is "
                              f"invalid: {path + ': ' if path else ''}{msg}", file=file,
                              line=lines.get(("search", key)),
                              field=f"search.{key}" if key else "search") from None
    return space


def load_study_design(path) -> tuple[Design, SearchSpace]:
    """Read a design file and check its search space (no solve).

    Raises
    ------
    ConfigError
        For any problem with the design or its ``search`` section.
    """
    from pathlib import Path

    from necflow.config.load import load_design, parse_yaml

    name = str(path)
    design = load_design(path)
    _, lines = parse_yaml(Path(path).read_text(encoding="utf-8-sig"), name)
    if not design.search:
        raise ConfigError("the design has no 'search' section; add one naming the fields "
                          "to vary, e.g. 'search: {antenna.span: [22 m, 30 m]}'", file=name,
                          field="search")
    return design, build_space(design, file=name, lines=lines)
