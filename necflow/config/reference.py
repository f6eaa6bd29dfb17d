"""The design-file key reference, generated from the schema.

:func:`markdown` walks the pydantic models of :mod:`necflow.config.schema`
and lists every key with its unit, default and description, so the README
cannot drift from the code.  ``python -m necflow.config.reference --write
README.md`` puts the table between the README's ``design-keys`` markers.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from types import UnionType
from typing import Annotated, Any, Union, get_args, get_origin

from pydantic import BaseModel, Discriminator
from pydantic.fields import FieldInfo
from pydantic_core import PydanticUndefined

from necflow.config.load import is_model, union_tags
from necflow.config.schema import Design

START = "<!-- design-keys:start -->"
END = "<!-- design-keys:end -->"

Row = tuple[str, str, str, str, str]  # path, qualifier, unit, default, description


def _unwrap(tp: Any) -> tuple[Any, Any]:
    """Strip Annotated and Optional; return (type, discriminator or None)."""
    disc = None
    while True:
        if get_origin(tp) is Annotated:
            for meta in get_args(tp)[1:]:
                if isinstance(meta, Discriminator) or (isinstance(meta, FieldInfo)
                                                       and meta.discriminator):
                    disc = meta if isinstance(meta, Discriminator) else meta.discriminator
            tp = get_args(tp)[0]
        elif get_origin(tp) in (Union, UnionType) and type(None) in get_args(tp):
            rest = [a for a in get_args(tp) if a is not type(None)]
            tp = rest[0] if len(rest) == 1 else Union[tuple(rest)]  # noqa: UP007  (a union built at run time)
        else:
            return tp, disc


def _members(tp: Any, disc: Any) -> list[tuple[str, type]]:
    """(tag, model) for each member of a discriminated union."""
    return [(str(tag), model) for tag, model in union_tags(list(get_args(tp)), disc).items()]


def _summary(model: type) -> str:
    return (model.__doc__ or "").strip().splitlines()[0].rstrip(".")


def _default(field: FieldInfo, extra: dict) -> str:
    if field.is_required():
        return "required"
    if "default_text" in extra:
        return str(extra["default_text"])
    value = field.default
    if field.default_factory is not None:
        value = field.default_factory()  # type: ignore[call-arg]
        if isinstance(value, BaseModel):
            return "see its keys"
        if isinstance(value, (list, dict)):
            return "[" + ", ".join(map(str, value)) + "]" if value else "empty"
    if value is None or value is PydanticUndefined:
        return "not set"
    if isinstance(value, str):
        return f'"{value}"' if value == "" else value
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def _rows(model: type, prefix: str, qualifier: str, skip: str | None = None) -> list[Row]:
    rows: list[Row] = []
    for name, field in model.model_fields.items():
        if name == skip:
            continue
        extra = field.json_schema_extra if isinstance(field.json_schema_extra, dict) else {}
        path = prefix + name
        desc = field.description or ""
        tp, disc = _unwrap(field.annotation)
        disc = field.discriminator or disc
        item, sub = None, path + "."
        if get_origin(tp) in (list, dict):
            item, item_disc = _unwrap(get_args(tp)[-1])
            disc = disc or item_disc
            sub = path + ("[]." if get_origin(tp) is list else ".<key>.")
        target = item if item is not None else tp
        if get_origin(target) in (Union, UnionType) and disc is not None:
            members = _members(target, disc)
            kinds = "; ".join(f"{t}: {_summary(m).lower()}" for t, m in members)
            rows.append((path, qualifier, extra.get("unit", ""), _default(field, extra),
                         f"{desc}. Kinds: {kinds}"))
            if isinstance(disc, str):
                rows.append((sub + disc, qualifier, "", "required",
                             "One of " + ", ".join(t for t, _ in members)))
            for tag, member in members:
                rows += _rows(member, sub, tag, skip=disc if isinstance(disc, str) else None)
            continue
        rows.append((path, qualifier, extra.get("unit", ""), _default(field, extra), desc))
        if is_model(target):
            rows += _rows(target, sub, qualifier)
    return rows


def _merge(rows: list[Row]) -> list[tuple[str, str, str, str]]:
    """One line per distinct key text, naming every kind it applies to."""
    merged: dict[tuple[str, str, str, str], list[str]] = {}
    for path, qualifier, unit, default, desc in rows:
        merged.setdefault((path, unit, default, desc), [])
        if qualifier and qualifier not in merged[(path, unit, default, desc)]:
            merged[(path, unit, default, desc)].append(qualifier)
    return [(f"`{p}`" + (f" ({', '.join(q)})" if q else ""), u, d, s)
            for (p, u, d, s), q in merged.items()]


def _cell(text: str) -> str:
    """Table cell text: one line, pipes escaped, no raw HTML."""
    text = " ".join(str(text).split()).replace("|", "\\|")
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def markdown() -> str:
    """The key reference as a Markdown table (no trailing newline)."""
    lines = ["Every key of a design file. A qualifier in brackets names the antenna shape "
             "or feed element kind the key belongs to; `[]` marks the entries of a list and "
             "`<key>` a key you choose.",
             "",
             "| Key | Unit | Default | Description |",
             "|---|---|---|---|"]
    for key, unit, default, desc in _merge(_rows(Design, "", "")):
        lines.append(f"| {key} | {_cell(unit)} | {_cell(default)} | {_cell(desc)} |")
    return "\n".join(lines)


def readme_section(text: str) -> str | None:
    """The text between the design-keys markers, stripped, or None."""
    if START not in text or END not in text:
        return None
    return text.split(START, 1)[1].split(END, 1)[0].strip()


def update_readme(text: str) -> str:
    """README text with the marked section replaced by :func:`markdown`.

    Raises
    ------
    ValueError
        If the markers are missing or out of order.
    """
    start, end = text.find(START), text.find(END)
    if start < 0 or end < start:
        raise ValueError(f"README has no '{START}' ... '{END}' section")
    return text[:start + len(START)] + "\n" + markdown() + "\n" + text[end:]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m necflow.config.reference",
                                     description="Print the design-file key reference, or "
                                     "write it into a README between its markers.")
    parser.add_argument("--write", metavar="README", help="file to update in place")
    args = parser.parse_args(argv)
    if not args.write:
        sys.stdout.write(markdown() + "\n")
        return 0
    path = Path(args.write)
    try:
        path.write_text(update_readme(path.read_text(encoding="utf-8")), encoding="utf-8")
    except (OSError, ValueError) as exc:
        sys.stderr.write(f"{path}: {exc}\n")
        return 1
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
