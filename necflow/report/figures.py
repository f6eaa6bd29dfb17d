"""Figures of the decision report, drawn with matplotlib (Agg) from the run
folder's documents and returned as PNG bytes for embedding."""

from __future__ import annotations

import io

import matplotlib
import numpy as np
from matplotlib.figure import Figure
from skrf.plotting import smith

DPI = 80


def _figure(w: float, h: float):
    matplotlib.use("Agg", force=False)
    return Figure(figsize=(w, h), layout="constrained")


def png_bytes(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=DPI)
    return buf.getvalue()


def _bands(results: dict) -> list[str]:
    return [b["band"] for b in results["bands"]]


def _grid(n: int, cols: int = 3) -> tuple[int, int]:
    cols = min(n, cols)
    return int(np.ceil(n / cols)), cols


def swr_figure(results: dict, report: dict):
    """SWR at the radio across each band for every alternative."""
    bands = _bands(results)
    f = np.array([p["frequency_hz"] for p in results["points"]]) / 1e6
    band_of = np.array([p["band"] for p in results["points"]])
    rows, cols = _grid(len(bands))
    fig = _figure(4.0 * cols, 2.8 * rows)
    limit = report["swr_limit"]
    for i, band in enumerate(bands):
        ax = fig.add_subplot(rows, cols, i + 1)
        sel = band_of == band
        for alt in report["alternatives"]:
            s = np.array([np.inf if v is None else v for v in alt["swr"]], dtype=float)[sel]
            ax.plot(f[sel], np.minimum(s, 10.0), marker=".", lw=1.2, label=alt["name"])
        ax.axhline(limit, color="k", ls="--", lw=0.8)
        ax.set_ylim(1.0, 10.0)
        ax.set_title(band, fontsize=9)
        ax.set_xlabel("MHz", fontsize=8)
        ax.set_ylabel("SWR at radio", fontsize=8)
        ax.tick_params(labelsize=7)
        ax.grid(alpha=0.3)
    fig.axes[0].legend(fontsize=6, loc="upper right")
    fig.suptitle(f"SWR at the radio (dashed: limit {limit:g}; clipped at 10)", fontsize=10)
    return fig


def smith_figure(results: dict):
    """Impedance at the feedpoint and at the radio on Smith charts, one
    colour per band (scikit-rf's chart)."""

    z0 = float(results["radio"]["impedance_ohm"])
    fig = _figure(9.0, 4.6)
    for k, (key, title) in enumerate((("z_feedpoint_ohm", "at the feedpoint"),
                                      ("z_radio_ohm", "at the radio"))):
        ax = fig.add_subplot(1, 2, k + 1)
        smith(ax=ax, draw_labels=False, chart_type="z")
        for band in _bands(results):
            z = np.array([complex(*p[key]) for p in results["points"] if p["band"] == band])
            g = (z - z0) / (z + z0)
            ax.plot(g.real, g.imag, marker=".", ms=3, lw=1.0, label=band)
        ax.set_title(f"impedance {title} ({z0:g} ohm chart)", fontsize=9)
    fig.axes[0].legend(fontsize=6, loc="lower left")
    return fig


def loss_figure(report: dict):
    """Stacked loss at each band's centre, one bar per alternative."""
    alts = report["alternatives"]
    bands = [b["band"] for b in alts[0]["bands"]]
    rows, cols = _grid(len(bands), 4)
    fig = _figure(3.2 * cols, 3.0 * rows + 0.6)
    colours = {"mismatch": "tab:red", "line": "tab:blue", "series": "tab:orange",
               "shunt": "tab:brown", "transformer": "tab:green", "matching": "tab:purple"}
    seen = set()
    for i, band in enumerate(bands):
        ax = fig.add_subplot(rows, cols, i + 1)
        for j, alt in enumerate(alts):
            rec = alt["bands"][i]
            bottom = 0.0
            for term, v in rec["loss_db"].items():
                if term == "total" or v is None or v <= 0:
                    continue
                kind = "mismatch" if term == "mismatch" else alt["element_kinds"].get(term, "line")
                lab = kind if kind not in seen else None
                seen.add(kind)
                ax.bar(j, min(v, 30.0), bottom=bottom, color=colours.get(kind, "grey"),
                       edgecolor="white", lw=0.5, label=lab)
                bottom += v
        ax.set_xticks(range(len(alts)), [str(j + 1) for j in range(len(alts))], fontsize=7)
        ax.set_title(band, fontsize=9)
        ax.set_ylabel("loss dB", fontsize=8)
        ax.tick_params(labelsize=7)
        ax.grid(axis="y", alpha=0.3)
    fig.legend(loc="outside lower center", ncol=6, fontsize=7)
    fig.suptitle("Where the power goes at each band's centre; bars numbered as in the "
                 "alternatives table", fontsize=10)
    return fig


