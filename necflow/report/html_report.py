"""The decision report: one self-contained, printable HTML file.

Built from the run folder's ``results.json``, ``report_data.json`` and
``manifest.json`` only, so ``necflow report RUN_DIR`` needs no solve.
Images are embedded as base64 PNG; the page references nothing outside
itself; every string that comes from the user or a file is escaped.
"""

from __future__ import annotations

import base64
import json
from datetime import UTC, datetime
from html import escape
from pathlib import Path

from necflow import fileio
from necflow.errors import ConfigError
from necflow.report import figures
from necflow.report.report_data import read_report_data

FILE_NAME = "report.html"

#: Column of the alternatives table each element kind's loss adds to (the
#: others have a column of their own name); a choke goes with the
#: transformers and baluns.
_LOSS_COLUMN = {"series": "part", "shunt": "part", "choke": "transformer", "tuner": "matching"}

CSS = """
body{font-family:sans-serif;font-size:10.5pt;margin:1.5em auto;max-width:70em;color:#111}
h1{font-size:17pt;margin-bottom:.2em} h2{font-size:13pt;border-bottom:1px solid #888;
margin-top:1.6em} h3{font-size:11pt}
table{border-collapse:collapse;margin:.5em 0;font-size:9pt} td,th{border:1px solid #bbb;
padding:2px 6px;text-align:right} th{background:#eee} td.l,th.l{text-align:left}
.caution{border:2px solid #b00;padding:.4em 1em;background:#fff4f4}
.bad{color:#b00;font-weight:bold} .muted{color:#555;font-size:9pt}
img{max-width:100%;height:auto;display:block;margin:.5em 0}
@media print{body{max-width:none;margin:0;font-size:9pt} h2{break-after:avoid}
table,img,.across{break-inside:avoid} .noprint{display:none}}
"""

GENERAL_CAUTIONS = (
    "High RF voltage: series capacitors, open-wire and window line and the ends of wire "
    "antennas carry hundreds to thousands of volts; never touch them while transmitting.",
    "RF exposure: keep people and animals out of the antenna's near field; the estimate "
    "below is no substitute for your regulator's evaluation.",
    "Power lines: never put an antenna, mast, throw line or yourself where anything could "
    "touch or fall onto a power line.",
    "Lightning: disconnect and ground feed lines when the station is not in use; follow "
    "your electrical code for protection and bonding.",
)


def _e(x) -> str:
    return escape(str(x), quote=True)


def _num(x, fmt: str = ".2f", none: str = "-") -> str:
    if x is None:
        return none
    out = format(x, fmt)
    if out.startswith("-") and float(out.rstrip("%")) == 0:   # no "-0.00"
        out = out[1:]
    return out


def _stress_cautions(report: dict) -> list[str]:
    """Ratings exceeded at either power, and parts with a rating missing."""
    out, missing = [], []
    for r in report["stress"]:
        for note in r["notes"]:
            if "exceeded" in note:
                out.append(f"{r['id']}: {note}")
            elif r["kind"] in ("series", "shunt", "transformer", "choke", "tuner capacitor",
                               "tuner inductor"):
                missing.append(f"{r['id']} ({note.replace('no ', '').replace(' given', '')})")
    if missing:
        out.append("no rating given for " + ", ".join(missing) + ": the stress table shows "
                   "what the parts must withstand")
    return out


def _img(fig, alt: str) -> str:
    data = base64.b64encode(figures.png_bytes(fig)).decode("ascii")
    return f'<img alt="{_e(alt)}" src="data:image/png;base64,{data}">'


def _table(head: list[str], rows: list[list[str]], left: int = 1, cls: str = "") -> str:
    h = "".join(f'<th class="l">{c}</th>' if i < left else f"<th>{c}</th>"
                for i, c in enumerate(head))
    body = "".join("<tr>" + "".join(f'<td class="l">{c}</td>' if i < left else f"<td>{c}</td>"
                                    for i, c in enumerate(r)) + "</tr>" for r in rows)
    attr = f' class="{_e(cls)}"' if cls else ""
    return f"<table{attr}><tr>{h}</tr>{body}</table>"


