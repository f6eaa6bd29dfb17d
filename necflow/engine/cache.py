"""A persistent, multi-process-safe store of solved feedpoint impedances.

One row per solved frequency, keyed by everything that determines a solve:
the wire model's key (geometry after segmentation, feed segment, ground,
wire conductivity; :meth:`necflow.model.types.WireModel.key`), the engine's
version, and the frequency in whole millihertz.  Per-frequency rows let a
later question over a subset or a superset of the frequencies reuse what
was solved and solve only the rest.

The store is one SQLite file in write-ahead-log mode: any number of
processes may read while one writes, writers wait their turn (busy
timeout), and ``INSERT OR IGNORE`` makes two processes that solved the same
point at once agree on the first row written.  A result solved with another
engine version is never returned: the version is part of the key.
"""

from __future__ import annotations

import os
import sqlite3
import time
from pathlib import Path

import numpy as np

from necflow.engine import pynec_adapter

#: File name of the store inside a run folder or a cache folder.
FILE_NAME = "solves.sqlite"

_SCHEMA = """
CREATE TABLE IF NOT EXISTS solves (
    model  TEXT    NOT NULL,
    engine TEXT    NOT NULL,
    f_mhz  INTEGER NOT NULL,   -- frequency in millihertz
    re     REAL    NOT NULL,   -- feedpoint resistance [ohm]
    im     REAL    NOT NULL,   -- feedpoint reactance [ohm]
    PRIMARY KEY (model, engine, f_mhz)
) WITHOUT ROWID
"""


def current_engine_version() -> str:
    """The installed engine's version, looked up at call time (so a test can
    replace :func:`necflow.engine.pynec_adapter.engine_version`)."""

    return f"PyNEC {pynec_adapter.engine_version()}"


def frequency_keys(frequency_hz) -> np.ndarray:
    """Frequencies [Hz] as whole millihertz (int64), the store's key.

    A millihertz is nine orders below any HF frequency, so two frequency
    vectors computed along different arithmetic paths share keys.
    """
    return np.rint(np.asarray(frequency_hz, dtype=float) * 1e3).astype(np.int64)


class SolveStore:
    """Feedpoint impedances on disk, shared by processes.

    Parameters
    ----------
    path : str or Path
        The SQLite file (created with its folder when missing), or a folder,
        in which case ``<folder>/solves.sqlite``.
    engine : str, optional
        Version tag stored with every row and required on reading; default
        :func:`current_engine_version` at each call.
    timeout_s : float
        How long a writer waits for another process's write [s].
    """

    def __init__(self, path, engine: str | None = None, timeout_s: float = 60.0):
        p = Path(path)
        if p.suffix != ".sqlite":
            p = p / FILE_NAME
        p.parent.mkdir(parents=True, exist_ok=True)
        self.path = p
        self._engine = engine
        self._timeout = timeout_s
        self._conn: sqlite3.Connection | None = None
        self._pid = -1

    @property
    def engine(self) -> str:
        return self._engine if self._engine is not None else current_engine_version()

    def _connection(self) -> sqlite3.Connection:
        # A connection must not cross a fork: open one per process.
        if self._conn is None or self._pid != os.getpid():
            conn = sqlite3.connect(self.path, timeout=self._timeout, isolation_level=None)
            # switching to WAL and creating the table can meet another
            # process doing the same; SQLite then answers "locked" at once
            # instead of waiting, so wait and retry here
            self._retry(lambda: conn.execute("PRAGMA journal_mode=WAL"))
            conn.execute("PRAGMA synchronous=NORMAL")
            self._retry(lambda: conn.execute(_SCHEMA))
            self._conn, self._pid = conn, os.getpid()
        return self._conn

    def _retry(self, op):
        """Run ``op``, retrying while the database is locked (up to the timeout)."""
        deadline = time.monotonic() + self._timeout
        delay = 0.005
        while True:
            try:
                return op()
            except sqlite3.OperationalError as exc:
                text = str(exc).lower()
                if ("locked" not in text and "busy" not in text) or \
                        time.monotonic() > deadline:
                    raise
                time.sleep(delay)
                delay = min(delay * 2, 0.2)

    def get(self, model_key: str, frequency_hz,
            engine: str | None = None) -> tuple[np.ndarray, np.ndarray]:
        """Stored impedances of a model at the given frequencies, solved by
        ``engine`` (default :attr:`engine`).

        Returns
        -------
        z : ndarray of complex, shape (n,)
            Impedance [ohm], NaN where not stored.
        found : ndarray of bool, shape (n,)
        """
        keys = frequency_keys(frequency_hz)
        conn = self._connection()
        rows = self._retry(lambda: conn.execute(
            "SELECT f_mhz, re, im FROM solves WHERE model = ? AND engine = ?",
            (model_key, engine or self.engine)).fetchall())
        z = np.full(keys.shape, np.nan + 1j * np.nan, dtype=complex)
        found = np.zeros(keys.shape, dtype=bool)
        if rows:
            table = {int(k): complex(r, i) for k, r, i in rows}
            for j, k in enumerate(keys.tolist()):
                v = table.get(k)
                if v is not None:
                    z[j] = v
                    found[j] = True
        return z, found

    def put(self, model_key: str, frequency_hz, z, engine: str | None = None) -> None:
        """Store impedances [ohm] of a model; rows already present are kept."""
        keys = frequency_keys(frequency_hz)
        z = np.asarray(z, dtype=complex)
        eng = engine or self.engine
        rows = [(model_key, eng, int(k), float(v.real), float(v.imag))
                for k, v in zip(keys.tolist(), z.tolist())]
        conn = self._connection()

        def write():
            conn.execute("BEGIN IMMEDIATE")
            try:
                conn.executemany("INSERT OR IGNORE INTO solves VALUES (?, ?, ?, ?, ?)", rows)
                conn.execute("COMMIT")
            except BaseException:
                if conn.in_transaction:
                    conn.execute("ROLLBACK")
                raise

        self._retry(write)

    def count(self) -> int:
        """Rows stored (all engine versions)."""
        return int(self._connection().execute("SELECT COUNT(*) FROM solves").fetchone()[0])

    def close(self) -> None:
        if self._conn is not None and self._pid == os.getpid():
            self._conn.close()
        self._conn = None

    def __getstate__(self):
        # picklable for worker processes: the connection is reopened there
        state = dict(self.__dict__)
        state["_conn"], state["_pid"] = None, -1
        return state
