"""``necflow batch``: a base design and a matrix of overrides, cell by cell.

A batch file names a base design, a matrix (each key a field path of the
design, each value a list of alternatives) and a mode: ``evaluate`` each
cell or ``optimize`` it.  Every cell is checked before any runs.  A cell
that finished leaves ``cells/<id>/cell.json``; running the batch again
skips it.  The summary is ``summary.csv`` and ``summary.png``; the command
(:mod:`necflow.cli.batch`) prints it as a table.

Override paths: ``antenna.height``, ``ground`` (a whole mapping),
``feed.<element id>.<key>``, ``search.<searched path>`` (e.g. the available
span as ``search.antenna.span: [[20 m, 26 m], [20 m, 32 m]]``).
"""

from __future__ import annotations

import copy
import csv
import io
import itertools
import json
import re
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor, as_completed
from multiprocessing import get_context
from pathlib import Path
from typing import Any, Literal

import optuna
import yaml
from pydantic import BaseModel, ConfigDict, Field, ValidationError, model_validator

from necflow import fileio, units
from necflow.chain import load_design_text
from necflow.config.load import parse_yaml, read_design_text
from necflow.engine.response import ResponseCache
from necflow.errors import ConfigError
from necflow.optimize.outputs import write_outputs
from necflow.optimize.problem.cost import score_design
from necflow.optimize.problem.space import build_space
from necflow.optimize.storage.backends import describe
from necflow.optimize.storage.bookkeeping import trial_values
from necflow.optimize.strategy.study import StudyOptions, run_study
from necflow.report import plots

#: Most cells in one batch (each is an evaluation or a whole study).
MAX_CELLS = 10_000


class BatchSpec(BaseModel):
    """The batch file."""

    model_config = ConfigDict(extra="forbid", allow_inf_nan=False)

    name: str = Field(..., min_length=1, description="Name of the batch (run folder)")
    base: str = Field(..., description="Base design file, relative to the batch file")
    mode: Literal["evaluate", "optimize"] = Field("evaluate", description="What each cell does")
    trials: int = Field(30, ge=1, description="Trials per cell (optimize mode)")
    seed: int | None = Field(None, description="Sampler seed of every cell (optimize mode)")
    matrix: dict[str, list[Any]] = Field(..., min_length=1, description="Field path -> "
                                         "alternatives; the cells are every combination")

    @model_validator(mode="after")
    def _cell_count(self) -> BatchSpec:
        n = 1
        for values in self.matrix.values():
            n *= max(len(values), 1)
            if n > MAX_CELLS:
                raise ValueError(f"matrix: more than {MAX_CELLS:,} cells (every combination "
                                 "of the values); split the batch")
        return self


def _set(data: dict, path: str, value: Any) -> None:
    """Set a field of raw design data by its path (see the module notes)."""
    if path.startswith("search."):
        data.setdefault("search", {})[path[len("search."):]] = value
        return
    parts = path.split(".")
    node: Any = data
    if parts[0] == "feed" and len(parts) >= 3:
        ids = [e.get("id") for e in data.get("feed", []) if isinstance(e, dict)]
        if parts[1] not in ids:
            raise ValueError(f"no feed element with id '{parts[1]}'; ids are "
                             f"{', '.join(map(str, ids)) or '(none)'}")
        node, parts = data["feed"][ids.index(parts[1])], parts[2:]
    for p in parts[:-1]:
        if not isinstance(node.get(p), dict):
            raise ValueError(f"'{path}': '{p}' is not a mapping in the base design")
        node = node[p]
    node[parts[-1]] = value


def _slug(value: Any) -> str:
    text = json.dumps(value, separators=(",", ":")) if not isinstance(value, str) else value
    return re.sub(r"[^A-Za-z0-9.]+", "", text)[:24]


def cells(spec: BatchSpec) -> list[tuple[str, dict[str, Any]]]:
    """Cell ids and their overrides, in matrix order."""
    keys = list(spec.matrix)
    out = []
    for i, combo in enumerate(itertools.product(*(spec.matrix[k] for k in keys))):
        over = dict(zip(keys, combo))
        out.append((f"c{i:02d}-" + "-".join(_slug(v) for v in combo), over))
    return out