def _score(d: dict, n_labels: int) -> tuple[float, str]:
    """What ranks the alternatives on a band: the mean system gain over the
    elevations of interest [dBi], else minus the total loss [dB]."""
    if d.get("system_gain_dbi") is not None:
        return sum(d["system_gain_dbi"]) / n_labels, "system gain"
    total = d["loss_db"]["total"]
    return (-total if total is not None else float("-inf")), "total loss"


def _summary(results: dict, report: dict) -> str:
    """Per band: which way of feeding wins, and by how many dB over the
    next best."""
    labels = [e["label"] for e in report["elevations"]]
    out = []
    for i, b in enumerate(results["bands"]):
        scored = sorted(((_score(a["bands"][i], len(labels)), a, a["bands"][i])
                         for a in report["alternatives"]), key=lambda t: -t[0][0])
        if not scored:
            continue
        (top, basis), best, d = scored[0]
        margin = ""
        if len(scored) > 1:
            (second, _), runner, _ = scored[1]
            margin = (f", {_num(top - second, '.1f')} dB ahead of {_e(runner['name'])}"
                      if second > float("-inf") else "")
        gains = (", ".join(f"{_num(g, '.1f')} dBi {_e(lab)}"
                           for g, lab in zip(d["system_gain_dbi"], labels))
                 if d.get("system_gain_dbi") is not None
                 else f"total loss {_num(d['loss_db']['total'])} dB")
        out.append(f"<li><b>{_e(b['band'])}</b>: <b>{_e(best['name'])}</b> wins on {basis}"
                   f"{margin} ({gains}; SWR at the radio {_num(d['swr_centre'])} at the band's "
                   f"centre, {_num(d['delivered_w'], '.0f')} W of {report['radio_power_w']:g} W "
                   "reach the antenna)</li>")
    return "<ul>" + "".join(out) + "</ul>"


def _band_table(results: dict, report: dict) -> str:
    ff = {r["band"]: r for r in report["far_field"] if r["centre"]}
    labels = [e["label"] for e in report["elevations"]]
    head = ["band", "range MHz", "min SWR", "at MHz", "max SWR", "mean loss dB",
            "peak gain dBi", "at elev. deg", "efficiency", "avg. gain test"] + \
        [f"gain dBi at {_e(lab)} ({e['elevation_deg']:.0f} deg)"
         for lab, e in zip(labels, report["elevations"])]
    rows = []
    for b in results["bands"]:
        r = ff.get(b["band"], {})
        agt = r.get("average_gain")
        agt_s = _num(agt, ".3f")
        if r and not r["average_gain_ok"]:
            agt_s = f'<span class="bad">{agt_s}</span>'
        rows.append([_e(b["band"]), f"{b['low_hz'] / 1e6:.3f}-{b['high_hz'] / 1e6:.3f}",
                     _num(b["swr_min"]), _num(b["frequency_swr_min_hz"] / 1e6, ".3f"),
                     _num(b["swr_max"]), _num(b["loss_db_mean"]),
                     _num(r.get("peak_gain_dbi"), ".1f"), _num(r.get("peak_elevation_deg"), ".0f"),
                     _num(r.get("efficiency"), ".0%"), agt_s]
                    + [_num(g, ".1f") for g in r.get("gain_at_angles_dbi", [])])
    return _table(head, rows)


def _efficiency_note(report: dict) -> str:
    text = report.get("efficiency_convention")
    return f'<p class="muted">How the efficiency is made: {_e(text)}.</p>' if text else ""


