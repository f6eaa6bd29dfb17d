"""Machine-readable results of an evaluation: ``results.json`` and ``results.csv``.

The JSON keys listed in :data:`POINT_KEYS` and :data:`BAND_KEYS` are a
contract other tools rely on; more keys may be added, none removed.
"""

from __future__ import annotations

import csv
import dataclasses
import io
from typing import Any

import numpy as np

from necflow import __version__, fileio

POINT_KEYS = ("band", "frequency_hz", "z_feedpoint_ohm", "z_radio_ohm", "swr",
              "return_loss_db", "delivered_fraction", "loss_db", "stress")
BAND_KEYS = ("band", "swr_min", "frequency_swr_min_hz", "swr_max", "loss_db_mean")


def _fields(obj: Any) -> dict[str, Any]:
    if dataclasses.is_dataclass(obj):
        return {f.name: getattr(obj, f.name) for f in dataclasses.fields(obj)}
    if isinstance(obj, dict):
        return dict(obj)
    return {k: v for k, v in vars(obj).items() if not k.startswith("_")}


def _at(value: Any, k: int) -> Any:
    """Element k of a per-frequency array, as a JSON-ready scalar."""
    if isinstance(value, np.ndarray) and value.ndim >= 1:
        value = value[k]
    if isinstance(value, (complex, np.complexfloating)):
        return [float(value.real), float(value.imag)]
    if isinstance(value, (np.floating, float)):
        return float(value)
    if isinstance(value, (np.integer, int)) and not isinstance(value, bool):
        return int(value)
    return value


def _complex_pair(z: complex) -> list[float]:
    return [float(np.real(z)), float(np.imag(z))]


def point_records(evaluation) -> list[dict[str, Any]]:
    """One dict per evaluated frequency, in the ``results.json`` layout."""
    s = evaluation.system
    names = [b.name for b in evaluation.bands]
    out = []
    for k, f in enumerate(evaluation.frequency_hz):
        stress = {}
        for eid, st in s.stress.items():
            stress[eid] = {name: _at(v, k) for name, v in _fields(st).items()
                           if isinstance(v, np.ndarray) or np.isscalar(v)}
        out.append({
            "band": names[int(evaluation.band_index[k])],
            "frequency_hz": float(f),
            "z_feedpoint_ohm": _complex_pair(s.z_feedpoint[k]),
            "z_radio_ohm": _complex_pair(s.z_radio[k]),
            "swr": float(s.swr[k]),
            "return_loss_db": float(s.return_loss_db[k]),
            "delivered_fraction": float(s.delivered_fraction[k]),
            "loss_db": {key: float(v[k]) for key, v in s.loss_db.items()},
            "stress": stress,
        })
        cm = evaluation.common_mode
        if cm is not None:
            out[-1]["common_mode"] = {
                "current_a": {n: float(abs(v[k])) for n, v in cm.currents.items()},
                "heat_w": {n: float(v[k]) for n, v in cm.load_power_w.items()}}
    return out


def band_records(evaluation) -> list[dict[str, Any]]:
    """One dict per band, in the ``results.json`` layout (with a route: the
    largest common-mode current at each probe and heat in each load)."""
    out = [dataclasses.asdict(b) for b in evaluation.band_summaries()]
    cm = evaluation.common_mode
    if cm is not None:
        for i, rec in enumerate(out):
            sel = evaluation.band_index == i
            rec["common_mode_a_max"] = {k: float(np.abs(v[sel]).max())
                                        for k, v in cm.currents.items()}
            rec["common_mode_heat_w_max"] = {k: float(v[sel].max())
                                             for k, v in cm.load_power_w.items()}
    return out


def results_document(evaluation, *, config_sha256: str) -> dict[str, Any]:
    """The whole ``results.json`` document."""
    d = evaluation.design
    return {
        "design": d.name,
        "necflow_version": __version__,
        "config_sha256": config_sha256,
        "radio": {"impedance_ohm": d.radio.impedance, "power_w": d.radio.power},
        "swr_limit": d.goal.swr_limit,
        "model": {"segments": int(evaluation.model.segment_count),
                  "segments_per_band": {b.name: int(m.segment_count) for b, m in
                                        zip(evaluation.bands, evaluation.models)},
                  "ground": d.ground.model},
        "findings": [_fields(x) for x in evaluation.findings],
        "cautions": list(evaluation.cautions),
        "bands": band_records(evaluation),
        "points": point_records(evaluation),
        "tuning": list(getattr(evaluation, "tuning", []) or []),
        "relays": relay_records(evaluation),
    }


def relay_records(evaluation) -> list[dict[str, Any]]:
    """Each switched element's relay: its state per band (contacts closed
    or open, element in or out) and its stress at the radio's power over
    the band's points."""
    s = evaluation.system
    out = []
    for eid, r in getattr(s, "relays", {}).items():
        bands = []
        for i, b in enumerate(evaluation.bands):
            sel = evaluation.band_index == i
            v = r.v_open_peak[sel]
            c = r.i_closed_rms[sel]
            bands.append({"band": b.name, "closed": bool(r.closed[sel].all()),
                          "element_out": bool(r.out[sel].all()),
                          "v_open_peak": float(np.nanmax(v)) if np.isfinite(v).any() else None,
                          "i_closed_rms": float(np.nanmax(c)) if np.isfinite(c).any()
                          else None})
        out.append({"id": eid, "kind": s.stress[eid].kind, "relays": r.contacts,
                    "bands": bands})
    return out


def write_json(doc: dict[str, Any], path) -> None:
    """Write ``results.json`` atomically; non-finite numbers (an infinite SWR
    into a purely reactive load) become null."""
    fileio.write_json(path, doc)


def csv_text(doc: dict[str, Any]) -> str:
    """Flat table, one row per frequency: impedances, SWR, every loss term,
    and per element its peak voltage, RMS current and dissipation."""
    points = doc["points"]
    loss_keys = list(points[0]["loss_db"]) if points else []
    stress_ids = list(points[0]["stress"]) if points else []
    head = ["band", "frequency_mhz", "r_feedpoint_ohm", "x_feedpoint_ohm", "r_radio_ohm",
            "x_radio_ohm", "swr", "return_loss_db", "delivered_fraction"]
    head += [f"loss_{k}_db" for k in loss_keys]
    for eid in stress_ids:
        head += [f"{eid}_v_peak_v", f"{eid}_i_rms_a", f"{eid}_p_diss_w"]
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(head)
    for p in points:
        row = [p["band"], f"{p['frequency_hz'] / 1e6:.6f}", *[f"{v:.6g}" for v in
               (*p["z_feedpoint_ohm"], *p["z_radio_ohm"], p["swr"], p["return_loss_db"],
                p["delivered_fraction"])]]
        row += [f"{p['loss_db'][k]:.6g}" for k in loss_keys]
        for eid in stress_ids:
            st = p["stress"][eid]
            row += [f"{st.get(k, float('nan')):.6g}" for k in ("v_peak", "i_rms", "p_diss_w")]
        w.writerow(row)
    return buf.getvalue()
