"""The thin chain on top: design -> wire model -> solve -> feed chain -> analysis.

Everything here is orchestration; the physics lives in :mod:`necflow.model`,
:mod:`necflow.engine`, :mod:`necflow.feed` and :mod:`necflow.analysis`.
Inputs are validated (by :func:`necflow.config.load.load_design`) before the
first expensive step, and the solver is asked for each distinct frequency
once even when bands overlap.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from necflow.errors import RulesBroken
from necflow.catalog.bands import Band, resolve_bands
from necflow.config.schema import Design

Solver = Callable[..., np.ndarray]


@dataclass(frozen=True)
class BandSummary:
    """Per-band figures of one evaluation (frequencies in Hz, losses in dB)."""

    band: str
    low_hz: float
    high_hz: float
    weight: float
    swr_min: float
    frequency_swr_min_hz: float
    swr_low_edge: float
    swr_high_edge: float
    swr_max: float
    loss_db_mean: float
    loss_db_max: float
    fraction_within_limit: float


@dataclass(frozen=True)
class Evaluation:
    """Result of evaluating one design.

    Attributes
    ----------
    design : Design
    bands : list of Band
    frequency_hz : ndarray, shape (n,)
        All evaluated points, band after band.
    band_index : ndarray of int, shape (n,)
        Index into ``bands`` of each point.
    model : WireModel
        The segmented wire model that was solved.
    system : SystemResponse
        Feed-chain analysis over all points (impedances [ohm], powers [W]).
    findings : list
        Modelling-rule findings for the model.
    cautions : list of str
        One-line cautions (high voltage, ratings exceeded).
    """

    design: Design
    bands: list[Band]
    frequency_hz: np.ndarray
    band_index: np.ndarray
    model: object
    system: object
    findings: list = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)

    def band_summaries(self) -> list[BandSummary]:
        """Lowest SWR and where, SWR at the edges and mean loss, per band."""
        out = []
        swr = np.asarray(self.system.swr)
        total = np.asarray(self.system.loss_db["total"])
        limit = self.design.goal.swr_limit
        for i, band in enumerate(self.bands):
            sel = self.band_index == i
            s, f, t = swr[sel], self.frequency_hz[sel], total[sel]
            k = int(np.argmin(s))
            out.append(BandSummary(
                band=band.name, low_hz=band.low_hz, high_hz=band.high_hz, weight=band.weight,
                swr_min=float(s[k]), frequency_swr_min_hz=float(f[k]),
                swr_low_edge=float(s[0]), swr_high_edge=float(s[-1]), swr_max=float(s.max()),
                loss_db_mean=float(t.mean()), loss_db_max=float(t.max()),
                fraction_within_limit=float(np.mean(s <= limit))))
        return out


def band_points(bands: list[Band]) -> tuple[np.ndarray, np.ndarray]:
    """Concatenate the frequencies of all bands with the band index of each."""
    freqs = [b.frequencies for b in bands]
    index = [np.full(len(f), i) for i, f in enumerate(freqs)]
    return np.concatenate(freqs), np.concatenate(index)


def feedpoint_response(model, frequency_hz: np.ndarray, solver: Solver | None = None) -> np.ndarray:
    """Feedpoint impedance at every frequency, solving each distinct one once."""
    if solver is None:
        from necflow.engine import solve_feedpoint as solver
    unique, inverse = np.unique(frequency_hz, return_inverse=True)
    z = np.asarray(solver(model, unique), dtype=complex)
    return z[inverse]


def evaluate(design: Design, *, solver: Solver | None = None,
             refuse_broken_rules: bool = False) -> Evaluation:
    """Evaluate a validated design over its bands.

    Parameters
    ----------
    design : Design
        As returned by :func:`necflow.config.load.load_design`.
    solver : callable, optional
        ``solver(model, frequency_hz) -> z_feedpoint``; defaults to the
        PyNEC adapter.  Tests pass stored responses here.
    refuse_broken_rules : bool
        Raise :class:`~necflow.errors.RulesBroken` before solving when the
        model breaks a modelling rule at error level (``necflow evaluate``
        does, as ``necflow check`` reports them).
    """
    from necflow.analysis import analyse, cautions as find_cautions
    from necflow.feed import build_chain
    from necflow.model import build_model, check_rules

    bands = resolve_bands(design)
    f, band_index = band_points(bands)
    f_min, f_max = float(f.min()), float(f.max())
    model = build_model(design, f_max)
    findings = check_rules(model, design, f_min, f_max)
    errors = [fd for fd in findings if fd.severity == "error"]
    if refuse_broken_rules and errors:
        raise RulesBroken(f"the model breaks {len(errors)} modelling rule"
                          f"{'s' if len(errors) > 1 else ''} at error level and is not "
                          "solved: its results would be doubtful; 'necflow check' lists them",
                          findings)
    chain = build_chain(design.feed, r_radio=design.radio.impedance)
    z_feed = feedpoint_response(model, f, solver)
    system = analyse(chain, f, z_feed, z_ref=design.radio.impedance,
                     power_w=design.radio.power)
    notes = find_cautions(system, design.cautions.voltage, design.feed)
    return Evaluation(design=design, bands=bands, frequency_hz=f, band_index=band_index,
                      model=model, system=system, findings=findings, cautions=notes)