def load_batch(path) -> tuple[BatchSpec, list[tuple[str, dict, str]]]:
    """Read a batch file; build and check every cell's design text.

    Returns the spec and ``(cell id, overrides, design YAML)`` per cell.

    Raises
    ------
    ConfigError
        For the batch file itself, or naming the first cell whose design is invalid.
    """

    name = str(path)
    text = read_design_text(path, "a batch file (YAML)")
    data, lines = parse_yaml(text, name)
    if not isinstance(data, dict):
        raise ConfigError("expected a batch: a mapping with name, base and matrix", file=name,
                          line=lines.get(()))
    try:
        spec = BatchSpec.model_validate(data)
    except ValidationError as exc:
        e = exc.errors(include_url=False)[0]
        loc = tuple(e["loc"])
        msg = re.sub(r"^(Value|Assertion) error, ", "", e["msg"])
        m = re.match(r"(\w+): (.*)$", msg)
        if not loc and m and m.group(1) in BatchSpec.model_fields:
            loc, msg = (m.group(1),), m.group(2)
        raise ConfigError(msg, file=name, line=_line(loc, lines),
                          field=".".join(map(str, loc)) or None) from None
    base_path = Path(path).parent / spec.base
    if not base_path.is_file():
        raise ConfigError(f"base design '{spec.base}' not found (looked for {base_path})",
                          file=name, line=lines.get(("base",)), field="base")
    base, _ = parse_yaml(read_design_text(base_path), str(base_path))
    if not isinstance(base, dict) or not {"antenna", "feed"} <= set(base):
        raise ConfigError(f"base '{spec.base}' is not a design file: expected a mapping with "
                          "name, bands, antenna, ground and feed", file=name,
                          line=lines.get(("base",)), field="base")
    out = []
    for cid, over in cells(spec):
        d = copy.deepcopy(base)
        for key, value in over.items():
            try:
                _set(d, key, value)
            except ValueError as exc:
                raise ConfigError(str(exc), file=name, line=lines.get(("matrix", key)),
                                  field=f"matrix.{key}") from None
        cell_text = yaml.safe_dump(d, sort_keys=False)
        try:
            design = load_design_text(cell_text, file=f"{base_path} [cell {cid}]")
            if spec.mode == "optimize":
                if not design.search:
                    raise ConfigError("optimize mode needs a 'search' section in the base "
                                      "design or the matrix", field="search")
                build_space(design, file=f"{base_path} [cell {cid}]")
        except ConfigError as exc:
            raise ConfigError(f"cell {cid} ({_describe(over)}) is invalid: {exc}", file=name,
                              line=lines.get(("matrix",)), field="matrix") from None
        out.append((cid, over, cell_text))
    return spec, out


def _line(path: tuple, lines: dict) -> int | None:
    """Line of ``path`` in the YAML, or of its nearest parent."""
    while path and path not in lines:
        path = path[:-1]
    return lines.get(path)


def _describe(over: dict) -> str:
    return ", ".join(f"{k}={json.dumps(v) if not isinstance(v, str) else v}"
                     for k, v in over.items())


def run_cell(spec: BatchSpec, cid: str, over: dict, text: str, folder: Path,
             storage: str | None = None, solver=None) -> dict:
    """Evaluate or optimise one cell; writes ``cell.json`` last; returns its summary."""

    folder.mkdir(parents=True, exist_ok=True)
    fileio.write_text(folder / "design.yaml", text)
    design = load_design_text(text, file=str(folder / "design.yaml"))
    summary: dict[str, Any] = {"cell": cid, "overrides": over}
    if spec.mode == "evaluate":
        evaluation, sc = score_design(design, ResponseCache(solver))
    else:


        optuna.logging.set_verbosity(optuna.logging.WARNING)
        space = build_space(design)
        opts = StudyOptions(out=folder, study_name=f"{spec.name}-{cid}", trials=spec.trials,
                            storage=storage, seed=spec.seed)
        study, _ = run_study(design, space, opts, solver=solver)
        res = write_outputs(study, design, space, folder, storage_shown=describe(storage, folder),
                            solver=solver)
        evaluation, sc = score_design(res.best_design, ResponseCache(solver))
        summary["best_trial"] = res.best_trial.number
        summary["best_params"] = trial_values(res.best_trial)
    summary.update({"cost": sc.cost, "worst_swr": sc.worst_swr, "loss_db": sc.loss_db,
                    "bands": sc.bands})
    fileio.write_json(folder / "cell.json", summary)
    return summary


