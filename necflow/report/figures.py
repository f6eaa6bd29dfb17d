"""Figures of the decision report, drawn with matplotlib (Agg) from the run
folder's documents and returned as PNG bytes for embedding."""

from __future__ import annotations

import io

import matplotlib
import numpy as np
from matplotlib.colors import to_hex
from matplotlib.figure import Figure
from matplotlib.text import Text
from skrf.plotting import smith

DPI = 80


def _figure(w: float, h: float):
    matplotlib.use("Agg", force=False)
    return Figure(figsize=(w, h), layout="constrained")


def png_bytes(fig) -> bytes:
    """The figure as PNG; no text of it is read as mathematics (names come
    from the user, and a dollar sign is a dollar sign)."""
    for t in fig.findobj(Text):
        t.set_parse_math(False)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=DPI)
    return buf.getvalue()


def _bands(results: dict) -> list[str]:
    return [b["band"] for b in results["bands"]]


def _grid(n: int, cols: int = 3) -> tuple[int, int]:
    cols = min(n, cols)
    return int(np.ceil(n / cols)), cols


#: Line styles and markers of the alternatives, so that a curve lying on
#: another still shows (distinct colours, markers and dashes).
_STYLES = (("o", "-"), ("s", "--"), ("^", "-."), ("D", ":"), ("v", "-"), ("x", "--"),
           ("P", "-."), ("*", ":"))
SWR_TOP = 10.0


def _colours(n: int) -> list:
    """``n`` distinct colours (the default cycle, then tab20's)."""
    base = list(matplotlib.rcParams["axes.prop_cycle"].by_key()["color"])
    extra = [matplotlib.colormaps["tab20"](k) for k in range(1, 20, 2)]
    out = list(dict.fromkeys(to_hex(c) for c in base + extra))
    return [out[k % len(out)] for k in range(n)]


def swr_figure(results: dict, report: dict):
    """SWR at the radio across each band for every alternative: each its own
    colour, marker and dash; values above the scale clipped and named."""
    bands = _bands(results)
    f = np.array([p["frequency_hz"] for p in results["points"]]) / 1e6
    band_of = np.array([p["band"] for p in results["points"]])
    rows, cols = _grid(len(bands))
    fig = _figure(4.0 * cols, 2.8 * rows + 0.8)
    limit = report["swr_limit"]
    alts = report["alternatives"]
    colours = _colours(len(alts))
    for i, band in enumerate(bands):
        ax = fig.add_subplot(rows, cols, i + 1)
        sel = band_of == band
        clipped = []
        for j, alt in enumerate(alts):
            s = np.array([np.inf if v is None else v for v in alt["swr"]], dtype=float)[sel]
            mk, ls = _STYLES[j % len(_STYLES)]
            ax.plot(f[sel], np.minimum(s, SWR_TOP), marker=mk, ms=4, mfc="none", ls=ls,
                    lw=1.2, color=colours[j], label=alt["name"] if i == 0 else None)
            if np.any(s > SWR_TOP):
                clipped.append(f"{alt['name']} to {np.max(s):.3g}")
        ax.axhline(limit, color="k", ls="--", lw=0.8,
                   label=f"SWR limit {limit:g}" if i == 0 else None)
        if clipped:
            ax.text(0.02, 0.97, "off scale: " + "; ".join(clipped), transform=ax.transAxes,
                    va="top", fontsize=6, color="tab:red", wrap=True)
        ax.set_ylim(1.0, SWR_TOP)
        ax.set_title(band, fontsize=9)
        ax.set_xlabel("frequency [MHz]", fontsize=8)
        ax.set_ylabel("SWR at the radio", fontsize=8)
        ax.tick_params(labelsize=7)
        ax.grid(alpha=0.3)
    fig.legend(loc="outside lower center", ncol=min(len(alts) + 1, 4), fontsize=7)
    fig.suptitle(f"SWR at the radio ({report['z_ref_ohm']:g} ohm) per way of feeding; "
                 f"dashed black: the limit; clipped at {SWR_TOP:g}", fontsize=10)
    return fig


def feedpoint_reference(results: dict) -> float:
    """Reference of the feedpoint's Smith chart [ohm]: the geometric mean of
    |Z| at the feedpoint over all evaluated points, so that loads from tens of
    ohms to kilohms spread over the chart instead of crowding at its edge."""
    z = np.array([abs(complex(*p["z_feedpoint_ohm"])) for p in results["points"]])
    z = z[np.isfinite(z) & (z > 0)]
    return float(np.exp(np.mean(np.log(z)))) if z.size else float(
        results["radio"]["impedance_ohm"])


