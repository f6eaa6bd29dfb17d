"""The report's figures say what they show: named series with units, one scale
where bands are compared, nothing hidden behind another curve, frequency
markers and a stated reference on the Smith charts, and a note wherever
values are clipped.  The figures are read back through matplotlib (their
artists and texts), not as pixels."""

from __future__ import annotations

import itertools
from types import SimpleNamespace

import numpy as np
import pytest
from matplotlib.colors import to_hex
from scipy.stats import gmean

from necflow.optimize import batch as batch_mod
from necflow.report import figures, plots


def _report(alt_swr: dict[str, list[float]], bands=("80m", "40m")) -> tuple[dict, dict]:
    """A small results.json / report_data.json pair: two bands of three points,
    one record per way of feeding with made-up losses."""
    f = {"80m": [3.5e6, 3.75e6, 4.0e6], "40m": [7.0e6, 7.15e6, 7.3e6]}
    z = {"80m": [(40.0, -300.0), (60.0, 0.0), (90.0, 250.0)],
         "40m": [(3000.0, 1500.0), (2500.0, 0.0), (1800.0, -900.0)]}
    points = [{"band": b, "frequency_hz": fk, "z_feedpoint_ohm": list(zk),
               "z_radio_ohm": [50.0 + k, 5.0 * k]}
              for b in bands for k, (fk, zk) in enumerate(zip(f[b], z[b]))]
    results = {"bands": [{"band": b} for b in bands], "points": points,
               "radio": {"impedance_ohm": 50.0}}
    alts = []
    for j, (name, swr) in enumerate(alt_swr.items()):
        alts.append({"name": name, "swr": swr, "element_kinds": {"ladder": "line",
                                                                 "coax": "line",
                                                                 "balun": "transformer"},
                     "bands": [{"band": b, "frequency_hz": f[b][1],
                                "loss_db": {"mismatch": 0.5 * j, "ladder": 0.2 + i,
                                            "coax": 1.0 + j, "balun": 0.1,
                                            "total": 1.3 + i + 1.5 * j}}
                               for i, b in enumerate(bands)]})
    report = {"alternatives": alts, "swr_limit": 2.0, "z_ref_ohm": 50.0}
    return results, report


def test_swr_curves_are_told_apart_and_clipping_is_named():
    same = [1.2, 1.1, 1.3, 1.5, 1.4, 1.6]
    results, report = _report({"as designed": same, "shack tuner": same,
                               "remote tuner": [1.0, 1.0, 1.0, 14.0, 25.0, 3.0]})
    fig = figures.swr_figure(results, report)
    ax80, ax40 = fig.axes[:2]
    curves = [ln for ln in ax80.lines if len(ln.get_xdata()) == 3]
    # identical data for two ways of feeding: colour, marker and dash all differ
    looks = {(to_hex(ln.get_color()), ln.get_marker(), ln.get_linestyle()) for ln in curves}
    assert len(curves) == 3 and len(looks) == 3
    assert all(len({a[k] for a in looks}) == 3 for k in range(3))
    labels = [t.get_text() for t in fig.legends[0].get_texts()]
    assert labels == ["as designed", "shack tuner", "remote tuner", "SWR limit 2"]
    assert ax80.get_xlabel() == "frequency [MHz]" and "SWR" in ax80.get_ylabel()
    # 40 m: the remote tuner's 14 and 25 lie above the scale of 10 and are named
    note = [t.get_text() for t in ax40.texts]
    assert note == ["off scale: remote tuner to 25"]
    assert [t.get_text() for t in ax80.texts] == []


def test_loss_bars_share_one_scale_and_name_ways_and_elements():
    results, report = _report({"as designed": [1.0] * 6, "shack tuner": [1.0] * 6,
                               "remote tuner": [1.0] * 6})
    fig = figures.loss_figure(report)
    axes = [ax for ax in fig.axes if ax.get_visible()]
    assert len(axes) == 2
    assert axes[0].get_xlim() == axes[1].get_xlim()
    # the largest total (40 m, third way: 1.3 + 1 + 3.0 dB) fits the common scale
    assert axes[0].get_xlim()[1] >= 5.3
    names = [t.get_text() for t in axes[0].get_yticklabels()]
    assert names == ["as designed", "shack tuner", "remote tuner"]
    legend = fig.legends[0]
    assert [t.get_text() for t in legend.get_texts()] == ["mismatch", "ladder", "coax", "balun"]
    colours = [to_hex(h.get_facecolor()) for h in legend.legend_handles]
    assert len(set(colours)) == 4          # two lines, two colours
    # each bar's segments add up to the alternative's total (made-up data above)
    for ax, i in zip(axes, range(2)):
        for j in range(3):
            width = sum(p.get_width() for p in ax.patches
                        if abs(p.get_y() + p.get_height() / 2 - j) < 1e-9)
            assert width == pytest.approx(1.3 + i + 1.5 * j)


