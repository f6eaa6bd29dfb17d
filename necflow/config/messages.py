"""Pydantic validation errors in plain words, one line each.

:func:`translate` turns a :class:`pydantic.ValidationError` into a list of
``(message, user path)`` pairs, most useful first: the pydantic ``loc`` is
walked through the schema so discriminator tags and union member names drop
out of the path, and each error type gets wording that says what is wrong
and what is expected (with a did-you-mean where a close name exists).
:func:`first_error` makes the first of them a :class:`ConfigError` with the
line the path starts at in the file.
"""

from __future__ import annotations

import difflib
import re
from types import UnionType
from typing import Annotated, Any, Literal, Union, get_args, get_origin

from pydantic import BaseModel, Discriminator, Tag, ValidationError
from pydantic.fields import FieldInfo

from necflow import units
from necflow.config.schema import ELEMENT_KEYS, Design
from necflow.errors import ConfigError

Lines = dict[tuple, int]
"""Data path such as ``('feed', 2, 'value')`` -> 1-based line in the file."""


# ----------------------------------------------------------------------------
# Paths: ('feed', 2, 'value') <-> "feed[2].value", and their lines


def path_text(path: tuple) -> str:
    """``('feed', 2, 'value')`` -> ``feed[2].value``; a key with a dot in
    brackets: ``('search', 'antenna.span')`` -> ``search[antenna.span]``."""
    out = ""
    for p in path:
        if isinstance(p, int) or "." in str(p):
            out += f"[{p}]"
        else:
            out += f".{p}" if out else str(p)
    return out


def parse_path(text: str) -> tuple:
    out: list = []
    for name, index in re.findall(r"([^.\[\]]+)|\[([^\]]+)\]", text):
        out.append(name if name else int(index) if index.isdigit() else index)
    return tuple(out)


def line_of(path: tuple | None, lines: Lines) -> int | None:
    """Line of ``path``, or of its nearest parent that the file has."""
    if path is None:
        return None
    path = tuple(path)
    while path and path not in lines:
        path = path[:-1]
    return lines.get(path)


def describe(value: Any) -> str:
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
        return (f"unknown {key} '{tag}'; {did_you_mean(tag, tags)}expected one of {options}",
                path + (key,))
    if etype == "element_kind":
        keys = [k for k in given if isinstance(k, str)] if isinstance(given, dict) else []
        for k in keys:
            close = difflib.get_close_matches(k, list(ELEMENT_KEYS), n=1)
            if close:
                return f"{err['msg']}; did you mean '{close[0]}' instead of '{k}'?", path
        return f"{err['msg']}; got keys {', '.join(map(str, keys)) or '(none)'}", path
    if etype == "literal_error":
        values = _literal_values(owner, name)
        shown = ", ".join(map(str, values)) or str(ctx.get("expected", ""))
        return (f"{given!r} is not allowed; {did_you_mean(given, map(str, values))}expected one "
                f"of {shown}").replace('"', "'"), path
    if etype in _BOUND:
        key, words = _BOUND[etype]
        bound = float(ctx[key])
        raw = _raw(data, path)
        got = f"got '{raw}'" if isinstance(raw, str) else f"got {raw}"
        if bound == 0 and key in ("gt", "ge"):
            return f"must be {'positive' if key == 'gt' else 'zero or more'}, {got}", path
        return f"must be {words} {_bound_text(bound, owner, name)}, {got}", path
    if etype == "too_long":
        n = ctx.get("max_length")
        return (f"has more than {n} entries, the most this field may have", path)
    if etype == "string_too_long":
        n = ctx.get("max_length")
        return (f"is longer than {n} characters, the most this field may have", path)
    if etype in ("too_short", "string_too_short"):
        n = ctx.get("min_length", 1)
        if etype == "string_too_short":
            return "must not be empty; expected some text", path
        got = (describe(given) if not isinstance(given, list)
               else str(len(given)) if given else "none")
        return f"needs at least {n} entr{'y' if n == 1 else 'ies'}, got {got}", path
    kind = _expected_kind(etype)
    if kind:
        hint = "; put text in quotes" if kind == "text" and given is not None else ""
        return f"expected {kind}, got {describe(given)}{hint}", path
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


def translate(exc: ValidationError, data: Any) -> list[tuple[str, tuple | None]]:
    """All errors of a validation, most useful first, one per path."""
    found: dict[tuple, tuple[int, str, list[str]]] = {}
    for err in exc.errors(include_url=False):
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
            msg = f"expected {' or '.join(kinds)}, got {describe(_raw(data, path))}"
        out.append((prio, path, msg))
    out.sort(key=lambda t: t[0])
    return [(msg, path) for _, path, msg in out]


def _squash(word: Any) -> str:
    """A name without case, spaces or punctuation: 'RG 213' and 'rg-213' meet."""
    return re.sub(r"[^0-9a-z]", "", str(word).lower())


def closest(word: Any, options, aliases: dict[str, str] | None = None) -> str | None:
    """The option ``word`` most likely means, or None.

    In turn: an alias (the words people use for a catalog entry, compared
    squashed), an option equal but for case, spaces and punctuation, then
    the closest spelling (difflib, case ignored).
    """
    options = [str(o) for o in options]
    key = _squash(word)
    for alias, target in (aliases or {}).items():
        if _squash(alias) == key and target in options:
            return target
    for o in options:
        if _squash(o) == key:
            return o
    lower = {o.lower(): o for o in options}
    close = difflib.get_close_matches(str(word).lower(), list(lower), n=1)
    return lower[close[0]] if close else None


def did_you_mean(word: Any, options, aliases: dict[str, str] | None = None) -> str:
    """``"did you mean 'X'? "`` for the closest of ``options``, or ``""``."""
    close = closest(word, options, aliases)
    return f"did you mean '{close}'? " if close else ""


def first_error(problems: list[tuple[str, tuple | None]], file: str, lines: Lines) -> ConfigError:
    """The first problem as a ConfigError that carries the others
    (``others``: each a ConfigError at its own line and field)."""
    def one(message: str, path: tuple | None) -> ConfigError:
        return ConfigError(message, file=file, line=line_of(path, lines),
                           field=path_text(path) if path else None)
    message, path = problems[0]
    first = one(message, path)
    if len(problems) == 1:
        return first
    return ConfigError(message, file=file, line=first.line, field=first.field,
                       others=tuple(one(m, p) for m, p in problems[1:]))


__all__ = ["Lines", "path_text", "parse_path", "describe", "is_model", "union_tags",
           "closest", "did_you_mean", "translate", "first_error"]
