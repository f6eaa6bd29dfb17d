"""The JSON Schema of the design file, for editors.

:func:`design_json_schema` is pydantic's schema of
:class:`necflow.config.schema.Design` as a design FILE is written: a
physical value is text with a unit (``"27 m"``) or a number (code gives SI
floats), a feed position a fraction or text, a point three such values, a
band a name or a mapping, a choke a catalog name or a mapping.  The unit
of each field stays in the schema's own extra keys (``dimension``, ``unit``,
``default_text``), and a field's default is shown as a file writes it.
"""

from __future__ import annotations

import copy
from typing import Any

from pydantic.json_schema import GenerateJsonSchema

from necflow import __version__
from necflow.config.schema import Design

#: A value with its unit: a number, then something that is not a number
#: (``27 m``, ``470 pF``, ``100'``, ``14 AWG``).
QUANTITY_PATTERN = r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*[^\s\d.+-]"
_TEXT = {"type": "string", "pattern": QUANTITY_PATTERN,
         "description": "a number and its unit, e.g. '27 m'"}
#: Bounds pydantic leaves on a wrapped schema; they hold in SI units only.
_BOUNDS = ("minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum", "gt", "ge",
           "lt", "le")


def _text_or(schema: dict) -> dict:
    """Numbers in ``schema`` (at any depth of arrays) may be text with a unit."""
    if schema.get("type") in ("number", "integer"):
        return {"anyOf": [dict(_TEXT), schema]}
    out = dict(schema)
    if "prefixItems" in out:
        out["prefixItems"] = [_text_or(s) for s in out["prefixItems"]]
    if isinstance(out.get("items"), dict):
        out["items"] = _text_or(out["items"])
    if "anyOf" in out:
        out["anyOf"] = [_text_or(s) for s in out["anyOf"]]
    return out


def _or_text(schema: dict, what: str) -> dict:
    return {"anyOf": [{"type": "string", "description": what}, schema]}


class _FileSchema(GenerateJsonSchema):
    """Pydantic's generator, with the inputs a design file gives where a
    validator turns text into what the model holds."""

    def function_before_schema(self, schema) -> dict:
        fn = schema["function"]["function"]
        name = getattr(fn, "__qualname__", getattr(fn, "__name__", ""))
        inner = super().function_before_schema(schema)
        if name == "_fraction_or_length":
            return {"anyOf": [{"type": "number", "minimum": 0, "maximum": 1,
                               "description": "a fraction of the wire"},
                              {"type": "string", "description": "a percentage ('33 %') or a "
                               "distance ('9 m')"}]}
        if name == "_to_diameter":
            return {"anyOf": [{"type": "string", "description": "a diameter ('2 mm') or a "
                               "wire gauge ('14 AWG', '1.5 mm2')"}, inner]}
        if name.endswith("_catalog_name"):
            return _or_text(inner, "a catalog name")
        if name == "_band_entry":
            return _or_text(inner, "a band name from the table, e.g. 40m")
        if name.endswith("_shorthand"):
            return {"anyOf": [{"type": "array", "minItems": 2, "maxItems": 2,
                               "items": {"type": ["string", "number"]},
                               "description": "a range [low, high]"}, inner]}
        if name == "_ratio":
            return {"anyOf": [{"type": "string", "pattern": r"^\s*\d+(\.\d*)?\s*:\s*\d+(\.\d*)?"
                               r"\s*$", "description": "a ratio, antenna side first, e.g. "
                               "'4:1'"}, inner]}
        if schema["schema"]["type"] in ("model", "model-fields", "function-after",
                                        "definitions", "definition-ref"):
            return inner
        return _text_or(inner)


def _tidy(node: Any) -> Any:
    """Defaults as a file writes them, no pydantic-only keys, numeric bounds
    only on numbers."""
    if isinstance(node, list):
        return [_tidy(n) for n in node]
    if not isinstance(node, dict):
        return node
    out = {k: _tidy(v) for k, v in node.items() if k not in ("gt", "ge", "lt", "le")}
    if "anyOf" in out and "additionalProperties" in out and "properties" not in out:
        # a model that also takes a shorthand: its closedness is its mapping form's
        closed = out.pop("additionalProperties")
        out["anyOf"] = [{**b, "additionalProperties": closed} if b.get("type") == "object"
                        else b for b in out["anyOf"]]
    if "default_text" in out and "default" in out:
        out["default"] = out["default_text"]
    if "dimension" in out or out.get("unit"):
        # the quantity's own number may be SI; its text form carries the unit
        out = _text_or_property(out)
    return out


def _text_or_property(prop: dict) -> dict:
    """A field with a unit whose schema is still a bare number (a model-level
    validator reads its text) takes text as well."""
    if prop.get("type") in ("number", "integer"):
        number = {k: prop[k] for k in ("type", *_BOUNDS) if k in prop}
        rest = {k: v for k, v in prop.items() if k not in number}
        return {**rest, "anyOf": [dict(_TEXT), number]}
    return prop


def design_json_schema() -> dict:
    """The JSON Schema (draft 2020-12) of a design file.

    Returns
    -------
    dict
        Ready for ``json.dump``; ``$schema``, ``title`` and ``$comment`` name
        the draft, the file and the version of necflow that wrote it.
    """
    schema = Design.model_json_schema(schema_generator=_FileSchema)
    schema = _tidy(copy.deepcopy(schema))
    return {"$schema": "https://json-schema.org/draft/2020-12/schema",
            "title": "necflow design file",
            "$comment": f"written by necflow {__version__} (necflow schema)",
            **{k: v for k, v in schema.items() if k != "title"}}


__all__ = ["QUANTITY_PATTERN", "design_json_schema"]