def test_smith_charts_have_a_stated_reference_frequency_marks_and_r_x_labels():
    results, report = _report({"as designed": [1.0] * 6})
    fig = figures.smith_figure(results)
    z = [abs(complex(*p["z_feedpoint_ohm"])) for p in results["points"]]
    ref = gmean(z)                     # scipy's geometric mean
    assert figures.feedpoint_reference(results) == pytest.approx(ref, rel=1e-12)
    feed, radio = fig.axes[:2]
    assert f"normalised to {ref:.0f} ohm" in feed.get_title()
    assert "normalised to 50 ohm" in radio.get_title()
    texts = [t.get_text() for t in feed.texts]
    # band edges in MHz at each band's ends
    assert {"3.5", "4", "7", "7.3"} <= set(texts)
    # resistance circles and reactance arcs in ohms of the reference
    assert f"{ref:.0f}" in texts and f"+{2 * ref:.0f}" in texts and f"-{ref:.0f}" in texts
    assert {"10", "25", "50", "100", "250", "+50", "-50"} <= {t.get_text() for t in radio.texts}
    # the plotted points are the reflection coefficient against that reference
    g = [(zz - ref) / (zz + ref) for zz in
         (complex(*p["z_feedpoint_ohm"]) for p in results["points"] if p["band"] == "80m")]
    line = next(ln for ln in feed.lines if len(ln.get_xdata()) == 3)
    np.testing.assert_allclose(line.get_xdata(), np.real(g), rtol=1e-12)


def test_pattern_scales_are_in_dbi_every_10_db():
    az = list(range(0, 360, 10))
    rec = {"band": "20m", "frequency_hz": 14.175e6, "centre": True, "peak_gain_dbi": 7.6,
           "peak_elevation_deg": 25.0, "elevation_deg": list(range(0, 181, 5)),
           "elevation_gain_dbi": [7.6 - abs(e - 25) / 5 for e in range(0, 181, 5)],
           "lobe_elevation_gain_dbi": [0.0] * 37, "lobe_azimuth_deg": 90.0,
           "broadside_azimuth_deg": 90.0, "takeoff_deg": 25.0, "azimuth_deg": az,
           "azimuth_gain_dbi": [7.6 * abs(np.sin(np.radians(a))) for a in az]}
    fig = figures.pattern_figure({"far_field": [rec], "ground": "sommerfeld"})
    for ax in fig.axes[:2]:
        ticks = [t.get_text() for t in ax.get_yticklabels()]
        assert ticks == ["-20 dBi", "-10 dBi", "0 dBi"]


def _tolerance(swr_by_band: list[np.ndarray], limit=3.0):
    bands = [SimpleNamespace(name=n) for n in ("80m", "40m")[:len(swr_by_band)]]
    swr = np.concatenate(swr_by_band, axis=1)
    idx = np.concatenate([np.full(s.shape[1], i) for i, s in enumerate(swr_by_band)])
    f = np.concatenate([np.linspace(3.5e6, 4e6, s.shape[1]) * (i + 1)
                        for i, s in enumerate(swr_by_band)])
    return SimpleNamespace(bands=bands, band_index=idx, frequency_hz=f, swr=swr,
                           nominal_swr=np.median(swr, axis=0), swr_limit=limit, seed=1)


def test_tolerance_panels_share_a_scale_that_shows_them_and_note_clipping():
    rng = np.random.default_rng(3)
    low = 1.5 + 0.3 * rng.random((50, 4))
    high = 12.0 + 3.0 * rng.random((50, 4))       # all above the old 3 x limit scale
    fig = plots.tolerance_figure(_tolerance([low, high]))
    ax80, ax40 = fig.axes[:2]
    assert ax80.get_ylim() == ax40.get_ylim()
    top = ax40.get_ylim()[1]
    assert top >= np.percentile(high, 95, axis=0).max()     # the 40 m panel is not empty
    assert [t.get_text() for t in ax40.texts] == []
    # far above ten times the limit: clipped, and the panel says so
    huge = 50.0 + rng.random((50, 4))
    fig = plots.tolerance_figure(_tolerance([low, huge]))
    ax40 = fig.axes[1]
    assert ax40.get_ylim()[1] == pytest.approx(30.0)
    (note,) = [t.get_text() for t in ax40.texts]
    assert note.startswith("off scale: 95 % to 5") and "nominal" in note


def test_batch_cells_are_labelled_by_their_values(tmp_path, monkeypatch):
    spec = batch_mod.BatchSpec(name="sites", base="demo.yaml", matrix={
        "antenna.height": ["9 m", "12 m"],
        "ground": [{"model": "sommerfeld", "surface": "medium-dry"},
                   {"model": "sommerfeld", "surface": "wet"}]})
    summaries = [{"cell": cid, "overrides": over, "cost": 1.0 + k, "worst_swr": 2.0 + k,
                  "loss_db": 1.0, "bands": {}}
                 for k, (cid, over) in enumerate(batch_mod.cells(spec))]
    drawn = []
    real = plots.batch_figure
    monkeypatch.setattr(plots, "batch_figure", lambda *a: drawn.append(real(*a)) or drawn[-1])
    batch_mod.write_summary(spec, summaries, tmp_path)
    (fig,) = drawn
    labels = [t.get_text() for t in fig.axes[1].get_xticklabels()]
    want = [f"height {h}\nground sommerfeld/{s}"
            for h, s in itertools.product(["9 m", "12 m"], ["medium-dry", "wet"])]
    assert labels == want
    assert not any(lab.startswith("c0") for lab in labels)
    assert [p.get_height() for p in fig.axes[0].patches] == [1.0, 2.0, 3.0, 4.0]


def test_dollar_signs_in_names_are_text():
    results, report = _report({"as designed": [1.0] * 6, "tuner $5 or $6": [1.0] * 6})
    fig = figures.loss_figure(report)
    figures.png_bytes(fig)
    label = fig.axes[0].get_yticklabels()[1]
    # two dollars would otherwise be read as mathematics ("5 or " in italics)
    assert label.get_text() == "tuner $5 or $6" and not label.get_parse_math()
