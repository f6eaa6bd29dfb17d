"""Static plots (PNG) of an evaluation."""

from __future__ import annotations

import matplotlib
import numpy as np
from matplotlib.figure import Figure

from necflow import fileio


def swr_figure(evaluation):
    """SWR at the radio against frequency, one panel per band, the limit drawn.

    Returns a matplotlib Figure (not shown, not saved).
    """
    matplotlib.use("Agg", force=False)

    bands = evaluation.bands
    n = len(bands)
    cols = min(n, 3)
    rows = int(np.ceil(n / cols))
    fig = Figure(figsize=(4.2 * cols, 3.0 * rows), layout="constrained")
    limit = evaluation.design.goal.swr_limit
    swr = np.asarray(evaluation.system.swr)
    top = float(np.clip(np.nanmax(swr), 2.0 * limit, 10.0))
    for i, band in enumerate(bands):
        ax = fig.add_subplot(rows, cols, i + 1)
        sel = evaluation.band_index == i
        f_mhz = evaluation.frequency_hz[sel] / 1e6
        s = swr[sel]
        ax.plot(f_mhz, np.minimum(s, top), marker=".", lw=1.5)
        if np.any(s > top):
            ax.text(0.5, 0.9, f"off scale: SWR up to {s.max():.3g} (min {s.min():.3g})",
                    transform=ax.transAxes, ha="center", fontsize=8, color="tab:red")
        ax.axhline(limit, color="tab:red", ls="--", lw=1, label=f"limit {limit:g}")
        ax.set_ylim(1.0, top)
        ax.set_xlim(f_mhz.min(), f_mhz.max())
        ax.set_title(f"{band.name}  ({band.low_hz / 1e6:g}-{band.high_hz / 1e6:g} MHz)",
                     fontsize=10)
        ax.set_xlabel("frequency [MHz]")
        ax.set_ylabel("SWR at the radio")
        ax.grid(alpha=0.3)
        if i == 0:
            ax.legend(fontsize=8, loc="upper right")
    fig.suptitle(f"{evaluation.design.name}: SWR "
                 f"({evaluation.design.radio.impedance:g} ohm reference)", fontsize=11)
    return fig


def save_swr_png(evaluation, path) -> None:
    fileio.save_figure(swr_figure(evaluation), path, dpi=110)
