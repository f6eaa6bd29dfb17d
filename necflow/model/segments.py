"""Segment length from the frequency and the design's model settings."""

from __future__ import annotations

from scipy.constants import speed_of_light

from necflow.config.schema import Design


def target_segment_length(design: Design, f_max_hz: float) -> float:
    """Longest segment [m]: the wavelength at ``f_max_hz`` divided by
    ``design.model.segments_per_wavelength``.

    References
    ----------
    .. [1] G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code
       (NEC) - Method of Moments*, Part III, LLNL 1981 (segment length below
       about 0.1 wavelength, 0.05 in critical regions); from memory.
    """
    return speed_of_light / f_max_hz / design.model.segments_per_wavelength
