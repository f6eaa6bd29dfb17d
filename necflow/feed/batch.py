"""Many feed-chain variants in one numpy call.

The element two-ports of ``nvar`` variants of one chain are arrays shaped
``(nvar, nfreq, 2, 2)`` (``(1, nfreq, 2, 2)`` for an element that does not
vary).  Instead of multiplying the matrices, the feedpoint state
``(V, I) = (Z_fp, 1)`` is carried toward the radio with each element's
forward ABCD, which gives the impedance at the radio and, through the one
complex factor the source fixes, the power delivered to the feed point: the
same arithmetic as :func:`necflow.analysis.powerflow.analyse`, for all
variants at once.

Fields a variant may change (``(element id, field)``, field names of the
design file): a line's ``length`` and catalog ``line`` type, a part's
``value``, ``q`` and ``esr``, a transformer's ``ratio`` and ``loss``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from necflow.analysis import metrics
from necflow.feed.chain import FeedChain, LineSection, LumpedPart, Transformer

#: Fields of each element kind that :class:`FeedBatch` varies in numpy.
SUPPORTED = {"line": {"length", "line"}, "series": {"value", "q", "esr"},
             "shunt": {"value", "q", "esr"}, "transformer": {"ratio", "loss"}}


def _col(x, nvar: int) -> np.ndarray:
    """A per-variant array as a column ``(nvar, 1)`` (or ``(1, 1)`` for a scalar)."""
    a = np.asarray(x)
    return a.reshape(-1, 1) if a.ndim else a.reshape(1, 1)


def line_abcd_batch(gamma, zc, length) -> np.ndarray:
    """ABCD of line sections, ``[[cosh gl, Zc sinh gl], [sinh gl / Zc, cosh gl]]``.

    Parameters
    ----------
    gamma, zc : array_like
        Propagation constant [1/m] and characteristic impedance [ohm],
        ``(nvar or 1, nfreq)``.
    length : array_like
        Lengths [m], ``(nvar or 1, 1)``.

    Returns
    -------
    ndarray
        ``(nvar, nfreq, 2, 2)`` complex.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1.
    """
    gl = np.asarray(gamma) * np.asarray(length, dtype=float)
    zc = np.broadcast_to(zc, gl.shape)
    ch, sh = np.cosh(gl), np.sinh(gl)
    return np.stack([np.stack([ch, zc * sh], -1), np.stack([sh / zc, ch], -1)], -2)


def part_impedance_batch(f, kind: str, value, q, esr) -> np.ndarray:
    """Impedance of lumped parts, ``ESR + jX``, ``ESR = |X| / Q`` unless given.

    Parameters
    ----------
    f : ndarray
        Frequency [Hz], ``(nfreq,)``.
    kind : {'capacitor', 'inductor', 'resistor'}
    value, q, esr : array_like
        ``(nvar or 1, 1)``; F, H or ohm; Q [-]; ESR [ohm] (NaN: from Q).

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec. 6.1.
    """
    w = 2.0 * math.pi * np.asarray(f, dtype=float)[None, :]
    value = np.asarray(value, dtype=float)
    if kind == "resistor":
        return np.broadcast_to(value, np.broadcast_shapes(value.shape, w.shape)).astype(complex)
    x = -1.0 / (w * value) if kind == "capacitor" else w * value
    esr = np.asarray(esr, dtype=float)
    r = np.where(np.isnan(esr), np.abs(x) / np.asarray(q, dtype=float), esr)
    return r + 1j * x


def transformer_abcd_batch(nfreq: int, ratio, loss_db, r_radio: float,
                           loss_model: str = "series") -> np.ndarray:
    """Loss element of ``loss_db`` in ``r_radio`` followed by an ideal
    transformer of impedance ratio ``ratio`` (antenna : radio), as
    :func:`necflow.feed.transformer.transformer_abcd`, per variant.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, table 4.1.
    """
    loss = np.asarray(loss_db, dtype=float)
    n = np.sqrt(np.asarray(ratio, dtype=float))
    loss, n = np.broadcast_arrays(loss, n)
    if loss_model == "series":
        ch, sh = np.ones_like(loss), np.zeros_like(loss)
        b = r_radio * (10.0 ** (loss / 10.0) - 1.0)
    else:
        a = loss * math.log(10.0) / 20.0
        ch, sh = np.cosh(a), np.sinh(a)
        b = r_radio * sh
    m = np.stack([np.stack([ch / n, b * n], -1),
                  np.stack([sh / (r_radio * n), ch * n], -1)], -2).astype(complex)
    return np.broadcast_to(m[:, None], (m.shape[0], nfreq, 2, 2))


@dataclass(frozen=True)
class BatchResponse:
    """Impedance at the radio, SWR and total loss of each variant, ``(nvar, nfreq)``."""

    z_radio: np.ndarray
    swr: np.ndarray
    loss_db: np.ndarray


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
        self.varied = {}
        for eid, name in varied:
            if eid not in chain.ids:
                raise ValueError(f"no feed element with id '{eid}'")
            kind = chain.elements[chain.ids.index(eid)].kind
            if name not in SUPPORTED[kind]:
                raise ValueError(f"feed.{eid}.{name} cannot be varied in a batch "
                                 f"(a {kind} element varies {sorted(SUPPORTED[kind])})")
            self.varied.setdefault(eid, set()).add(name)
        self._static = {e.id: e.abcd(self.f)[None] for e in chain.elements
                        if e.id not in self.varied}
        self._prop: dict[tuple[str, str], tuple[np.ndarray, np.ndarray]] = {}

    def _propagation(self, el: LineSection, type_name: str | None):
        key = (el.id, type_name or "")
        if key not in self._prop:
            sec = el
            if type_name is not None and type_name != el.line_type.name:
                from necflow.catalog.lines import LINE_TYPES
                sec = replace(el, line_type=LINE_TYPES[type_name])
            self._prop[key] = sec.propagation(self.f)
        return self._prop[key]

    def element_abcd(self, el, values: dict[str, np.ndarray], nvar: int) -> np.ndarray:
        """One element's ABCD for every variant, ``(nvar or 1, nfreq, 2, 2)``."""
        if el.id not in self.varied:
            return self._static[el.id]
        v = {name: values[(el.id, name)] for name in self.varied[el.id]}
        if isinstance(el, LineSection):
            length = _col(v.get("length", el.length), nvar)
            if "line" in v:
                names = np.asarray(v["line"])
                gamma = np.empty((names.size, self.f.size), dtype=complex)
                zc = np.empty_like(gamma)
                for u in np.unique(names):
                    sel = names == u
                    gamma[sel], zc[sel] = self._propagation(el, str(u))
            else:
                g, z = self._propagation(el, None)
                if length.shape[0] > 1:
                    # grids repeat lengths: compute each distinct one once
                    u, inv = np.unique(length[:, 0], return_inverse=True)
                    if u.size < length.shape[0]:
                        return line_abcd_batch(g[None], z[None], u[:, None])[inv]
                gamma, zc = g[None], z[None]
            return line_abcd_batch(gamma, zc, length)
        if isinstance(el, LumpedPart):
            from necflow.feed.lumped import DEFAULT_Q
            q = v.get("q", el.q if el.q is not None else DEFAULT_Q.get(el.part, 1.0))
            esr = v.get("esr", el.esr if el.esr is not None else np.nan)
            z = part_impedance_batch(self.f, el.part, _col(v.get("value", el.value), nvar),
                                     _col(q, nvar), _col(esr, nvar))
            one, zero = np.ones_like(z), np.zeros_like(z)
            if el.placement == "series":
                return np.stack([np.stack([one, z], -1), np.stack([zero, one], -1)], -2)
            return np.stack([np.stack([one, zero], -1), np.stack([1.0 / z, one], -1)], -2)
        if isinstance(el, Transformer):
            return transformer_abcd_batch(self.f.size, _col(v.get("ratio", el.ratio), nvar)[:, 0],
                                          _col(v.get("loss", el.loss_db), nvar)[:, 0], el.r_radio,
                                          el.loss_model)
        raise TypeError(f"unknown element type {type(el).__name__}")

    def response(self, values: dict[tuple[str, str], np.ndarray], z_feedpoint,
                 z_ref: float = 50.0) -> BatchResponse:
        """Impedance at the radio [ohm], SWR [-] and total loss [dB] per variant.

        Parameters
        ----------
        values : dict
            ``(element id, field) -> (nvar,)`` array of SI values (line type
            names for ``line``), one entry per varied field.
        z_feedpoint : array_like
            Antenna feedpoint impedance [ohm], ``(nfreq,)``, finite.
        z_ref : float
            Radio reference resistance [ohm].

        Returns
        -------
        BatchResponse
            Arrays ``(nvar, nfreq)``; the total loss is
            ``10 log10(P_avail / P_delivered)`` with
            ``P_delivered / P_avail = 4 z_ref Re(Z_fp) / |V_0 + z_ref I_0|^2``
            for the state ``(V_0, I_0)`` at the radio of the feedpoint state
            ``(Z_fp, 1)``.

        References
        ----------
        .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley 2012, sec.
           2.6 (available power of a generator) and sec. 4.4 (ABCD).
        """
        nvar = max([np.asarray(a).size for a in values.values()] or [1])
        zfp = np.asarray(z_feedpoint, dtype=complex)[None, :]
        v = np.broadcast_to(zfp, (nvar, self.f.size)).copy()
        i = np.ones_like(v)
        for el in self.chain.elements:            # antenna side first
            m = self.element_abcd(el, values, nvar)
            v, i = m[..., 0, 0] * v + m[..., 0, 1] * i, m[..., 1, 0] * v + m[..., 1, 1] * i
        z_radio = v / i
        gamma = metrics.reflection_coefficient(z_radio, z_ref)
        with np.errstate(divide="ignore"):
            loss = 10.0 * np.log10(np.abs(v + z_ref * i) ** 2 / (4.0 * z_ref * zfp.real))
        return BatchResponse(z_radio=z_radio, swr=metrics.swr(gamma), loss_db=loss)
