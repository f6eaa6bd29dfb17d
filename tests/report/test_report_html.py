"""The decision report end to end: evaluate the demo (with a study and a
user-named alternative), open report.html in headless Chromium, rebuild it
with 'necflow report' without solving, and check the acceptance figures."""

from __future__ import annotations

import json
import math
import os
import re
import shutil
import subprocess

import numpy as np
import pytest
import skrf

from necflow.chain import evaluate, load_design
from necflow.cli import main
from necflow.config.resolve import resolved_yaml
from necflow.report.results import results_document, write_json
from tests.conftest import CONFIGS, ROOT

pytestmark = pytest.mark.engine

HOSTILE = '<img src=x onerror="console.error(1)"> & "cap"'
CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                  "--no-first-run", "--disable-background-networking",
                  "--disable-component-update", "--disable-sync"]
CHECK_SCRIPT = """<script>
window.addEventListener('load', function () {
  var imgs = Array.prototype.slice.call(document.images);
  var bad = imgs.filter(function (i) { return !(i.complete && i.naturalWidth > 0); });
  bad.forEach(function (i) { console.error('broken image: ' + i.alt); });
  document.body.setAttribute('data-check', 'images=' + imgs.length + ' broken=' + bad.length);
});
</script></body>"""


def chromium() -> str:
    path = shutil.which("chromium") or ("/usr/bin/chromium"
                                        if os.path.exists("/usr/bin/chromium") else None)
    if path is None:
        if os.environ.get("CI") == "true":
            pytest.fail("headless Chromium is missing in CI (.ci/run installs it)")
        pytest.skip("headless Chromium not installed (apt-get install chromium)")
    return path


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    base = tmp_path_factory.mktemp("report")
    text = (CONFIGS / "demo.yaml").read_text(encoding="utf-8")
    text += ("report:\n  alternatives:\n"
             f"    - name: {json.dumps(HOSTILE)}\n"
             "      tuner: radio\n"
             "      feed: [{id: run, line: rg-213, length: 37 m}]\n")
    design_path = base / "design.yaml"
    design_path.write_text(text, encoding="utf-8")
    # A study folder as necflow/optimize leaves it: best.yaml and best/results.json.
    best = load_design(design_path)
    best = best.model_copy(update={"feed": [e.model_copy(update={"value": 330e-12})
                                            if e.id == "cap" else e for e in best.feed]})
    study = base / "study"
    (study / "best").mkdir(parents=True)
    (study / "best.yaml").write_text(resolved_yaml(best), encoding="utf-8")
    write_json(results_document(evaluate(best), config_sha256="0" * 64),
               study / "best" / "results.json")
    out = base / "run"
    assert main(["evaluate", str(design_path), "--out", str(out), "--study", str(study)]) == 0
    return out


def test_report_renders_in_headless_chromium(run, tmp_path):
    exe = chromium()
    html = (run / "report.html").read_text(encoding="utf-8")
    page = tmp_path / "check.html"
    page.write_text(html.replace("</body>", CHECK_SCRIPT, 1), encoding="utf-8")
    flags = CHROMIUM_FLAGS + [f"--user-data-dir={tmp_path / 'profile'}"]
    res = subprocess.run([exe, *flags, "--enable-logging=stderr", "--v=0",
                          "--virtual-time-budget=10000", "--dump-dom", page.as_uri()],
                         capture_output=True, text=True, timeout=120)
    m = re.search(r'data-check="images=(\d+) broken=(\d+)"', res.stdout)
    assert m, "the check script did not run: " + res.stderr[-2000:]
    assert int(m.group(1)) >= 4 and int(m.group(2)) == 0
    console = [ln for ln in res.stderr.splitlines() if "CONSOLE" in ln]
    assert console == []
    # The screenshot is kept for people to look at (test-artifacts/ is ignored).
    art = ROOT / "test-artifacts"
    art.mkdir(exist_ok=True)
    shot = art / "report.png"
    subprocess.run([exe, *flags, "--window-size=1200,4000", f"--screenshot={shot}",
                    (run / "report.html").as_uri()], capture_output=True, timeout=120)
    assert shot.stat().st_size > 10_000


def test_report_is_self_contained_escaped_and_small(run):
    html = (run / "report.html").read_text(encoding="utf-8")
    assert len(html.encode()) < 5 * 1024 * 1024
    refs = re.findall(r'(?:src|href)\s*=\s*"([^"]*)"', html)
    assert refs and all(r.startswith("data:image/png;base64,") for r in refs)
    assert "http://" not in html and "https://" not in html and "<link" not in html
    assert HOSTILE not in html and "&lt;img src=x" in html


def test_alternatives_and_stress_table_of_the_demo(run):
    data = json.loads((run / "report_data.json").read_text())
    names = [a["name"] for a in data["alternatives"]]
    assert names[:5] == ["as designed", "without series parts", "shack tuner",
                         "shack tuner without series parts", "remote tuner at the feedpoint"]
    assert HOSTILE in names and "optimised" in names
    html = (run / "report.html").read_text(encoding="utf-8")
    assert "peak V at 100 W" in html and "peak V at 1500 W" in html
    # The series capacitor's peak voltage: the worst over all points of
    # results.json at 100 W, and sqrt(1500/100) times it at 1500 W (linear
    # network; 1e-9 is rounding).
    res = json.loads((run / "results.json").read_text())
    cap = next(r for r in data["stress"] if r["id"] == "cap")
    v = max(p["stress"]["cap"]["v_peak"] for p in res["points"])
    assert cap["v_peak"] == pytest.approx(v, rel=1e-9)
    assert cap["v_peak_worst"] == pytest.approx(v * math.sqrt(15.0), rel=1e-9)
    assert f"{cap['v_peak_worst']:.0f}" in html
    # Average gain test on the demo's lossless copy: 2.0 within a few percent.
    assert all(r["average_gain_ok"] for r in data["far_field"])


def test_s1p_files_match_results(run):
    res = json.loads((run / "results.json").read_text())
    for pos, key in (("feedpoint", "z_feedpoint_ohm"), ("radio", "z_radio_ohm")):
        net = skrf.Network(str(run / f"{pos}.s1p"))
        want = {p["frequency_hz"]: complex(*p[key]) for p in res["points"]}
        np.testing.assert_allclose(net.z[:, 0, 0], [want[f] for f in net.f], rtol=1e-6)


def test_report_command_rebuilds_without_the_engine(run, monkeypatch):
    from necflow.engine import pynec_adapter

    def no_engine(*a, **k):
        raise AssertionError("the engine was called")

    monkeypatch.setattr(pynec_adapter, "_prepare", no_engine)
    (run / "report.html").unlink()
    assert main(["report", str(run)]) == 0
    assert (run / "report.html").stat().st_size > 100_000


def test_report_command_on_a_folder_without_report_data(tmp_path, capsys):
    (tmp_path / "results.json").write_text("{}")
    assert main(["report", str(tmp_path)]) != 0
    assert "report_data.json is missing" in capsys.readouterr().err
