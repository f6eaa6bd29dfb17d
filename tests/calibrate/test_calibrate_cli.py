"""fit / trim / tolerance through necflow.cli.main: one-line errors, exit 2."""

from __future__ import annotations

from pathlib import Path

import pytest

from necflow.cli import main

MEASURED = Path(__file__).resolve().parents[2] / "configs" / "measured"
DESIGN = str(MEASURED / "field-doublet.yaml")


def _one_line_error(capsys, argv, phrase):
    assert main(argv) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and err.startswith("necflow: error: ") and phrase in err
    return err


def test_malformed_sweep(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    bad.write_text("freq_mhz,swr\n7.0,1.3\n7.1,oops\n")
    err = _one_line_error(capsys, ["fit", DESIGN, str(bad)], "'oops' is not a number")
    assert "bad.csv:3: swr:" in err


def test_non_overlapping_sweep(tmp_path, capsys):
    ghz = tmp_path / "ghz.s1p"
    ghz.write_text("# GHz S RI R 50\n7.0 0.1 0.1\n7.1 0.1 0.1\n")   # GHz by mistake
    _one_line_error(capsys, ["fit", DESIGN, str(ghz)], "overlaps none of the design's bands")


def test_two_port_and_missing_file(tmp_path, capsys):
    two = tmp_path / "amp.s2p"
    two.write_text("# MHz S RI\n")
    _one_line_error(capsys, ["fit", DESIGN, str(two)], "2-port Touchstone file")
    _one_line_error(capsys, ["fit", DESIGN, str(tmp_path / "none.s1p")], "no such file")


def test_bad_vary_and_target(capsys):
    _one_line_error(capsys, ["fit", DESIGN, str(MEASURED / "field-doublet-radio.s1p"),
                             "--vary", "antenna.nothing=1 m,2 m"], "uncertain.antenna.nothing")
    _one_line_error(capsys, ["trim", DESIGN, "--target", "20m=centre"], "no band '20m'")


@pytest.mark.engine
def test_fit_writes_calibrated_design_that_evaluates(tmp_path, capsys):
    from necflow.config.load import load_design
    from necflow.pipeline import evaluate

    out = tmp_path / "fit"
    assert main(["fit", DESIGN, str(MEASURED / "field-doublet-feedpoint.s1p"), "--at",
                 "feedpoint", "--starts", "2", "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert "antenna.height" in text and "residual" in text
    cal = load_design(out / "design.calibrated.yaml")
    assert abs(cal.antenna.height - 8.5) < 0.15     # the example was made with 8.5 m
    evaluate(cal)                                   # evaluate accepts it unchanged
    assert (out / "overlay.png").stat().st_size > 0


@pytest.mark.engine
def test_tolerance_prints_yield_and_repeats(tmp_path, capsys):
    argv = ["tolerance", DESIGN, "--samples", "20", "--seed", "5", "--json"]
    assert main(argv) == 0
    first = capsys.readouterr().out
    assert main(argv + ["--plot", str(tmp_path / "t.png")]) == 0
    assert capsys.readouterr().out == first and '"yield"' in first
