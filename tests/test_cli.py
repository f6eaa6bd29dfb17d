"""The command line as a user meets it: exit statuses, one-line errors, run folders."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from necflow.cli import main
from tests.conftest import CONFIGS, ROOT

try:
    from tests.config.bad_cases import BAD_CASES
except ImportError:  # pragma: no cover - the list lives with the loader tests
    BAD_CASES = []


def _run(argv, capsys):
    code = main(argv)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("case", BAD_CASES, ids=lambda c: c.id)
def test_bad_input_is_one_line_exit_2_no_traceback(case, tmp_path, capsys):
    path = tmp_path / "design.yaml"
    if isinstance(case.text, bytes):
        path.write_bytes(case.text)
    else:
        path.write_text(case.text, encoding="utf-8")
    code, out, err = _run(["check", str(path)], capsys)
    assert code == 2
    lines = [ln for ln in err.splitlines() if ln.strip() and not ln.startswith("necflow: warning")]
    assert len(lines) == 1, err
    assert "Traceback" not in err
    assert lines[0].startswith("necflow: error: ") and str(path) in lines[0]


def test_there_are_at_least_thirty_bad_input_cases():
    assert len(BAD_CASES) >= 30


def test_missing_file(tmp_path, capsys):
    code, _, err = _run(["evaluate", str(tmp_path / "nope.yaml")], capsys)
    assert code == 2 and "nope.yaml" in err and "Traceback" not in err


def test_debug_shows_the_traceback(tmp_path, capsys):
    path = tmp_path / "d.yaml"
    path.write_text("name: x\n", encoding="utf-8")
    code, _, err = _run(["--debug", "check", str(path)], capsys)
    assert code == 2 and "Traceback" in err


def test_real_entry_point_no_traceback(tmp_path):
    path = tmp_path / "bad.yaml"
    path.write_text("name: [unclosed\n", encoding="utf-8")
    for cmd in ([sys.executable, "-m", "necflow", "check", str(path)],
                [sys.executable, "-m", "necflow", "evaluate", str(path)]):
        r = subprocess.run(cmd, capture_output=True, text=True, cwd=ROOT, timeout=120)
        assert r.returncode == 2, r.stderr
        assert "Traceback" not in r.stderr
        assert len(r.stderr.strip().splitlines()) == 1


def _write(tmp_path, text):
    p = tmp_path / "design.yaml"
    p.write_text(text, encoding="utf-8")
    return str(p)


BASE = """
name: rules
bands: [20m]
antenna: {{shape: doublet, span: {span}, height: {height}, wire: {{diameter: {diameter}}}}}
ground: {{model: {ground}, surface: medium-dry}}
feed: []
model: {{segments_per_wavelength: {spw}}}
"""


@pytest.mark.engine
@pytest.mark.parametrize("params, phrase", [
    # NEC-2 user's guide rules, from memory of Burke & Poggio 1981, Part III.  Segments
    # grow from the source at 20 % per metre, so 4 per wavelength (0.25 wavelength)
    # shows only on a wire long enough to reach that length: 60 m at 14 MHz.
    (dict(span="60 m", height="10 m", diameter="2 mm", ground="sommerfeld", spw=4),
     "0.1 wavelength"),
    (dict(span="10 m", height="10 m", diameter="400 mm", ground="sommerfeld", spw=20), "radius"),
    (dict(span="10 m", height="1 m", diameter="2 mm", ground="reflection", spw=20), "reflection"),
])
def test_check_names_the_rule(params, phrase, tmp_path, capsys):
    code, out, err = _run(["check", _write(tmp_path, BASE.format(**params))], capsys)
    assert code in (0, 1)
    rule_lines = [ln for ln in out.splitlines() if ln.startswith(("error:", "warning:"))]
    assert any("NEC-2" in ln and phrase in ln for ln in rule_lines), out


@pytest.mark.engine
def test_check_prints_the_model_summary(capsys):
    code, out, _ = _run(["check", str(CONFIGS / "demo.yaml")], capsys)
    assert code == 0
    assert "segments" in out.lower() and "wavelength" in out.lower()


@pytest.mark.engine
@pytest.mark.parametrize("config", sorted(p.name for p in CONFIGS.glob("*.yaml")))
def test_evaluate_every_config_writes_the_contract(config, tmp_path, capsys):
    out_dir = tmp_path / "run"
    code, out, err = _run(["evaluate", str(CONFIGS / config), "--out", str(out_dir)], capsys)
    assert code == 0, err
    for name in ("design.resolved.yaml", "manifest.json", "results.json", "results.csv",
                 "swr.png"):
        assert (out_dir / name).is_file(), name
    doc = json.loads((out_dir / "results.json").read_text())
    assert {"design", "necflow_version", "config_sha256", "points", "bands"} <= set(doc)
    for p in doc["points"]:
        terms = sum(v for k, v in p["loss_db"].items() if k != "total")
        assert abs(terms - p["loss_db"]["total"]) < 0.01
        assert p["delivered_fraction"] == pytest.approx(10 ** (-p["loss_db"]["total"] / 10),
                                                        rel=1e-6)
    manifest = json.loads((out_dir / "manifest.json").read_text())
    assert manifest["config_sha256"] == doc["config_sha256"]
    assert "PyNEC" in manifest["versions"]
    # The resolved design is itself a valid design that evaluates the same way.
    code2, _, err2 = _run(["check", str(out_dir / "design.resolved.yaml")], capsys)
    assert code2 in (0, 1), err2
    assert "band" in out and "run folder" in out


def test_report_on_something_that_is_not_a_run_folder(tmp_path, capsys):
    code, _, err = _run(["report", str(tmp_path / "nope")], capsys)
    assert code == 2 and "not a folder" in err and "Traceback" not in err
    code, _, err = _run(["report", str(tmp_path)], capsys)
    assert code == 2 and "results.json" in err


def test_unwritable_run_folder_is_an_input_error(tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    path = _write(tmp_path, BASE.format(span="10 m", height="10 m", diameter="2 mm",
                                        ground="sommerfeld", spw=20))
    code, _, err = _run(["evaluate", path, "--out", str(blocker)], capsys)
    assert code == 2 and "--out" in err and len(err.strip().splitlines()) == 1


def test_late_errors_name_the_design_file_and_line(tmp_path, capsys):
    # Errors found after loading (here a search path) still name the file and
    # the line of the field, like the loader's own.
    text = (CONFIGS / "demo.yaml").read_text()
    text = text.replace("search:\n", "search:\n  feed.nothere.length: [1 m, 2 m]\n", 1)
    path = tmp_path / "d.yaml"
    path.write_text(text)
    line = text.splitlines().index("  feed.nothere.length: [1 m, 2 m]") + 1
    code, _, err = _run(["optimize", str(path), "--trials", "1", "--out",
                         str(tmp_path / "run")], capsys)
    assert code == 2 and f"{path}:{line}:" in err and "nothere" in err
    bare = tmp_path / "bare.yaml"
    bare.write_text(text.split("\ntolerances:")[0] + "\n")
    code, _, err = _run(["tolerance", str(bare)], capsys)
    assert code == 2 and str(bare) in err and "tolerances" in err


@pytest.mark.engine
def test_check_and_evaluate_share_one_rule_for_broken_modelling_rules(tmp_path, capsys):
    """A 0.9 m thick wire on a 10 m doublet at 20 m, 40 segments per
    wavelength: segments about 0.5 m long against a 0.45 m radius, below
    even the extended kernel's length/radius of about 2 (from memory of the
    NEC-2 user's guide, Burke and Poggio 1981, Part III; the engine then
    fails to load the geometry).  check exits 1 listing the rules; evaluate
    (which used to exit 0 on such a model, or 3 from the engine) exits 1
    with the same rules and solves nothing."""
    path = _write(tmp_path, BASE.format(span="10 m", height="10 m", diameter="900 mm",
                                        ground="sommerfeld", spw=40))
    code_check, out_check, _ = _run(["check", path], capsys)
    out_dir = tmp_path / "run"
    code_eval, out_eval, err_eval = _run(["evaluate", path, "--out", str(out_dir)], capsys)
    errors_check = [ln for ln in out_check.splitlines() if ln.startswith("error:")]
    errors_eval = [ln for ln in out_eval.splitlines() if ln.startswith("error:")]
    assert errors_check and errors_check == errors_eval
    assert code_check == code_eval == 1
    assert "not solved" in err_eval and len(err_eval.strip().splitlines()) == 1
    assert not (out_dir / "results.json").exists()
