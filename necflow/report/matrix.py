"""The decision matrix of the report: per band, every way of feeding scored in
dB, the best marked and its margin over the next best.

Computed from ``report_data.json`` alone (no solve).  A band is scored on
system gain when every way of feeding has one there (the mean over the
elevations of interest of antenna gain less the feed system's total loss
[dBi]); otherwise on the total loss [dB] (lower is better), e.g. when the
optimised design's antenna differs from the design's and its far field was
not computed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

#: Two ways of feeding closer than this [dB] are a tie (the report prints
#: one decimal).
TIE_DB = 0.05


@dataclass
class Cell:
    """One way of feeding on one band."""

    name: str
    value: float | None       # system gain [dBi] or total loss [dB]; None: no result
    score: float              # higher is better; -inf without a result
    swr_max: float | None
    over_limit: bool          # SWR at the radio above the limit somewhere in the band
    cannot_match: bool        # a tuner of this way cannot match the band's centre
    behind_db: float = 0.0    # how far below the best [dB]
    best: bool = False


@dataclass
class Row:
    """One band of the matrix."""

    band: str
    frequency_hz: float
    basis: str                # 'system gain' or 'total loss'
    cells: list[Cell] = field(default_factory=list)
    best: int = 0             # index of the best way of feeding
    runner_up: int | None = None
    margin_db: float | None = None   # best's score less the runner-up's [dB]

    @property
    def unit(self) -> str:
        return "dBi" if self.basis == "system gain" else "dB"


def _mean_gain(d: dict) -> float | None:
    g = [x for x in (d.get("system_gain_dbi") or []) if x is not None and math.isfinite(x)]
    return sum(g) / len(g) if g else None


def decision_rows(report: dict) -> list[Row]:
    """The decision matrix from a ``report_data.json`` document."""
    alts = report["alternatives"]
    if not alts:
        return []
    limit = report["swr_limit"]
    rows = []
    for i, b in enumerate(alts[0]["bands"]):
        ds = [a["bands"][i] for a in alts]
        gains = [_mean_gain(d) for d in ds]
        basis = "system gain" if all(g is not None for g in gains) else "total loss"
        row = Row(b["band"], b["frequency_hz"], basis)
        for a, d, g in zip(alts, ds, gains):
            loss = d["loss_db"].get("total")
            value = g if basis == "system gain" else loss
            ok = value is not None and math.isfinite(value)
            score = (value if basis == "system gain" else -value) if ok else -math.inf
            tuners = d.get("tuners") or {}
            row.cells.append(Cell(
                a["name"], value if ok else None, score, d.get("swr_max"),
                d.get("swr_max") is not None and d["swr_max"] > limit,
                any(not t["can_match_centre"] for t in tuners.values())))
        order = sorted(range(len(row.cells)), key=lambda j: -row.cells[j].score)
        row.best = order[0]
        top = row.cells[row.best].score
        if len(order) > 1 and math.isfinite(row.cells[order[1]].score):
            row.runner_up = order[1]
            row.margin_db = top - row.cells[order[1]].score
        for c in row.cells:
            c.behind_db = top - c.score if math.isfinite(c.score) else math.inf
            c.best = math.isfinite(top) and c.behind_db < TIE_DB
        rows.append(row)
    return rows
