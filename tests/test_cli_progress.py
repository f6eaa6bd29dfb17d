"""Progress of the long commands: a step is shown before its work ends.

Each command runs in a child process whose antenna solver is held at a gate:
the first solve waits until the test has read a progress line naming the
work under way, and only then goes on.  A command that printed nothing, or
held its progress back until the end, would leave the child waiting and
fail; one that shows its steps finishes normally.  The tests assert the
order (the step first, the results after), never a duration.
"""

from __future__ import annotations

import io
import os
import pty
import re
import select
import subprocess
import sys
import textwrap

import pytest

from necflow.cli.progress import Steps, step_text
from tests.conftest import CONFIGS, JOB_DESIGN_BODY, ROOT

#: The child: the engine's seam ``necflow.engine.solve_feedpoint`` replaced
#: by a gate in front of the stand-in impedance (or of the engine itself).
DRIVER = textwrap.dedent("""
    import os, sys, time
    import necflow.engine as engine
    from necflow.cli import main
    from tests.conftest import dipole_like_solver

    go, which, argv = sys.argv[1], sys.argv[2], sys.argv[3:]
    real = engine.solve_feedpoint

    def gated(model, frequency_hz):
        waited = time.monotonic()
        while not os.path.exists(go):      # released by the test once it read a step
            if time.monotonic() - waited > 120:
                raise SystemExit("gate: no progress line was read before the first solve")
            time.sleep(0.02)
        return (real if which == "engine" else dipole_like_solver)(model, frequency_hz)

    engine.solve_feedpoint = gated
    sys.exit(main(argv))
""")

DESIGN = "name: gate-doublet" + JOB_DESIGN_BODY


def _env() -> dict:
    env = dict(os.environ, PYTHONPATH=str(ROOT), TERM="xterm-256color", COLUMNS="120")
    env.pop("NO_COLOR", None)
    return env


def _child(go, which: str, argv: list[str]) -> list[str]:
    return [sys.executable, "-c", DRIVER, str(go), which, *argv]


def _plain_run(tmp_path, argv: list[str], step: str, which: str = "stub"):
    """Run a command with stderr a pipe; release the gate once a line of
    ``step`` has been read; return (status, stderr lines before the gate,
    the rest of stderr, stdout)."""
    go = tmp_path / "go"
    proc = subprocess.Popen(_child(go, which, argv), stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, cwd=tmp_path, env=_env())
    before = []
    try:
        for line in proc.stderr:                 # blocks until the child writes a line
            before.append(line.rstrip("\n"))
            if step in line:
                go.touch()
                break
        out, rest = proc.communicate(timeout=900)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
    return proc.returncode, before, rest, out


def _write_design(tmp_path) -> str:
    path = tmp_path / "d.yaml"
    path.write_text(DESIGN, encoding="utf-8")
    return str(path)


@pytest.mark.parametrize("command, extra, step", [
    ("tolerance", [], "necflow: tolerance: nominal design: solving 40m"),
    ("trim", [], "necflow: trim: searching"),
    ("fit", ["--starts", "2"], "necflow: fit: scoring the starting points [1/2]"),
])
def test_plain_lines_come_before_the_work_ends(command, extra, step, tmp_path):
    design = _write_design(tmp_path)
    argv = [command, design, *extra]
    if command == "fit":
        sweep = tmp_path / "sweep.csv"
        sweep.write_text("frequency_mhz,swr\n7.0,1.8\n7.05,1.4\n7.1,1.2\n7.15,1.5\n7.2,2.0\n",
                         encoding="utf-8")
        argv += [str(sweep), "--out", str(tmp_path / "fit")]
    code, before, rest, out = _plain_run(tmp_path, argv, step)
    assert before and step in before[-1], before        # the step was read first ...
    assert code == 0, rest                               # ... then the work finished
    assert out.strip(), "no results on stdout"
    for line in before + rest.splitlines():              # stderr holds progress only
        assert line.startswith(f"necflow: {command}: ") or line.startswith("necflow: warning")


def _read_pty(fd, proc, until: str | None) -> str:
    """Read the terminal's output until ``until`` appears (None: to the end)."""
    buf = b""
    while True:
        if until is not None and until.encode() in buf:
            return buf.decode(errors="replace")
        ready, _, _ = select.select([fd], [], [], 1.0)
        if not ready:
            if proc.poll() is not None and until is None:
                return buf.decode(errors="replace")
            continue
        try:
            chunk = os.read(fd, 65536)
        except OSError:                                  # the child closed the terminal
            return buf.decode(errors="replace")
        if not chunk:
            return buf.decode(errors="replace")
        buf += chunk


@pytest.mark.engine
def test_evaluate_on_a_terminal_shows_its_steps_before_the_work_ends(tmp_path):
    """In a pseudo-terminal: rich's display names the band being solved before
    the solve may end; the results follow."""
    go = tmp_path / "go"
    argv = ["evaluate", str(CONFIGS / "inverted-v.yaml"), "--out", str(tmp_path / "run")]
    master, slave = pty.openpty()
    proc = subprocess.Popen(_child(go, "engine", argv), stdin=slave, stdout=slave,
                            stderr=slave, cwd=tmp_path, env=_env(), close_fds=True)
    os.close(slave)
    try:
        first = _read_pty(master, proc, "solving 40m")
        go.touch()
        rest = _read_pty(master, proc, None)
        code = proc.wait(timeout=900)
    finally:
        if proc.poll() is None:
            proc.kill()
            proc.wait()
        os.close(master)
    plain = re.sub(r"\x1b\[[0-9;?]*[A-Za-z]", "", first + rest)
    assert code == 0, plain[-2000:]
    assert "evaluate: solving 40m (11 frequencies) [1/2]" in plain
    assert "far field of 40m" in rest                      # later steps after the gate
    assert "run folder:" in rest and "run folder:" not in first


def test_plain_steps_counted_phases_and_quiet_repeats():
    """Every counted step and every new phase is a line; repeats of one phase
    of unknown length are folded (a heartbeat at most every HEARTBEAT_S)."""
    buf = io.StringIO()
    s = Steps("trim", buf, live=False)
    s.note("reading d.yaml")                               # no line: not a step
    s(0, 2, "solving 40m")
    s(1, 2, "solving 20m")
    for k in range(5):
        s(k, None, "searching antenna.span")
    s(0, None, "checking the trimmed design")
    s.close()
    assert buf.getvalue().splitlines() == [
        "necflow: trim: solving 40m [1/2]",
        "necflow: trim: solving 20m [2/2]",
        "necflow: trim: searching antenna.span",
        "necflow: trim: checking the trimmed design",
    ]


def test_step_text():
    assert step_text(0, 3, "far field of 40m") == "far field of 40m [1/3]"
    assert step_text(4, None, "searching x") == "searching x: 4 evaluations"
    assert step_text(0, None, "writing") == "writing"