def run_batch(path, out: Path | None = None, *, workers: int = 1, storage: str | None = None,
              solver=None, on_step: Callable[[int, int | None, str], None] | None = None
              ) -> tuple[BatchSpec, list[dict], list[str], Path]:
    """Run every unfinished cell; returns the spec, all cell summaries, the
    ids of the cells skipped because they had finished before, and the folder.
    ``on_step(done, total, text)`` (a command's progress) comes before each
    cell, or with several workers as each cell finishes."""
    spec, todo = load_batch(path)
    safe = re.sub(r"[^A-Za-z0-9_.-]+", "-", spec.name)
    out = Path(out) if out else Path("runs") / f"{safe}-batch"
    skipped, pending = [], []
    for cid, over, text in todo:
        if (out / "cells" / cid / "cell.json").exists():
            skipped.append(cid)
        else:
            pending.append((cid, over, text))
    step = on_step or (lambda done, total, text: None)
    n = len(pending)
    if workers > 1 and n > 1:
        with ProcessPoolExecutor(max_workers=workers, mp_context=get_context("spawn")) as ex:
            futs = {ex.submit(run_cell, spec, cid, over, text, out / "cells" / cid, storage,
                              solver): cid for cid, over, text in pending}
            step(0, n, f"{n} cells on {workers} workers")
            for k, f in enumerate(as_completed(futs), start=1):
                f.result()
                if k < n:
                    step(k, n, f"cell {futs[f]} finished")
    else:
        for k, (cid, over, text) in enumerate(pending):
            step(k, n, f"cell {cid} ({_describe(over)})")
            run_cell(spec, cid, over, text, out / "cells" / cid, storage, solver)
    step(0, None, "summary table and plot")
    summaries = [json.loads((out / "cells" / cid / "cell.json").read_text())
                 for cid, _, _ in todo]
    write_summary(spec, summaries, out)
    return spec, summaries, skipped, out


def _short(value: Any) -> str:
    """A matrix value in a few characters: mappings by their values."""
    if isinstance(value, dict):
        return "/".join(_short(v) for v in value.values())
    if isinstance(value, list):
        return "[" + ", ".join(_short(v) for v in value) + "]"
    return str(value)


def _quantity_column(values: list) -> tuple[str | None, list[float]] | None:
    """Matrix values as numbers: quantities of one dimension in its display
    unit (``("m", [9.0, 12.0])``), plain numbers without a unit (``(None,
    [...])``); None when a value is neither (a mapping, a range, a name)."""
    if all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in values):
        return None, [float(v) for v in values]
    if not all(isinstance(v, str) for v in values):
        return None
    for dim in units.DIMENSIONS:
        try:
            si_values = [units.parse(v, dim) for v in values]
        except units.UnitError:
            continue
        shown = units.display_unit(dim)
        return shown, [float(units.format_quantity(v, dim, shown, digits=12).split()[0])
                       for v in si_values]
    return None


def summary_rows(spec: BatchSpec, summaries: list[dict]) -> tuple[list[str], list[list]]:
    """The summary table: a row per cell, numbers as numbers and every unit
    in its column's header (``antenna.height [m]``, ``loss_db``); a matrix
    value that is not a number (a ground mapping, a range) stays text."""
    keys = list(spec.matrix)
    bands = list(summaries[0]["bands"]) if summaries else []
    head, columns = ["cell"], [[s["cell"] for s in summaries]]
    for k in keys:
        values = [s["overrides"][k] for s in summaries]
        numeric = _quantity_column(values) if values else None
        if numeric is None:
            head.append(k)
            columns.append([_short(v) for v in values])
        else:
            unit, numbers = numeric
            head.append(f"{k} [{unit}]" if unit else k)
            columns.append(numbers)
    head += ["cost", "worst_swr", "loss_db"] + [f"{b}.swr_max" for b in bands]
    columns += [[float(s[t]) for s in summaries] for t in ("cost", "worst_swr", "loss_db")]
    columns += [[float(s["bands"][b]["swr_max"]) for s in summaries] for b in bands]
    rows = [list(r) for r in zip(*columns)] if summaries else []
    return head, rows


def write_summary(spec: BatchSpec, summaries: list[dict], out: Path) -> None:
    """``summary.csv`` and ``summary.png`` (cost and worst SWR of every cell)."""
    head, rows = summary_rows(spec, summaries)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(head)
    w.writerows(rows)
    fileio.write_text(out / "summary.csv", buf.getvalue())
    labels = ["\n".join(f"{k.rsplit('.', 1)[-1]} {_short(s['overrides'][k])}"
                        for k in spec.matrix) for s in summaries]
    fig = plots.batch_figure(f"batch {spec.name}: {spec.mode}", labels,
                             [s["cost"] for s in summaries], [s["worst_swr"] for s in summaries])
    fileio.save_figure(fig, out / "summary.png", dpi=100)
