"""Tolerance cases: the design's ``tolerances`` section as seeded perturbations.

Each case draws every toleranced feed field uniformly within its +- range
(a percentage of the nominal value, or an amount in the field's unit) and
one of a small set of geometry states: each toleranced antenna field, and
the ground between its dry- and wet-season surfaces (permittivity linear,
conductivity logarithmic), takes ``levels`` values at the centres of
equal-probability bins of its range; the combinations (a seeded subset
beyond ``max_states``) are solved once each and shared by every case that
draws them, while the feed variants cost no solve.  The tolerance Monte
Carlo (:mod:`necflow.calibrate.tolerance`) and robust design
(:mod:`necflow.optimize.problem.robust`) draw their cases here.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from necflow import units
from necflow.catalog.grounds import SURFACES
from necflow.config.fields import current_value, dimension_of, ground_explicit, locate
from necflow.config.schema import Design
from necflow.errors import ConfigError


@dataclass(frozen=True)
class Tolerance:
    """One toleranced field: nominal value and half-width [SI]."""

    path: str
    nominal: float
    half_width: float
    geometry: bool
    fraction: float | None = None   # half-width as a share of the value (a % tolerance)

    def half_at(self, value: float) -> float:
        """Half-width around ``value`` [SI]: the share of it for a percentage
        tolerance, else the stated amount."""
        return self.half_width if self.fraction is None else self.fraction * abs(value)


def parse_tolerances(design: Design) -> list[Tolerance]:
    """The design's ``tolerances.fields`` in SI.

    Raises
    ------
    ConfigError
        Unknown path, a tolerance without a readable unit, or one that would
        make the field non-positive.
    """
    out = []
    base = ground_explicit(design)
    for path, text in design.tolerances.fields.items():
        where = f"tolerances.fields.{path}"
        try:
            owner, name = locate(base, path)
        except ValueError as exc:
            raise ConfigError(str(exc), field=where) from None
        nominal = getattr(owner, name)
        if not isinstance(nominal, (int, float)) or isinstance(nominal, bool):
            raise ConfigError("not a numeric field; a tolerance needs a number", field=where)
        dim = dimension_of(owner, name)
        t = str(text).strip()
        fraction = None
        if t.endswith("%"):
            try:
                fraction = abs(float(t[:-1])) / 100.0
                half = fraction * abs(nominal)
            except ValueError:
                raise ConfigError(f"cannot read '{text}' as a percentage", field=where) from None
        elif dim:
            try:
                half = abs(units.parse(t, dim))
            except units.UnitError as exc:
                raise ConfigError(f"{exc}, or a percentage such as '5 %'", field=where) from None
        else:
            try:
                half = abs(float(t))
            except ValueError:
                raise ConfigError(f"cannot read '{text}'; expected a number or a percentage",
                                  field=where) from None
        if nominal - half <= 0 and dim is not None:
            raise ConfigError(f"the tolerance reaches zero or below (nominal {nominal:g})",
                              field=where)
        out.append(Tolerance(path, float(nominal), half, path.split(".")[0] != "feed",
                             fraction))
    return out


def ground_states(design: Design, levels: int) -> list[dict] | None:
    """Ground constants between the dry- and wet-season surfaces, or None."""
    names = design.tolerances.ground
    if names is None:
        return None
    if design.ground.model not in ("reflection", "sommerfeld"):
        raise ConfigError(f"a '{design.ground.model}' ground has no season to vary",
                          field="tolerances.ground")
    for n in names:
        if n not in SURFACES:
            raise ConfigError(f"unknown surface '{n}'; expected one of {', '.join(SURFACES)}",
                              field="tolerances.ground")
    dry, wet = SURFACES[names[0]], SURFACES[names[1]]
    out = []
    for t in (np.arange(levels) + 0.5) / levels:
        out.append({"ground.permittivity": dry.permittivity + t * (wet.permittivity
                                                                   - dry.permittivity),
                    "ground.conductivity": float(np.exp(np.log(dry.conductivity) + t * (
                        np.log(wet.conductivity) - np.log(dry.conductivity))))})
    return out


@dataclass(frozen=True)
class Case:
    """One Monte Carlo case as perturbations of whatever design it is applied to.

    Attributes
    ----------
    state : int
        Index of the geometry state drawn; cases of one state have the same
        geometry (and ground) on any design, so their antenna response is
        solved once.
    shares : tuple of (Tolerance, float)
        Each toleranced field and its position within the tolerance, in
        [-1, 1]: the field becomes ``value + share * half`` with ``half`` the
        stated amount, or for a percentage tolerance that share of the
        field's own value on the design the case is applied to.
    ground : tuple of (str, float)
        Ground constants of the season state [SI] (empty without
        ``tolerances.ground``); they replace the design's ground.
    """

    state: int
    shares: tuple[tuple[Tolerance, float], ...]
    ground: tuple[tuple[str, float], ...] = ()

    def values(self, base: dict[str, float]) -> dict[str, float]:
        """Field values of the case [SI] around ``base`` (path -> value of the
        design the case is applied to, see :func:`base_values`)."""
        out = {t.path: base[t.path] + u * t.half_at(base[t.path]) for t, u in self.shares}
        out.update(self.ground)
        return out

    def geometry_key(self) -> tuple:
        """What decides the case's antenna response besides the design."""
        return self.state, tuple((t.path, u) for t, u in self.shares if t.geometry), self.ground


