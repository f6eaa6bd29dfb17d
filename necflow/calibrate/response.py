"""Model reflection at measured frequencies, reusing solves.

:class:`Responder` turns a design variant into the reflection coefficient
where a sweep was taken (at the feed point, or at the radio through the feed
chain).  The antenna's response comes through the engine's response cache
keyed by the wire model (each variant a :class:`necflow.chain.Chain`), so
variants that change only the feed chain cost no
solve.  Every variant is segmented for the same top frequency, so a fitted
geometry is compared with the same segmentation rules throughout.
"""

from __future__ import annotations

import numpy as np

from necflow.chain import Chain
from necflow.config.schema import Design
from necflow.engine.response import ResponseCache
from necflow.measure.types import Measurement, gamma_from_z


class Responder:
    """Reflection of design variants at measured frequencies.

    Parameters
    ----------
    design : Design
        The base design (its bands set the segmentation's top frequency).
    measurements : list of Measurement
        Their frequencies raise that top frequency when they reach higher.
    cache : ResponseCache, optional
        Shared antenna-response cache; a new one by default.
    """

    def __init__(self, design: Design, measurements: list[Measurement] = (),
                 cache: ResponseCache | None = None):
        self.cache = cache if cache is not None else ResponseCache()
        tops = [b.high_hz for b in Chain(design).bands]
        tops += [float(m.frequency_hz.max()) for m in measurements]
        self.f_max = max(tops)

    @property
    def solves(self) -> int:
        """Distinct antenna solves (frequency sets) so far."""
        return self.cache.misses

    def chain(self, design: Design) -> Chain:
        """The design's chain, segmented for the measured range, on this cache."""
        return Chain(design, self.cache, top_frequency_hz=self.f_max)

    def z_feedpoint(self, design: Design, f) -> np.ndarray:
        """Feedpoint impedance [ohm] of ``design`` at ``f`` [Hz] (cached)."""
        return self.chain(design).antenna_at(f)

    def z_radio(self, design: Design, f, z_feed) -> np.ndarray:
        """Impedance at the radio end of the feed chain [ohm]."""
        return self.chain(design).feed.input_impedance(np.asarray(f, dtype=float), z_feed)

    def impedance(self, design: Design, f, at: str) -> np.ndarray:
        """Impedance [ohm] at ``at`` ("radio" or "feedpoint")."""
        z = self.z_feedpoint(design, f)
        return z if at == "feedpoint" else self.z_radio(design, f, z)

    def gamma(self, design: Design, m: Measurement) -> np.ndarray:
        """Model reflection against the sweep's reference where it was taken."""
        return gamma_from_z(self.impedance(design, m.frequency_hz, m.at), m.z_ref)


def gammas(responder: Responder, design: Design, measurements: list[Measurement]) -> list:
    """Model reflection for each sweep, with one antenna solve over the union
    of their frequencies."""
    f_all = np.unique(np.concatenate([m.frequency_hz for m in measurements]))
    z_feed = responder.z_feedpoint(design, f_all)
    out = []
    for m in measurements:
        z = z_feed[np.searchsorted(f_all, m.frequency_hz)]
        if m.at == "radio":
            z = responder.z_radio(design, m.frequency_hz, z)
        out.append(gamma_from_z(z, m.z_ref))
    return out
