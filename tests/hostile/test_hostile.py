"""Hostile input: every case must end as a clean refusal, one line per problem, bounded.

Each case of :mod:`tests.hostile.cases` is a ``necflow`` command line run on
files built in its own folder.  The runs happen in ``runner.py``, started
once per session: it imports necflow once and forks a child per case under
an address-space limit (``RLIMIT_AS``, 1 GiB) and a wall-clock cap, so a
regression fails its test instead of exhausting the machine.  The caps are
limits, not timings: no test here judges speed.

Per case the test asserts:

* the child was not killed as a runaway (past its cap, or starting a swarm
  of processes);
* the exit status is the documented one (2, bad input, unless the case
  allows others);
* no ``Traceback``, ``internal error`` or ``MemoryError`` in the output;
* for an error status, stderr is one line per problem (a design file's
  problems come all at once, at most 20 and a count of the rest), besides
  the command's progress lines (``necflow: COMMAND: step``, written as its
  steps begin, before the error arose), each
  ``necflow: error: ...`` without control characters, one of them pointing
  where the case says (file, line and field path; or the command-line option);
* secrets (storage passwords) appear in neither stdout nor stderr;
* where the case says so, no ``results.json`` (nor a part of one) is left.

The source of the expectations is the program's own contract (the exit
statuses in ``necflow/cli/__init__.py``, the one-line ``FILE:LINE: field: message``
form in ``necflow/errors.py``) and the issue that listed these inputs.

Environment: ``HOSTILE_JOBS`` (children at once, default 2),
``HOSTILE_MEMORY`` (bytes of address space per child, default 1 GiB),
``HOSTILE_RESULTS`` (write every case's raw result there as JSON).
"""

from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

from tests.hostile.cases import ANY, CASES, ITEMS, Case, Where

pytestmark = pytest.mark.skipif(not sys.platform.startswith("linux"),
                                reason="the runner forks and reads /proc (Linux)")

RUNNER = Path(__file__).with_name("runner.py")
PREFIX = "necflow: error: "
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f]")


def _build(case: Case, folder: Path) -> None:
    folder.mkdir(parents=True)
    for name, content in case.files.items():
        path = folder / name
        if callable(content):
            content(path)
        elif isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8")


def _code_root() -> str:
    """The folder holding the necflow package this session imports, so the
    runner tests the same code (a worktree, or another checkout on
    PYTHONPATH)."""
    import necflow
    return str(Path(necflow.__file__).resolve().parents[1])


@pytest.fixture(scope="session")
def hostile_results(request, tmp_path_factory) -> dict[str, dict]:
    """Run every selected case through the runner; results by case id."""
    selected = []
    for item in request.session.items:
        callspec = getattr(item, "callspec", None)
        c = callspec.params.get("case") if callspec else None
        if isinstance(c, Case) and c not in selected:
            selected.append(c)
    root = tmp_path_factory.mktemp("hostile")
    requests = []
    for c in selected:
        folder = root / c.id
        _build(c, folder)
        requests.append({"id": c.id, "argv": list(c.argv), "cwd": str(folder), "cap": c.cap})
    env = dict(os.environ)
    env.update(OPENBLAS_NUM_THREADS="1", OMP_NUM_THREADS="1", MKL_NUM_THREADS="1",
               MPLBACKEND="Agg", PYTHONHASHSEED="0",
               PYTHONPATH=os.pathsep.join(p for p in (_code_root(), env.get("PYTHONPATH")) if p))
    jobs = os.environ.get("HOSTILE_JOBS", "2")
    memory = os.environ.get("HOSTILE_MEMORY", str(1 << 30))
    budget = 120 + sum(c.cap + 5 for c in selected)  # the runner enforces each cap itself
    proc = subprocess.run([sys.executable, str(RUNNER), "--jobs", jobs, "--memory", memory],
                          input="".join(json.dumps(r) + "\n" for r in requests),
                          capture_output=True, text=True, env=env, timeout=budget)
    assert proc.returncode == 0, f"the runner failed: {proc.stderr[-4000:]}"
    results = {}
    for line in proc.stdout.splitlines():
        r = json.loads(line)
        results[r["id"]] = r
    if os.environ.get("HOSTILE_RESULTS"):
        cases = {c.id: c for c in selected}
        Path(os.environ["HOSTILE_RESULTS"]).write_text(json.dumps(
            [{**results.get(i, {"id": i}), "item": cases[i].item,
              "expected_status": list(cases[i].status)} for i in cases], indent=1))
    return results


