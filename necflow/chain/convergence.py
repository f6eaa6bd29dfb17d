"""Convergence check: does the answer change when the segments are doubled?

A method-of-moments model is only as good as its segmentation.  The check
solves the top frequency of each band (where segments are longest in
wavelengths) twice: with the design's model and with the same model refined
``REFINEMENT`` times (every segment length divided by it, see
:func:`necflow.model.build_model`), and reports the change of the feedpoint
impedance and of the SWR at the radio through the design's feed chain.

A change above the caution threshold means the model is not converged
there; the change understates the error left (see ``CAUTION_FRACTION``).  A
change at a high-impedance feed point that is almost all susceptance is the
capacitance of the source region (see :mod:`necflow.model.plan`), and such a
feed point is as sensitive to the real feed gap's and balun's capacitance.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from necflow.analysis.powerflow import analyse
from necflow.chain.stages import Chain
from necflow.config.schema import Design

#: Refinement of the check model: segments doubled everywhere.
REFINEMENT = 2.0
#: Relative change above which the check cautions.  The change on doubling
#: is a low estimate of the model's error: for a half-wave dipole the
#: design's model was 1.6 % from a converged one (uniform segments of a few
#: millimetres) while doubling changed it 0.56 %, about a third (the error
#: shrinks by about 0.65 per doubling, not 0.5; measured with the engine).
#: 2 % therefore flags a model whose error may reach several percent, the
#: spread that ground constants and wire lengths measured to a centimetre or
#: two already bring to an HF wire antenna (a judgement, not a published
#: figure).
CAUTION_FRACTION = 0.02
#: Share of the admittance change that must be susceptance for a caution to
#: name the source-region capacitance as its cause.
_SUSCEPTANCE_SHARE = 0.9


def relative_change(a, b) -> np.ndarray:
    """``|b - a| / |a|`` elementwise (``nan`` where ``a`` is 0 or not finite)."""
    a = np.asarray(a)
    b = np.asarray(b)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.abs(b - a) / np.abs(a)
    return np.where(np.isfinite(out), out, np.nan)


@dataclass(frozen=True)
class BandConvergence:
    """The convergence figures of one band at its top frequency.

    Attributes
    ----------
    band : str
    frequency_hz : float
        Top edge of the band [Hz].
    z, z_refined : complex
        Feedpoint impedance of the design's model and of the refined one [ohm].
    z_change : float
        ``|z_refined - z| / |z|`` [1].
    swr, swr_refined : float
        SWR at the radio through the design's feed chain with each [1].
    swr_change : float
        ``|swr_refined - swr| / swr`` [1].
    caution : bool
        True when either change exceeds the threshold.
    """

    band: str
    frequency_hz: float
    z: complex
    z_refined: complex
    z_change: float
    swr: float
    swr_refined: float
    swr_change: float
    caution: bool

    def shunt_capacitance_f(self) -> float | None:
        """The change as a shunt capacitance at the feed point [F], when the
        admittance change is almost all susceptance; else None."""
        dy = 1 / self.z_refined - 1 / self.z
        if abs(dy.imag) < _SUSCEPTANCE_SHARE * abs(dy):
            return None
        return dy.imag / (2 * math.pi * self.frequency_hz)

    def caution_text(self, threshold: float) -> str:
        """One line for the user."""
        text = (f"{self.band}: at {self.frequency_hz / 1e6:.4g} MHz the feedpoint impedance "
                f"changes {100 * self.z_change:.1f} % and the SWR at the radio "
                f"{100 * self.swr_change:.1f} % when the segments are doubled (above "
                f"{100 * threshold:g} %): the model has not converged there")
        c = self.shunt_capacitance_f()
        if c is not None:
            text += (f"; the change is a shunt capacitance of {c * 1e15:.0f} fF at the source: "
                     f"a feed point of {abs(self.z):.0f} ohm is this sensitive to any "
                     "capacitance across it, the feed gap's and the balun's included")
        return text


@dataclass(frozen=True)
class ConvergenceReport:
    """Result of :func:`check_convergence`.

    Attributes
    ----------
    bands : tuple of BandConvergence
        In the order of the design's bands.
    segments, segments_refined : int
        Segment counts of the two models.
    refinement : float
        Factor the segment lengths were divided by.
    threshold : float
        Caution threshold of both changes [1].
    """

    bands: tuple[BandConvergence, ...]
    segments: int
    segments_refined: int
    refinement: float
    threshold: float

    @property
    def cautions(self) -> list[str]:
        """One line per band above the threshold."""
        return [b.caution_text(self.threshold) for b in self.bands if b.caution]

    def format(self) -> list[str]:
        """Plain text table lines."""
        lines = [f"Convergence at the top of each band: {self.segments} segments against "
                 f"{self.segments_refined} (lengths divided by {self.refinement:g})",
                 f"{'band':<8} {'MHz':>8} {'Z [ohm]':>18} {'Z refined':>18} {'change':>7} "
                 f"{'SWR':>7} {'refined':>7} {'change':>7}"]
        for b in self.bands:
            lines.append(f"{b.band:<8} {b.frequency_hz / 1e6:>8.4f} {_z(b.z):>18} "
                         f"{_z(b.z_refined):>18} {_pct(b.z_change):>7} {b.swr:>7.3f} "
                         f"{b.swr_refined:>7.3f} {_pct(b.swr_change):>7}")
        return lines

    def to_dict(self) -> dict:
        """JSON-ready record (SI: Hz, ohm; changes as fractions; ``None`` for
        a value that is not finite)."""
        return {
            "refinement": self.refinement,
            "threshold": self.threshold,
            "segments": self.segments,
            "segments_refined": self.segments_refined,
            "bands": [{
                "band": b.band, "frequency_hz": b.frequency_hz,
                "z_ohm": [b.z.real, b.z.imag],
                "z_refined_ohm": [b.z_refined.real, b.z_refined.imag],
                "z_change": _finite(b.z_change),
                "swr": _finite(b.swr), "swr_refined": _finite(b.swr_refined),
                "swr_change": _finite(b.swr_change),
                "caution": b.caution,
            } for b in self.bands],
            "cautions": self.cautions,
        }


def _finite(x: float) -> float | None:
    return float(x) if math.isfinite(x) else None


def _z(z: complex) -> str:
    sign = "+" if z.imag >= 0 else "-"
    return f"{z.real:.1f} {sign} j{abs(z.imag):.1f}"


def _pct(x: float) -> str:
    return f"{100 * x:.2f} %" if math.isfinite(x) else "-"


def check_convergence(design: Design, *, solver: Callable | None = None,
                      refinement: float = REFINEMENT,
                      threshold: float = CAUTION_FRACTION) -> ConvergenceReport:
    """Solve the top of each band with the design's model and a refined one.

    Parameters
    ----------
    design : Design
        A validated design.
    solver : callable, optional
        ``solver(model, frequency_hz) -> z_feedpoint``; defaults to the
        engine (:func:`necflow.engine.solve_feedpoint`).
    refinement : float
        Every segment length of the check model is divided by this.
    threshold : float
        Relative change of impedance or SWR above which a band is flagged.

    Returns
    -------
    ConvergenceReport

    Raises
    ------
    ConfigError
        When the refined model needs more segments than
        ``design.model.max_segments`` (field ``model.max_segments``).

    References
    ----------
    .. [1] G. J. Burke and A. J. Poggio, *Numerical Electromagnetics Code
       (NEC) - Method of Moments*, Part III, LLNL 1981 (segment-length
       guidelines; checking a model by changing its segmentation); from
       memory.
    """
    chain = Chain(design, solver)
    fine = chain.refined(refinement)
    # every band's model built (and sized against the limits) before any solve
    model, fine_model = (c.wire_model for c in (chain, fine) if c.models)
    bands = chain.bands
    f_top = np.array([b.high_hz for b in bands], dtype=float)
    z = chain.antenna_at(f_top)
    z_fine = fine.antenna_at(f_top)
    d = design
    swr = analyse(chain.feed, f_top, z, z_ref=d.radio.impedance, power_w=d.radio.power).swr
    swr_fine = analyse(chain.feed, f_top, z_fine, z_ref=d.radio.impedance,
                       power_w=d.radio.power).swr
    dz = relative_change(z, z_fine)
    ds = relative_change(swr, swr_fine)
    rows = tuple(BandConvergence(
        band=b.name, frequency_hz=float(f), z=complex(z[i]), z_refined=complex(z_fine[i]),
        z_change=float(dz[i]), swr=float(swr[i]), swr_refined=float(swr_fine[i]),
        swr_change=float(ds[i]),
        caution=bool(not (dz[i] <= threshold and ds[i] <= threshold)))
        for i, (b, f) in enumerate(zip(bands, f_top)))
    return ConvergenceReport(rows, model.segment_count, fine_model.segment_count, float(refinement),
                             float(threshold))
