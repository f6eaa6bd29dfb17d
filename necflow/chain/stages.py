"""The staged chain: one design through every stage, each computed once.

::

    Chain(design)
      .bands, .frequency_hz, .band_index   bands -> f [Hz]
      .models, .wire_model                 segmented wires and ground, one model per band
      .findings                            modelling-rule findings of the model
      .antenna                             feedpoint impedance Z(f) through the
                                           engine-owned ResponseCache
      .feed                                the feed chain's two-ports
      .system                              Z at the radio, SWR, power flow, stress
      .evaluation                          all of the above as one Evaluation
      .far_field(f, angles)                patterns (only when asked)
    report_data(chain)                     what the decision report shows
                                           (:mod:`necflow.chain.report`)
      .variant(values)                     a new chain for changed fields, sharing
                                           the stages the change leaves alone

Every stage is a cached attribute: asked twice, computed once.  Every job
(evaluate, optimize, fit, trim, tolerance, robust scoring, alternatives,
batch) goes through a chain; none rebuilds a stage by hand.  Physics lives in
the layers below (:mod:`necflow.model`, :mod:`necflow.feed`,
:mod:`necflow.engine`, :mod:`necflow.analysis`); this module only orders it.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from functools import cached_property
from typing import Any

import numpy as np

from necflow.analysis import analyse
from necflow.analysis import cautions as find_cautions
from necflow.analysis.common_mode import (
    CommonMode,
    common_mode,
    common_mode_cautions,
    with_common_mode,
)
from necflow.analysis.stress_cautions import ratings_of
from necflow.analysis.tuning import chart_frequencies, tuning_chart
from necflow.catalog.bands import Band, resolve_bands
from necflow.chain.evaluation import Evaluation
from necflow.config.fields import apply, moves_wires
from necflow.config.schema import Design
from necflow.engine.far_field import FarField, average_gain_test, far_field
from necflow.engine.interpolate import ANCHORS, THRESHOLD, anchor_indices, band_estimate
from necflow.engine.pynec_adapter import load_impedance
from necflow.engine.response import ResponseCache, Solver
from necflow.errors import RulesBroken
from necflow.feed import FeedChain, build_chain
from necflow.model import WireModel, build_model, check_rules, check_variant


@dataclasses.dataclass(frozen=True)
class AntennaEstimate:
    """Feedpoint impedance from a few solved frequencies per band
    (:meth:`Chain.antenna_estimate`).

    Attributes
    ----------
    z : ndarray
        ``(nfreq,)`` impedance at every evaluated point [ohm].
    error : ndarray
        ``(nbands,)`` held-out relative error estimate of each band [-].
    solved : int
        Frequency points asked of the response cache.
    full : tuple of int
        Bands solved at every point (estimate above the threshold).
    """

    z: np.ndarray
    error: np.ndarray
    solved: int
    full: tuple


def band_points(bands: list[Band]) -> tuple[np.ndarray, np.ndarray]:
    """Concatenate the frequencies of all bands with the band index of each."""
    freqs = [b.frequencies for b in bands]
    index = [np.full(len(f), i) for i, f in enumerate(freqs)]
    return np.concatenate(freqs), np.concatenate(index)


class Chain:
    """One design through the stages of the pipeline.

    Parameters
    ----------
    design : Design
        A validated design (:func:`necflow.chain.load_design`).
    responses : ResponseCache, Solver or callable, optional
        Where antenna responses come from: a shared cache (a study's, a
        fit's), a solver (a new cache around it), or None for the engine.
    top_frequency_hz : float, optional
        Frequency the wires are segmented for (default: the top of the
        bands; a fit raises it to the top of its measured sweeps).
    density : float
        Segment density multiplier (2: the convergence check's model).
    """

    def __init__(self, design: Design, responses: ResponseCache | Solver | Callable | None = None,
                 *, top_frequency_hz: float | None = None, density: float = 1.0):
        self.design = design
        self.responses = (responses if isinstance(responses, ResponseCache)
                          else ResponseCache(responses))
        self.top_frequency_hz = top_frequency_hz
        self.density = density

    # -- frequencies -------------------------------------------------------

    @cached_property
    def bands(self) -> list[Band]:
        return resolve_bands(self.design)

    @cached_property
    def _points(self) -> tuple[np.ndarray, np.ndarray]:
        return band_points(self.bands)

    @property
    def frequency_hz(self) -> np.ndarray:
        """Every evaluated point [Hz], band after band."""
        return self._points[0]

    @property
    def band_index(self) -> np.ndarray:
        """Index into :attr:`bands` of each point."""
        return self._points[1]

    @property
    def f_min(self) -> float:
        return float(self.frequency_hz.min())

    @property
    def f_max(self) -> float:
        return float(self.frequency_hz.max())

    # -- the antenna -------------------------------------------------------

    @cached_property
    def models(self) -> tuple[WireModel, ...]:
        """One segmented wire model per band, aligned with :attr:`bands`.

        Each band's model is segmented for that band: its longest segment
        for the band's top frequency, its finest segment (beside the source
        and at junctions) bounded by the modelling rule at the band's lowest
        frequency.  One model for every band would hold the source segment
        at 1e-3 wavelength of the lowest band, too coarse at the highest
        ones where the feed point is kilohms.  With ``top_frequency_hz`` (a
        fit over a measured range) every band shares one model.
        """
        if self.top_frequency_hz is not None:
            m = build_model(self.design, self.top_frequency_hz, density=self.density)
            return tuple(m for _ in self.bands)
        out, seen = [], {}
        for b in self.bands:
            key = (b.low_hz, b.high_hz)
            if key not in seen:
                seen[key] = build_model(self.design, b.high_hz, density=self.density,
                                        f_min_hz=b.low_hz)
            out.append(seen[key])
        return tuple(out)

    def refined(self, density: float) -> Chain:
        """This design with ``density`` times the segments (the same
        responses cache)."""
        return Chain(self.design, self.responses, top_frequency_hz=self.top_frequency_hz,
                     density=self.density * density)

    @property
    def wire_model(self) -> WireModel:
        """The model of the band with the highest top frequency (the finest
        segmentation; the one the model summary describes)."""
        return self.models[int(np.argmax([b.high_hz for b in self.bands]))]

    @cached_property
    def findings(self) -> list:
        """Modelling-rule findings of every band's model over its band (one
        finding once, however many bands' models break it)."""
        out, seen = [], set()
        for m, b in self._distinct_models():
            for fd in check_rules(m, self.design, b.low_hz, b.high_hz):
                k = (fd.severity, fd.rule, getattr(fd, "wire", None), fd.message)
                if k not in seen:
                    seen.add(k)
                    out.append(fd)
        return out

    def _distinct_models(self) -> list[tuple[WireModel, Band]]:
        """Each distinct model with the widest band range it serves."""
        groups: dict[int, tuple[WireModel, float, float]] = {}
        for m, b in zip(self.models, self.bands):
            lo, hi = b.low_hz, b.high_hz
            if id(m) in groups:
                _, lo0, hi0 = groups[id(m)]
                lo, hi = min(lo, lo0), max(hi, hi0)
            groups[id(m)] = (m, lo, hi)
        return [(m, Band(name="all", low_hz=lo, high_hz=hi, points=2, weight=1.0))
                for m, lo, hi in groups.values()]

    def require_sound_model(self) -> None:
        """Raise :class:`RulesBroken` when the model breaks a rule at error
        level (before anything is solved)."""
        errors = [fd for fd in self.findings if fd.severity == "error"]
        if errors:
            raise RulesBroken(f"the model breaks {len(errors)} modelling rule"
                              f"{'s' if len(errors) > 1 else ''} at error level and is not "
                              "solved: its results would be doubtful; 'necflow check' lists "
                              "them", self.findings)

    def band_of(self, frequency_hz) -> np.ndarray:
        """Index of the band whose model serves each frequency: the band that
        holds it (the first such), else the nearest band edge's."""
        f = np.atleast_1d(np.asarray(frequency_hz, dtype=float))
        lo = np.array([b.low_hz for b in self.bands])
        hi = np.array([b.high_hz for b in self.bands])
        inside = (f[:, None] >= lo * (1 - 1e-12)) & (f[:, None] <= hi * (1 + 1e-12))
        gap = np.maximum(lo - f[:, None], f[:, None] - hi)
        return np.where(inside.any(axis=1), np.argmax(inside, axis=1), np.argmin(gap, axis=1))

    def _by_model(self, frequency_hz) -> list[tuple[WireModel, np.ndarray, np.ndarray]]:
        """Frequencies grouped by the model that serves them: (model, indexes
        into ``frequency_hz``, the distinct frequencies of the group)."""
        f = np.atleast_1d(np.asarray(frequency_hz, dtype=float))
        which = self.band_of(f)
        groups: dict[int, list[int]] = {}
        models = {}
        for i, k in enumerate(which):
            m = self.models[int(k)]
            groups.setdefault(id(m), []).append(i)
            models[id(m)] = m
        return [(models[g], np.array(idx), np.unique(f[idx])) for g, idx in groups.items()]

    @property
    def routed(self) -> bool:
        """True when the feed line's common-mode path is part of the model."""
        return self.design.route is not None

    def antenna_at(self, frequency_hz) -> np.ndarray:
        """Feedpoint impedance [ohm] at any frequencies, each through the
        model of its band, each distinct (model, frequency) asked of the
        response cache once.  With a route it is the impedance the line's
        differential mode sees, with the common-mode path in place."""
        f = np.atleast_1d(np.asarray(frequency_hz, dtype=float))
        if self.routed:
            return self._routed_at(f)[0]
        groups = self._by_model(f)
        solved = self.responses.lookup_each([m for m, _, _ in groups],
                                            [u for _, _, u in groups])
        out = np.empty(f.size, dtype=complex)
        for (_, idx, u), z in zip(groups, solved):
            out[idx] = np.asarray(z, dtype=complex)[np.searchsorted(u, f[idx])]
        return out

    @cached_property
    def antenna(self) -> np.ndarray:
        """Feedpoint impedance [ohm] at every evaluated point."""
        return self.antenna_at(self.frequency_hz)

    def antenna_estimate(self, anchors: int = ANCHORS,
                         threshold: float = THRESHOLD) -> AntennaEstimate:
        """Feedpoint impedance at every point from a few solved frequencies
        per band (:func:`necflow.engine.interpolate.band_estimate`); a band
        whose held-out error estimate is above ``threshold`` is solved at
        every point.  Not for a routed design (its line currents are needed
        at every point)."""
        if self.routed:
            raise ValueError("a routed design is solved at every point")
        f, bi = self.frequency_hz, self.band_index
        bands = [np.flatnonzero(bi == i) for i in range(len(self.bands))]
        picks = [idx[anchor_indices(idx.size, anchors)] for idx in bands]
        first = self.responses.lookup_each(list(self.models), [f[p] for p in picks])
        z = np.empty(f.size, dtype=complex)
        errors, full = [], []
        solved = sum(p.size for p in picks)
        for i, (idx, p, za) in enumerate(zip(bands, picks, first)):
            est = band_estimate(f[idx], np.searchsorted(idx, p), za)
            if est.error > threshold:
                full.append(i)
            else:
                z[idx] = est.z
            errors.append(est.error)
        if full:
            rest = self.responses.lookup_each([self.models[i] for i in full],
                                              [f[bands[i]] for i in full])
            for i, zr in zip(full, rest):
                z[bands[i]] = zr
                solved += bands[i].size - picks[i].size
        return AntennaEstimate(z, np.array(errors), solved, tuple(full))

    def screened(self, ground_kind: str = "reflection") -> Chain:
        """This chain with its models' ground solved as ``ground_kind`` (a nested
        study screens geometries over the reflection-coefficient ground, far
        cheaper than Sommerfeld-Norton; :mod:`necflow.optimize.strategy.screen`)."""
        out = Chain(self.design, self.responses, top_frequency_hz=self.top_frequency_hz,
                    density=self.density)
        for stage in ("bands", "_points"):
            if stage in self.__dict__:
                out.__dict__[stage] = self.__dict__[stage]
        out.__dict__["models"] = tuple(
            dataclasses.replace(m, ground=dataclasses.replace(m.ground, kind=ground_kind))
            for m in self.models)
        return out

    def _routed_at(self, f: np.ndarray) -> tuple[np.ndarray, dict[str, np.ndarray]]:
        """Impedance and probe currents per volt at ``f`` (routed designs)."""
        out = np.empty(f.size, dtype=complex)
        cur: dict[str, np.ndarray] = {}
        for m, idx, u in self._by_model(f):
            z, c = self.responses.lookup_routed(m, u)
            where = np.searchsorted(u, f[idx])
            out[idx] = z[where]
            for name, v in c.items():
                cur.setdefault(name, np.zeros(f.size, dtype=complex))[idx] = v[where]
        return out, cur

    @cached_property
    def common_mode(self) -> CommonMode | None:
        """Common-mode currents at the radio's power, the heat in the chokes
        and what is left for the antenna (None without a route)."""
        if not self.routed:
            return None
        _, per_volt = self._routed_at(self.frequency_hz)
        loads = {}
        for ld in self.wire_model.loads:
            loads[ld.name] = np.array([load_impedance(ld, float(fi))
                                       for fi in self.frequency_hz])
        return common_mode(self._ideal_system, per_volt, loads)

    def solve(self, on_step: Callable[[int, int | None, str], None] | None = None) -> None:
        """Solve the antenna response of every band now, one band's model at
        a time, calling ``on_step(done, total, text)`` before each (a
        command's progress); :attr:`antenna` then reads memory.  The same
        lookups :attr:`antenna` makes, so nothing is solved twice."""
        groups = self._by_model(self.frequency_hz)
        for k, (m, _, u) in enumerate(groups):
            if on_step is not None:
                names = [b.name for b, mb in zip(self.bands, self.models) if mb is m]
                on_step(k, len(groups), f"solving {', '.join(names)} ({u.size} frequencies)")
            if self.routed:
                self.responses.lookup_routed(m, u)
            else:
                self.responses.lookup_each([m], [u])

    def solve_requests(self) -> list[tuple[WireModel, np.ndarray]]:
        """The (model, distinct frequencies) pairs :attr:`antenna` asks the
        response cache for (see :func:`prefetch`)."""
        return [(m, u) for m, _, u in self._by_model(self.frequency_hz)]

    # -- the feed and the system --------------------------------------------

    @cached_property
    def feed(self) -> FeedChain:
        """The feed chain's elements, antenna side first."""
        return build_chain(self.design.feed, r_radio=self.design.radio.impedance,
                           bands=self.bands)

    @cached_property
    def _ideal_system(self):
        d = self.design
        return analyse(self.feed, self.frequency_hz, self.antenna, z_ref=d.radio.impedance,
                       power_w=d.radio.power)

    @cached_property
    def system(self):
        """Impedance at the radio, SWR, exact power flow and stress
        (:class:`necflow.analysis.SystemResponse`); with a route, the heat
        of the common-mode loads joins the budget
        (:func:`necflow.analysis.common_mode.with_common_mode`)."""
        if self.common_mode is None:
            return self._ideal_system
        return with_common_mode(self._ideal_system, self.common_mode)

    @cached_property
    def cautions(self) -> list[str]:
        d = self.design
        out = find_cautions(self.system, d.cautions.voltage, d.feed)
        if self.common_mode is not None:
            ratings = {el.id: el.power_rating for el in d.feed
                       if getattr(el, "power_rating", None) is not None}
            out += common_mode_cautions(self.common_mode, self.frequency_hz,
                                        d.cautions.common_mode_current, d.cautions.choke_heat,
                                        ratings)
        return out

    @cached_property
    def tuning(self) -> list[dict]:
        """The tuning chart: each tuner at each band's edges and centre
        (:func:`necflow.analysis.tuning.tuning_chart`), the feedpoint
        impedance at the centre interpolated along the band's points; empty
        without a tuner."""
        if not self.feed.has_tuner:
            return []
        f3 = chart_frequencies(self.bands)
        z = self.antenna
        z3 = np.empty(f3.size, dtype=complex)
        for i in range(len(self.bands)):
            sel = self.band_index == i
            fb, zb = self.frequency_hz[sel], z[sel]
            for j in range(3):
                fk = f3[3 * i + j]
                z3[3 * i + j] = np.interp(fk, fb, zb.real) + 1j * np.interp(fk, fb, zb.imag)
        d = self.design
        system = analyse(self.feed, f3, z3, z_ref=d.radio.impedance, power_w=d.radio.power)
        return tuning_chart(system, self.bands, d.report.worst_case_power, ratings_of(d.feed))

    @cached_property
    def evaluation(self) -> Evaluation:
        """Every stage of the design as one :class:`Evaluation`."""
        return Evaluation(design=self.design, bands=self.bands,
                          frequency_hz=self.frequency_hz, band_index=self.band_index,
                          model=self.wire_model, system=self.system,
                          findings=self.findings, cautions=self.cautions, feed=self.feed,
                          models=self.models, common_mode=self.common_mode,
                          tuning=self.tuning)

    # -- far field ---------------------------------------------------------

    def far_field(self, frequency_hz, angles) -> list[FarField]:
        """Patterns at ``frequency_hz``, each through the model of its band
        (the engine runs)."""
        return self._per_model(frequency_hz, lambda m, f: far_field(m, f, angles=angles))

    def average_gain_test(self, frequency_hz) -> np.ndarray:
        """Average gain of the lossless copy of each frequency's model (1 in
        free space, 2 over ground expected)."""
        return np.asarray(self._per_model(frequency_hz, average_gain_test), dtype=float)

    def _per_model(self, frequency_hz, run) -> list:
        f = np.atleast_1d(np.asarray(frequency_hz, dtype=float))
        out: list = [None] * f.size
        for m, idx, _ in self._by_model(f):
            for i, r in zip(idx, run(m, f[idx])):
                out[int(i)] = r
        return out

    # -- variants ----------------------------------------------------------

    def variant(self, values: dict[str, Any], *, checked: bool = True,
                keep_search: bool = False) -> Chain:
        """A chain for this design with the fields at ``values`` set (SI).

        A variant that changes only feed fields shares this chain's wire
        model, findings and antenna response (the same objects); one that
        moves wires or changes the ground is checked as a design
        (:func:`necflow.model.check_variant`) before anything is built.

        Raises
        ------
        ConfigError, ModelError
            An invalid value or combination, naming the field.
        """
        design = apply(self.design, values, keep_search=keep_search)
        out = Chain(design, self.responses, top_frequency_hz=self.top_frequency_hz,
                    density=self.density)
        moves = any(moves_wires(self.design, p) for p in values)
        if not moves:
            for stage in ("bands", "_points", "models", "findings", "antenna", "_routed"):
                if stage in self.__dict__:
                    out.__dict__[stage] = self.__dict__[stage]
        elif checked:
            check_variant(design)
        return out


def prefetch(chains: list[Chain]) -> None:
    """Ask the response cache of ``chains[0]`` for the antenna responses of
    all ``chains`` in one call, so that a solver with a worker pool solves
    them in parallel; each chain's :attr:`Chain.antenna` then reads memory."""
    if not chains:
        return
    pairs = {}
    for c in chains:
        for m, f in c.solve_requests():
            pairs[(m.key(), f.tobytes())] = (m, f)
    chains[0].responses.lookup_each([m for m, _ in pairs.values()],
                                    [f for _, f in pairs.values()])


def evaluate(design: Design, *, solver: ResponseCache | Solver | Callable | None = None,
             refuse_broken_rules: bool = False) -> Evaluation:
    """``Chain(design, solver).evaluation``, refusing first, with
    ``refuse_broken_rules``, a model that breaks a modelling rule at error
    level."""
    chain = Chain(design, solver)
    if refuse_broken_rules:
        chain.require_sound_model()
    return chain.evaluation


__all__ = ["AntennaEstimate", "Chain", "Evaluation", "band_points", "evaluate", "prefetch"]