def _across(report: dict) -> str:
    """Per band, the far field and the design's system gain at each frequency
    the far field was computed at; empty when only band centres were
    (``report.far_field: centre``)."""
    by_band: dict[str, list[dict]] = {}
    for r in report["far_field"]:
        by_band.setdefault(r["band"], []).append(r)
    if all(len(rs) < 2 for rs in by_band.values()):
        return ""
    labels = [e["label"] for e in report["elevations"]]
    head = (["MHz", "peak gain dBi", "at elev. deg", "efficiency"]
            + [f"gain dBi {_e(lab)}" for lab in labels] + ["feed loss dB"]
            + [f"system gain dBi {_e(lab)}" for lab in labels])
    parts = []
    for band, rs in by_band.items():
        rs = sorted(rs, key=lambda r: r["frequency_hz"])
        rows = []
        for r in rs:
            sg = r.get("system_gain_dbi") or [None] * len(labels)
            mhz = f"{r['frequency_hz'] / 1e6:.3f}" + (" (centre)" if r["centre"] else "")
            rows.append([mhz, _num(r["peak_gain_dbi"], ".1f"), _num(r["peak_elevation_deg"], ".0f"),
                         _num(r["efficiency"], ".0%")]
                        + [_num(g, ".1f") for g in r["gain_at_angles_dbi"]]
                        + [_num(r.get("total_loss_db"))] + [_num(g, ".1f") for g in sg])
        parts.append(f'<div class="across"><h3>{_e(band)}</h3>'
                     + _table(head, rows, cls="across")
                     + _img(figures.across_figure(band, rs, labels),
                            f"gain against frequency across {band}") + "</div>")
    return ("<h2>Across the bands</h2>" + "".join(parts)
            + '<p class="muted">Far field of the design at each frequency it was computed at '
            "(band edges and centre). Feed loss: the design's feed system, from the radio's "
            "available power to the feedpoint; system gain = antenna gain less that loss. "
            "The plots show antenna gain (solid) and system gain (dashed) at each elevation "
            "of interest.</p>")


def _alternatives(report: dict) -> str:
    labels = [e["label"] for e in report["elevations"]]
    alts = report["alternatives"]
    parts = ["<ol>" + "".join(f"<li><b>{_e(a['name'])}</b>: {_e(a['description'])}"
                              + (f'<br><span class="muted">{_e(a["chain"])}</span>'
                                 if a.get("chain") else "") + "</li>"
                              for a in alts) + "</ol>"]
    for i, b in enumerate(alts[0]["bands"]):
        head = ["#", "alternative", "SWR centre", "SWR max", "mismatch dB", "lines dB",
                "parts dB", "transformers dB", "tuner dB", "total dB",
                "delivered W"] + [f"system gain dBi {_e(lab)}" for lab in labels] + ["note"]
        rows = []
        for j, a in enumerate(alts):
            d = a["bands"][i]
            kinds = a["element_kinds"]
            by = {"line": 0.0, "part": 0.0, "transformer": 0.0, "matching": 0.0}
            for term, v in d["loss_db"].items():
                if term in ("mismatch", "total") or v is None:
                    continue
                k = kinds.get(term, "line")
                by[_LOSS_COLUMN.get(k, k)] += v
            notes = []
            for tid, t in d.get("tuners", {}).items():
                if not t["can_match_centre"]:
                    notes.append(f'{_e(tid)}: <span class="bad">cannot match</span>')
                    continue
                dial = ", ".join(f"{_e(k)} {_num(v * (1e12 if k.startswith('c') else 1e6), '.3g')}"
                                 f" {'pF' if k.startswith('c') else 'uH'}"
                                 for k, v in t["settings"].items())
                notes.append(f"{_e(tid)}: {dial}" + ("" if t["can_match_all"]
                                                     else "; not across the whole band"))
            note = "; ".join(notes)
            sg = d["system_gain_dbi"] or [None] * len(labels)
            rows.append([str(j + 1), _e(a["name"]), _num(d["swr_centre"]), _num(d["swr_max"]),
                         _num(d["loss_db"]["mismatch"]), _num(by["line"]), _num(by["part"]),
                         _num(by["transformer"]),
                         _num(by["matching"]) if "tuners" in d else "-",
                         _num(d["loss_db"]["total"]), _num(d["delivered_w"], ".1f")]
                        + [_num(g, ".1f") for g in sg] + [note])
        parts.append(f"<h3>{_e(b['band'])} at {b['frequency_hz'] / 1e6:.3f} MHz</h3>"
                     + _table(head, rows, left=2))
    return "".join(parts)


