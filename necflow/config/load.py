"""Read a design file into a validated :class:`~necflow.config.schema.Design`.

Every way a design file can be wrong ends in ONE :class:`ConfigError` whose
text is ``FILE:LINE: field.path: what is wrong; what is expected``.  The YAML
is read with a safe loader that remembers the line of every mapping key and
sequence item, so errors from validation (pydantic), from the catalogs and
from the geometry checks all point at a line.
"""

from __future__ import annotations

import difflib
import os
import re
from pathlib import Path
from typing import Any

from types import UnionType
from typing import Annotated, Literal, Union, get_args, get_origin

import yaml
from pydantic import BaseModel, Discriminator, Tag, ValidationError
from pydantic.fields import FieldInfo

from necflow import units
from necflow.config.schema import Design
from necflow.errors import ConfigError, ModelError

Lines = dict[tuple, int]


# ----------------------------------------------------------------------------
# YAML with line marks


class MarkedLoader(yaml.SafeLoader):
    """Safe YAML loader that records the 1-based line of every key and item.

    After :meth:`load_marked`, :attr:`lines` maps data paths such as
    ``('feed', 2, 'value')`` to the line where that key (or list item)
    starts.  A key given twice in one mapping is an error.
    """

    def load_marked(self) -> tuple[Any, Lines]:
        node = self.get_single_node()
        self.lines: Lines = {}
        if node is None:
            return None, self.lines
        self.lines[()] = node.start_mark.line + 1
        self._mark(node, (), set())
        return self.construct_document(node), self.lines

    def _mark(self, node: yaml.Node, path: tuple, active: set[int]) -> None:
        if id(node) in active:  # a recursive alias: its lines are already marked
            return
        active = active | {id(node)}
        if isinstance(node, yaml.MappingNode):
            seen: dict[Any, int] = {}
            for key_node, value_node in node.value:
                if key_node.tag == "tag:yaml.org,2002:merge":
                    continue
                key = self.construct_object(key_node, deep=True)
                line = key_node.start_mark.line + 1
                try:
                    first = seen.get(key)
                except TypeError:  # unhashable key: construct_document reports it
                    continue
                if first is not None:
                    raise ConfigError(
                        f"duplicate key '{key}' (first given at line {first}); "
                        "expected each key once in a mapping",
                        line=line, field=_path_text(path + (key,)))
                seen[key] = line
                self.lines[path + (key,)] = line
                self._mark(value_node, path + (key,), active)
        elif isinstance(node, yaml.SequenceNode):
            for i, item in enumerate(node.value):
                self.lines[path + (i,)] = item.start_mark.line + 1
                self._mark(item, path + (i,), active)


def _yaml_problem(exc: yaml.YAMLError) -> tuple[str, int | None]:
    mark = getattr(exc, "problem_mark", None) or getattr(exc, "context_mark", None)
    line = mark.line + 1 if mark is not None else None
    problem = getattr(exc, "problem", None) or str(exc).splitlines()[0]
    context = getattr(exc, "context", None)
    text = f"{context}, {problem}" if context else problem
    hint = "check the indentation, colons and quotes on this line or the one before"
    if "\\t" in text or "\t" in text:
        hint = "indent with spaces; YAML does not allow tabs"
    return f"not valid YAML: {text}; {hint}", line


def parse_yaml(text: str, file: str | None = None) -> tuple[Any, Lines]:
    """Parse YAML text safely into plain data and its line map.

    Raises
    ------
    ConfigError
        For malformed YAML or a key given twice, with the line.
    """
    loader = MarkedLoader(text)
    try:
        return loader.load_marked()
    except ConfigError as exc:
        raise ConfigError(exc.message, file=file, line=exc.line, field=exc.field) from None
    except yaml.YAMLError as exc:
        msg, line = _yaml_problem(exc)
        raise ConfigError(msg, file=file, line=line) from None
    except RecursionError:
        raise ConfigError("not valid YAML: nesting too deep", file=file) from None
    finally:
        loader.dispose()


# ----------------------------------------------------------------------------
# Entry points


