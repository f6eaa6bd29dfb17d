"""Run ``necflow`` command lines in forked children under hard limits.

Started once per test session as a subprocess (see ``test_hostile.py``),
with ``OPENBLAS_NUM_THREADS=1`` and ``MPLBACKEND=Agg`` in its environment.
It imports necflow and its heavy dependencies once, then runs each case in
a child made with :func:`os.fork`, so the imports are shared and a case
costs only its own work.

Protocol: JSON lines.  Each line read from stdin is a case::

    {"id": "...", "argv": ["check", "design.yaml"], "cwd": "/tmp/...", "cap": 60}

After end of input the cases run, at most ``--jobs`` at a time, and one
JSON line per case is written to stdout as it ends::

    {"id": ..., "status": 2, "runaway": null, "stdout": ..., "stderr": ...,
     "files": [...], "max_rss_kib": ..., "seconds": ...}

``status`` is the child's exit status (``necflow.cli.main``'s return
value; 99 when anything escaped it, with the traceback on stderr; minus the
signal number when it died of a signal).  ``runaway`` is null, or says why
the child was killed: it ran past its wall-clock cap, or its process group
grew past a handful of processes.  These are limits that keep a regression
from taking the machine down, not timings: nothing here judges speed.

Each child:

* becomes the leader of its own process group (everything it starts can be
  killed together);
* sets ``RLIMIT_AS`` (address space) to ``--memory`` bytes, 1 GiB by
  default, so a run that tries to build something huge fails inside the
  child instead of exhausting the machine;
* changes to the case's folder, sends stdout and stderr to files there and
  reads stdin from /dev/null;
* runs ``necflow.cli.main(argv)`` and leaves with its status via
  :func:`os._exit`.
"""

from __future__ import annotations

import argparse
import importlib
import json
import os
import resource
import signal
import sys
import time
import traceback

#: Modules imported before any fork, so children share them.  A missing
#: one is skipped (the code under test may move things around).
PRELOAD = (
    "numpy", "scipy", "yaml", "pydantic", "pint", "rich.console", "optuna",
    "matplotlib", "matplotlib.pyplot",
    "necflow.cli", "necflow.units", "necflow.config.load", "necflow.config.schema",
    "necflow.config.resolve", "necflow.catalog.bands", "necflow.catalog.lines",
    "necflow.catalog.grounds", "necflow.model", "necflow.chain",
    "necflow.engine.pynec_adapter", "necflow.engine.cache", "necflow.engine.parallel",
    "necflow.feed.chain", "necflow.analysis.powerflow", "necflow.report.run_folder",
    "necflow.report.tables", "necflow.report.decision",
    "necflow.optimize.run", "necflow.optimize.strategy.study", "necflow.optimize.problem.space",
    "necflow.optimize.storage.backends", "necflow.optimize.batch", "necflow.optimize.outputs",
    "necflow.cli.calibrate", "necflow.calibrate.fit", "necflow.calibrate.trim",
    "necflow.calibrate.tolerance", "necflow.measure", "necflow.calibrate.overlay",
)

#: Processes a case's process group may hold before it counts as a runaway
#: (a legitimate case here starts at most a few worker processes).
MAX_PROCESSES = 16

OUTPUT_LIMIT = 20000  # characters of stdout/stderr passed back per case


def preload() -> None:
    for name in PRELOAD:
        try:
            importlib.import_module(name)
        except Exception:
            pass
    try:  # the unit registry loads its definitions on first use
        from necflow import units
        units.registry()
    except Exception:
        pass


