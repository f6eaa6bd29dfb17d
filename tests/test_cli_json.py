"""Scripting conventions: ``--json`` gives one document on stdout and nothing
else, with the keys the README documents; CSV files hold numbers with their
units in unique headers; one meaning per option name.

Where a test is about the command line and not about antenna physics, the
engine's seam ``necflow.engine.solve_feedpoint`` is the stand-in impedance of
``tests.conftest`` (a series-resonant feed point); tests marked ``engine``
run the far field of a real solve.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import pytest

from necflow.cli import main
from tests.conftest import CONFIGS, JOB_DESIGN_BODY, dipole_like_solver
from tests.optimize.helpers import write_study

DESIGN = "name: json-doublet" + JOB_DESIGN_BODY

#: Per-band records of optimize and trim (BandSummary).
BAND_KEYS = {"band", "low_hz", "high_hz", "weight", "swr_min", "frequency_swr_min_hz",
             "swr_low_edge", "swr_high_edge", "swr_max", "loss_db_mean", "loss_db_max",
             "fraction_within_limit"}


@pytest.fixture
def stand_in(monkeypatch):
    monkeypatch.setattr("necflow.engine.solve_feedpoint", dipole_like_solver)


@pytest.fixture
def design(tmp_path) -> str:
    path = tmp_path / "d.yaml"
    path.write_text(DESIGN, encoding="utf-8")
    return str(path)


def _json(argv, capsys, status=0) -> tuple[dict, str]:
    """Run the command; its stdout must be exactly one JSON document."""
    code = main(argv)
    out, err = capsys.readouterr()
    assert code == status, err
    doc = json.loads(out)              # raises on anything but one document
    assert isinstance(doc, dict)
    return doc, err


def _numeric_csv(path, text_columns: set[str]) -> list[dict]:
    """Read a CSV file: headers unique, every other column a number."""
    with open(path, newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    head = rows[0]
    assert len(head) == len(set(head)), f"repeated header in {path}: {head}"
    for r in rows[1:]:
        assert len(r) == len(head)
        for h, v in zip(head, r):
            if h not in text_columns:
                float(v)               # raises on '8 m' or any other text
    return [dict(zip(head, r)) for r in rows[1:]]


def test_check_json(design, capsys):
    doc, _ = _json(["check", design, "--no-convergence", "--json"], capsys)
    assert {"design", "name", "valid", "model", "findings", "convergence", "status"} <= set(doc)
    assert doc["name"] == "json-doublet" and doc["status"] == 0
    assert doc["convergence"] == {"skipped": "--no-convergence"}
    assert {"wires", "total_segments", "ground_kind", "ground_verdict"} <= set(doc["model"])
    assert doc["model"]["total_segments"] == sum(w["segments"] for w in doc["model"]["wires"])


def test_fit_json(design, tmp_path, capsys, stand_in):
    sweep = tmp_path / "sweep.csv"
    sweep.write_text("frequency_mhz,swr\n7.0,1.8\n7.05,1.4\n7.1,1.2\n7.15,1.5\n7.2,2.0\n",
                     encoding="utf-8")
    doc, _ = _json(["fit", design, str(sweep), "--starts", "2", "--out", str(tmp_path / "f"),
                    "--json"], capsys)
    assert {"design", "sweeps", "complex_data", "solves", "fields", "residual_rms_before",
            "residual_rms_after", "bands", "notes", "files"} <= set(doc)
    (field,) = doc["fields"]
    assert field["path"] == "antenna.height" and field["unit"] == "m"
    assert 7.0 <= field["fitted"] <= 13.0            # SI, within the stated range
    assert doc["complex_data"] is False               # an SWR sweep carries no phase
    for path in doc["files"].values():
        assert Path(path).parent == tmp_path / "f" and Path(path).is_file()


def test_trim_json(design, tmp_path, capsys, stand_in):
    out = tmp_path / "trimmed.yaml"
    doc, err = _json(["trim", design, "--write", str(out), "--json"], capsys)
    assert {"design", "targets", "before", "steps", "reached_hz", "unreachable", "warnings",
            "solves", "files"} <= set(doc)
    assert doc["files"] == {"trimmed_design": str(out)} and out.is_file()
    assert set(doc["before"][0]) == BAND_KEYS
    assert doc["targets"] == [{"band": "40m", "frequency_hz": 7.05e6, "how": "frequency"}]
    for step in doc["steps"]:
        assert {"path", "old", "new", "instruction", "bands", "pushed_out"} <= set(step)
    # the trimmed lowest SWR is where the file says, within trim's 1 % tolerance
    assert abs(doc["reached_hz"]["40m"] / 7.05e6 - 1) <= 0.01 or "40m" in doc["unreachable"]


def test_tolerance_json(design, tmp_path, capsys, stand_in):
    plot = tmp_path / "t.png"
    doc, _ = _json(["tolerance", design, "--plot", str(plot), "--json"], capsys)
    assert {"design", "seed", "cases", "geometry_states", "swr_limit", "bands",
            "files"} <= set(doc)
    assert doc["cases"] == 30 and doc["files"] == {"plot": str(plot)} and plot.is_file()
    assert {"band", "yield", "within_mean", "loss_p5", "loss_p50", "loss_p95",
            "swr_max_p95"} == set(doc["bands"][0])
    b = doc["bands"][0]
    assert b["loss_p5"] <= b["loss_p50"] <= b["loss_p95"]


def test_batch_json_and_summary_csv(tmp_path, capsys, stand_in):
    write_study(tmp_path)
    batch = tmp_path / "batch.yaml"
    batch.write_text("name: sites\nbase: design.yaml\nmode: evaluate\nmatrix:\n"
                     "  antenna.height: [8 m, 1200 cm]\n"
                     "  ground:\n    - {model: sommerfeld, surface: medium-dry}\n"
                     "    - {model: sommerfeld, surface: wet}\n", encoding="utf-8")
    out = tmp_path / "out"
    doc, _ = _json(["batch", str(batch), "--out", str(out), "--json"], capsys)
    assert {"batch", "mode", "matrix", "cells", "skipped", "files"} <= set(doc)
    assert doc["files"]["summary_csv"] == str(out / "summary.csv")
    assert len(doc["cells"]) == 4
    assert {"cell", "overrides", "cost", "worst_swr", "loss_db", "bands"} <= set(doc["cells"][0])
    rows = _numeric_csv(out / "summary.csv", text_columns={"cell", "ground"})
    # 1200 cm is written in the column's unit, metres
    assert [float(r["antenna.height [m]"]) for r in rows] == [8.0, 8.0, 12.0, 12.0]
    assert [r["ground"] for r in rows[:2]] == ["sommerfeld/medium-dry", "sommerfeld/wet"]
    for r, cell in zip(rows, doc["cells"]):
        assert float(r["cost"]) == pytest.approx(cell["cost"], rel=1e-12)


def test_batch_text_prints_its_paths(tmp_path, capsys, stand_in):
    write_study(tmp_path)
    batch = tmp_path / "batch.yaml"
    batch.write_text("name: b\nbase: design.yaml\nmatrix:\n  antenna.height: [8 m, 12 m]\n",
                     encoding="utf-8")
    assert main(["batch", str(batch), "--out", str(tmp_path / "o")]) == 0
    out = capsys.readouterr().out
    assert str(tmp_path / "o" / "summary.csv") in out and str(tmp_path / "o") in out


@pytest.mark.engine
def test_evaluate_and_report_json_and_results_csv(tmp_path, capsys):
    run = tmp_path / "run"
    doc, _ = _json(["evaluate", str(CONFIGS / "inverted-v.yaml"), "--out", str(run),
                    "--json"], capsys)
    assert {"design", "necflow_version", "config_sha256", "points", "bands", "run_folder",
            "report"} <= set(doc)
    assert doc["run_folder"] == str(run) and doc["report"] == str(run / "report.html")
    saved = json.loads((run / "results.json").read_text(encoding="utf-8"))
    assert saved["points"] == doc["points"]
    rows = _numeric_csv(run / "results.csv", text_columns={"band"})
    assert len(rows) == len(doc["points"])
    for r, p in zip(rows, doc["points"]):
        assert float(r["frequency_mhz"]) == pytest.approx(p["frequency_hz"] / 1e6, abs=1e-6)
        assert float(r["swr"]) == pytest.approx(p["swr"], rel=1e-5)
    stress = [h for h in rows[0] if h.endswith(("_v_peak_v", "_i_rms_a", "_p_diss_w"))]
    assert stress                                  # each stress column carries its unit
    rep, _ = _json(["report", str(run), "--json"], capsys)
    assert rep == {"run_folder": str(run), "report": str(run / "report.html")}
    # without --json the report's path is printed too
    assert main(["evaluate", str(CONFIGS / "inverted-v.yaml"), "--out",
                 str(tmp_path / "run2")]) == 0
    assert f"report: {tmp_path / 'run2' / 'report.html'}" in capsys.readouterr().out


@pytest.mark.engine
def test_optimize_json_and_leaderboard(tmp_path, capsys, stand_in):
    design = write_study(tmp_path)
    out = tmp_path / "run"
    doc, _ = _json(["optimize", str(design), "--trials", "4", "--seed", "1", "--no-cache",
                    "--out", str(out), "--json"], capsys)
    assert {"study", "storage", "stopped", "trials", "start", "best", "before",
            "files"} <= set(doc)
    assert {"trial", "values", "values_text", "objective", "objective_unrounded",
            "bands"} <= set(doc["best"])
    assert set(doc["best"]["bands"][0]) == BAND_KEYS
    assert doc["files"]["leaderboard_csv"] == str(out / "leaderboard.csv")
    assert set(doc["best"]["values"]) == {"antenna.span", "feed.ladder.length",
                                          "feed.cap.value"}
    rows = _numeric_csv(out / "leaderboard.csv", text_columns=set())
    assert "objective.cost" in rows[0] and "cost" in rows[0]
    assert float(rows[0]["objective.cost"]) == pytest.approx(doc["best"]["objective_unrounded"]
                                                             [0], rel=1e-5)
    assert not any(math.isnan(float(v)) for v in rows[0].values())


def test_compare_study_option_and_its_old_spelling(design, tmp_path, capsys):
    missing = str(tmp_path / "no-study")
    assert main(["evaluate", design, "--compare-study", missing]) == 2
    err = capsys.readouterr().err
    assert "--compare-study" in err and "warning" not in err
    assert main(["evaluate", design, "--study", missing]) == 2
    err = capsys.readouterr().err.splitlines()
    assert err[0].startswith("necflow: warning: --study DIR is deprecated")
    assert err[1].startswith("necflow: error: ") and "--study" in err[1]
    assert main(["evaluate", design, "--study", missing, "--compare-study", missing]) == 2
    assert "once" in capsys.readouterr().err


def test_an_option_name_means_one_thing(capsys):
    """``--study`` names a study (optimize) and nothing else; ``--out`` is
    where a command's output goes: the folder of a command that writes
    several files, the file of one that otherwise prints to stdout."""
    from necflow.cli import _parser

    parser = _parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    metavars: dict[str, set] = {}
    for p in sub.choices.values():
        for a in p._actions:
            for opt in a.option_strings:
                if a.help != "==SUPPRESS==" and "deprecated" not in (a.help or ""):
                    metavars.setdefault(opt, set()).add((a.metavar, a.dest))
    assert metavars["--study"] == {("NAME", "study")}
    assert metavars["--out"] <= {("DIR", "out"), ("FILE", "out")}
    for name in ("evaluate", "optimize", "batch", "fit"):
        (out,) = [a for a in sub.choices[name]._actions if "--out" in a.option_strings]
        assert out.metavar == "DIR", name
    assert metavars["--json"] == {(None, "json")}
    for name in ("check", "evaluate", "optimize", "batch", "fit", "trim", "tolerance", "report"):
        assert any("--json" in a.option_strings for a in sub.choices[name]._actions), name
