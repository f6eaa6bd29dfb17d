"""The inner search: the feed parameters of one geometry, thousands of
variants per numpy call, no solve.

For a fixed antenna response ``Z_fp(f)`` the cost of a feed variant is a
pure function of the feed parameters, computed by
:class:`necflow.feed.batch.FeedBatch` and :func:`batch_cost` (the cost of
:mod:`necflow.optimize.problem.cost`, vectorised over variants).  When every feed
parameter lies on a grid (``choices`` or ``step``) and the grid has at most
``max_variants`` points, the search is exhaustive (the exact optimum of the
grid for that geometry); otherwise a scrambled Sobol sample followed by
rounds of local refinement around the best variant.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.stats import qmc

from necflow.feed import build_chain
from necflow.feed.batch import FeedBatch
from necflow.optimize.problem.cost import score_arrays

#: Variants per numpy call (bounds the working memory to some tens of MB).
CHUNK = 4096


def batch_cost(swr, loss_db, band_index, weights, limit: float, spec,
               unmatched=None) -> np.ndarray:
    """The combined cost of each variant, as :func:`necflow.optimize.cost.score`.

    Parameters
    ----------
    swr, loss_db : ndarray
        ``(nvar, nfreq)`` SWR at the radio [-] and total loss [dB].
    band_index : ndarray of int
        ``(nfreq,)`` band of each point.
    weights : array_like
        ``(nbands,)`` band weights.
    limit : float
        SWR limit [-].
    spec : CostSpec
        ``design.cost``.
    unmatched : ndarray of bool, optional
        ``(nvar, nfreq)``: where a tuner cannot match.

    Returns
    -------
    ndarray
        ``(nvar,)`` cost.
    """
    return score_arrays(swr, loss_db, band_index, weights, limit, spec,
                        unmatched=unmatched).cost


def _grid(p) -> np.ndarray | None:
    """All values of a gridded parameter (as optuna suggests them), else None."""
    if p.choices is not None:
        return np.array(p.choices, dtype=object if isinstance(p.choices[0], str) else float)
    if p.step:
        n = int(np.floor((p.high - p.low) / p.step + 1e-9)) + 1
        return p.low + p.step * np.arange(n)
    return None


@dataclass(frozen=True)
class InnerResult:
    """Best feed values of one geometry (SI, by path), its cost, and how many
    variants were scored."""

    values: dict[str, Any]
    cost: float
    evaluated: int


class FeedSearch:
    """Score and search feed variants of a design for given antenna responses.

    Parameters
    ----------
    design : Design
        The base design (its feed chain, radio, goal, cost).
    params : sequence of Param
        The feed parameters searched (``Param.geometry`` False).
    f, band_index : ndarray
        The evaluated frequencies [Hz] and the band of each.
    bands : list of Band
    """

    def __init__(self, design, params, f, band_index, bands):

        self.design = design
        self.params = list(params)
        self.f, self.band_index = np.asarray(f, dtype=float), np.asarray(band_index)
        self.weights = np.array([b.weight for b in bands], dtype=float)
        self.fields = [tuple(p.path.split(".")[1:3]) for p in self.params]
        chain = build_chain(design.feed, r_radio=design.radio.impedance, bands=bands)
        self.batch = FeedBatch(chain, self.f, self.fields)

    def costs(self, z_feedpoint, values: dict[str, np.ndarray]) -> np.ndarray:
        """Cost of each variant (``path -> (nvar,)`` arrays, SI) [-]."""
        d = self.design
        n = max([np.asarray(v).size for v in values.values()] or [1])
        out = np.empty(n)
        for s in range(0, n, CHUNK):
            chunk = {fld: np.asarray(values[p.path])[s:s + CHUNK]
                     for p, fld in zip(self.params, self.fields)}
            r = self.batch.response(chunk, z_feedpoint, z_ref=d.radio.impedance)
            out[s:s + CHUNK] = batch_cost(r.swr, r.loss_db, self.band_index, self.weights,
                                          d.goal.swr_limit, d.cost, r.unmatched)
        return out

    def _decode(self, u: np.ndarray) -> dict[str, np.ndarray]:
        """Unit-cube points ``(n, nparams)`` -> parameter values."""
        out = {}
        for j, p in enumerate(self.params):
            g = _grid(p)
            if g is not None:
                out[p.path] = g[np.minimum((u[:, j] * g.size).astype(int), g.size - 1)]
            elif p.log:
                out[p.path] = np.exp(np.log(p.low) + u[:, j] * (np.log(p.high) - np.log(p.low)))
            else:
                out[p.path] = p.low + u[:, j] * (p.high - p.low)
        return out

    def _encode(self, values: dict[str, Any]) -> np.ndarray:
        """Parameter values -> the centre of their cell in the unit cube."""
        x = np.empty(len(self.params))
        for j, p in enumerate(self.params):
            g, v = _grid(p), values[p.path]
            if g is not None:
                k = list(g).index(v) if g.dtype == object else int(np.argmin(np.abs(g - v)))
                x[j] = (k + 0.5) / g.size
            elif p.log:
                x[j] = (np.log(v) - np.log(p.low)) / (np.log(p.high) - np.log(p.low))
            else:
                x[j] = (v - p.low) / (p.high - p.low)
        return x

    def search(self, z_feedpoint, *, max_variants: int = 20000, rounds: int = 4,
               seed: int = 0) -> InnerResult:
        """Best feed values for one antenna response ``z_feedpoint`` [ohm]."""

        if not self.params:
            c = float(self.costs(z_feedpoint, {})[0])
            return InnerResult({}, c, 1)
        grids = [_grid(p) for p in self.params]
        if all(g is not None for g in grids) and \
                int(np.prod([g.size for g in grids])) <= max_variants:
            mesh = np.meshgrid(*[np.arange(g.size) for g in grids], indexing="ij")
            vals = {p.path: g[m.ravel()] for p, g, m in zip(self.params, grids, mesh)}
            c = self.costs(z_feedpoint, vals)
            k = int(np.argmin(c))
            return InnerResult({p: _item(v[k]) for p, v in vals.items()}, float(c[k]), c.size)
        dim = len(self.params)
        sob = qmc.Sobol(dim, scramble=True, seed=seed)
        n0 = 2 ** int(np.floor(np.log2(max(2, max_variants // 2))))
        u = sob.random(n0)
        vals = self._decode(u)
        c = self.costs(z_feedpoint, vals)
        k = int(np.argmin(c))
        best = {p: _item(v[k]) for p, v in vals.items()}
        best_c, total = float(c[k]), c.size
        rng = np.random.default_rng(seed)
        width = 0.1
        per_round = max(16, (max_variants - n0) // max(1, rounds))
        for _ in range(rounds):
            centre = self._encode(best)
            u = np.clip(centre + width * (rng.random((per_round, dim)) - 0.5) * 2, 0, 1 - 1e-12)
            vals = self._decode(u)
            c = self.costs(z_feedpoint, vals)
            total += c.size
            k = int(np.argmin(c))
            if c[k] < best_c:
                best_c, best = float(c[k]), {p: _item(v[k]) for p, v in vals.items()}
            width /= 4.0
        return InnerResult(best, best_c, total)


def _item(x):
    return x.item() if hasattr(x, "item") else x