def base_values(design: Design, tolerances: list[Tolerance]) -> dict[str, float]:
    """Current value of every toleranced field of ``design`` [SI]."""

    return {t.path: float(current_value(design, t.path)) for t in tolerances}


def perturbations(design: Design, tolerances: list[Tolerance] | None = None, *,
                  samples: int | None = None, seed: int | None = None) -> list[Case]:
    """The seeded cases as perturbations (see :class:`Case`), independent of
    the values the design's toleranced fields happen to have."""
    spec = design.tolerances
    tols = parse_tolerances(design) if tolerances is None else tolerances
    n = spec.samples if samples is None else samples
    rng = np.random.default_rng(spec.seed if seed is None else seed)
    k = spec.levels
    centres = -1.0 + (2.0 * np.arange(k) + 1.0) / k
    geo = [t for t in tols if t.geometry]
    axes = [[(("share", t, float(c)),) for c in centres] for t in geo]
    g = ground_states(design, k)
    if g is not None:
        axes.append([tuple(("ground", key, v) for key, v in gs.items()) for gs in g])
    states = [tuple(itertools.chain.from_iterable(combo))
              for combo in itertools.product(*axes)] if axes else [()]
    if len(states) > spec.max_states:
        pick = rng.choice(len(states), spec.max_states, replace=False)
        states = [states[i] for i in sorted(pick)]
    feed = [t for t in tols if not t.geometry]
    which = rng.integers(0, len(states), n)
    draws = rng.uniform(-1.0, 1.0, (n, len(feed)))
    out = []
    for i in range(n):
        st = states[which[i]]
        shares = tuple((t, u) for kind, t, u in st if kind == "share")
        shares += tuple((t, float(draws[i, j])) for j, t in enumerate(feed))
        out.append(Case(int(which[i]), shares,
                        tuple((key, v) for kind, key, v in st if kind == "ground")))
    return out


def scenarios(design: Design, tolerances: list[Tolerance] | None = None, *,
              samples: int | None = None, seed: int | None = None) -> list[dict]:
    """The cases applied to ``design``: one dict of field values [SI] per case,
    seeded.

    Cases sharing a geometry state have identical antenna and ground values,
    so their antenna response is solved once.
    """
    tols = parse_tolerances(design) if tolerances is None else tolerances
    base = {t.path: t.nominal for t in tols}
    return [c.values(base) for c in perturbations(design, tols, samples=samples, seed=seed)]


__all__ = ["Tolerance", "Case", "parse_tolerances", "ground_states", "base_values",
           "perturbations", "scenarios"]