def _tuning(results: dict, report: dict) -> str:
    """The tuning chart (results.json's 'tuning'): empty without a tuner."""
    rows_in = results.get("tuning") or []
    if not rows_in:
        return ""
    p, pw = report["radio_power_w"], report["worst_case_power_w"]
    names = sorted({n for r in rows_in for n in r["settings"]}, key=lambda n: (n[0] != "c", n))
    caps = [n for n in names if n.startswith("c")]
    head = (["tuner", "band", "where", "MHz"]
            + [f"{_e(n)} {'pF' if n.startswith('c') else 'uH'}" for n in names]
            + ["loss dB", "SWR"] + [f"{_e(n)} peak V at {p:g} W / {pw:g} W" for n in caps]
            + [f"l A at {p:g} W / {pw:g} W", "caution"])
    rows = []
    for r in rows_in:
        def v(n, r=r):
            x = r["settings"].get(n)
            return _num(None if x is None else x * (1e12 if n.startswith("c") else 1e6), ".3g")
        caution = r["caution"]
        rows.append([_e(r["tuner"]), _e(r["band"]), _e(r["where"]),
                     f"{r['frequency_hz'] / 1e6:.3f}"] + [v(n) for n in names]
                    + [_num(r["loss_db"]), _num(r["swr"])]
                    + [f"{_num(r['v_peak'].get(n), '.0f')} / "
                       f"{_num(r['v_peak_worst'].get(n), '.0f')}" for n in caps]
                    + [f"{_num(r['i_rms'])} / {_num(r['i_rms_worst'])}",
                       f'<span class="bad">{_e(caution)}</span>' if caution else ""])
    return ("<h2>Tuning chart</h2>" + _table(head, rows, left=3)
            + '<p class="muted">What to dial on each band (also in tuning.csv). Never touch a '
            "tuner while transmitting: its capacitors carry the peak voltages shown.</p>")


def _switching(results: dict) -> str:
    """Which relay is closed on which band, and each relay's stress."""
    relays = results.get("relays") or []
    if not relays:
        return ""
    bands = [b["band"] for b in relays[0]["bands"]]
    head = ["element", "relays"] + [_e(b) for b in bands] + [
        "peak V across open contacts", "RMS A through closed contacts"]
    rows = []
    for r in relays:
        cells = [("closed" if b["closed"] else "open") + (", out" if b["element_out"]
                                                          else ", in")
                 for b in r["bands"]]
        vs = [b["v_open_peak"] for b in r["bands"] if b["v_open_peak"] is not None]
        cs = [b["i_closed_rms"] for b in r["bands"] if b["i_closed_rms"] is not None]
        rows.append([_e(r["id"]), str(r["relays"])] + cells
                    + [_num(max(vs) if vs else None, ".0f"), _num(max(cs) if cs else None)])
    total = sum(r["relays"] for r in relays)
    return ("<h2>Band switching</h2>" + _table(head, rows, left=1)
            + f'<p class="muted">{total} relay(s) in all. Contacts across a series element '
            "close to take it out; contacts in series with a shunt part open to take it out. "
            "Stress at the radio's power over each band's points; choose contacts rated for "
            "the voltage (high RF voltage) and current at your highest power.</p>")


def _stress(report: dict) -> str:
    p, pw = report["radio_power_w"], report["worst_case_power_w"]
    head = ["element", "kind", f"peak V at {p:g} W", f"peak V at {pw:g} W", "where",
            f"RMS A at {p:g} W", f"RMS A at {pw:g} W", "where", f"dissipation W at {p:g} W",
            f"dissipation W at {pw:g} W", "ratings", f"margin at {pw:g} W", "notes"]
    rows = []
    for r in report["stress"]:
        where = f"{r['f_v_peak_hz'] / 1e6:.3f} MHz"
        if r["position_m"] is not None:
            where += f", {r['position_m']:.1f} m from the antenna end"
        i_where = "-"
        if r.get("f_i_peak_hz") is not None:
            i_where = f"{r['f_i_peak_hz'] / 1e6:.3f} MHz"
            if r.get("i_position_m") is not None:
                i_where += f", {r['i_position_m']:.1f} m from the antenna end"
        rates = ", ".join(f"{k.split('_')[0]} {v:g}" for k, v in r["ratings"].items()) or "none"
        margin = ", ".join(
            (f'<span class="bad">{k.split("_")[0]} x{v:.2f}</span>' if v is not None and v < 1
             else f"{k.split('_')[0]} x{_num(v)}") for k, v in r["margin"].items()) or "-"
        rows.append([_e(r["id"]), _e(r["kind"]), _num(r["v_peak"], ".0f"),
                     _num(r["v_peak_worst"], ".0f"), where, _num(r["i_rms"]),
                     _num(r["i_rms_worst"]), i_where, _num(r["p_diss_w"], ".1f"),
                     _num(r["p_diss_worst_w"], ".1f"), _e(rates), margin,
                     _e("; ".join(r["notes"]))])
    per_band = []
    ids = [r["id"] for r in report["stress"]]
    for band, rs in report["stress_by_band"].items():
        per_band.append([_e(band)] + [f"{_num(r['v_peak'], '.0f')} / "
                                      f"{_num(r['v_peak_worst'], '.0f')}"
                                      for r in rs])
    return (_table(head, rows, left=2) + f"<h3>Peak voltage per band, V at {p:g} W / {pw:g} W"
            "</h3>" + _table(["band"] + [_e(i) for i in ids], per_band))


