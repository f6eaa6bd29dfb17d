"""Output files written atomically: a temporary file in the same folder,
flushed to disk, then renamed over the target.

A reader (or a user after a crash, a kill or a full disk) sees either the
old file or the whole new one, never a truncated one.  JSON documents carry
no NaN or infinity (not JSON): a non-finite number is written as ``null``.
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from pathlib import Path
from typing import Any

import numpy as np


def _replace_from_temp(path: Path, write) -> Path:
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "wb") as fh:
            write(fh)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return path


def write_bytes(path, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically."""
    return _replace_from_temp(Path(path), lambda fh: fh.write(data))


def write_text(path, text: str) -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically."""
    return write_bytes(path, text.encode("utf-8"))


def json_ready(x: Any) -> Any:
    """Plain JSON data: arrays to lists, numpy scalars to Python ones,
    non-finite floats to None."""
    if isinstance(x, dict):
        return {str(k): json_ready(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [json_ready(v) for v in x]
    if isinstance(x, np.ndarray):
        return json_ready(x.tolist())
    if isinstance(x, (bool, np.bool_)):
        return bool(x)
    if isinstance(x, np.integer):
        return int(x)
    if isinstance(x, (float, np.floating)):
        return float(x) if math.isfinite(x) else None
    if isinstance(x, (complex, np.complexfloating)):
        return [json_ready(float(x.real)), json_ready(float(x.imag))]
    if isinstance(x, np.str_):
        return str(x)
    return x


def json_text(doc: Any) -> str:
    """The document as indented JSON text (non-finite numbers as null)."""
    return json.dumps(json_ready(doc), indent=1, allow_nan=False, default=str) + "\n"


def write_json(path, doc: Any) -> Path:
    """Write a JSON document atomically (see :func:`json_text`)."""
    return write_text(path, json_text(doc))


def save_figure(fig, path, **kwargs) -> Path:
    """Save a matplotlib figure atomically (format from the file's suffix)."""
    fmt = kwargs.pop("format", None) or Path(path).suffix.lstrip(".") or "png"
    return _replace_from_temp(Path(path), lambda fh: fig.savefig(fh, format=fmt, **kwargs))


__all__ = ["write_bytes", "write_text", "write_json", "json_text", "json_ready", "save_figure"]
