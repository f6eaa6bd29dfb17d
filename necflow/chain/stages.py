"""The staged chain: one design through every stage, each computed once.

::

    Chain(design)
      .bands, .frequency_hz, .band_index   bands -> f [Hz]
      .wire_model                          segmented wires and ground
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

from collections.abc import Callable
from functools import cached_property
from typing import Any

import numpy as np

from necflow.analysis import analyse
from necflow.analysis import cautions as find_cautions
from necflow.catalog.bands import Band, resolve_bands
from necflow.chain.evaluation import Evaluation
from necflow.config.fields import GEOMETRY_ROOTS, apply
from necflow.config.schema import Design
from necflow.engine.far_field import FarField, average_gain_test, far_field
from necflow.engine.response import ResponseCache, Solver
from necflow.errors import RulesBroken
from necflow.feed import FeedChain, build_chain
from necflow.model import WireModel, build_model, check_rules, check_variant


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
    def wire_model(self) -> WireModel:
        """The segmented wire model for the top frequency."""
        top = self.top_frequency_hz if self.top_frequency_hz is not None else self.f_max
        return build_model(self.design, top, density=self.density)

    def refined(self, density: float) -> Chain:
        """This design with ``density`` times the segments (the same
        responses cache)."""
        return Chain(self.design, self.responses, top_frequency_hz=self.top_frequency_hz,
                     density=self.density * density)

    @cached_property
    def findings(self) -> list:
        """Modelling-rule findings of the wire model over the bands."""
        return check_rules(self.wire_model, self.design, self.f_min, self.f_max)

    def require_sound_model(self) -> None:
        """Raise :class:`RulesBroken` when the model breaks a rule at error
        level (before anything is solved)."""
        errors = [fd for fd in self.findings if fd.severity == "error"]
        if errors:
            raise RulesBroken(f"the model breaks {len(errors)} modelling rule"
                              f"{'s' if len(errors) > 1 else ''} at error level and is not "
                              "solved: its results would be doubtful; 'necflow check' lists "
                              "them", self.findings)

    def antenna_at(self, frequency_hz) -> np.ndarray:
        """Feedpoint impedance [ohm] at any frequencies, each distinct one
        asked of the response cache once."""
        f = np.asarray(frequency_hz, dtype=float)
        unique, inverse = np.unique(f, return_inverse=True)
        return np.asarray(self.responses.lookup(self.wire_model, unique), dtype=complex)[inverse]

    @cached_property
    def antenna(self) -> np.ndarray:
        """Feedpoint impedance [ohm] at every evaluated point."""
        return self.antenna_at(self.frequency_hz)

    # -- the feed and the system --------------------------------------------

    @cached_property
    def feed(self) -> FeedChain:
        """The feed chain's elements, antenna side first."""
        return build_chain(self.design.feed, r_radio=self.design.radio.impedance)

    @cached_property
    def system(self):
        """Impedance at the radio, SWR, exact power flow and stress
        (:class:`necflow.analysis.SystemResponse`)."""
        d = self.design
        return analyse(self.feed, self.frequency_hz, self.antenna, z_ref=d.radio.impedance,
                       power_w=d.radio.power)

    @cached_property
    def cautions(self) -> list[str]:
        d = self.design
        return find_cautions(self.system, d.cautions.voltage, d.feed)

    @cached_property
    def evaluation(self) -> Evaluation:
        """Every stage of the design as one :class:`Evaluation`."""
        return Evaluation(design=self.design, bands=self.bands,
                          frequency_hz=self.frequency_hz, band_index=self.band_index,
                          model=self.wire_model, system=self.system,
                          findings=self.findings, cautions=self.cautions, feed=self.feed)

    # -- far field ---------------------------------------------------------

    def far_field(self, frequency_hz, angles) -> list[FarField]:
        """Patterns of the wire model at ``frequency_hz`` (the engine runs)."""
        return far_field(self.wire_model, frequency_hz, angles=angles)

    def average_gain_test(self, frequency_hz) -> np.ndarray:
        """Average gain of the model's lossless copy (1 in free space, 2 over
        ground expected)."""
        return average_gain_test(self.wire_model, frequency_hz)

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
        moves = any(p.split(".")[0] in GEOMETRY_ROOTS for p in values)
        if not moves:
            for stage in ("bands", "_points", "wire_model", "findings", "antenna"):
                if stage in self.__dict__:
                    out.__dict__[stage] = self.__dict__[stage]
        elif checked:
            check_variant(design)
        return out


def evaluate(design: Design, *, solver: ResponseCache | Solver | Callable | None = None,
             refuse_broken_rules: bool = False) -> Evaluation:
    """``Chain(design, solver).evaluation``, refusing first, with
    ``refuse_broken_rules``, a model that breaks a modelling rule at error
    level."""
    chain = Chain(design, solver)
    if refuse_broken_rules:
        chain.require_sound_model()
    return chain.evaluation


__all__ = ["Chain", "Evaluation", "band_points", "evaluate"]
