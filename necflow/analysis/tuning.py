"""The tuning chart: per band, what to dial on each tuner in the chain.

For each tuner and each band, at the low edge, the centre and the high edge:
the part settings (from the least-loss rule or the user's own setting), the
tuner's loss, the SWR the radio sees, each capacitor's peak voltage and the
coil's RMS current at the radio's power and at the worst-case power, and a
caution where a rating is exceeded or a range runs out.  The figures come
from the power flow of the whole chain (:func:`necflow.analysis.powerflow.analyse`),
so they are the ones the loss budget and the stress table use.
"""

from __future__ import annotations

import csv
import io
import math

import numpy as np

from necflow.analysis.powerflow import SystemResponse

#: The three points of a band the chart gives.
WHERE = ("low edge", "centre", "high edge")


def chart_frequencies(bands) -> np.ndarray:
    """``(3 nbands,)`` [Hz]: low edge, centre, high edge of each band."""
    return np.array([x for b in bands for x in (b.low_hz, 0.5 * (b.low_hz + b.high_hz),
                                                 b.high_hz)])


def tuning_chart(system: SystemResponse, bands, worst_power_w: float,
                 ratings: dict | None = None) -> list[dict]:
    """The chart's rows.

    Parameters
    ----------
    system : SystemResponse
        The chain analysed at :func:`chart_frequencies` of ``bands``.
    bands : list of Band
    worst_power_w : float
        Power of the worst-case figures [W] (voltages scale as sqrt(P)).
    ratings : dict, optional
        ``{"<tuner id>.<part>": {"voltage_rating" | "current_rating": value}}``
        (:func:`necflow.analysis.stress_cautions.ratings_of`).

    Returns
    -------
    list of dict
        One row per tuner, band and point: ``tuner``, ``band``, ``where``,
        ``frequency_hz``, ``in_circuit``, ``matched``, ``settings`` (part ->
        value [F or H]), ``loss_db``, ``swr``, ``v_peak`` and
        ``v_peak_worst`` (capacitor -> [V]), ``i_rms`` and ``i_rms_worst``
        (the coil [A]), ``p_diss_w`` [W], ``caution`` (text, '' if none).
    """
    ratings = ratings or {}
    k = math.sqrt(worst_power_w / system.power_available_w)
    rows = []
    for tid, net in system.tuners.items():
        off = (system.relays[tid].out if tid in system.relays
               else np.zeros(system.f.size, bool))
        parts = system.stress[tid].parts or {}
        for j, fk in enumerate(system.f):
            b, w = bands[j // 3], WHERE[j % 3]
            notes = []
            matched = bool(net.can_match[j])
            if off[j]:
                notes.append("switched out on this band")
            elif not matched:
                notes.append(f"cannot match: {net.reason[j]}")
            v = {n.lower(): float(p["v_peak"][j]) for n, p in parts.items()
                 if p["kind"] == "capacitor"}
            coil = parts.get("L", {})
            i = float(coil["i_rms"][j]) if coil else math.nan
            for name, vp in v.items():
                r = ratings.get(f"{tid}.{name}", {}).get("voltage_rating")
                if r is not None and vp * k > r:
                    notes.append(f"{name} {vp * k:.0f} V peak at {worst_power_w:g} W exceeds "
                                 f"its {r:.0f} V rating")
            r = ratings.get(f"{tid}.l", {}).get("current_rating")
            if r is not None and i * k > r:
                notes.append(f"l {i * k:.2f} A at {worst_power_w:g} W exceeds its {r:.2f} A "
                             "rating")
            rows.append({
                "tuner": tid, "band": b.name, "where": w, "frequency_hz": float(fk),
                "in_circuit": not bool(off[j]), "matched": matched and not bool(off[j]),
                "settings": {n.lower(): float(x[j]) for n, x in net.settings.items()},
                "loss_db": float(system.loss_db[tid][j]), "swr": float(system.swr[j]),
                "v_peak": v, "v_peak_worst": {n: x * k for n, x in v.items()},
                "i_rms": i, "i_rms_worst": i * k,
                "p_diss_w": float(system.p_dissipated_w[tid][j]),
                "caution": "; ".join(notes)})
    return rows


def chart_csv(rows: list[dict], power_w: float, worst_power_w: float) -> str:
    """The chart as CSV: numeric columns, units in the headers."""
    caps = sorted({n for r in rows for n in r["v_peak"]})
    names = sorted({n for r in rows for n in r["settings"]}, key=lambda n: (n[0] != "c", n))
    head = ["tuner", "band", "where", "frequency_mhz"]
    head += [f"{n}_{'pf' if n.startswith('c') else 'uh'}" for n in names]
    head += ["loss_db", "swr", "matched"]
    head += [f"{n}_v_peak_at_{power_w:g}w" for n in caps]
    head += [f"{n}_v_peak_at_{worst_power_w:g}w" for n in caps]
    head += [f"l_a_rms_at_{power_w:g}w", f"l_a_rms_at_{worst_power_w:g}w",
             f"dissipation_w_at_{power_w:g}w", "caution"]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(head)
    for r in rows:
        scale = [1e12 if n.startswith("c") else 1e6 for n in names]
        row = [r["tuner"], r["band"], r["where"], f"{r['frequency_hz'] / 1e6:.6f}"]
        row += [f"{r['settings'].get(n, math.nan) * s:.4g}" for n, s in zip(names, scale)]
        row += [f"{r['loss_db']:.4g}", f"{r['swr']:.4g}", int(r["matched"])]
        row += [f"{r['v_peak'].get(n, math.nan):.4g}" for n in caps]
        row += [f"{r['v_peak_worst'].get(n, math.nan):.4g}" for n in caps]
        row += [f"{r['i_rms']:.4g}", f"{r['i_rms_worst']:.4g}", f"{r['p_diss_w']:.4g}",
                r["caution"]]
        w.writerow(row)
    return buf.getvalue()
