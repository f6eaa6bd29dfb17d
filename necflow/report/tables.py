"""Plain-text tables for the terminal (rich renders them; no colour needed)."""

from __future__ import annotations

from rich.console import Console
from rich.table import Table


def band_table(summaries, swr_limit: float, title: str = "") -> Table:
    """The per-band table: lowest SWR and where, SWR at the edges, loss."""
    t = Table(title=title or None, title_justify="left", header_style="bold")
    for col, just in (("band", "left"), ("range MHz", "right"), ("min SWR", "right"),
                      ("at MHz", "right"), ("SWR low edge", "right"),
                      ("SWR high edge", "right"), (f"<= {swr_limit:g}", "right"),
                      ("mean loss dB", "right")):
        t.add_column(col, justify=just)
    for b in summaries:
        t.add_row(b.band, f"{b.low_hz / 1e6:.3f}-{b.high_hz / 1e6:.3f}", _swr(b.swr_min),
                  f"{b.frequency_swr_min_hz / 1e6:.3f}", _swr(b.swr_low_edge),
                  _swr(b.swr_high_edge), f"{100 * b.fraction_within_limit:.0f}%",
                  f"{b.loss_db_mean:.2f}")
    return t


def _swr(x: float) -> str:
    return f"{x:.2f}" if x < 100 else f"{x:.0f}"


def print_table(table: Table, console: Console | None = None) -> None:
    (console or Console(width=120)).print(table)
