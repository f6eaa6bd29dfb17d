"""Segment lengths from the frequency and the design's model settings."""

from __future__ import annotations

from scipy.constants import speed_of_light

from necflow.catalog.bands import resolve_bands
from necflow.config.schema import Design
from necflow.model.geometry import geometry
from necflow.model.plan import Grading

#: Growth of the segment length per metre away from the source or a
#: junction: neighbouring segments differ by about 10 %, well inside the
#: guide's "nearly equal" at junctions (the rule check flags a factor 2);
#: faster growth costs accuracy (see :mod:`necflow.model.plan`).
GROWTH = 0.1
#: Finest segment as a multiple of the wire radius.  The thin-wire kernel
#: needs segment length / radius >= 8 (NEC-2 guide); 16 keeps the finest
#: segment of the twice-refined model of the convergence check at 8.
FINEST_RADII = 16.0
#: Finest segment in wavelengths at the lowest frequency of the design's
#: bands: the guide's lower limit (about 1e-3 wavelength; shorter segments
#: lose precision as the constant and cosine terms of the current expansion
#: become alike).
FINEST_WAVELENGTHS = 1e-3


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


def lowest_frequency(design: Design, f_max_hz: float, f_min_hz: float | None = None) -> float:
    """Lowest frequency [Hz] the model is solved at: ``f_min_hz`` when given
    (a model made for one band), else the lowest band edge (``f_max_hz`` if
    that is lower)."""
    if f_min_hz is not None:
        return min(f_min_hz, f_max_hz)
    return min([f_max_hz, *(b.low_hz for b in resolve_bands(design))])


def finest_segment_length(design: Design, f_max_hz: float,
                          f_min_hz: float | None = None) -> float:
    """Segment length [m] beside the source and at junctions.

    As short as the modelling rules allow, because at a high-impedance feed
    point the impedance keeps changing with the length of the segments
    around the source (see :mod:`necflow.model.plan`): ``FINEST_RADII``
    times the thickest wire's radius, and ``FINEST_WAVELENGTHS`` at the
    lowest frequency, whichever is longer.

    References
    ----------
    .. [1] G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code
       (NEC) - Method of Moments*, Part III, LLNL 1981 (segment length above
       about 1e-3 wavelength; segment length / radius above about 8 with the
       thin-wire kernel); from memory.
    """
    spans, _ = geometry(design)
    radius = max(w.radius for w in spans)
    f_low = lowest_frequency(design, f_max_hz, f_min_hz)
    return max(FINEST_RADII * radius, FINEST_WAVELENGTHS * speed_of_light / f_low)


#: Segment length at junctions (bends, branches, radius steps) as a fraction
#: of the longest segment.  Measured with the engine on the example delta
#: loop (three bends) at 14.35 MHz: the change on doubling the segments is
#: 0.68 % without refinement at the bends, 0.27 % at a quarter and 0.26 % at
#: the source's finest length, which takes twice the segments.
JUNCTION_FRACTION = 0.25


def grading(design: Design, f_max_hz: float, density: float = 1.0,
            f_min_hz: float | None = None) -> Grading:
    """The design's segment grading for solves from ``f_min_hz`` (default:
    the lowest band edge) up to ``f_max_hz``.

    Longest segment from :func:`target_segment_length`, finest from
    :func:`finest_segment_length`, growth ``GROWTH``; every length divided
    by ``density`` (2 is the convergence check's refined model).
    """
    longest = target_segment_length(design, f_max_hz)
    return Grading(longest, finest_segment_length(design, f_max_hz, f_min_hz), GROWTH,
                   JUNCTION_FRACTION * longest).refined(density)
