"""The report-data stage: what the decision report shows, computed once.

:func:`build_report_data` runs the far field (the engine), the
alternatives, the stress table and the exposure estimate for an evaluation
and returns a JSON-ready dict; the run folder keeps it as
``report_data.json`` so that ``necflow report RUN_DIR`` renders
``report.html`` without solving.  Angles in it are degrees and frequencies
Hz (the file is read by people too); everything else SI.
"""

from __future__ import annotations

import json
import math
import warnings
from collections.abc import Callable
from pathlib import Path

import numpy as np

from necflow import fileio
from necflow.analysis.alternatives import (
    Alternative,
    optimised_alternative,
    standard_alternatives,
    system_gain_dbi,
)
from necflow.analysis.common_mode import SUFFIX
from necflow.analysis.exposure import (
    compliance_distance_m,
    exposure_basis,
    reflection_factor_for,
    uncontrolled_limit_w_m2,
)
from necflow.analysis.segment_radiation import radiated_power
from necflow.analysis.stress_cautions import ratings_of
from necflow.analysis.stress_table import stress_rows
from necflow.chain.loading import load_design
from necflow.chain.stages import Chain
from necflow.engine.far_field import average_gain_test, far_field, normalised_efficiency
from necflow.engine.pynec_adapter import solve_segment_currents
from necflow.errors import NecflowError, NecflowWarning

FORMAT_VERSION = 1
FILE_NAME = "report_data.json"
#: Average gain test: relative deviation beyond which the report warns
#: (common practice: a sound model is within a few percent).
AVERAGE_GAIN_TOLERANCE = 0.05
EFFICIENCY_CONVENTION = (
    "efficiency is radiated over input power, the integral of the power gain over the sky "
    "divided by the same integral for the model's lossless copy (the average gain test), so "
    "that the integration grid's own error (0.3-0.4 %) cancels; over a ground only the sky "
    "wave counts as radiated")


def band_centres(evaluation) -> tuple[np.ndarray, np.ndarray]:
    """Centre frequency of each band [Hz] and the feedpoint impedance there,
    interpolated along the band's evaluated points (exact when the centre
    is one of them)."""
    f_c, z_c = [], []
    z = evaluation.system.z_feedpoint
    for i, b in enumerate(evaluation.bands):
        sel = evaluation.band_index == i
        fc = 0.5 * (b.low_hz + b.high_hz)
        fb = evaluation.frequency_hz[sel]
        f_c.append(fc)
        z_c.append(np.interp(fc, fb, z[sel].real) + 1j * np.interp(fc, fb, z[sel].imag))
    return np.array(f_c), np.array(z_c)


def far_field_frequencies(evaluation) -> tuple[np.ndarray, np.ndarray]:
    """Frequencies of the far field and the band of each: centres, or edges
    and centre when ``report.far_field`` is 'across'."""
    f, idx = [], []
    for i, b in enumerate(evaluation.bands):
        c = 0.5 * (b.low_hz + b.high_hz)
        pts = (b.low_hz, c, b.high_hz) if evaluation.design.report.far_field == "across" else (c,)
        f += list(pts)
        idx += [i] * len(pts)
    return np.array(f), np.array(idx)