def _common_mode(report: dict) -> str:
    """The feed line's outside, when its route is modelled."""
    cm = report.get("common_mode")
    if not cm:
        return ""
    labels = [e["label"] for e in report["elevations"]]
    probes = list(cm["bands"][0]["current_a_max"]) if cm["bands"] else []
    loads = list(cm["bands"][0]["heat_w_max"]) if cm["bands"] else []
    p = report["radio_power_w"]
    head = (["band"] + [f"current A at {_e(k)}" for k in probes]
            + [f"heat W in {_e(k)}" for k in loads]
            + ["line radiates W (own currents)",
               "SWR max (line modelled / ideal line)", "SWR change", "peak gain dBi (modelled / "
               "ideal)"] + [f"gain dBi {_e(lab)} (modelled / ideal)" for lab in labels])
    rows = []
    for b in cm["bands"]:
        g = b.get("gain_at_angles_dbi") or []
        g0 = b.get("gain_at_angles_dbi_ideal_line") or []
        rows.append([_e(b["band"])]
                    + [_num(b["current_a_max"][k], ".3f") for k in probes]
                    + [_num(b["heat_w_max"][k], ".2f") for k in loads]
                    + [_num(b.get("line_radiated_w"), ".2f"),
                       f"{_num(b['swr_max'])} / {_num(b['swr_max_ideal_line'])}",
                       _num(100 * b["swr_change_max"], ".1f") + " %",
                       f"{_num(b.get('peak_gain_dbi'), '.1f')} / "
                       f"{_num(b.get('peak_gain_dbi_ideal_line'), '.1f')}"]
                    + [f"{_num(a, '.1f')} / {_num(c, '.1f')}" for a, c in zip(g, g0)])
    return ("<h2>Common mode on the feed line</h2>" + _table(head, rows)
            + f'<p class="muted">The feed line\'s outside is modelled as wires along its route '
            f"(the shield meets the station ground: {_e(cm['entry'])}). Currents are RMS at "
            f"{p:g} W, the largest over each band; a choke's heat is part of the loss budget. "
            f"{_e(cm['note'])}. Common-mode current brings RF into the shack and the line "
            "radiates and picks up noise; a choke of a few kilohms resistive at the feed point "
            "is the usual cure (common practice). Chokes at high power run hot: check their "
            "ratings, and mind the high voltage across a choke.</p>")


def _exposure(report: dict) -> str:
    p, pw = report["radio_power_w"], report["worst_case_power_w"]
    rows = [[_e(x["band"]), f"{x['frequency_hz'] / 1e6:.3f}", _num(x["limit_w_m2"] / 10, ".3f"),
             _num(x["gain_dbi"], ".1f"), _num(x["distance_m"], ".1f"),
             _num(x["distance_worst_m"], ".1f")] for x in report["exposure"]]
    head = ["band", "MHz", "limit mW/cm2", "peak gain dBi", f"distance m at {p:g} W",
            f"distance m at {pw:g} W"]
    basis = report.get("exposure_basis", "")
    factor = report["exposure"][0].get("reflection_factor", 2.56) if report["exposure"] else 1
    formula = "S = P G / (4 pi R^2)" if factor == 1 else f"S = {factor:g} P G / (4 pi R^2)"
    return (_table(head, rows) + '<p class="muted">Estimate of the distance beyond which '
            "the power density falls below the general-population (uncontrolled) limit of "
            f"47 CFR 1.1310, from {formula} with the antenna's peak gain and the "
            f"radio's full power (duty factor {report['exposure_duty']:g}, no feed loss "
            f"deducted); {_e(basis)}. The far-field formula does not "
            "hold in the reactive near field of an HF antenna, where distances this short lie; "
            "your local regulator's limits and evaluation method decide.</p>")


