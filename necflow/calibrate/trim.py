"""Trim advice: move the lowest SWR of selected bands to target frequencies.

For each targeted band the model's SWR at the radio is computed on a
window around the band and the frequency of its minimum found by a
parabola through the three grid points nearest it, fitted to |Gamma|^2
(smooth even where the match is perfect and SWR has a cusp).  The
adjustable fields are found by :func:`scipy.optimize.least_squares` on the
relative frequency errors, cheapest first: feed-chain fields alone (no
solve), then the antenna's fields as well when that is not enough.  Part
values are snapped to the E12 series and the continuous fields refitted;
length changes are rounded to 5 mm.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import least_squares

from necflow import units
from necflow.calibrate.advice import instruction, nearest_e12, step_order
from necflow.calibrate.response import Responder
from necflow.catalog.bands import Band, resolve_bands
from necflow.catalog.lines import LINE_TYPES
from necflow.config.fields import (
    Param,
    build_params,
    current_value,
    from_unit,
    locate,
    set_values,
    to_unit,
)
from necflow.config.schema import Design, LineElement, PartElement
from necflow.config.sections import SearchParam
from necflow.errors import ConfigError, ModelError
from necflow.measure.types import gamma_from_z

TOLERANCE = 0.01       # a band counts as trimmed within 1 % of its target
WINDOW_POINTS = 15
LENGTH_STEP = 0.005    # length changes rounded to 5 mm


@dataclass(frozen=True)
class Target:
    """Where one band's lowest SWR should be."""

    band: Band
    frequency_hz: float
    how: str                       # "frequency" | "centre"

    def window(self) -> np.ndarray:
        """Frequencies searched for the band's SWR minimum [Hz]."""
        lo = min(self.band.low_hz, self.frequency_hz) * 0.97
        hi = max(self.band.high_hz, self.frequency_hz) * 1.03
        return np.linspace(lo, hi, WINDOW_POINTS)


def resolve_targets(design: Design, targets: dict[str, str]) -> list[Target]:
    """Targets by band name: a frequency with unit, or ``centre``.

    With no targets at all, every selected band is a ``centre`` target: the
    lowest SWR is put at the centre of each band.

    Raises
    ------
    ConfigError
        Unknown band or unreadable frequency.
    """
    bands = {b.name: b for b in resolve_bands(design)}
    if not targets:
        targets = {name: "centre" for name in bands}
    out = []
    for name, text in targets.items():
        if name not in bands:
            raise ConfigError(f"no band '{name}' in the design; its bands are "
                              f"{', '.join(bands)}", field=f"targets.{name}")
        b = bands[name]
        if str(text).strip().lower() in ("centre", "center"):
            out.append(Target(b, b.centre_hz, "centre"))
            continue
        try:
            f = units.parse(text, "frequency")
        except units.UnitError as exc:
            raise ConfigError(f"{exc}, or 'centre'", field=f"targets.{name}") from None
        if not 0.5 * b.low_hz < f < 2.0 * b.high_hz:
            raise ConfigError(f"target {f / 1e6:g} MHz is far from band {name} "
                              f"({b.low_hz / 1e6:g}-{b.high_hz / 1e6:g} MHz)",
                              field=f"targets.{name}")
        out.append(Target(b, f, "frequency"))
    return out


def swr_minimum(f, gamma_mag) -> tuple[float, bool]:
    """Frequency of the lowest SWR on a grid, refined by a parabola in |Gamma|^2.

    Returns
    -------
    (f_min, interior)
        ``interior`` is False when the lowest point is at an end of the grid
        (no dip inside the window).
    """
    f = np.asarray(f, dtype=float)
    y = np.asarray(gamma_mag, dtype=float) ** 2
    k = int(np.argmin(y))
    if k == 0 or k == len(f) - 1:
        return float(f[k]), False
    x0, x1, x2 = f[k - 1:k + 2]
    y0, y1, y2 = y[k - 1:k + 2]
    den = (x0 - x1) * (x0 - x2) * (x1 - x2)
    a = (x2 * (y1 - y0) + x1 * (y0 - y2) + x0 * (y2 - y1)) / den
    b = (x2 ** 2 * (y0 - y1) + x1 ** 2 * (y2 - y0) + x0 ** 2 * (y1 - y2)) / den
    if a <= 0:
        return float(f[k]), True
    return float(np.clip(-b / (2 * a), x0, x2)), True


