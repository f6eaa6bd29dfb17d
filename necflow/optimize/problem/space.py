"""A study's search space: the design's ``search`` section as parameters.

The field-path machinery (find, bound, set, unit-cube mapping) is
:mod:`necflow.config.fields`; this module adds what a study needs on top:
the space checked against the design: its two corners (every value at its
low end, every one at its high end) and, when neither is buildable or meets
the site constraints (the design's ``constraints``), a fixed sample of its
points, built and checked as designs.  The space is refused only when none
of them is; the rest of its infeasible points fail their trials.
"""

from __future__ import annotations

from pathlib import Path

from scipy.stats import qmc

from necflow.chain import load_design
from necflow.config.fields import ParamSet, apply, build_params
from necflow.config.load import parse_yaml
from necflow.config.schema import Design
from necflow.errors import ConfigError, ModelError
from necflow.model import check_variant
from necflow.optimize.problem.constraints import margins, violations

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
    found = _corner_problems(design, space)
    if found is not None:
        def said(exc):
            path = getattr(exc, "field", None) or ""
            return f"{path + ': ' if path and path != 'constraints' else ''}" \
                f"{getattr(exc, 'message', str(exc))}"
        path = getattr(found["high"], "field", None) or ""
        key = path if path in design.search else next(iter(design.search), "")
        within = " within the design's constraints" if design.constraints is not None else ""
        raise ConfigError(f"no point of the search space tried is buildable{within} "
                          f"({PROBES} points and both corners); with "
                          f"every searched value at its low end: {said(found['low'])}; at its "
                          f"high end: {said(found['high'])}", file=file,
                          line=lines.get(("search", key)),
                          field=f"search.{key}" if key else "search")
    return space


#: Points of the search space (beside its two corners) tried for a buildable one.
PROBES = 256


def _problem(design: Design, values: dict) -> Exception | None:
    """Why the variant at ``values`` is infeasible (an exception), or None."""
    try:
        variant = apply(design, values)
        check_variant(variant)
        broken = violations(variant, margins(variant))
    except (ConfigError, ModelError) as exc:
        return exc
    return None if broken is None else ConfigError(f"infeasible: {broken}",
                                                   field="constraints")


def _corner_problems(design: Design, space: ParamSet) -> dict[str, Exception] | None:
    """None when some point of the space is buildable and meets the site
    constraints, else the problem of each corner (``"low"``, ``"high"``).

    The corners come first (most spaces are buildable at both); then
    ``PROBES`` points of a scrambled Sobol sequence with a fixed seed, so the
    same design always gets the same answer.  A space whose only buildable
    points fall between the probes is refused; narrow its ranges.
    """
    problems = {}
    for which, corner in zip(("low", "high"), space.corners()):
        problems[which] = _problem(design, corner)
        if problems[which] is None:
            return None
    u = qmc.Sobol(len(space), scramble=True, seed=0).random(PROBES)
    for j in range(PROBES):
        if _problem(design, space.values_at(u[j])) is None:
            return None
    return problems


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