def child(case: dict, memory: int) -> None:
    """In the forked child: limits, redirection, run, exit.  Never returns."""
    status = 99
    try:
        os.setpgid(0, 0)
        resource.setrlimit(resource.RLIMIT_AS, (memory, memory))
        os.chdir(case["cwd"])
        null = os.open(os.devnull, os.O_RDONLY)
        out = os.open("stdout.txt", os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o644)
        err = os.open("stderr.txt", os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o644)
        os.dup2(null, 0)
        os.dup2(out, 1)
        os.dup2(err, 2)
        for fd in (null, out, err):
            os.close(fd)
        sys.stdin = open(0, closefd=False)
        sys.stdout = open(1, "w", encoding="utf-8", errors="backslashreplace", closefd=False)
        sys.stderr = open(2, "w", encoding="utf-8", errors="backslashreplace", closefd=False)
        sys.argv = ["necflow", *case["argv"]]
        signal.signal(signal.SIGINT, signal.default_int_handler)
        signal.signal(signal.SIGTERM, signal.SIG_DFL)
        import necflow.cli
        try:
            status = necflow.cli.main(list(case["argv"]))
        except SystemExit as exc:  # argparse refusals leave this way
            code = exc.code
            status = code if isinstance(code, int) else (0 if code is None else 2)
        if not isinstance(status, int):
            print(f"runner: main returned {status!r}, not an int", file=sys.stderr)
            status = 99
    except BaseException:
        try:
            traceback.print_exc(file=sys.stderr)
        except BaseException:
            pass
        status = 99
    finally:
        try:
            sys.stdout.flush()
            sys.stderr.flush()
        except BaseException:
            pass
        os._exit(status & 0xFF if status >= 0 else 99)


def group_size(pgid: int) -> int:
    """Processes whose process group is ``pgid`` (from /proc)."""
    n = 0
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            with open(f"/proc/{entry}/stat", "rb") as fh:
                stat = fh.read()
        except OSError:
            continue
        # fields after the command name (which may hold spaces) in parentheses
        rest = stat[stat.rfind(b")") + 2:].split()
        if len(rest) > 2 and int(rest[2]) == pgid:
            n += 1
    return n


def kill_group(pgid: int) -> None:
    try:
        os.killpg(pgid, signal.SIGKILL)
    except (ProcessLookupError, PermissionError):
        pass


def read_output(path: str) -> str:
    try:
        with open(path, "rb") as fh:
            data = fh.read(OUTPUT_LIMIT * 4)
    except OSError:
        return ""
    text = data.decode("utf-8", errors="backslashreplace")
    return text[:OUTPUT_LIMIT]


def list_files(root: str) -> list[str]:
    out = []
    for base, dirs, files in os.walk(root):
        for name in files + [d + "/" for d in dirs]:
            out.append(os.path.relpath(os.path.join(base, name), root))
    return sorted(out)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--memory", type=int, default=1 << 30, help="RLIMIT_AS in bytes")
    opts = ap.parse_args()

    cases = [json.loads(line) for line in sys.stdin if line.strip()]
    preload()
    sys.stdout.flush()
    sys.stderr.flush()

    pending = list(cases)
    running: dict[int, tuple[dict, float, str | None]] = {}
    tick = 0
    while pending or running:
        tick += 1
        while pending and len(running) < max(1, opts.jobs):
            case = pending.pop(0)
            pid = os.fork()
            if pid == 0:
                child(case, opts.memory)
            try:
                os.setpgid(pid, pid)  # also done in the child; whichever is first
            except OSError:
                pass
            running[pid] = (case, time.monotonic(), None)
        time.sleep(0.02)
        for pid in list(running):
            case, started, why = running[pid]
            done, raw, usage = os.wait4(pid, os.WNOHANG)
            if done == 0:
                cap = float(case.get("cap", 60))
                if why is None and time.monotonic() - started > cap:
                    why = f"ran past the wall-clock cap of {cap:g} s"
                elif why is None and tick % 5 == 0 and group_size(pid) > MAX_PROCESSES:
                    why = f"its process group grew past {MAX_PROCESSES} processes"
                if why is not None:
                    running[pid] = (case, started, why)
                    kill_group(pid)
                continue
            kill_group(pid)  # workers it left behind
            del running[pid]
            if os.WIFEXITED(raw):
                status = os.WEXITSTATUS(raw)
            else:
                status = -os.WTERMSIG(raw)
            result = {
                "id": case["id"], "status": status, "runaway": why,
                "stdout": read_output(os.path.join(case["cwd"], "stdout.txt")),
                "stderr": read_output(os.path.join(case["cwd"], "stderr.txt")),
                "files": list_files(case["cwd"]),
                "max_rss_kib": usage.ru_maxrss,
                "seconds": round(time.monotonic() - started, 2),
            }
            sys.stdout.write(json.dumps(result) + "\n")
            sys.stdout.flush()
    return 0


if __name__ == "__main__":
    sys.exit(main())
