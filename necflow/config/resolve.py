"""The resolved design: every default filled in, every value with its unit.

:func:`resolved_yaml` writes a validated design back as YAML that
:func:`necflow.config.load.load_design_text` reads into an equal design
(bands named from the table are written with their edges, so the file
records exactly which frequencies were evaluated).  Each value is written
in its display unit with the fewest digits that read back to the very same
float, falling back to the SI unit, where the conversion is exact.
"""

from __future__ import annotations

import hashlib
import os
from pathlib import Path
from typing import Any

import yaml
from pydantic import BaseModel

from necflow import units
from necflow.catalog.bands import resolve_bands
from necflow.config.schema import PART_KINDS, Design, PartElement


def exact_quantity(si_value: float, dimension: str, unit: str | None = None) -> str:
    """Text with a unit that :func:`necflow.units.parse` reads back exactly.

    Parameters
    ----------
    si_value : float
        Value in SI units.
    dimension : str
        A key of :data:`necflow.units.DIMENSIONS`.
    unit : str, optional
        Preferred display unit (default: the dimension's display unit).

    Returns
    -------
    str
        E.g. ``"470 pF"``; ``"4.7000000000000005e-10 F"`` only when no
        rendering in the display unit reads back to the same float.
    """
    for digits in range(6, 18):
        text = units.format_quantity(si_value, dimension, unit, digits=digits)
        if units.parse(text, dimension) == si_value:
            return text
    si = "rad" if dimension == "angle" else units.DIMENSIONS[dimension][1]
    return f"{float(si_value)!r} {si}"


def _ratio_text(ratio: float) -> str:
    for digits in range(6, 18):
        text = f"{ratio:.{digits}g}"
        if "e" not in text and float(text) == ratio:
            return f"{text}:1"
    return f"{ratio!r}:1"


def _position(value: tuple[str, float]) -> Any:
    kind, x = value
    return float(x) if kind == "fraction" else exact_quantity(x, "length")


def _field_value(model: BaseModel, name: str, value: Any) -> Any:
    field = type(model).model_fields[name]
    extra = field.json_schema_extra if isinstance(field.json_schema_extra, dict) else {}
    if isinstance(model, PartElement) and name == "value":
        return exact_quantity(value, PART_KINDS[model.kind])
    if name in ("feed_position", "position") and isinstance(value, tuple):
        return _position(value)
    if name == "ratio":
        return _ratio_text(value)
    if name in ("start", "end") and isinstance(value, tuple):
        return [exact_quantity(c, "length", extra.get("unit")) for c in value]
    if name == "points" and isinstance(value, list) and value and isinstance(value[0], tuple):
        return [[exact_quantity(c, "length", extra.get("unit")) for c in p] for p in value]
    if "dimension" in extra and isinstance(value, float):
        return exact_quantity(value, extra["dimension"], extra.get("unit"))
    return _plain(value)


def _plain(value: Any) -> Any:
    if isinstance(value, BaseModel):
        return {name: _field_value(value, name, v)
                for name in type(value).model_fields
                if (v := getattr(value, name)) is not None}
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    return value


def resolve_design(design: Design) -> Design:
    """The same design with each band's edges written out.

    Bands named from the table get the ``low`` and ``high`` of the design's
    ITU region; everything else is unchanged.
    """

    bands = [spec.model_copy(update={"low": band.low_hz, "high": band.high_hz})
             for spec, band in zip(design.bands, resolve_bands(design))]
    return design.model_copy(update={"bands": bands})


class _Dumper(yaml.SafeDumper):
    """Block style, but short lists of scalars (points) inline."""


def _list(dumper: yaml.SafeDumper, data: list) -> yaml.Node:
    flow = bool(data) and all(isinstance(x, (str, int, float)) for x in data) and len(data) <= 3
    return dumper.represent_sequence("tag:yaml.org,2002:seq", data, flow_style=flow)


_Dumper.add_representer(list, _list)


def resolved_yaml(design: Design) -> str:
    """YAML of the design with every default and every band edge written out.

    Parameters
    ----------
    design : Design
        A validated design.

    Returns
    -------
    str
        YAML text; ``load_design_text(resolved_yaml(d)) == resolve_design(d)``.
    """
    data = _plain(resolve_design(design))
    body = yaml.dump(data, Dumper=_Dumper, sort_keys=False, allow_unicode=True,
                     default_flow_style=False, width=100)
    return ("# Resolved design: every default filled in, every value with its unit.\n"
            + body)


def config_sha256(source: str | bytes | os.PathLike) -> str:
    """SHA-256 (hex) of a design file's bytes.

    Parameters
    ----------
    source : path-like, bytes or str
        A path (``pathlib.Path`` or a str naming an existing file) is read as
        bytes; ``bytes`` are hashed as given; any other str is taken as the
        file's text and hashed as UTF-8.
    """
    if isinstance(source, bytes):
        data = source
    elif isinstance(source, os.PathLike) or (
            isinstance(source, str) and "\n" not in source and os.path.isfile(source)):
        data = Path(source).read_bytes()
    else:
        data = str(source).encode("utf-8")
    return hashlib.sha256(data).hexdigest()