#: Normalised resistance and reactance of scikit-rf's chart circles.
_SMITH_GRID = (0.2, 0.5, 1.0, 2.0, 5.0)


def _ohm(v: float) -> str:
    return f"{v:.0f}" if abs(v) >= 10 else f"{v:.2g}"


def _smith_labels(ax, z0: float) -> None:
    """Label the chart's resistance circles on the real axis and its
    reactance arcs at the rim, in ohms of the reference ``z0``."""
    for r in _SMITH_GRID:
        ax.text((r - 1) / (r + 1), 0.01, _ohm(r * z0), fontsize=6, ha="right", va="bottom",
                rotation=90, color="0.3")
    for x in _SMITH_GRID + tuple(-v for v in _SMITH_GRID):
        g = (1j * x - 1) / (1j * x + 1)
        ax.text(1.07 * g.real, 1.07 * g.imag, ("+" if x > 0 else "-") + _ohm(abs(x) * z0),
                fontsize=6, ha="center", va="center", color="0.3")
    ax.text(-1.0, -1.12, "R [ohm] on the axis, X [ohm] on the rim", fontsize=6, color="0.3")


def smith_figure(results: dict):
    """Impedance at the feedpoint and at the radio on Smith charts (scikit-rf's
    chart, R and X labelled in ohms), one colour per band, its low edge a
    filled circle and its high edge a square, each labelled in MHz."""
    z_radio = float(results["radio"]["impedance_ohm"])
    z_feed = feedpoint_reference(results)
    bands = _bands(results)
    colours = _colours(len(bands))
    fig = _figure(11.0, 5.6)
    charts = (("z_feedpoint_ohm", f"at the feedpoint, chart normalised to {z_feed:.0f} ohm "
               "(geometric mean of |Z| there)", z_feed),
              ("z_radio_ohm", f"at the radio, chart normalised to {z_radio:g} ohm "
               "(the radio's impedance)", z_radio))
    for k, (key, title, z0) in enumerate(charts):
        ax = fig.add_subplot(1, 2, k + 1)
        smith(ax=ax, draw_labels=False, chart_type="z")
        _smith_labels(ax, z0)
        for c, band in zip(colours, bands):
            pts = sorted((p for p in results["points"] if p["band"] == band),
                         key=lambda p: p["frequency_hz"])
            z = np.array([complex(*p[key]) for p in pts])
            g = (z - z0) / (z + z0)
            ax.plot(g.real, g.imag, lw=1.2, color=c, label=band if k == 0 else None)
            for e, mk in ((0, "o"), (-1, "s")):
                ax.plot(g[e].real, g[e].imag, marker=mk, ms=5, color=c, ls="none")
                ax.annotate(f"{pts[e]['frequency_hz'] / 1e6:.3g}", (g[e].real, g[e].imag),
                            xytext=(3, 3 if e == 0 else -8), textcoords="offset points",
                            fontsize=6, color=c)
        ax.set_title(f"impedance {title}", fontsize=8)
    fig.legend(loc="outside lower center", ncol=min(len(bands), 8), fontsize=7,
               title="band (circle: low edge, square: high edge, labels in MHz; "
                     "R and X on the chart in ohms)", title_fontsize=7)
    return fig


#: Loss bars clipped at this many dB (off-scale bars are named).
LOSS_TOP = 20.0


