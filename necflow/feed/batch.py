"""Many feed-chain variants in one numpy call.

A batch of ``nvar`` variants of one chain is the chain itself with the
varied fields of its elements set to ``(nvar,)`` arrays
(:func:`dataclasses.replace`): the elements' own ``abcd`` then gives
``(nvar, nfreq, 2, 2)`` arrays (``(nfreq, 2, 2)`` for an element that does
not vary), and the radio-side state, impedance at the radio and total loss
come from :mod:`necflow.feed.power`, the routine
:func:`necflow.analysis.powerflow.analyse` uses for one design.

Fields a variant may change (``(element id, field)``, field names of the
design file): a line's ``length`` and catalog ``line`` type, a part's
``value``, ``q`` and ``esr``, a transformer's ``ratio`` and ``loss`` (a choke:
none; its matrix is the identity; a tuner: none, it is set for the load each
variant puts on it).

Switch states are the base chain's (a relay's state is not varied here).  A
tuner is set by :func:`necflow.feed.chain.resolve_matrices` without the
near-match search (exact matches within the ranges only; a point matched
only nearly counts as not matched), so that a batch's work stays bounded.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from necflow.catalog.lines import LINE_TYPES
from necflow.feed import metrics, power
from necflow.feed.chain import FeedChain, LineSection, resolve_matrices, switched

#: Fields of each element kind that :class:`FeedBatch` varies in numpy.
SUPPORTED = {"line": {"length", "line"}, "series": {"value", "q", "esr"},
             "shunt": {"value", "q", "esr"}, "transformer": {"ratio", "loss"}, "choke": set(),
             "tuner": set()}

#: Design-file field -> element attribute, where the two differ.
_ATTRIBUTE = {"line": "line_type", "loss": "loss_db"}


@dataclass(frozen=True)
class BatchResponse:
    """Impedance at the radio, SWR and total loss of each variant, ``(nvar, nfreq)``."""

    z_radio: np.ndarray
    swr: np.ndarray
    loss_db: np.ndarray
    unmatched: np.ndarray | None = None


class FeedBatch:
    """Variants of one feed chain at fixed frequencies.

    Parameters
    ----------
    chain : FeedChain
        The base chain (antenna side first).
    f : array_like
        Frequency [Hz], ``(nfreq,)``.
    varied : iterable of (str, str)
        ``(element id, field)`` pairs the variants set; see :data:`SUPPORTED`.

    Raises
    ------
    ValueError
        For an unknown element id or a field not in :data:`SUPPORTED`.
    """

    def __init__(self, chain: FeedChain, f, varied=()):
        self.chain = chain
        self.f = np.atleast_1d(np.asarray(f, dtype=float))
        self.varied: dict[str, set[str]] = {}
        for eid, name in varied:
            if eid not in chain.ids:
                raise ValueError(f"no feed element with id '{eid}'")
            kind = chain.elements[chain.ids.index(eid)].kind
            if name not in SUPPORTED[kind]:
                raise ValueError(f"feed.{eid}.{name} cannot be varied in a batch "
                                 f"(a {kind} element varies {sorted(SUPPORTED[kind])})")
            self.varied.setdefault(eid, set()).add(name)
        # elements that do not vary: their matrices once (warning here, once,
        # if the frequencies leave a line type's data)
        self._static = {e.id: switched(e.abcd(self.f), chain.out_mask(e.id, self.f))
                        for e in chain.elements
                        if e.id not in self.varied and e.kind != "tuner"}

    def _line_types(self, el: LineSection, names) -> np.ndarray:
        """Catalog line types by name, as an object array shaped like ``names``;
        the element's own type (which may carry the design's changes) for its
        own name."""

        names = np.asarray(names)
        u, inv = np.unique(names.ravel(), return_inverse=True)
        types = np.empty(u.size, dtype=object)
        for k, name in enumerate(u):
            types[k] = el.line_type if name == el.line_type.name else LINE_TYPES[str(name)]
        return types[inv.reshape(-1)].reshape(names.shape)

    def variant(self, el, values: dict[tuple[str, str], np.ndarray]):
        """Element ``el`` with its varied fields set to the per-variant arrays
        of ``values`` (SI; line type names for ``line``)."""
        changes = {}
        for name in self.varied.get(el.id, ()):
            v = values[(el.id, name)]
            changes[_ATTRIBUTE.get(name, name)] = (self._line_types(el, v) if name == "line"
                                                   else np.asarray(v, dtype=float))
        return replace(el, **changes) if changes else el

    def variant_chain(self, values: dict[tuple[str, str], np.ndarray]) -> FeedChain:
        """The chain whose elements hold the variants' arrays: its
        ``abcd(f)`` is ``(nvar, nfreq, 2, 2)``."""
        return FeedChain(tuple(self.variant(el, values) for el in self.chain.elements),
                         self.chain.out)

    def matrices(self, values: dict[tuple[str, str], np.ndarray]) -> list[np.ndarray]:
        """Each element's ABCD, antenna side first: ``(nvar, nfreq, 2, 2)`` for
        a varied element, ``(nfreq, 2, 2)`` for the others (computed once);
        None for a tuner (set for its load by :meth:`response`)."""
        out = []
        for el in self.variant_chain(values).elements:
            mask = self.chain.out_mask(el.id, self.f)
            if el.kind == "tuner":
                out.append(None)
            elif el.id in self._static:
                out.append(self._static[el.id])
            elif isinstance(el, LineSection):
                out.append(switched(el.abcd(self.f, warn=False), mask))
            else:
                out.append(switched(el.abcd(self.f), mask))
        return out

    def response(self, values: dict[tuple[str, str], np.ndarray], z_feedpoint,
                 z_ref: float = 50.0) -> BatchResponse:
        """Impedance at the radio [ohm], SWR [-] and total loss [dB] per variant.

        Parameters
        ----------
        values : dict
            ``(element id, field) -> (nvar,)`` array of SI values (line type
            names for ``line``), one entry per varied field.
        z_feedpoint : array_like
            Antenna feedpoint impedance [ohm], ``(nfreq,)``.
        z_ref : float
            Radio reference resistance [ohm].

        Returns
        -------
        BatchResponse
            Arrays ``(nvar, nfreq)``; the impedance at the radio is
            ``V_0 / I_0`` and the total loss ``10 log10(P_avail /
            P_delivered)`` of :mod:`necflow.feed.power`, for the state
            ``(V_0, I_0)`` at the radio of the feedpoint state ``(Z_fp, 1)``.

        References
        ----------
        .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec.
           2.6 (available power of a generator) and sec. 4.4 (ABCD).
        """
        nvar = max([np.asarray(a).size for a in values.values()] or [1])
        zfp = np.broadcast_to(np.asarray(z_feedpoint, dtype=complex), self.f.shape)
        mats = self.matrices(values)
        unmatched = None
        if any(m is None for m in mats):
            elements, mats = resolve_matrices(self.variant_chain(values), mats, self.f, zfp,
                                              near=False)
            unmatched = np.zeros((nvar, self.f.size), dtype=bool)
            for el in elements:
                if el.kind == "tuner":
                    unmatched |= ~np.asarray(el.can_match) & ~self.chain.out_mask(el.id, self.f)
        states = power.states_toward_radio(mats, zfp)
        vn, i_n = v0, i0 = next(states)
        for v0, i0 in states:  # noqa: B007  (the last state is the radio's)
            pass
        shape = (nvar, self.f.size)
        v0, i0 = np.broadcast_to(v0, shape), np.broadcast_to(i0, shape)
        z_radio = power.radio_impedance(v0, i0)
        loss = power.total_loss_db(power.delivered_fraction(v0, i0, vn, i_n, z_ref))
        return BatchResponse(z_radio=z_radio,
                             swr=metrics.swr(metrics.reflection_coefficient(z_radio, z_ref)),
                             loss_db=loss, unmatched=unmatched)