def pattern_figure(report: dict):
    """Elevation cuts (broadside and strongest lobe) and the azimuth cut at
    the take-off angle, at each band's centre."""
    ffs = [r for r in report["far_field"] if r["centre"]]
    n = len(ffs)
    fig = _figure(7.0, 3.0 * n)
    for i, r in enumerate(ffs):
        top = max(r["peak_gain_dbi"], max(r["azimuth_gain_dbi"]))
        floor = top - 30.0
        ax = fig.add_subplot(n, 2, 2 * i + 1, projection="polar")
        el = np.radians(r["elevation_deg"])
        ax.plot(el, np.maximum(np.array(r["elevation_gain_dbi"]), floor), lw=1.2,
                label=f"broadside ({r['broadside_azimuth_deg']:.0f} deg az)")
        if abs(r["lobe_azimuth_deg"] - r["broadside_azimuth_deg"]) % 180 > 1:
            ax.plot(el, np.maximum(np.array(r["lobe_elevation_gain_dbi"]), floor), lw=1.0,
                    ls="--", label=f"strongest lobe ({r['lobe_azimuth_deg']:.0f} deg az)")
        ax.set_ylim(floor, top + 1)
        if report["ground"] != "free-space":
            ax.set_thetamin(0)
            ax.set_thetamax(180)
        ax.set_title(f"{r['band']} {r['frequency_hz'] / 1e6:.3f} MHz: elevation, peak "
                     f"{r['peak_gain_dbi']:.1f} dBi at {r['peak_elevation_deg']:.0f} deg",
                     fontsize=8)
        ax.tick_params(labelsize=6)
        ax.legend(fontsize=6, loc="lower center")
        ax2 = fig.add_subplot(n, 2, 2 * i + 2, projection="polar")
        ax2.plot(np.radians(r["azimuth_deg"] + [r["azimuth_deg"][0]]),
                 np.maximum(np.array(r["azimuth_gain_dbi"] + [r["azimuth_gain_dbi"][0]]),
                            floor), lw=1.2)
        ax2.set_ylim(floor, top + 1)
        ax2.set_title(f"azimuth at {r['takeoff_deg']:.0f} deg elevation", fontsize=8)
        ax2.tick_params(labelsize=6)
    return fig


def across_figure(band: str, records: list[dict], labels: list[str]):
    """Antenna gain (solid) and the design's system gain (dashed) at each
    elevation of interest against frequency across one band."""

    recs = sorted(records, key=lambda r: r["frequency_hz"])
    f = np.array([r["frequency_hz"] for r in recs]) / 1e6
    fig = _figure(4.8, 2.6)
    ax = fig.add_subplot(1, 1, 1)
    colours = matplotlib.rcParams["axes.prop_cycle"].by_key()["color"]
    for j, lab in enumerate(labels):
        c = colours[j % len(colours)]
        g = np.array([np.nan if r["gain_at_angles_dbi"][j] is None else r["gain_at_angles_dbi"][j]
                      for r in recs], dtype=float)
        ax.plot(f, g, marker="o", ms=3, lw=1.2, color=c, label=lab)
        sg = [r.get("system_gain_dbi") for r in recs]
        if all(s is not None for s in sg):
            ax.plot(f, np.array([np.nan if s[j] is None else s[j] for s in sg], dtype=float),
                    marker="o", ms=3, lw=1.0, ls="--", color=c)
    ax.set_title(f"{band}: antenna gain (solid), system gain (dashed)", fontsize=9)
    ax.set_xlabel("MHz", fontsize=8)
    ax.set_ylabel("dBi", fontsize=8)
    ax.tick_params(labelsize=7)
    ax.grid(alpha=0.3)
    ax.legend(fontsize=6, loc="best")
    return fig


