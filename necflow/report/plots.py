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


def tolerance_figure(result, title: str = ""):
    """SWR spread per band of a tolerance study (5-95 % of cases shaded,
    median, nominal, limit) on one scale for all bands, from SWR 1 to a
    little above the largest 95th percentile or nominal value (between twice
    and ten times the limit); what lies above is named in its panel."""
    matplotlib.use("Agg", force=False)

    n = len(result.bands)
    cols = min(n, 3)
    rows = int(np.ceil(n / cols))
    fig = Figure(figsize=(4.2 * cols, 3.0 * rows + 0.5), layout="constrained")
    limit = result.swr_limit
    swr = np.asarray(result.swr, dtype=float)
    p5, p50, p95 = np.percentile(swr, [5, 50, 95], axis=0)
    nominal = np.asarray(result.nominal_swr, dtype=float)
    highest = float(np.nanmax(np.r_[p95, nominal])) if swr.size else limit
    top = float(np.clip(1.1 * highest, 2.0 * limit, 10.0 * limit))
    for i, b in enumerate(result.bands):
        ax = fig.add_subplot(rows, cols, i + 1)
        sel = result.band_index == i
        fm = result.frequency_hz[sel] / 1e6
        ax.fill_between(fm, np.minimum(p5[sel], top), np.minimum(p95[sel], top), alpha=0.3,
                        color="tab:blue", label="5-95 % of cases" if i == 0 else None)
        ax.plot(fm, np.minimum(p50[sel], top), lw=1.5, color="tab:blue",
                label="median" if i == 0 else None)
        ax.plot(fm, np.minimum(nominal[sel], top), "k--", lw=1,
                label="nominal" if i == 0 else None)
        ax.axhline(limit, color="tab:red", lw=1, label=f"limit {limit:g}" if i == 0 else None)
        over = [f"{what} to {v.max():.3g}" for what, v in
                (("95 %", p95[sel]), ("median", p50[sel]), ("nominal", nominal[sel]))
                if np.any(v > top)]
        if over:
            ax.text(0.5, 0.96, "off scale: " + ", ".join(over), transform=ax.transAxes,
                    ha="center", va="top", fontsize=8, color="tab:red")
        ax.set_ylim(1.0, top)
        ax.set_xlim(fm.min(), fm.max())
        ax.set_title(f"{b.name}", fontsize=10)
        ax.set_xlabel("frequency [MHz]")
        ax.set_ylabel("SWR at the radio")
        ax.grid(alpha=0.3)
    fig.legend(loc="outside lower center", ncol=4, fontsize=8)
    fig.suptitle(title or f"tolerance: {swr.shape[0]} cases, seed {result.seed}",
                 fontsize=11)
    return fig


def batch_figure(title: str, labels: list[str], cost: list[float], worst_swr: list[float]):
    """Cost and worst SWR of every cell of a batch, each cell labelled by its
    matrix values."""
    matplotlib.use("Agg", force=False)

    n = len(labels)
    lines = max((lab.count("\n") + 1 for lab in labels), default=1)
    fig = Figure(figsize=(max(5.0, 1.1 * n + 1.5), 4.6 + 0.25 * lines), layout="constrained")
    ax1, ax2 = fig.subplots(2, 1, sharex=True)
    x = np.arange(n)
    ax1.bar(x, cost, color="tab:blue")
    ax1.set_ylabel("cost")
    ax2.bar(x, worst_swr, color="tab:orange")
    ax2.set_ylabel("worst SWR at the radio")
    ax2.set_xticks(x, labels, fontsize=7)
    ax2.set_xlabel("cell (its matrix values; summary.csv has every figure)")
    for ax in (ax1, ax2):
        ax.grid(axis="y", alpha=0.3)
    fig.suptitle(title)
    return fig