def _far_field_records(evaluation, far_field_fn, agt_fn, on_step=None) -> list[dict]:
    d = evaluation.design
    angles = np.array([e.elevation for e in d.report.elevations])
    f, idx = far_field_frequencies(evaluation)
    models = evaluation.models or tuple(evaluation.model for _ in evaluation.bands)
    ffs: list = [None] * f.size
    agt = np.empty(f.size)
    distinct = {id(m): m for m in models}.values()
    for k, m in enumerate(distinct):                   # each band's own model
        sel = np.flatnonzero([models[int(i)] is m for i in idx])
        if on_step is not None:
            names = dict.fromkeys(evaluation.bands[int(i)].name for i in idx[sel])
            on_step(k, len(distinct), f"far field of {', '.join(names)}")
        for k, ff in zip(sel, far_field_fn(m, f[sel], angles=angles)):
            ffs[k] = ff
        agt[sel] = np.asarray(agt_fn(m, f[sel]), dtype=float)
    expected = 2.0 if evaluation.model.ground.has_ground else 1.0
    out = []
    for ff, i, a in zip(ffs, idx, agt):
        band = evaluation.bands[int(i)]
        ok = abs(a / expected - 1.0) <= AVERAGE_GAIN_TOLERANCE
        if not ok:
            warnings.warn(f"average gain test at {ff.frequency_hz / 1e6:.4g} MHz gives "
                          f"{a:.3f} (expected {expected:.1f}): the model's gains are doubtful; "
                          "check the segmentation and the wire junctions", NecflowWarning,
                          stacklevel=2)
        out.append({
            "band": band.name, "frequency_hz": ff.frequency_hz,
            "centre": bool(np.isclose(ff.frequency_hz, 0.5 * (band.low_hz + band.high_hz))),
            "efficiency": float(normalised_efficiency(ff.efficiency, a,
                                                      evaluation.model.ground)),
            "efficiency_integrated": ff.efficiency, "average_gain": float(a),
            "average_gain_expected": expected, "average_gain_ok": ok,
            "peak_gain_dbi": ff.peak_gain_dbi,
            "peak_elevation_deg": math.degrees(ff.peak_elevation),
            "lobe_azimuth_deg": math.degrees(ff.lobe_azimuth),
            "broadside_azimuth_deg": math.degrees(ff.broadside_azimuth),
            "takeoff_deg": math.degrees(ff.takeoff_elevation),
            "gain_at_angles_dbi": ff.gain_at_angles_dbi,
            "elevation_deg": np.degrees(ff.elevation), "elevation_gain_dbi": ff.elevation_gain_dbi,
            "lobe_elevation_gain_dbi": ff.lobe_elevation_gain_dbi,
            "azimuth_deg": np.degrees(ff.azimuth), "azimuth_gain_dbi": ff.azimuth_gain_dbi,
        })
    return out


def _alternative_record(alt: Alternative, evaluation, n_points: int, gains: dict) -> dict:
    s = alt.system
    bands = []
    for i, b in enumerate(evaluation.bands):
        sel = np.flatnonzero(evaluation.band_index == i)
        c = n_points + i                                  # the band's centre
        loss = {k: float(v[c]) for k, v in s.loss_db.items()}
        g = gains.get(b.name)
        rec = {"band": b.name, "frequency_hz": float(s.f[c]), "swr_centre": float(s.swr[c]),
               "swr_max": float(np.max(s.swr[sel])), "swr_min": float(np.min(s.swr[sel])),
               "loss_db": loss, "loss_db_mean": float(np.mean(s.loss_db["total"][sel])),
               "delivered_w": float(s.p_delivered_w[c]),
               "system_gain_dbi": None if g is None else system_gain_dbi(g, loss["total"])}
        tuners = {}
        for tid, t in s.tuners.items():
            off = s.relays[tid].out if tid in s.relays else np.zeros(s.f.size, bool)
            if off[c]:
                continue
            tuners[tid] = {"can_match_all": bool(np.all(t.can_match[sel] | off[sel])),
                           "can_match_centre": bool(t.can_match[c]),
                           "loss_db": float(t.loss_db[c]), "topology": t.topology,
                           "reason": str(t.reason[c]),
                           "settings": {k.lower(): float(v[c]) for k, v in t.settings.items()}}
        if tuners:
            rec["tuners"] = tuners
        bands.append(rec)
    return {"name": alt.name, "description": alt.description, "chain": alt.chain,
            "bands": bands,
            "element_kinds": {k: v.kind for k, v in s.stress.items()},
            "swr": s.swr[:n_points]}