#: How each kind of wire is drawn in the picture of the wires.
_WIRE_STYLE = {"antenna": {"color": "tab:blue", "lw": 2.2, "label": "antenna wire"},
               "line": {"color": "tab:orange", "lw": 1.4, "ls": "--",
                        "label": "feed line (its outside, as routed)"},
               "choke": {"color": "tab:purple", "label": "choke"},
               "entry": {"color": "tab:green", "lw": 2.0, "label": "station entry to ground"}}
#: The three views: (title, horizontal axis, vertical axis) as indices of x, y, z.
_VIEWS = (("top", 0, 1), ("front", 0, 2), ("side", 1, 2))
_AXIS = ("x [m]", "y [m]", "z (height) [m]")


def wires_figure(wires: dict):
    """The model's wires in three views (top, front, side) with equal scales
    in metres, the feed point marked, the feed line's route drawn when it is
    modelled and the ground (z = 0) when there is one."""
    runs = wires["runs"]
    pts = np.array([r[k] for r in runs for k in ("start", "end")] + [wires["feed_point"]],
                   dtype=float)
    if wires["ground"]:
        pts = np.vstack([pts, [pts[0, 0], pts[0, 1], 0.0]])
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    # each axis spans at least a third of the largest extent (a flat antenna
    # keeps a readable panel), plus a margin
    big = max(float(np.max(hi - lo)), 1.0)
    half = np.maximum(hi - lo, big / 3.0) / 2.0 + 0.06 * big
    lo, hi = (lo + hi) / 2.0 - half, (lo + hi) / 2.0 + half
    spans = [(hi[h] - lo[h], hi[v] - lo[v]) for _, h, v in _VIEWS]
    fig = Figure(figsize=(12.0, 3.6), layout="constrained")
    axes = fig.subplots(1, 3, width_ratios=[w / max(hgt, 1e-9) for w, hgt in spans])
    fp = np.asarray(wires["feed_point"], dtype=float)
    for ax, (title, h, v) in zip(axes, _VIEWS):
        seen = set()
        for r in runs:
            st = dict(_WIRE_STYLE.get(r["kind"], _WIRE_STYLE["antenna"]))
            lab = st.pop("label")
            if r["kind"] == "choke":      # centimetres long: a mark where it sits
                mid = (np.asarray(r["start"]) + np.asarray(r["end"])) / 2.0
                ax.plot(mid[h], mid[v], marker="s", ms=7, ls="none", color=st["color"],
                        label=None if lab in seen else lab)
            else:
                ax.plot([r["start"][h], r["end"][h]], [r["start"][v], r["end"][v]],
                        solid_capstyle="butt", label=None if lab in seen else lab, **st)
            seen.add(lab)
        ax.plot(fp[h], fp[v], marker="o", ms=8, mfc="none", mec="tab:red", mew=2, ls="none",
                label="feed point")
        if wires["ground"] and v == 2:
            ax.axhline(0.0, color="saddlebrown", lw=1.2, label="ground (z = 0)")
        ax.set_xlim(lo[h], hi[h])
        ax.set_ylim(lo[v], hi[v])
        ax.set_aspect("equal", adjustable="box")
        ax.set_title(title, fontsize=9)
        ax.set_xlabel(_AXIS[h], fontsize=8)
        ax.set_ylabel(_AXIS[v], fontsize=8)
        ax.tick_params(labelsize=7)
        ax.grid(alpha=0.3)
    handles, labels = axes[1].get_legend_handles_labels()
    fig.legend(handles, labels, loc="outside lower center", ncol=len(labels), fontsize=8)
    fig.suptitle("The wires as modelled: top, front and side views (equal scales, metres)",
                 fontsize=10)
    return fig
