"""Many variants of one design at once: tolerance cases, robust-design cases.

Cases are grouped by the values that change the antenna or need the schema
(geometry, ground, feed fields the batch cannot vary); each group is one
:meth:`Chain.variant` (one antenna response, solved at most once through
the shared cache), and the feed fields the batch can vary are varied for
the whole group in one :class:`necflow.feed.batch.FeedBatch` call: the
same element physics as a single design, in numpy.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from necflow.chain.stages import Chain, prefetch
from necflow.errors import ConfigError, ModelError
from necflow.feed.batch import SUPPORTED, FeedBatch


@dataclass(frozen=True)
class CaseResults:
    """SWR at the radio and total loss of every case, ``(ncases, nfreq)``,
    and the chain of each case's group (its geometry and ground)."""

    swr: np.ndarray
    loss_db: np.ndarray
    chains: list[Chain]
    common_mode_a: np.ndarray | None = None


def _batch_field(chain: Chain, path: str) -> tuple[str, str] | None:
    """``(element id, field)`` when the batch can vary the field at ``path``."""
    parts = path.split(".")
    if parts[0] != "feed" or len(parts) != 3 or parts[1] not in chain.feed.ids:
        return None
    kind = chain.feed.elements[chain.feed.ids.index(parts[1])].kind
    return (parts[1], parts[2]) if parts[2] in SUPPORTED.get(kind, ()) else None


def evaluate_cases(chain: Chain, cases: list[dict[str, Any]],
                   on_step: Callable[[int, int | None, str], None] | None = None
                   ) -> CaseResults:
    """Apply each case's values [SI] to ``chain``'s design and evaluate it.

    With ``on_step`` (a command's progress), ``on_step(done, total, text)``
    comes before each geometry state is solved (each case, with a route),
    and the states are solved one at a time instead of in one call.

    Raises
    ------
    ConfigError, ModelError
        A case whose design is invalid; the message names the case.
    """
    f = chain.frequency_hz
    if chain.routed:
        return _one_by_one(chain, cases, on_step)
    paths = sorted({p for c in cases for p in c})
    batched = {p: _batch_field(chain, p) for p in paths}
    groups: dict[tuple, list[int]] = {}
    for i, c in enumerate(cases):
        key = tuple(sorted((p, v) for p, v in c.items() if batched[p] is None))
        groups.setdefault(key, []).append(i)
    swr = np.empty((len(cases), f.size))
    loss = np.empty_like(swr)
    chains: list[Chain | None] = [None] * len(cases)
    varied = [batched[p] for p in paths if batched[p] is not None]
    z_ref = chain.design.radio.impedance
    members = {}
    for key, idx in groups.items():
        try:
            members[key] = chain.variant(dict(key)) if key else chain
        except ConfigError as exc:
            raise ConfigError(f"tolerance case {idx[0]}: {exc.message}",
                              field=exc.field) from None
        except ModelError as exc:
            raise ModelError(f"tolerance case {idx[0]}: {exc}") from None
    # every geometry state asked of the cache together (solved in parallel
    # where the solver runs a pool), then read back one by one; with a
    # progress callback, one state at a time
    if on_step is None:
        prefetch(list(members.values()))
    else:
        for k, (key, member) in enumerate(members.items()):
            on_step(k, len(members), f"geometry state {k + 1} of {len(members)} "
                    f"({len(groups[key])} case{'s' if len(groups[key]) != 1 else ''})")
            prefetch([member])
    for key, idx in groups.items():
        member = members[key]
        batch = FeedBatch(member.feed, f, varied)
        values = {batched[p]: np.array([cases[i][p] for i in idx])
                  for p in paths if batched[p] is not None}
        r = batch.response(values, member.antenna, z_ref=z_ref)
        swr[idx], loss[idx] = r.swr, r.loss_db
        for i in idx:
            chains[i] = member
    return CaseResults(swr=swr, loss_db=loss, chains=chains)  # type: ignore[arg-type]


def _one_by_one(chain: Chain, cases: list[dict[str, Any]], on_step=None) -> CaseResults:
    """Cases of a design with a route: each its own chain (the heat of its
    chokes belongs in its budget, which the batch does not hold); cases of one
    geometry still share a solve through the cache."""
    f = chain.frequency_hz
    swr = np.empty((len(cases), f.size))
    loss = np.empty_like(swr)
    chains = []
    entry = np.zeros((len(cases), f.size))
    for i, c in enumerate(cases):
        if on_step is not None:
            on_step(i, len(cases), f"case {i + 1} of {len(cases)}")
        try:
            member = chain.variant(c)
        except ConfigError as exc:
            raise ConfigError(f"tolerance case {i}: {exc.message}", field=exc.field) from None
        except ModelError as exc:
            raise ModelError(f"tolerance case {i}: {exc}") from None
        swr[i], loss[i] = member.system.swr, member.system.loss_db["total"]
        entry[i] = np.abs(member.common_mode.currents.get("entry", np.zeros(f.size)))
        chains.append(member)
    return CaseResults(swr=swr, loss_db=loss, chains=chains, common_mode_a=entry)


__all__ = ["CaseResults", "evaluate_cases"]