def _optimised(study_dir: Path, evaluation, f_all):
    """The optimised alternative from a study folder, or None."""
    best_yaml, best_results = study_dir / "best.yaml", study_dir / "best" / "results.json"
    if not (best_yaml.is_file() and best_results.is_file()):
        return None, None
    best = load_design(best_yaml)
    doc = json.loads(best_results.read_text(encoding="utf-8"))
    z = np.empty(f_all.size, dtype=complex)
    names = [b.name for b in evaluation.bands]
    band_of = list(evaluation.band_index) + list(range(len(names)))
    for k, (fk, bi) in enumerate(zip(f_all, band_of)):
        pts = [p for p in doc["points"] if p["band"] == names[int(bi)]]
        if not pts:
            return None, None
        fb = np.array([p["frequency_hz"] for p in pts])
        zb = np.array([complex(*p["z_feedpoint_ohm"]) for p in pts])
        order = np.argsort(fb)
        z[k] = (np.interp(fk, fb[order], zb[order].real)
                + 1j * np.interp(fk, fb[order], zb[order].imag))
    return optimised_alternative(best, f_all, z, Chain(best).feed), best


def build_report_data(evaluation, *, config_sha256: str = "", study_dir=None,
                      far_field_fn: Callable | None = None,
                      agt_fn: Callable | None = None, on_step: Callable | None = None) -> dict:
    """Everything the HTML report shows beyond ``results.json``.

    Parameters
    ----------
    evaluation : Evaluation
    config_sha256 : str
    study_dir : path, optional
        A study's run folder (``best.yaml`` and ``best/results.json``): its
        best design joins the alternatives as 'optimised'.
    far_field_fn, agt_fn : callable, optional
        ``far_field(model, f, angles=)`` and ``average_gain_test(model, f)``;
        default to the engine's.  Tests pass stand-ins.
    on_step : callable, optional
        ``on_step(done, total, text)`` before each solve (a command's progress).
    """
    if far_field_fn is None or agt_fn is None:
        far_field_fn = far_field_fn or far_field
        agt_fn = agt_fn or average_gain_test
    d = evaluation.design
    ff = _far_field_records(evaluation, far_field_fn, agt_fn, on_step)
    gains = {r["band"]: np.asarray(r["gain_at_angles_dbi"]) for r in ff if r["centre"]}
    peak = {r["band"]: r["peak_gain_dbi"] for r in ff if r["centre"]}
    f_c, z_c = band_centres(evaluation)
    n = evaluation.frequency_hz.size
    f_all = np.concatenate([evaluation.frequency_hz, f_c])
    z_all = np.concatenate([evaluation.system.z_feedpoint, z_c])
    alts = standard_alternatives(d, f_all, z_all, evaluation.feed)
    records = [_alternative_record(a, evaluation, n, gains) for a in alts]
    _with_system_gain(ff, alts[0].system, f_all)
    optimised_from = None
    if study_dir is not None:
        try:
            opt, best = _optimised(Path(study_dir), evaluation, f_all)
        except NecflowError as exc:
            warnings.warn(f"the study's best design cannot be shown: {exc}", NecflowWarning,
                          stacklevel=2)
            opt, best = None, None
        if opt is not None:
            same = ([m.key() for m in Chain(best).models]
                    == [m.key() for m in evaluation.models])
            records.append(_alternative_record(opt, evaluation, n, gains if same else {}))
            optimised_from = str(study_dir)
    ratings = ratings_of(d.feed)
    worst = d.report.worst_case_power
    if evaluation.common_mode is None:
        design_sys, extra = alts[0].system, np.zeros(f_c.size, bool)
    else:   # the design's own budget, the chokes' heat in it (band points only)
        design_sys, extra = evaluation.system, np.zeros(0, bool)
        for el in d.feed:
            if getattr(el, "power_rating", None) is not None:
                ratings.setdefault(el.id + SUFFIX, {})["power_rating"] = el.power_rating
    stress_all = stress_rows(design_sys, ratings, worst,
                             select=np.r_[np.ones(n, bool), extra])
    stress_band = {b.name: stress_rows(design_sys, ratings, worst,
                                       select=np.r_[evaluation.band_index == i, extra])
                   for i, b in enumerate(evaluation.bands)}
    duty = d.report.exposure_duty
    over_ground = evaluation.model.ground.has_ground
    refl = reflection_factor_for(over_ground)
    exposure = [{"band": b.name, "frequency_hz": float(f_c[i]),
                 "limit_w_m2": float(uncontrolled_limit_w_m2(f_c[i])),
                 "gain_dbi": peak.get(b.name), "reflection_factor": refl,
                 "distance_m": float(compliance_distance_m(d.radio.power * duty, peak[b.name],
                                                           f_c[i], reflection_factor=refl)),
                 "distance_worst_m": float(compliance_distance_m(
                     worst * duty, peak[b.name], f_c[i], reflection_factor=refl))}
                for i, b in enumerate(evaluation.bands) if b.name in peak]
    doc = {
        "format_version": FORMAT_VERSION, "design": d.name, "config_sha256": config_sha256,
        "radio_power_w": d.radio.power, "worst_case_power_w": worst,
        "z_ref_ohm": d.radio.impedance, "swr_limit": d.goal.swr_limit,
        "exposure_duty": duty, "ground": d.ground.model,
        "elevations": [{"label": e.label, "elevation_deg": math.degrees(e.elevation)}
                       for e in d.report.elevations],
        "far_field": ff, "alternatives": records, "optimised_from": optimised_from,
        "stress": [r.__dict__ for r in stress_all],
        "stress_by_band": {k: [r.__dict__ for r in v] for k, v in stress_band.items()},
        "exposure": exposure, "exposure_basis": exposure_basis(over_ground),
        "efficiency_convention": EFFICIENCY_CONVENTION,
        "common_mode": _common_mode_record(evaluation, ff, far_field_fn, on_step),
    }
    return fileio.json_ready(doc)


