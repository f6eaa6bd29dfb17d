"""A study's search space: the design's ``search`` section as parameters.

The field-path machinery (find, bound, set, unit-cube mapping) is
:mod:`necflow.config.fields`; this module adds what a study needs on top:
the space checked against the design, with its two corners (every value at
its low end, every one at its high end) built and checked as designs.
"""

from __future__ import annotations

from pathlib import Path

from necflow.chain import load_design
from necflow.config.fields import ParamSet, apply, build_params
from necflow.config.load import parse_yaml
from necflow.config.schema import Design
from necflow.errors import ConfigError, ModelError
from necflow.model import check_variant

SearchSpace = ParamSet


def build_space(design: Design, *, file: str | None = None,
                lines: dict | None = None) -> ParamSet:
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
    space = build_params(design, design.search, key="search", file=file, lines=lines)
    for which, corner in zip(("low", "high"), space.corners()):
        try:
            check_variant(apply(design, corner))
        except (ConfigError, ModelError) as exc:
            path = getattr(exc, "field", None) or ""
            key = path if path in design.search else next(iter(design.search), "")
            msg = getattr(exc, "message", str(exc))
            raise ConfigError(f"the design with every searched value at its {which} end is "
                              f"invalid: {path + ': ' if path else ''}{msg}", file=file,
                              line=lines.get(("search", key)),
                              field=f"search.{key}" if key else "search") from None
    return space


def load_study_design(path) -> tuple[Design, ParamSet]:
    """Read a design file and check its search space (no solve).

    Raises
    ------
    ConfigError
        For any problem with the design or its ``search`` section.
    """
    name = str(path)
    design = load_design(path)
    _, lines = parse_yaml(Path(path).read_text(encoding="utf-8-sig"), name)
    if not design.search:
        raise ConfigError("the design has no 'search' section; add one naming the fields "
                          "to vary, e.g. 'search: {antenna.span: [22 m, 30 m]}'", file=name,
                          field="search")
    return design, build_space(design, file=name, lines=lines)