def load_design(path: str | os.PathLike) -> Design:
    """Read, validate and check a design file.

    Parameters
    ----------
    path : str or path-like
        The design file (YAML, UTF-8).

    Returns
    -------
    Design
        Validated; every value in SI units.

    Raises
    ------
    ConfigError
        One error, the most useful one, as ``FILE:LINE: field: message``;
        the message adds ``(and N more problems)`` when there are several.
    """
    name = os.fspath(path)
    p = Path(path)
    if p.is_dir():
        raise ConfigError("is a directory; expected a design file (YAML)", file=name)
    try:
        raw = p.read_bytes()
    except FileNotFoundError:
        raise ConfigError("no such file; expected the path of a design file (YAML)",
                          file=name) from None
    except PermissionError:
        raise ConfigError("cannot read the file: permission denied", file=name) from None
    except OSError as exc:
        raise ConfigError(f"cannot read the file: {exc.strerror or exc}", file=name) from None
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[:exc.start].count(b"\n") + 1
        raise ConfigError(f"not UTF-8 text (byte 0x{raw[exc.start]:02x}); save the file "
                          "as UTF-8", file=name, line=line) from None
    return load_design_text(text, file=name)


def load_design_text(text: str, file: str = "<string>") -> Design:
    """Validate and check a design given as YAML text.

    ``file`` is the name shown in error messages.  See :func:`load_design`.
    """
    data, lines = parse_yaml(text, file)
    if data is None:
        raise ConfigError("the file is empty; expected a design: a mapping with name, "
                          "bands, antenna, ground and feed", file=file)
    if not isinstance(data, dict):
        raise ConfigError(f"expected a mapping (key: value) at the top level, got "
                          f"{_describe(data)}", file=file, line=lines.get(()))
    try:
        design = Design.model_validate(data)
    except ValidationError as exc:
        problems = _translate(exc, data)
        raise _one(problems, file, lines) from None
    problems = _semantic_problems(design)
    if problems:
        raise _one(problems, file, lines)
    try:
        _check_geometry(design)
    except (ConfigError, ModelError) as exc:
        field = getattr(exc, "field", None)
        message = getattr(exc, "message", None) or str(exc)
        raise _one([(message, _parse_path(field) if field else None)], file,
                   lines) from None
    return design


# ----------------------------------------------------------------------------
# Paths: ('feed', 2, 'value') <-> "feed[2].value", and their lines


def _path_text(path: tuple) -> str:
    """``('feed', 2, 'value')`` -> ``feed[2].value``; a key with a dot in
    brackets: ``('search', 'antenna.span')`` -> ``search[antenna.span]``."""
    out = ""
    for p in path:
        if isinstance(p, int) or "." in str(p):
            out += f"[{p}]"
        else:
            out += f".{p}" if out else str(p)
    return out


def _parse_path(text: str) -> tuple:
    out: list = []
    for name, index in re.findall(r"([^.\[\]]+)|\[([^\]]+)\]", text):
        out.append(name if name else int(index) if index.isdigit() else index)
    return tuple(out)


def _line_of(path: tuple | None, lines: Lines) -> int | None:
    """Line of ``path``, or of its nearest parent that the file has."""
    if path is None:
        return None
    path = tuple(path)
    while path and path not in lines:
        path = path[:-1]
    return lines.get(path)


def _describe(value: Any) -> str:
    if value is None:
        return "nothing (an empty value)"
    if isinstance(value, bool):
        return f"true/false ({str(value).lower()})"
    if isinstance(value, (int, float)):
        return f"the number {value}"
    if isinstance(value, str):
        return f"text '{value if len(value) <= 40 else value[:37] + '...'}'"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "a mapping"
    return f"a {type(value).__name__}"


def _raw(data: Any, path: tuple) -> Any:
    for p in path:
        try:
            data = data[p]
        except (KeyError, IndexError, TypeError):
            return None
    return data


# ----------------------------------------------------------------------------
# Pydantic errors in plain words


