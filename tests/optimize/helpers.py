"""Stand-in solvers and design texts for the study tests.

The stand-ins are module-level functions so spawned worker processes can
import them; they stand for the engine only where a test is about study
mechanics (storage, budget, resume, failures), never about antenna physics.
"""

from __future__ import annotations

import os
from pathlib import Path

from necflow.errors import EngineError
from tests.conftest import dipole_like_solver

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]

STUDY = """\
name: study-mechanics
bands: [80m, 40m]
antenna: {shape: doublet, span: 30 m, height: 10 m}
ground: {model: free-space}
feed:
  - {id: ladder, line: window-450, length: 10 m}
  - {id: cap, series: capacitor, value: 400 pF}
  - {id: coax, line: rg-213, length: 30 m}
search:
  antenna.span: [22 m, 40 m]
  feed.ladder.length: {range: [5 m, 20 m], step: 1 cm}
  feed.cap.value: {range: [100 pF, 2 nF], scale: log}
"""


def write_study(folder: Path, text: str = STUDY, name: str = "design.yaml") -> Path:
    path = Path(folder) / name
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    return path


def failing_above_34m(model, frequency_hz):
    """The stand-in, except that wires longer than 34 m 'fail to solve'."""
    extent = max(max(abs(float(w.start[0])), abs(float(w.end[0]))) for w in model.wires) * 2
    if extent > 34.0:
        raise EngineError(f"stand-in refuses a {extent:.1f} m wire")
    return dipole_like_solver(model, frequency_hz)


def cli_env() -> dict:
    """Environment for a CLI subprocess that uses the stand-in solver."""
    env = dict(os.environ)
    env["PYTHONPATH"] = f"{ROOT}{os.pathsep}{env.get('PYTHONPATH', '')}"
    return env


#: Runs ``necflow`` with the engine replaced by the stand-in (for subprocess tests).
CLI_SCRIPT = """\
import sys
import necflow.engine
from tests.conftest import dipole_like_solver
necflow.engine.solve_feedpoint = dipole_like_solver
from necflow.cli import main
if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
"""


def rendezvous_solver(model, frequency_hz):
    """The stand-in, but each process's first solve waits (at most 60 s) until
    two processes have arrived, so a two-worker test has both workers in
    play whatever their start-up times.  The meeting place is the folder
    named by NECFLOW_TEST_RENDEZVOUS."""
    import time

    folder = Path(os.environ["NECFLOW_TEST_RENDEZVOUS"])
    mark = folder / f"{os.getpid()}.here"
    if not mark.exists():
        mark.write_text("here")
        t_end = time.monotonic() + 60.0
        while len(list(folder.glob("*.here"))) < 2 and time.monotonic() < t_end:
            time.sleep(0.02)
    return dipole_like_solver(model, frequency_hz)


def postgres_url() -> str | None:
    """The test database URL (NECFLOW_TEST_POSTGRES_URL), None to skip; CI must set it."""
    import pytest

    url = os.environ.get("NECFLOW_TEST_POSTGRES_URL")
    if not url and os.environ.get("CI") == "true":
        pytest.fail("CI=true but NECFLOW_TEST_POSTGRES_URL is not set: .ci/run starts the "
                    "server and sets it")
    return url


def fresh_schema_url(url: str, name: str) -> str:
    """``url`` with the connection option ``search_path=name``: the study tables
    are then created in (and read from) schema ``name`` only."""
    from urllib.parse import quote, urlsplit, urlunsplit

    parts = urlsplit(url)
    option = "options=" + quote(f"-csearch_path={name}", safe="")
    query = f"{parts.query}&{option}" if parts.query else option
    return urlunsplit((parts.scheme, parts.netloc, parts.path, query, ""))
