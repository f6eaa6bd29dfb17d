"""``necflow batch``: cells from a matrix, summary, finished cells skipped."""

from __future__ import annotations

import csv

import pytest

from necflow.errors import ConfigError
from necflow.optimize.batch import run_batch
from tests.conftest import dipole_like_solver
from tests.optimize.helpers import write_study

BATCH = """\
name: sites
base: design.yaml
mode: {mode}
trials: 4
seed: 3
matrix:
  antenna.height: [8 m, 12 m]
  feed.coax.length: [20 m, 40 m]
"""


def _batch(tmp_path, mode="evaluate", extra=""):
    write_study(tmp_path)
    path = tmp_path / "batch.yaml"
    path.write_text(BATCH.format(mode=mode) + extra)
    return path


def test_evaluate_cells_summary_and_skip(tmp_path):
    path = _batch(tmp_path)
    out = tmp_path / "out"
    spec, summaries, skipped, _ = run_batch(path, out, solver=dipole_like_solver)
    assert skipped == [] and len(summaries) == 4
    rows = list(csv.DictReader(open(out / "summary.csv")))
    # quantities as numbers, the unit in the header
    assert [(float(r["antenna.height [m]"]), float(r["feed.coax.length [m]"])) for r in rows] \
        == [(8.0, 20.0), (8.0, 40.0), (12.0, 20.0), (12.0, 40.0)]
    # a longer coax run dissipates more: the loss term must rise with it
    assert float(rows[1]["loss_db"]) > float(rows[0]["loss_db"])
    assert (out / "summary.png").stat().st_size > 0
    (out / "cells" / summaries[2]["cell"] / "cell.json").unlink()
    _, again, skipped, _ = run_batch(path, out, solver=dipole_like_solver)
    assert len(skipped) == 3 and summaries[2]["cell"] not in skipped
    assert [s["cost"] for s in again] == pytest.approx([s["cost"] for s in summaries],
                                                       rel=1e-12)


def test_optimize_cells_write_their_best_design(tmp_path):
    path = _batch(tmp_path, "optimize")
    out = tmp_path / "out"
    _, summaries, _, _ = run_batch(path, out, solver=dipole_like_solver)
    for s in summaries:
        assert (out / "cells" / s["cell"] / "best.yaml").exists()
        assert set(s["best_params"]) == {"antenna.span", "feed.ladder.length",
                                         "feed.cap.value"}


def test_bad_matrix_key_is_an_input_error(tmp_path):
    path = _batch(tmp_path, extra="  feed.tuner.length: [1 m]\n")
    with pytest.raises(ConfigError) as info:
        run_batch(path, tmp_path / "out", solver=dipole_like_solver)
    assert info.value.field == "matrix.feed.tuner.length" and info.value.line == 9
    assert "no feed element" in info.value.message


def test_invalid_cell_is_refused_before_any_runs(tmp_path):
    path = _batch(tmp_path, extra="  antenna.span: [30 m, -2 m]\n")
    with pytest.raises(ConfigError, match="cell c01-.* is invalid"):
        run_batch(path, tmp_path / "out", solver=dipole_like_solver)
    assert not (tmp_path / "out").exists()


def test_shipped_batch_files_load():
    import itertools

    from necflow.optimize.batch import load_batch
    from tests.optimize.helpers import ROOT

    files = sorted((ROOT / "configs" / "batches").glob("*.yaml"))
    assert files
    for f in files:
        spec, todo = load_batch(f)   # every cell's design passes the schema
        assert len(todo) == len(list(itertools.product(*spec.matrix.values())))