def _common_mode_record(evaluation, ff: list[dict], far_field_fn, on_step=None) -> dict | None:
    """Per band, with a route: the common-mode current at each probe and the
    heat in each choke (largest over the band, at the radio's power), the SWR
    at the radio with the line modelled and with an ideal line, and the peak
    gain at the band centre both ways.  The ideal line's figures come from
    the same design without its route (solved here)."""
    cm = evaluation.common_mode
    if cm is None:
        return None
    d = evaluation.design
    ideal = Chain(d.model_copy(update={"route": None}))
    ideal.solve(None if on_step is None else
                lambda done, total, text: on_step(done, total, f"{text}, ideal line"))
    swr, swr0 = evaluation.system.swr, ideal.system.swr
    angles = np.array([e.elevation for e in d.report.elevations])
    centre_ff = {r["band"]: r for r in ff if r["centre"]}
    bands = []
    for i, b in enumerate(evaluation.bands):
        sel = evaluation.band_index == i
        fc = 0.5 * (b.low_hz + b.high_hz)
        rec = {"band": b.name,
               "current_a_max": {k: float(np.abs(v[sel]).max()) for k, v in cm.currents.items()},
               "heat_w_max": {k: float(v[sel].max()) for k, v in cm.load_power_w.items()},
               "swr_max": float(swr[sel].max()), "swr_max_ideal_line": float(swr0[sel].max()),
               "swr_change_max": float(np.max(np.abs(swr[sel] - swr0[sel]) / swr0[sel]))}
        rec.update(_line_radiation(evaluation, i, fc))
        if b.name in centre_ff:
            if on_step is not None:
                on_step(i, len(evaluation.bands), f"far field of {b.name}, ideal line")
            (g0,) = far_field_fn(ideal.models[i], np.array([fc]), angles=angles)
            rec["peak_gain_dbi"] = centre_ff[b.name]["peak_gain_dbi"]
            rec["peak_gain_dbi_ideal_line"] = float(g0.peak_gain_dbi)
            rec["gain_at_angles_dbi"] = centre_ff[b.name]["gain_at_angles_dbi"]
            rec["gain_at_angles_dbi_ideal_line"] = np.asarray(g0.gain_at_angles_dbi).tolist()
        bands.append(rec)
    return {"bands": bands, "entry": d.route.entry,
            "note": "line_radiated_w is the power the line's outside would radiate with its "
                    "currents alone (at the band's point nearest the centre, at the radio's "
                    "power); the line and the antenna couple, so it is not a share of the "
                    "total: the change of SWR and of gain against an ideal line shows what "
                    "modelling the line changes"}


