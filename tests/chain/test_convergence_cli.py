"""The convergence check as a user meets it: `necflow check` and `evaluate --convergence`."""

from __future__ import annotations

import json

import pytest

from necflow.cli import main
from necflow.engine import solve_count
from tests.conftest import CONFIGS, demo_text_without_route

DELTA = str(CONFIGS / "wire-list.yaml")   # one band, reflection ground: quick to solve


@pytest.mark.engine
def test_check_prints_the_convergence_table(capsys):
    before = solve_count()
    assert main(["check", DELTA]) == 0
    out = capsys.readouterr().out
    lines = out.splitlines()
    head = next(i for i, ln in enumerate(lines) if ln.startswith("Convergence"))
    assert lines[head + 2].startswith("20m") and "%" in lines[head + 2]
    assert "caution" not in out
    # The top of the one band, with the design's model and the refined one.
    assert solve_count() - before == 2


@pytest.mark.engine
def test_check_cautions_per_band_above_the_threshold(tmp_path, capsys):
    """The demo converges on every band; the same design cut into 10 segments
    per wavelength (the guide's coarsest) does not at 10 m (its feed point is
    kilohms there), and each band whose impedance or SWR moves by more than
    2 % gets its own caution line."""
    assert main(["check", str(CONFIGS / "demo.yaml")]) == 0
    out = capsys.readouterr().out
    assert not [ln for ln in out.splitlines() if ln.startswith("caution:")]
    coarse = tmp_path / "coarse.yaml"
    # without its route: a routed model keeps its feed gap when refined, so
    # the coarse cut's sensitivity at the kilohm 10 m feed point shows on the
    # antenna alone
    coarse.write_text(demo_text_without_route() + "model: {segments_per_wavelength: 10}\n",
                      encoding="utf-8")
    main(["check", str(coarse)])
    out = capsys.readouterr().out
    cautions = [ln for ln in out.splitlines() if ln.startswith("caution:")]
    rows = {ln.split()[0]: ln for ln in out.splitlines()
            if ln.split() and ln.split()[0] in ("80m", "40m", "20m", "17m", "10m")}
    flagged = {c.split()[1].rstrip(":") for c in cautions}
    assert "10m" in flagged, out
    for band in flagged:
        assert band in rows and "segments are doubled" in next(
            c for c in cautions if c.split()[1].rstrip(":") == band)


def test_check_can_skip_it(capsys):
    before = solve_count()
    assert main(["check", DELTA, "--no-convergence"]) == 0
    assert "Convergence" not in capsys.readouterr().out
    assert solve_count() == before


def test_check_skips_it_when_the_refined_model_is_over_the_limit(tmp_path, capsys):
    text = (CONFIGS / "wire-list.yaml").read_text(encoding="utf-8")
    path = tmp_path / "d.yaml"
    path.write_text(text + "model: {max_segments: 100}\n", encoding="utf-8")
    before = solve_count()
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "Convergence check skipped" in out and "convergence check" in out
    assert solve_count() == before


@pytest.mark.engine
def test_evaluate_stores_it_on_request(tmp_path, capsys):
    out_dir = tmp_path / "run"
    assert main(["evaluate", DELTA, "--out", str(out_dir), "--convergence"]) == 0
    doc = json.loads((out_dir / "results.json").read_text())
    conv = doc["convergence"]
    assert conv["refinement"] == 2 and conv["segments_refined"] > conv["segments"]
    assert conv["segments"] == doc["model"]["segments"]
    (band,) = conv["bands"]
    assert band["band"] == "20m" and band["frequency_hz"] == pytest.approx(14.35e6)
    # The design's model at the band top is the one the evaluation solved there
    # (in a sweep rather than alone: round-off amplified by 1e-3-wavelength
    # segments to about 1e-8, see tests/engine/test_adapter.py).
    top = [p for p in doc["points"] if p["frequency_hz"] == band["frequency_hz"]][0]
    assert band["z_ohm"] == pytest.approx(top["z_feedpoint_ohm"], rel=1e-7)
    assert band["swr"] == pytest.approx(top["swr"], rel=1e-7)
    assert "Convergence" in capsys.readouterr().out
    # Without the flag, no key.
    assert main(["evaluate", DELTA, "--out", str(tmp_path / "plain")]) == 0
    assert "convergence" not in json.loads((tmp_path / "plain" / "results.json").read_text())