def _provenance(results: dict, manifest: dict, report: dict) -> str:
    v = manifest.get("versions", {})
    rows = [["design", _e(results["design"])],
            ["config SHA-256", _e(results["config_sha256"])],
            ["command", _e(manifest.get("command", ""))],
            ["run", _e(f"{manifest.get('started_utc', '')} to {manifest.get('finished_utc', '')}")],
            ["versions", _e(", ".join(f"{k} {x}" for k, x in v.items()))],
            ["optimised design from", _e(report.get("optimised_from") or "no study")],
            ["report written", _e(datetime.now(UTC).isoformat(timespec="seconds"))]]
    return _table(["", ""], rows, left=2)


def render_html(results: dict, report: dict, manifest: dict) -> str:
    """The report page as text."""
    name = _e(results["design"])
    cautions = "".join(f"<li>{_e(c)}</li>" for c in GENERAL_CAUTIONS)
    found = "".join(f"<li>{_e(c)}</li>" for c in
                    list(results.get("cautions", [])) + _stress_cautions(report))
    findings = "".join(f"<li>{_e(f.get('severity', ''))}: {_e(f.get('rule', ''))}: "
                       f"{_e(f.get('message', ''))}</li>" for f in results.get("findings", []))
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>necflow report: {name}</title><style>{CSS}</style></head><body>
<h1>{name}</h1>
<p class="muted">{report['radio_power_w']:g} W from a {report['z_ref_ohm']:g} ohm radio;
SWR limit {report['swr_limit']:g}; ground: {_e(report['ground'])}.</p>
<div class="caution"><b>Cautions</b><ul>{cautions}{found}</ul>
Follow local codes, your licence conditions and licensed practice.</div>
<h2>Summary</h2>{_summary(results, report)}
<h2>Bands</h2>{_band_table(results, report)}{_efficiency_note(report)}
<p class="muted">Gains are power gains at each band's centre (wire and ground loss included);
peak gain in the plane of the strongest lobe; gain at an elevation is the best over all
azimuths. Average gain test: the lossless model over perfect ground (or in free space) should
give 2.0 (1.0) within a few percent.</p>
{_across(report)}
<h2>Alternatives</h2>{_alternatives(report)}
<p class="muted">System gain = antenna gain less the feed system's total loss (from the radio's
available power to the feedpoint). Every alternative is built of the same element models. The
tuner is the design's own tuner when it has one, else a high-pass T of lossy parts
(report.tuner), set at each frequency for the least loss within its parts' ranges; the note
gives its settings at the band's centre.</p>
{_tuning(results, report)}
{_switching(results)}
<h2>SWR</h2>{_img(figures.swr_figure(results, report), "SWR at the radio per band")}
<h2>Impedance</h2>{_img(figures.smith_figure(results), "Smith charts")}
<h2>Loss budget</h2>{_img(figures.loss_figure(report), "stacked loss per alternative")}
<h2>Patterns</h2>{_img(figures.pattern_figure(report), "elevation and azimuth patterns")}
{_common_mode(report)}
<h2>Component stress</h2>{_stress(report)}
<h2>RF exposure estimate</h2>{_exposure(report)}
<h2>Model findings</h2><ul>{findings or "<li>all modelling rules satisfied</li>"}</ul>
<h2>Provenance</h2>{_provenance(results, manifest, report)}
</body></html>
"""


def _read(path: Path) -> dict:
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise ConfigError(f"{path} is missing: is this a necflow run folder?") from None
    except (OSError, ValueError) as exc:
        raise ConfigError(f"cannot read {path}: {exc}") from None


def write_report(folder) -> Path:
    """(Re)write ``report.html`` in a run folder from the files it holds."""
    folder = Path(folder)
    if not folder.is_dir():
        raise ConfigError(f"{folder} is not a folder; expected a run folder written by evaluate")
    results = _read(folder / "results.json")
    report = read_report_data(folder)
    manifest = _read(folder / "manifest.json") if (folder / "manifest.json").exists() else {}
    path = folder / FILE_NAME
    fileio.write_text(path, render_html(results, report, manifest))
    return path
