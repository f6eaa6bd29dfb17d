"""Model against measurement: per-band lowest-SWR frequencies and a plot.

For each band a sweep covers, the measured and the modelled frequency of
the lowest SWR (on the sweep's own frequencies, refined by a parabola in
|Gamma|^2) and the shift between them.  The model is evaluated where the
sweep was taken (radio or feed point) against the sweep's reference.
"""

from __future__ import annotations

from dataclasses import dataclass

import matplotlib
import numpy as np
from matplotlib.figure import Figure

from necflow.calibrate.response import Responder, gammas
from necflow.calibrate.trim import swr_minimum
from necflow.catalog.bands import resolve_bands
from necflow.measure.types import Measurement, swr_from_mag


@dataclass(frozen=True)
class BandComparison:
    """One band of one sweep: frequencies [Hz], SWR [1]."""

    source: str
    band: str
    measured_f_min_hz: float
    model_f_min_hz: float
    measured_swr_min: float
    model_swr_min: float

    @property
    def shift_hz(self) -> float:
        """Measured minus modelled lowest-SWR frequency [Hz]."""
        return self.measured_f_min_hz - self.model_f_min_hz


def compare(design, measurements: list[Measurement], responder=None):
    """Per band and sweep, measured versus modelled lowest SWR.

    Returns
    -------
    (rows, model_mags)
        ``rows`` a list of :class:`BandComparison`; ``model_mags`` the model
        |Gamma| at each sweep's frequencies (for plots).
    """

    responder = responder or Responder(design, measurements)
    model = [np.abs(g) for g in gammas(responder, design, measurements)]
    rows = []
    for m, mg in zip(measurements, model):
        for b in resolve_bands(design):
            sel = (m.frequency_hz >= b.low_hz) & (m.frequency_hz <= b.high_hz)
            if sel.sum() < 3:
                continue
            f = m.frequency_hz[sel]
            fm, _ = swr_minimum(f, m.gamma_mag[sel])
            fo, _ = swr_minimum(f, mg[sel])
            rows.append(BandComparison(m.source, b.name, fm, fo,
                                       float(swr_from_mag(m.gamma_mag[sel]).min()),
                                       float(swr_from_mag(mg[sel]).min())))
    return rows, model


def overlay_figure(measurements: list[Measurement], model_mags: list, *, title: str = "",
                   calibrated_mags: list | None = None):
    """SWR of each sweep against the model (and the calibrated model), one panel per sweep."""
    matplotlib.use("Agg", force=False)

    n = len(measurements)
    fig = Figure(figsize=(5.0 * min(n, 2), 3.2 * int(np.ceil(n / 2))), layout="constrained")
    for i, (m, mg) in enumerate(zip(measurements, model_mags)):
        ax = fig.add_subplot(int(np.ceil(n / 2)), min(n, 2), i + 1)
        fm = m.frequency_hz / 1e6
        ax.plot(fm, np.minimum(m.swr, 20), "o", ms=3, label="measured")
        ax.plot(fm, np.minimum(swr_from_mag(mg), 20), "-", label="model")
        if calibrated_mags is not None:
            ax.plot(fm, np.minimum(swr_from_mag(calibrated_mags[i]), 20), "--",
                    label="calibrated model")
        ax.set_title(f"{m.source} (at the {m.at})", fontsize=9)
        ax.set_xlabel("frequency [MHz]")
        ax.set_ylabel(f"SWR ({m.z_ref:g} ohm)")
        ax.grid(alpha=0.3)
        ax.legend(fontsize=7)
    if title:
        fig.suptitle(title, fontsize=11)
    return fig