#: Names of the wires of a route (:func:`necflow.model.plan.plan_routed_wires`).
_ROUTE_WIRES = ("line", "choke ", "entry ")


def _line_radiation(evaluation, i: int, fc: float) -> dict:
    """The power the line's outside radiates with its own currents alone
    (:func:`necflow.analysis.segment_radiation.radiated_power`), at the band
    point nearest ``fc`` and the radio's power [W], and as a fraction of the
    power reaching the feed point."""
    m = evaluation.models[i]
    wires = [w for w in m.wires if w.name == "line" or w.name.startswith(_ROUTE_WIRES[1:])]
    if not wires:
        return {}
    sel = np.flatnonzero(evaluation.band_index == i)
    k = int(sel[np.argmin(np.abs(evaluation.frequency_hz[sel] - fc))])
    f = float(evaluation.frequency_hz[k])
    per_volt = solve_segment_currents(m, np.array([f]), [w.tag for w in wires])[0]
    centres, dirs, lengths = [], [], []
    for w in sorted(wires, key=lambda w: w.tag):
        u = (w.end - w.start) / w.segments
        ln = float(np.linalg.norm(u))
        for j in range(w.segments):
            centres.append(w.start + (j + 0.5) * u)
            dirs.append(u / ln)
            lengths.append(ln)
    g = m.ground
    ground = (None if not g.has_ground else "perfect" if g.kind == "perfect"
              else (float(g.permittivity), float(g.conductivity)))
    v_feed = evaluation.system.node_v[k, -1]
    p = float(radiated_power(np.array(centres), np.array(dirs), np.array(lengths),
                             per_volt * v_feed, f, ground=ground))
    return {"line_radiated_w": p, "line_radiated_at_hz": f,
            "line_radiated_fraction": p / float(evaluation.system.p_delivered_w[k])}


def _index_of(f_all: np.ndarray, f_hz: float) -> int:
    """Index of ``f_hz`` among the comparison's frequencies (band edges are
    evaluated points, centres are appended): the far field is never paired
    with a loss interpolated from elsewhere."""
    k = np.flatnonzero(np.isclose(f_all, f_hz, rtol=1e-12, atol=0.0))
    if k.size == 0:
        raise NecflowError(f"no feed-system result at {f_hz / 1e6:.6g} MHz to pair with the "
                           "far field there")
    return int(k[0])


def _with_system_gain(ff: list[dict], system, f_all: np.ndarray) -> None:
    """Add to each far-field record the design's total feed loss at its
    frequency [dB] and the system gain at the elevations of interest [dBi]."""
    for r in ff:
        loss = float(system.loss_db["total"][_index_of(f_all, r["frequency_hz"])])
        r["total_loss_db"] = loss
        r["system_gain_dbi"] = system_gain_dbi(np.asarray(r["gain_at_angles_dbi"], float), loss)


def report_data(chain: Chain, *, config_sha256: str = "", study_dir=None,
                on_step: Callable | None = None) -> dict:
    """The report stage of a chain: :func:`build_report_data` of its
    evaluation (the engine runs the far field here; the report renders);
    ``on_step(done, total, text)`` before each solve."""
    return build_report_data(chain.evaluation, config_sha256=config_sha256,
                             study_dir=study_dir, on_step=on_step)