def _strip(tp: Any) -> tuple[Any, Any]:
    """Annotated[X, ...] -> (X, discriminator or None)."""
    disc = None
    while get_origin(tp) is Annotated:
        args = get_args(tp)
        for meta in args[1:]:
            if isinstance(meta, Discriminator):
                disc = meta
            elif isinstance(meta, FieldInfo) and meta.discriminator:
                disc = meta.discriminator
        tp = args[0]
    return tp, disc


def is_model(tp: Any) -> bool:
    """Whether ``tp`` is a pydantic model class."""
    return isinstance(tp, type) and issubclass(tp, BaseModel)


def union_tags(members: list, disc: Any) -> dict[Any, Any]:
    """Tag -> model of a discriminated union's ``members``, for a field
    discriminator (``disc`` a field name) or ``Tag``-annotated members."""
    out = {}
    for m in members:
        tags = [a.tag for a in get_args(m)[1:] if isinstance(a, Tag)] \
            if get_origin(m) is Annotated else []
        base, _ = _strip(m)
        if not tags and isinstance(disc, str) and is_model(base):
            tags = list(get_args(base.model_fields[disc].annotation))
        for t in tags:
            out[t] = base
    return out


def _walk(loc: tuple) -> tuple[tuple, Any, Any]:
    """Follow a pydantic ``loc`` through the schema.

    Returns the user's path (discriminator tags and union member names
    dropped), the model owning the last key, and the model the path ends at
    (for errors of a whole mapping).
    """
    tp: Any = Design
    disc: Any = None
    path: list = []
    owner = None
    for item in loc:
        while True:  # unwrap Annotated / Optional until a model, list or union
            tp, d = _strip(tp)
            disc = d or disc
            if get_origin(tp) in (Union, UnionType):
                members = [a for a in get_args(tp) if a is not type(None)]
                if len(members) == 1:
                    tp = members[0]
                    continue
            break
        if get_origin(tp) in (Union, UnionType):
            tp = union_tags(members, disc).get(item) if disc is not None else None
            disc = None
            continue  # a tag or a union member name: not part of the user's path
        disc = None
        if is_model(tp):
            owner = tp
            path.append(item)
            field = tp.model_fields.get(item)
            tp = field.annotation if field else None
            disc = field.discriminator if field else None
        elif get_origin(tp) is dict:
            path.append(item)
            tp = get_args(tp)[1]
        elif isinstance(item, int):
            path.append(item)
            tp = get_args(tp)[0] if get_origin(tp) is list else None
        elif not (item in ("str", "int", "float", "bool", "none") or "[" in str(item)):
            path.append(item)
            tp = None
    end, _ = _strip(tp)
    return tuple(path), owner, end if is_model(end) else None


def _literal_values(owner: Any, name: Any) -> list:
    field = owner.model_fields.get(name) if is_model(owner) else None
    if field is None:
        return []
    tp = field.annotation
    for a in (tp, *get_args(tp)):
        if get_origin(a) is Literal:
            return list(get_args(a))
    return []


_KIND = {"string": "text", "int": "a whole number", "float": "a number",
         "bool": "true or false", "list": "a list", "dict": "a mapping (key: value)",
         "model": "a mapping (key: value)", "model_attributes": "a mapping (key: value)"}
_BOUND = {"greater_than": ("gt", "greater than"), "greater_than_equal": ("ge", "at least"),
          "less_than": ("lt", "less than"), "less_than_equal": ("le", "at most")}


def _expected_kind(etype: str) -> str | None:
    m = re.fullmatch(r"(string|int|float|bool|list|dict|model|model_attributes)_"
                     r"(type|parsing|from_float)", etype)
    return _KIND[m.group(1)] if m else None


def _bound_text(bound: float, owner: Any, name: Any) -> str:
    field = owner.model_fields.get(name) if is_model(owner) else None
    extra = field.json_schema_extra if field and isinstance(field.json_schema_extra, dict) else {}
    if "dimension" in extra and bound != 0:
        return units.format_quantity(bound, extra["dimension"], extra.get("unit"))
    return f"{bound:g}"


