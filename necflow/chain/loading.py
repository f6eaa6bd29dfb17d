"""Reading a design file completely: the schema, the catalogs, then the
checks that need the wire model (wires that cross, legs below ground, a
model that does not fit), every error placed at its field's line."""

from __future__ import annotations

import os

from necflow.catalog.bands import resolve_bands
from necflow.config.load import at_field, read_design_text, validate_design_text
from necflow.config.schema import Design
from necflow.errors import ConfigError, ModelError
from necflow.feed import build_chain
from necflow.model import check_variant


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
    return load_design_text(read_design_text(path), file=os.fspath(path))


def load_design_text(text: str, file: str = "<string>") -> Design:
    """:func:`load_design` of YAML text (``file`` names it in messages)."""
    design, lines = validate_design_text(text, file)
    try:
        check_variant(design)
        # the bands a switch or a tuner's settings name, the settings' ranges
        build_chain(design.feed, design.radio.impedance, bands=resolve_bands(design))
    except (ConfigError, ModelError) as exc:
        raise at_field(exc, file, lines) from None
    return design


__all__ = ["load_design", "load_design_text"]
