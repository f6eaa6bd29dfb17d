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
    assert lines, err
    assert "Traceback" not in err
    # one line per problem of the file (most cases have one), each naming the file
    assert all(ln.startswith(f"necflow: error: {path}") for ln in lines), err
    assert len(lines) == len(set(lines)), err


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


# ----------------------------------------------------------------------------
# Every problem of a design file at once


def _cli(*argv, cwd=None):
    return subprocess.run([sys.executable, "-m", "necflow", *argv], capture_output=True,
                          text=True, cwd=cwd, timeout=300,
                          env={**__import__("os").environ, "PYTHONPATH": str(ROOT)})


def test_three_independent_errors_print_three_lines(tmp_path):
    from tests.config.bad_cases import BASE
    text = (BASE.replace("region: 2", "region: 9")            # line 2
            .replace("span: 20 m", "span: 20")                # line 6
            .replace("line: rg-213", "line: rg-214"))         # line 14, a catalog name
    path = tmp_path / "three.yaml"
    path.write_text(text, encoding="utf-8")
    run = _cli("check", str(path))
    assert run.returncode == 2, run.stderr
    lines = run.stderr.splitlines()
    assert len(lines) == 3, run.stderr
    assert [ln.removeprefix("necflow: error: ").split(": ", 2)[:2] for ln in lines] == [
        [f"{path}:2", "region"], [f"{path}:6", "antenna.span"],
        [f"{path}:14", "feed[3].line"]], run.stderr
    assert "did you mean 'rg-213'?" in lines[2]
    assert "Traceback" not in run.stderr and not run.stdout


def test_many_problems_are_capped(tmp_path, capsys):
    from necflow.cli import MAX_PROBLEMS
    from tests.config.bad_cases import BASE
    extra = "".join(f"  - {{id: x{i}, line: rg-{300 + i}, length: 1 m}}\n" for i in range(25))
    text = BASE.replace("radio:", extra + "radio:")
    path = tmp_path / "many.yaml"
    path.write_text(text, encoding="utf-8")
    code, _, err = _run(["check", str(path)], capsys)
    lines = err.splitlines()
    assert code == 2
    assert len(lines) == MAX_PROBLEMS + 1
    assert all("unknown line type" in ln for ln in lines[:-1])
    assert lines[-1] == f"necflow: error: and {25 - MAX_PROBLEMS} more problems"


# ----------------------------------------------------------------------------
# new and schema


def test_new_writes_a_starter_that_checks(tmp_path, capsys):
    code, out, _ = _run(["new", "inverted-v", "--bands", "20m,15m"], capsys)
    assert code == 0 and out.startswith("# yaml-language-server: $schema=")
    path = tmp_path / "v.yaml"
    path.write_text(out, encoding="utf-8")
    code, out, err = _run(["check", "--no-convergence", str(path)], capsys)
    assert code == 0, err
    assert "is valid" in out


def test_new_out_does_not_replace_a_file(tmp_path, capsys):
    path = tmp_path / "d.yaml"
    assert _run(["new", "doublet", "--out", str(path)], capsys)[0] == 0
    first = path.read_text(encoding="utf-8")
    code, _, err = _run(["new", "wires", "--out", str(path)], capsys)
    assert code == 2 and "the file exists" in err
    assert path.read_text(encoding="utf-8") == first


def test_new_example_and_list(tmp_path, capsys):
    code, out, _ = _run(["new", "--example", "end-fed"], capsys)
    assert code == 0 and out == (CONFIGS / "end-fed.yaml").read_text(encoding="utf-8")
    code, out, _ = _run(["new", "--list"], capsys)
    assert code == 0 and "off-centre" in out and "demo" in out
    code, _, err = _run(["new", "doublet", "--bands", "41m"], capsys)
    assert code == 2 and "--bands: unknown band '41m'" in err
    code, _, err = _run(["new"], capsys)
    assert code == 2 and "name a starter" in err


def test_schema_is_json_with_the_design_keys(tmp_path, capsys):
    code, out, _ = _run(["schema"], capsys)
    assert code == 0
    doc = json.loads(out)
    assert doc["$schema"].endswith("2020-12/schema")
    assert {"name", "bands", "antenna", "ground", "feed"} <= set(doc["properties"])
    path = tmp_path / "necflow-design.schema.json"
    assert _run(["schema", "--out", str(path)], capsys)[0] == 0
    assert json.loads(path.read_text(encoding="utf-8")) == doc