def loss_figure(report: dict):
    """Loss at each band's centre: one horizontal bar per way of feeding,
    stacked by element (named, each its own colour), one scale for all bands."""
    alts = report["alternatives"]
    bands = [b["band"] for b in alts[0]["bands"]]
    terms = ["mismatch"] + list(dict.fromkeys(
        t for a in alts for b in a["bands"] for t in b["loss_db"] if t not in ("mismatch",
                                                                               "total")))
    red = to_hex("tab:red")        # the mismatch's alone
    colours = dict(zip(terms, [red] + [c for c in _colours(len(terms) + 1) if c != red]))
    totals = [b["loss_db"]["total"] for a in alts for b in a["bands"]
              if b["loss_db"]["total"] is not None]
    top = min(max(totals + [1.0]) * 1.08, LOSS_TOP)
    rows, cols = _grid(len(bands), 3)
    fig = _figure(4.0 * cols + 1.6, (0.3 * len(alts) + 0.9) * rows + 0.9)
    axes = fig.subplots(rows, cols, sharex=True, sharey=True, squeeze=False).ravel()
    for ax in axes[len(bands):]:
        ax.set_visible(False)
    names = [a["name"] for a in alts]
    for i, band in enumerate(bands):
        ax = axes[i]
        for j, alt in enumerate(alts):
            rec = alt["bands"][i]
            left = 0.0
            for term in terms:
                v = rec["loss_db"].get(term)
                if v is None or v <= 0:
                    continue
                ax.barh(j, min(v, max(top - left, 0.0)), left=min(left, top), height=0.7,
                        color=colours[term], edgecolor="white", lw=0.5, label=term)
                left += v
            if left > top:
                ax.text(top, j, f" {left:.1f} dB off scale ", ha="right", va="center",
                        fontsize=6, color="white", fontweight="bold")
        ax.set_yticks(range(len(alts)), names, fontsize=7)
        ax.set_xlim(0.0, top)
        ax.set_title(f"{band} at {alts[0]['bands'][i]['frequency_hz'] / 1e6:.3f} MHz",
                     fontsize=9)
        ax.set_xlabel("loss [dB]", fontsize=8)
        ax.tick_params(axis="x", labelsize=7, labelbottom=True)
        ax.grid(axis="x", alpha=0.3)
    axes[0].invert_yaxis()             # the first way of feeding on top (axes shared)
    handles = {}
    for ax in axes[:len(bands)]:
        for h, lab in zip(*ax.get_legend_handles_labels()):
            handles.setdefault(lab, h)
    order = [t for t in terms if t in handles]
    fig.legend([handles[t] for t in order], order, loc="outside lower center",
               ncol=min(len(order), 8), fontsize=7, title="element (mismatch: reflected at "
               "the radio)", title_fontsize=7)
    fig.suptitle("Where the power goes at each band's centre, per way of feeding (one scale "
                 f"for all bands, clipped at {top:.3g} dB)", fontsize=10)
    return fig


def _gain_axis(ax, floor: float, top: float) -> None:
    """Radial scale of a pattern in dBi: a tick every 10 dB, labelled with
    the unit."""
    ticks = np.arange(np.ceil(floor / 10.0) * 10.0, top + 1e-9, 10.0)
    ax.set_ylim(floor, top + 1)
    ax.set_yticks(ticks, [f"{t:.0f} dBi" for t in ticks])
    ax.tick_params(labelsize=6)


def pattern_figure(report: dict):
    """Elevation cuts (broadside and strongest lobe) and the azimuth cut at
    the take-off angle, at each band's centre; gains in dBi, 30 dB shown."""
    ffs = [r for r in report["far_field"] if r["centre"]]
    n = len(ffs)
    fig = _figure(9.0, 3.4 * n)
    for i, r in enumerate(ffs):
        top = max(r["peak_gain_dbi"], max(r["azimuth_gain_dbi"]))
        floor = top - 30.0
        ax = fig.add_subplot(n, 2, 2 * i + 1, projection="polar")
        el = np.radians(r["elevation_deg"])
        ax.plot(el, np.maximum(np.array(r["elevation_gain_dbi"]), floor), lw=1.4,
                color="tab:blue", label=f"broadside ({r['broadside_azimuth_deg']:.0f} deg az)")
        if abs(r["lobe_azimuth_deg"] - r["broadside_azimuth_deg"]) % 180 > 1:
            ax.plot(el, np.maximum(np.array(r["lobe_elevation_gain_dbi"]), floor), lw=1.2,
                    ls="--", color="tab:orange",
                    label=f"strongest lobe ({r['lobe_azimuth_deg']:.0f} deg az)")
        _gain_axis(ax, floor, top)
        if report["ground"] != "free-space":
            ax.set_thetamin(0)
            ax.set_thetamax(180)
            ax.set_rlabel_position(95)
        ax.set_title(f"{r['band']} {r['frequency_hz'] / 1e6:.3f} MHz: elevation [deg], peak "
                     f"{r['peak_gain_dbi']:.1f} dBi at {r['peak_elevation_deg']:.0f} deg",
                     fontsize=8, pad=4)
        ax.legend(fontsize=6, loc="upper center", bbox_to_anchor=(0.5, -0.02), ncol=2,
                  frameon=False)
        ax2 = fig.add_subplot(n, 2, 2 * i + 2, projection="polar")
        ax2.plot(np.radians(r["azimuth_deg"] + [r["azimuth_deg"][0]]),
                 np.maximum(np.array(r["azimuth_gain_dbi"] + [r["azimuth_gain_dbi"][0]]),
                            floor), lw=1.4, color="tab:blue")
        _gain_axis(ax2, floor, top)
        ax2.set_rlabel_position(100)
        ax2.set_title(f"azimuth [deg] at {r['takeoff_deg']:.0f} deg elevation (x axis = 0 deg)",
                      fontsize=8, pad=10)
    fig.suptitle("Patterns at each band's centre (gain in dBi; 30 dB below the peak shown)",
                 fontsize=10)
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