def minima(responder: Responder, design: Design, targets: list[Target]):
    """Lowest-SWR frequency [Hz] and whether it is a dip, per target."""
    windows = [t.window() for t in targets]
    f_all = np.unique(np.concatenate(windows))
    z = responder.z_feedpoint(design, f_all)
    z_radio = responder.z_radio(design, f_all, z)
    mag = np.abs(gamma_from_z(z_radio, design.radio.impedance))
    out = []
    for w in windows:
        out.append(swr_minimum(w, mag[np.searchsorted(f_all, w)]))
    return out


@dataclass(frozen=True)
class Step:
    """One change, with the per-band figures after it (and the ones before)."""

    path: str
    old: float
    new: float
    text: str
    bands: list                      # BandSummary after this step
    pushed_out: list[str] = field(default_factory=list)


@dataclass(frozen=True)
class TrimResult:
    """Outcome of :func:`trim_design`."""

    targets: list[Target]
    before: list                     # BandSummary
    steps: list[Step]
    design: Design
    reached: dict[str, float]        # band -> modelled lowest-SWR frequency after [Hz]
    unreachable: dict[str, str]      # band -> why
    warnings: list[str]
    solves: int


def suggested_adjustable(design: Design) -> dict[str, SearchParam]:
    """Fields a builder usually trims, for the message that asks for an
    ``adjustable`` section: the antenna's length (+-10 %), each balanced
    matching section's length (+-25 %) and each capacitor or inductor
    (/3 .. x3).  Never used without the user naming them."""
    out: dict[str, SearchParam] = {}
    a = design.antenna
    for name in ("span", "leg"):
        if hasattr(a, name):
            v = getattr(a, name)
            out[f"antenna.{name}"] = SearchParam(range=(f"{0.9 * v!r} m", f"{1.1 * v!r} m"))
    for el in design.feed:
        if isinstance(el, LineElement) and el.line in LINE_TYPES and LINE_TYPES[el.line].balanced:
            out[f"feed.{el.id}.length"] = SearchParam(
                range=(f"{0.75 * el.length!r} m", f"{1.25 * el.length!r} m"))
        if isinstance(el, PartElement) and el.kind in ("capacitor", "inductor"):
            unit = "pF" if el.kind == "capacitor" else "uH"
            scale = 1e12 if el.kind == "capacitor" else 1e6
            out[f"feed.{el.id}.value"] = SearchParam(
                range=(f"{el.value * scale / 3!r} {unit}", f"{el.value * scale * 3!r} {unit}"),
                scale="log")
    return out


class _Objective:
    """Relative frequency errors of the targets (in units of the 1 % tolerance)
    for full sets of field values, plus a light pull toward the start."""

    def __init__(self, design, responder, targets, start, on_step=None):
        self.design, self.responder, self.targets, self.start = design, responder, targets, start
        self.tf = np.array([t.frequency_hz for t in targets])
        self.on_step, self.phase, self.done = on_step, "", 0

    def begin(self, phase: str) -> None:
        """Name the phase the next evaluations belong to (progress)."""
        self.phase, self.done = phase, 0

    def errors(self, values: dict) -> np.ndarray:
        if self.on_step is not None:
            self.on_step(self.done, None, self.phase)
            self.done += 1
        try:
            found = minima(self.responder, set_values(self.design, values), self.targets)
        except (ConfigError, ModelError):
            return np.full(len(self.targets), 50.0)
        return (np.array([f for f, _ in found]) - self.tf) / self.tf / TOLERANCE

    def solve(self, free: list[Param], held: dict, values: dict, rng, starts: int) -> dict:
        """least_squares over the ``free`` fields, ``held`` fixed, from ``values``
        and ``starts - 1`` seeded draws; stops early once every target is within
        half the tolerance."""
        u_ref = to_unit(free, self.start)

        def fun(u):
            e = self.errors({**held, **from_unit(free, u)})
            return np.concatenate([e, 0.05 * (u - u_ref)])

        best = None
        cands = [to_unit(free, values)] + [rng.uniform(0, 1, len(free))
                                           for _ in range(starts - 1)]
        names = ", ".join(p.path for p in free)
        for k, c in enumerate(cands):
            self.begin(f"searching {names}" + (f" (start {k + 1} of {len(cands)})"
                                               if len(cands) > 1 else ""))
            res = least_squares(fun, c, bounds=(0.0, 1.0), diff_step=1e-3, max_nfev=30,
                                xtol=1e-5, ftol=1e-8)
            if best is None or res.cost < best.cost:
                best = res
            if np.all(np.abs(best.fun[:len(self.targets)]) < 0.5):
                break
        return {**held, **from_unit(free, best.x)}

    def cheapest_first(self, free: list[Param], held: dict, values: dict, rng,
                       starts: int) -> dict:
        """Feed-chain fields alone first (no solve); the antenna's too if that
        leaves a target more than the tolerance away."""
        values = {**values, **held}
        feed = [p for p in free if not p.geometry]
        if feed:
            values = self.solve(feed, {**held, **{p.path: values[p.path] for p in free
                                                  if p.geometry}}, values, rng, starts)
        self.begin("checking the targets")
        if any(p.geometry for p in free) and np.any(np.abs(self.errors(values)) > 1.0):
            values = self.solve(free, held, values, rng, 1)
        return values


