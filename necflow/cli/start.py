"""``necflow new`` and ``necflow schema``: a design to start from, and the
JSON Schema editors check a design file against."""

from __future__ import annotations

import json
import os
import sys
from pathlib import Path

from necflow.cli.status import OK
from necflow.config.design_schema import design_json_schema
from necflow.config.starters import SCHEMA_FILE, STARTERS, example, example_names, starter
from necflow.errors import ConfigError


def _write(text: str, out: str | None, *, replace: bool) -> None:
    """``text`` to stdout, or to ``out`` (refusing to replace a file unless
    ``replace``), saying on stderr what was written."""
    if out is None:
        sys.stdout.write(text)
        return
    path = Path(out)
    if path.is_dir():
        raise ConfigError("is a directory; expected a file name", file=out, field="--out")
    if path.exists() and not replace:
        raise ConfigError("the file exists; give another name or remove it first",
                          file=out, field="--out")
    try:
        with path.open("w" if replace else "x", encoding="utf-8") as fh:
            fh.write(text)
    except FileExistsError:
        raise ConfigError("the file exists; give another name or remove it first",
                          file=out, field="--out") from None
    except OSError as exc:
        raise ConfigError(f"cannot write: {exc.strerror or exc}", file=out,
                          field="--out") from None
    print(f"wrote {os.fspath(path)}", file=sys.stderr)


def _bands(values: list[str] | None) -> list[str] | None:
    if not values:
        return None
    return [b.strip() for v in values for b in v.split(",") if b.strip()]


def cmd_new(args) -> int:
    if args.list:
        print("starters (necflow new SHAPE [--bands ...]):")
        for name, (what, bands, _) in STARTERS.items():
            print(f"  {name:<12} {what}; bands {' '.join(bands)}")
        print("examples (necflow new --example NAME):")
        for name in example_names():
            print(f"  {name}")
        return OK
    if args.example is not None:
        if args.shape is not None or args.bands:
            raise ConfigError("give a SHAPE (with --bands) or --example, not both",
                              field="--example")
        _write(example(args.example), args.out, replace=False)
        return OK
    if args.shape is None:
        raise ConfigError(f"name a starter: {', '.join(STARTERS)} (or --example NAME, "
                          "--list)", field="SHAPE")
    _write(starter(args.shape, _bands(args.bands), args.region), args.out, replace=False)
    if args.out is not None:
        print(f"next: necflow check {args.out}; editors: necflow schema --out "
              f"{Path(args.out).parent / SCHEMA_FILE}", file=sys.stderr)
    return OK


def cmd_schema(args) -> int:
    text = json.dumps(design_json_schema(), indent=2) + "\n"
    _write(text, args.out, replace=True)
    return OK