def _message(err: dict, data: Any) -> tuple[str, tuple]:
    """One pydantic error as (plain message, user path)."""
    etype, ctx = err["type"], err.get("ctx") or {}
    path, owner, end = _walk(err["loc"])
    name = path[-1] if path else None
    given = err.get("input")
    if etype == "missing":
        field = owner.model_fields.get(name) if is_model(owner) else None
        desc = (field.description or "").rstrip(".") if field else ""
        msg = f"missing required field '{name}'"
        if desc:
            msg += f"; expected {desc[0].lower()}{desc[1:]}"
        extra = field.json_schema_extra if field else None
        if isinstance(extra, dict) and "dimension" in extra:
            msg += f", e.g. '{name}: {units.DIMENSIONS[extra['dimension']][2]}'"
        return msg, path
    if etype == "extra_forbidden":
        keys = list(owner.model_fields) if is_model(owner) else []
        close = difflib.get_close_matches(str(name), keys, n=1)
        hint = f"did you mean '{close[0]}'?" if close else f"valid keys here are {', '.join(keys)}"
        return f"unknown key '{name}'; {hint}", path
    if etype in ("union_tag_invalid", "union_tag_not_found"):
        key = str(ctx.get("discriminator", "")).strip("'")
        tags = union_tags([a for a in get_args(_strip(owner.model_fields[name].annotation)[0])],
                       key) if is_model(owner) and name in owner.model_fields else {}
        options = ", ".join(map(str, tags)) or str(ctx.get("expected_tags", ""))
        if etype == "union_tag_not_found":
            return f"missing required field '{key}'; expected one of {options}", path + (key,)
        tag = ctx.get("tag")
        return (f"unknown {key} '{tag}'; {_close(tag, tags)}expected one of {options}",
                path + (key,))
    if etype == "element_kind":
        keys = [k for k in given if isinstance(k, str)] if isinstance(given, dict) else []
        for k in keys:
            close = difflib.get_close_matches(k, ["line", "series", "shunt", "transformer"], n=1)
            if close:
                return f"{err['msg']}; did you mean '{close[0]}' instead of '{k}'?", path
        return f"{err['msg']}; got keys {', '.join(map(str, keys)) or '(none)'}", path
    if etype == "literal_error":
        values = _literal_values(owner, name)
        shown = ", ".join(map(str, values)) or str(ctx.get("expected", ""))
        return (f"{given!r} is not allowed; {_close(given, map(str, values))}expected one "
                f"of {shown}").replace('"', "'"), path
    if etype in _BOUND:
        key, words = _BOUND[etype]
        bound = float(ctx[key])
        raw = _raw(data, path)
        got = f"got '{raw}'" if isinstance(raw, str) else f"got {raw}"
        if bound == 0 and key in ("gt", "ge"):
            return f"must be {'positive' if key == 'gt' else 'zero or more'}, {got}", path
        return f"must be {words} {_bound_text(bound, owner, name)}, {got}", path
    if etype in ("too_short", "string_too_short"):
        n = ctx.get("min_length", 1)
        if etype == "string_too_short":
            return "must not be empty; expected some text", path
        return f"needs at least {n} entr{'y' if n == 1 else 'ies'}, got {_describe(given)}" \
            if not isinstance(given, list) or given else \
            f"needs at least {n} entr{'y' if n == 1 else 'ies'}, got none", path
    kind = _expected_kind(etype)
    if kind:
        hint = "; put text in quotes" if kind == "text" and given is not None else ""
        return f"expected {kind}, got {_describe(given)}{hint}", path
    msg = re.sub(r"^(Value|Assertion) error, ", "", err["msg"])
    return _refine(msg, path, end, data)


# Whole-mapping errors about one key: (message pattern, list key, id key, tail)
# for duplicates (pointed at the second occurrence), and (pattern, sub-path).
_DUPLICATES = [(r"duplicate element id\(s\) in feed: ([^,]+)", "feed", "id", ("id",)),
               (r"band\(s\) listed twice: ([^,]+)", "bands", "name", ()),
               (r"duplicate wire name\(s\): ([^,]+)", "wires", "name", ("name",))]
_KEY_OF = [(r"feed wire ", ("feed", "wire")), (r"give 'q' or 'esr', not both", ("esr",)),
           (r"droop must", ("droop",)), (r"value must be positive", ("value",))]