def _parts(design: Design, params: list[Param]) -> list[Param]:
    out = []
    for p in params:
        if p.path.startswith("feed.") and p.path.endswith(".value"):
            owner, _ = locate(design, p.path)
            if isinstance(owner, PartElement) and owner.kind != "resistor":
                out.append(p)
    return out


def _snap_parts(obj: _Objective, cont: list[Param], fixed: dict, values: dict, rng) -> dict:
    """Capacitors and inductors on E12 values, the rest refitted; of the two
    E12 values around each part (first three parts) the best set wins."""

    parts = _parts(obj.design, cont)
    if not parts:
        return values
    rest = [p for p in cont if p not in parts]
    options = []
    for k, p in enumerate(parts):
        v = values[p.path]
        near = nearest_e12(v)
        other = nearest_e12(v * v / near)      # the neighbour on the other side
        options.append([near] + ([other] if other != near and k < 3 else []))
    best, best_cost = values, np.inf
    combos = list(itertools.product(*options))
    for k, combo in enumerate(combos):
        obj.begin(f"standard part values, set {k + 1} of {len(combos)}")
        held = {**fixed, **{p.path: c for p, c in zip(parts, combo)}}
        trial = obj.cheapest_first(rest, held, values, rng, 1) if rest else held
        cost = float(np.sum(obj.errors(trial) ** 2))
        if cost < best_cost:
            best, best_cost = trial, cost
        if np.all(np.abs(obj.errors(best)) < 0.5):
            break                              # nearest values already good enough
    return best


