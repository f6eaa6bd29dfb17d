"""What an evaluation of one design holds, and its per-band summary."""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from necflow.catalog.bands import Band
from necflow.config.schema import Design
from necflow.feed import FeedChain


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
    feed : FeedChain
        The feed chain's two-ports (the design's ``feed``).
    models : tuple of WireModel
        The model of each band (``model`` is the top band's).
    common_mode : CommonMode or None
        With a route: currents on the line's outside and heat in its chokes
        at the radio's power (:mod:`necflow.analysis.common_mode`).
    tuning : list of dict
        The tuning chart of the tuners in the chain
        (:func:`necflow.analysis.tuning.tuning_chart`); empty without one.
    """

    design: Design
    bands: list[Band]
    frequency_hz: np.ndarray
    band_index: np.ndarray
    model: object
    system: object
    findings: list = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)
    feed: FeedChain | None = None
    models: tuple = ()
    common_mode: object = None
    tuning: list = field(default_factory=list)

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