def _refine(msg: str, path: tuple, end: Any, data: Any) -> tuple[str, tuple]:
    """Point a whole-mapping error at the key it is about."""
    m = re.match(r"(\w+): (.*)$", msg)
    if m and is_model(end) and m.group(1) in end.model_fields:
        return m.group(2), path + (m.group(1),)
    for pattern, key, attr, tail in _DUPLICATES:
        if m := re.match(pattern, msg):
            items = _raw(data, path + (key,))
            hits = [i for i, x in enumerate(items if isinstance(items, list) else [])
                     if (x.get(attr) if isinstance(x, dict) else x) == m.group(1)]
            return msg, (path + (key, hits[1]) + tail) if len(hits) > 1 else path
    for pattern, sub in _KEY_OF:
        if re.match(pattern, msg):
            return msg, path + sub
    return msg, path


def _translate(exc: ValidationError, data: Any) -> list[tuple[str, tuple | None]]:
    """All errors of a validation, most useful first, one per path."""
    found: dict[tuple, tuple[int, str, list[str]]] = {}
    for order, err in enumerate(exc.errors(include_url=False)):
        msg, path = _message(err, data)
        if path in found:  # members of a union failing on one value
            kinds = found[path][2]
            kind = _expected_kind(err["type"])
            if kind and kinds and kind not in kinds:
                kinds.append(kind)
            continue
        kind = _expected_kind(err["type"])
        found[path] = (0 if err["type"] == "extra_forbidden" else 1, msg, [kind] if kind else [])
    out = []
    for path, (prio, msg, kinds) in found.items():
        if len(kinds) > 1:
            msg = f"expected {' or '.join(kinds)}, got {_describe(_raw(data, path))}"
        out.append((prio, path, msg))
    out.sort(key=lambda t: t[0])
    return [(msg, path) for _, path, msg in out]


# ----------------------------------------------------------------------------
# Checks after validation


def _close(word: Any, options) -> str:
    close = difflib.get_close_matches(str(word), list(options), n=1)
    return f"did you mean '{close[0]}'? " if close else ""


def _semantic_problems(design: Design) -> list[tuple[str, tuple | None]]:
    """Names that must exist in the catalogs: bands, line types, surfaces."""
    from necflow.catalog.bands import TABLES, unknown_band_message
    from necflow.catalog.grounds import SURFACES
    from necflow.catalog.lines import LINE_TYPES

    out: list[tuple[str, tuple | None]] = []
    for i, b in enumerate(design.bands):
        if b.low is None and b.name not in TABLES[design.region].edges:
            out.append((unknown_band_message(b.name, design.region), ("bands", i)))
    for i, e in enumerate(design.feed):
        line = getattr(e, "line", None)
        if line is not None and line != "custom" and line not in LINE_TYPES:
            out.append((f"unknown line type '{line}'; {_close(line, LINE_TYPES)}expected "
                        f"one of {', '.join(LINE_TYPES)}, or 'custom'", ("feed", i, "line")))
    s = design.ground.surface
    if s is not None and s not in SURFACES:
        out.append((f"unknown ground surface '{s}'; {_close(s, SURFACES)}expected one of "
                    f"{', '.join(SURFACES)}, or give permittivity and conductivity",
                    ("ground", "surface")))
    return out


def _check_geometry(design: Design) -> None:
    from necflow.catalog.bands import resolve_bands
    from necflow.model import check_geometry

    bands = resolve_bands(design)
    check_geometry(design, max(b.high_hz for b in bands))


def _one(problems: list[tuple[str, tuple | None]], file: str, lines: Lines) -> ConfigError:
    """The first problem as a ConfigError, counting the others."""
    message, path = problems[0]
    extra = len(problems) - 1
    if extra:
        message += f" (and {extra} more problem{'s' if extra > 1 else ''})"
    return ConfigError(message, file=file, line=_line_of(path, lines),
                       field=_path_text(path) if path else None)


__all__ = ["MarkedLoader", "parse_yaml", "load_design", "load_design_text"]