def trim_design(design: Design, targets: dict[str, str], adjustable: dict | None = None, *,
                seed: int = 0, responder: Responder | None = None,
                evaluate_steps: bool = True,
                on_step: Callable[[int, int | None, str], None] | None = None) -> TrimResult:
    """Propose changes of the adjustable fields that put each targeted band's
    lowest SWR at its target.

    Parameters
    ----------
    design : Design
    targets : dict
        Band name -> frequency text or ``centre``.
    adjustable : dict of SearchParam, optional
        Default: the design's ``adjustable`` section.  With neither, nothing
        is chosen behind the user's back: a ConfigError names fields to
        consider (as ``fit`` and ``tolerance`` refuse without their sections).
    seed : int
        Seed of the extra starting points.
    responder : Responder, optional
        Shared solve cache.
    evaluate_steps : bool
        Evaluate every band after each step (for the tables and warnings).
    on_step : callable, optional
        ``on_step(done, total, text)`` before each model evaluation of the
        searches (their count is not known in advance) and before each
        step's evaluation of every band (a command's progress).
    """

    tlist = resolve_targets(design, targets)
    section = adjustable if adjustable else design.adjustable
    params = build_params(design, section, key="adjustable")
    if not params:
        hint = ", ".join(suggested_adjustable(design))
        raise ConfigError("nothing to adjust: name the fields to trim in the design's "
                          "'adjustable' section or with --adjust PATH=LOW,HIGH"
                          + (f" (fields builders usually trim here: {hint})" if hint else ""),
                          field="adjustable")
    responder = responder or Responder(design)
    cont = [p for p in params if p.choices is None]
    start = {p.path: float(current_value(design, p.path)) for p in params}
    fixed = {p.path: start[p.path] for p in params if p.choices is not None}
    rng = np.random.default_rng(seed)
    obj = _Objective(design, responder, tlist, start, on_step)
    values = obj.cheapest_first(cont, fixed, dict(start), rng, starts=3)
    values = _snap_parts(obj, cont, fixed, values, rng)
    for p in params:
        if p.dimension == "length":
            d = values[p.path] - start[p.path]
            values[p.path] = start[p.path] + LENGTH_STEP * round(d / LENGTH_STEP)
    changed = [p for p in params if not np.isclose(values[p.path], start[p.path],
                                                   rtol=1e-9, atol=1e-12)]
    changed.sort(key=lambda p: step_order(p.path))
    final = set_values(design, {p.path: values[p.path] for p in params})
    if on_step is not None:
        on_step(0, None, "checking the trimmed design")
    found = minima(responder, final, tlist)
    reached = {t.band.name: f for t, (f, _) in zip(tlist, found)}
    unreachable = {}
    for t, (f, interior) in zip(tlist, found):
        if abs(f - t.frequency_hz) <= TOLERANCE * t.frequency_hz:
            continue
        ends = [p.path for p in cont if p.path in values and
                (np.isclose(values[p.path], p.low) or np.isclose(values[p.path], p.high))]
        if not interior:
            why = ("the modelled SWR has no dip within reach of this band (its lowest SWR sits "
                   "at the edge of the searched window); the adjustable fields cannot make one")
        elif ends:
            why = f"{', '.join(ends)} reached the end of its range"
        elif len(tlist) > len(cont):
            why = (f"{len(tlist)} targets and only {len(cont)} continuous field(s): the "
                   "targets pull the same fields different ways; the advice is a compromise")
        else:
            why = ("the targets of several bands pull the same fields different ways; the "
                   "advice is a compromise")
        unreachable[t.band.name] = (f"lowest SWR at {f / 1e6:.4g} MHz, "
                                    f"{100 * (f / t.frequency_hz - 1):+.1f} % from the target: "
                                    + why)
    steps, warns = [], []

    def every_band(k: int, what: str) -> None:
        if on_step is not None and evaluate_steps:
            on_step(k, len(changed) + 1, f"every band {what}")

    every_band(0, "before the changes")
    before = responder.chain(design).evaluation.band_summaries() if evaluate_steps else []
    current, prev = design, before
    for k, p in enumerate(changed, start=1):
        every_band(k, f"after step {k}, {p.path}")
        current = set_values(current, {p.path: values[p.path]})
        after = responder.chain(current).evaluation.band_summaries() if evaluate_steps \
            else []
        out = [a.band for a, b in zip(after, prev)
               if b.fraction_within_limit > 0 and a.fraction_within_limit == 0]
        steps.append(Step(p.path, start[p.path], values[p.path],
                          instruction(design, p.path, start[p.path], values[p.path]), after, out))
        for band in out:
            others = [t.band.name for t in tlist if t.band.name != band]
            aim = (f"moves the SWR minima toward the targets of {', '.join(others)}"
                   if others else "moves the SWR minimum toward its target")
            warns.append(f"step '{p.path}' {aim} but leaves no point of {band} within the "
                         "SWR limit (later steps may bring it back; see the table after each "
                         "step)")
        prev = after
    if evaluate_steps and before and prev:
        lost = [a.band for a, b in zip(prev, before)
                if b.fraction_within_limit > 0 and a.fraction_within_limit == 0]
        for band in lost:
            if not any(band in s.pushed_out for s in steps):
                warns.append(f"after all the changes {band} is out of the SWR limit")
    return TrimResult(targets=tlist, before=before, steps=steps, design=final, reached=reached,
                      unreachable=unreachable, warnings=warns, solves=responder.solves)
