"""Named fields of a design as bounded parameters, and setting them.

Paths and bounds are those of the optimiser's search space
(:mod:`necflow.optimize.space`): ``antenna.height``, ``ground.permittivity``,
``feed.<id>.velocity_factor``, ``feed.<id>.value``...  Parameters are handled
in a normalised coordinate ``u`` in [0, 1] (logarithmic for log ranges), so
fields of different units weigh alike in a fit.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from necflow.config.schema import Design, Ground
from necflow.errors import ConfigError
from necflow.optimize.space import Param, _param, apply, locate
from necflow.optimize.spec import SearchParam


def ground_explicit(design: Design) -> Design:
    """A copy whose ground names its permittivity and conductivity instead of
    a catalog surface (so either can be changed on its own)."""
    from necflow.catalog.grounds import SURFACES

    g = design.ground
    out = design.model_copy(deep=True)
    if g.surface is not None and g.surface in SURFACES:
        s = SURFACES[g.surface]
        out.ground = Ground(model=g.model, permittivity=s.permittivity,
                            conductivity=f"{s.conductivity!r} S/m")
    return out


def build_params(design: Design, section: dict[str, SearchParam], *, key: str,
                 file: str | None = None) -> list[Param]:
    """Check a section of ranges (``uncertain`` or ``adjustable``) against the
    design and return its parameters in SI.

    Raises
    ------
    ConfigError
        ``FILE: <key>.<path>: what is wrong`` for the first bad entry.
    """
    params = []
    base = ground_explicit(design)
    for path, spec in section.items():
        if path.startswith("ground.") and design.ground.model in ("free-space", "perfect"):
            raise ConfigError(f"a '{design.ground.model}' ground has no constants to vary",
                              file=file, field=f"{key}.{path}")
        try:
            p = _param(base, path, spec)
        except ValueError as exc:
            raise ConfigError(str(exc), file=file, field=f"{key}.{path}") from None
        if p.choices is not None and key == "uncertain":
            raise ConfigError("a fitted field takes a range, not choices", file=file,
                              field=f"{key}.{path}")
        params.append(p)
    return params


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
    """The value of the field at ``path`` (SI), ground surfaces resolved."""
    owner, name = locate(ground_explicit(design), path)
    value = getattr(owner, name)
    if value is None and name in ("velocity_factor", "impedance") and hasattr(owner, "line"):
        from necflow.catalog.lines import LINE_TYPES
        lt = LINE_TYPES.get(owner.line)
        if lt is not None:     # a catalog line: its nominal value
            value = lt.velocity_factor if name == "velocity_factor" else lt.z0
    if value is None:
        raise ConfigError(f"{path} has no value in this design to start from; give it one",
                          field=path)
    return value


def to_unit(params: list[Param], values: dict[str, float]) -> np.ndarray:
    """Normalised coordinates of SI values (clipped into [0, 1])."""
    out = []
    for p in params:
        v = float(values[p.path])
        if p.log:
            u = (np.log(v) - np.log(p.low)) / (np.log(p.high) - np.log(p.low))
        else:
            u = (v - p.low) / (p.high - p.low)
        out.append(min(max(u, 0.0), 1.0))
    return np.array(out)


def from_unit(params: list[Param], u) -> dict[str, float]:
    """SI values of normalised coordinates."""
    out = {}
    for p, x in zip(params, np.asarray(u, dtype=float)):
        if p.log:
            out[p.path] = float(np.exp(np.log(p.low) + x * (np.log(p.high) - np.log(p.low))))
        else:
            out[p.path] = float(p.low + x * (p.high - p.low))
    return out


def unit_scale(params: list[Param], values: dict[str, float]) -> np.ndarray:
    """d(value)/du of each parameter at ``values`` [SI per unit of u]."""
    return np.array([values[p.path] * np.log(p.high / p.low) if p.log else p.high - p.low
                     for p in params])


def set_values(design: Design, values: dict[str, Any]) -> Design:
    """A validated copy of ``design`` with the fields set (SI floats).

    The ground is made explicit first when a ground constant is set, and the
    design's own ``search`` section is kept.
    """
    base = ground_explicit(design) if any(k.startswith("ground.") for k in values) else design
    out = apply(base, values)
    out.search = dict(design.search)
    return out