def matches(w: Where, msg: str) -> bool:
    """Whether an error message (after ``necflow: error: ``) points where ``w`` says."""
    if w.file is None:
        return w.field is not None and w.field in msg
    if not msg.startswith(w.file):
        return False
    rest = msg[len(w.file):]
    if w.line is None:
        m = re.match(r"(?::\d+)?: ", rest)
    elif w.line == ANY:
        m = re.match(r":\d+: ", rest)
    else:
        m = re.match(rf":{int(w.line)}: ", rest)
    if not m:
        return False
    rest = rest[m.end():]
    if w.field is None:
        return True
    if not rest.startswith(w.field):
        return False
    after = rest[len(w.field):len(w.field) + 1]
    return w.field.endswith(("[", ".")) or after in (":", "[", ".", " ")


def _want(w: Where) -> str:
    if w.file is None:
        return f"'{w.field}' named"
    line = {None: "[:LINE]", ANY: ":LINE"}.get(w.line, f":{w.line}")
    return f"{w.file}{line}: {w.field or ''}..."


@pytest.mark.hostile
@pytest.mark.parametrize("case", CASES, ids=lambda c: c.id)
def test_hostile_input(case: Case, hostile_results):
    r = hostile_results.get(case.id)
    assert r is not None, "the runner returned no result for this case"
    out, err = r["stdout"], r["stderr"]
    progress = f"necflow: {case.argv[0]}: " if case.argv else None
    lines = [ln for ln in err.splitlines()
             if ln.strip() and not (progress and ln.startswith(progress))]
    seen = (f"status {r['status']}, stderr {len(lines)} line(s): "
            f"{(lines[0] if lines else '')[:300]!r}")
    assert r["runaway"] is None, f"runaway: {r['runaway']} ({seen})"
    for bad in ("Traceback", "internal error", "MemoryError"):
        assert bad not in err and bad not in out, f"{bad!r} in the output ({seen})"
    assert r["status"] in case.status, f"expected exit status {case.status} ({seen})"
    for secret in case.secrets:
        assert secret not in out and secret not in err, f"the password {secret!r} was shown"
    if case.no_results:
        left = [f for f in r["files"] if Path(f.rstrip("/")).name.startswith("results.json")]
        assert not left, f"left behind: {left}"
    if r["status"] in (0, 1):  # a documented success: no error line to judge
        return
    # one line per problem of the input (a design file's problems come all at once,
    # at most 20 and a count of the rest)
    assert 1 <= len(lines) <= 21, f"expected 1 to 21 lines on stderr, got {len(lines)}: " \
        f"{err[:1000]!r}"
    for line in lines:
        assert line.startswith(PREFIX), f"not a 'necflow: error:' line ({seen})"
        assert not _CONTROL.search(line), f"control characters in the error line: {line[:300]!r}"
    msgs = [line[len(PREFIX):] for line in lines]
    if case.where:
        assert any(matches(w, msg) for w in case.where for msg in msgs), (
            f"expected the error to point at {' or '.join(_want(w) for w in case.where)} "
            f"({seen})")
    for text in case.names:
        assert any(text in msg for msg in msgs), f"expected {text!r} in the error ({seen})"


def test_the_suite_has_at_least_eighty_cases_covering_every_item():
    ids = [c.id for c in CASES]
    assert len(ids) == len(set(ids)), "case ids must be unique"
    assert len(CASES) >= 80
    covered = {c.item for c in CASES}
    assert covered == set(ITEMS), f"items without a case: {set(ITEMS) - covered}"


@pytest.mark.parametrize("w, msg, ok", [
    (Where("d.yaml", 7, "antenna.span"), "d.yaml:7: antenna.span: too long", True),
    (Where("d.yaml", 7, "antenna.span"), "d.yaml:8: antenna.span: too long", False),
    (Where("d.yaml", 7, "antenna.span"), "d.yaml:7: antenna.spans: x", False),
    (Where("d.yaml", ANY, "bands"), "d.yaml:3: bands[1000]: too many", True),
    (Where("d.yaml", ANY, "bands"), "d.yaml: bands: too many", False),
    (Where("d.yaml", None, None), "d.yaml: the file is empty", True),
    (Where("d.yaml", None, None), "d.yaml:4: nesting too deep", True),
    (Where("d.yaml", None, None), "other.yaml: the file is empty", False),
    (Where("d.yaml", ANY, "antenna.wires["), "d.yaml:9: antenna.wires[1]: crosses", True),
    (Where(None, None, "--workers"), "--workers: at most 64", True),
    (Where(None, None, "--workers"), "--trials: at most 64", False),
])
def test_where_matching(w, msg, ok):
    """The matcher itself, on hand-written messages."""
    assert matches(w, msg) is ok
