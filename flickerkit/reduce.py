"""Block-wise reductions of long signals, so any capture is analysed in bounded memory.

Every function here walks a signal in blocks of at most ``block`` samples and
combines per-block results exactly (sums, extremes, counts). A signal is
anything with a length and slicing that returns numbers -- a numpy array, a
``numpy.memmap`` of any dtype, or :class:`flickerkit.readers.FileSignal` -- so an in-memory
capture and one larger than memory go through the same code, and differ only
in the block size (and the last bits of floating-point summation order).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Iterator

import numpy as np

#: Default block length [samples]: 2**22 float64 values are 32 MiB.
BLOCK = 2**22


def length(x: Any) -> int:
    """Return the number of samples of an array or a file-backed signal."""
    return int(x.shape[0])


def blocks(x: Any, start: int = 0, stop: int | None = None,
           block: int = BLOCK) -> Iterator[tuple[int, np.ndarray]]:
    """Yield ``(offset, float64 block)`` covering ``x[start:stop]``."""
    stop = length(x) if stop is None else stop
    for a in range(start, stop, block):
        b = min(a + block, stop)
        yield a, np.asarray(x[a:b], dtype=np.float64)


def _segments(off: int, size: int, bounds: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Cut a block at period boundaries: local starts and the period of each piece."""
    lo = int(np.searchsorted(bounds, off, side="right"))  # first bound > off
    hi = int(np.searchsorted(bounds, off + size, side="left"))  # first bound >= off + size
    cuts = np.empty(hi - lo + 1, dtype=np.int64)  # off, then the bounds inside: increasing
    cuts[0] = off
    cuts[1:] = bounds[lo:hi]
    period = np.arange(lo - 1, hi, dtype=np.int64)  # the period each piece belongs to
    return cuts - off, period


@dataclass(frozen=True)
class PeriodSums:
    """Per-period extremes and sums over the whole-period span."""

    hi: np.ndarray
    lo: np.ndarray
    total: np.ndarray
    lengths: np.ndarray
    span_hi: float
    span_lo: float
    span_total: float


@dataclass(frozen=True)
class Totals:
    """Sum, extremes and the first non-finite sample of a signal."""

    n: int
    total: float
    hi: float
    lo: float
    first_bad: int | None
    block_max: tuple[float, ...] = ()


def first_pass(x: Any, bounds: np.ndarray, *, block: int = BLOCK,
               feed=None) -> tuple[Totals, PeriodSums]:
    """One read of the signal: totals of every sample, and per-period sums within ``bounds``.

    ``feed(block)`` sees every block in order (the flickermeter). Stops at the
    first non-finite sample (``Totals.first_bad``).
    """
    total, hi, lo = 0.0, -np.inf, np.inf
    bad = None
    p = bounds.size - 1
    phi = np.full(p, -np.inf)
    plo = np.full(p, np.inf)
    ptot = np.zeros(p)
    tops: list[float] = []
    b0, b1 = int(bounds[0]), int(bounds[-1])
    for off, b in blocks(x, block=block):
        s = float(np.sum(b))
        if not np.isfinite(s):  # a nan or an infinity is there (or the sum overflowed)
            finite = np.isfinite(b)
            if not finite.all():
                bad = off + int(np.flatnonzero(~finite)[0])
                break
        total += s
        if feed is not None:
            feed(b)
        a, e = max(off, b0), min(off + b.size, b1)
        if e > a:  # the block's extremes from its periods' and the samples outside the span
            part = b[a - off : e - off]
            starts, period = _segments(a, part.size, bounds)
            top_p = np.maximum.reduceat(part, starts)
            low_p = np.minimum.reduceat(part, starts)
            np.maximum.at(phi, period, top_p)
            np.minimum.at(plo, period, low_p)
            np.add.at(ptot, period, np.add.reduceat(part, starts))
            top, low = float(top_p.max()), float(low_p.min())
            for rest in (b[: a - off], b[e - off :]):
                if rest.size:
                    top, low = max(top, float(rest.max())), min(low, float(rest.min()))
        else:
            top, low = float(np.max(b)), float(np.min(b))
        tops.append(top)
        hi, lo = max(hi, top), min(lo, low)
    sums = PeriodSums(phi, plo, ptot, np.diff(bounds), float(phi.max()), float(plo.min()),
                      float(ptot.sum()))
    return Totals(length(x), total, hi, lo, bad, tuple(tops)), sums


def second_pass(x: Any, bounds: np.ndarray, period_means: np.ndarray, span_mean: float,
                hi: float, *, block: int = BLOCK,
                block_max: tuple[float, ...] = ()) -> tuple[np.ndarray, float, int, int]:
    """One more read: areas above the per-period and span means, and counts at the maximum.

    ``block_max``: each block's largest sample, when known (``Totals.block_max`` of
    :func:`first_pass` with the same ``block``), saves a pass over each block.

    Returns
    -------
    above : numpy.ndarray
        Per period, sum of ``max(x - period mean, 0)``.
    span_above : float
        Sum of ``max(x - span mean, 0)`` over the span.
    at_max, at_next : int
        Samples equal to ``hi``, and to the next lower value present.
    """
    p = bounds.size - 1
    above = np.zeros(p)
    span_above = 0.0
    at_max, nxt, at_nxt = 0, -np.inf, 0
    b0, b1 = int(bounds[0]), int(bounds[-1])
    known = len(block_max) == -(-length(x) // block)
    for i, (off, b) in enumerate(blocks(x, block=block)):
        top = block_max[i] if known else float(b.max())
        if top < hi:  # the usual block: the maximum is elsewhere, its own top is a candidate
            m = top
        else:  # the block with the maximum: count it, and find the next lower value
            below = b < hi
            n_below = int(np.count_nonzero(below))
            at_max += b.size - n_below  # every sample is finite (first pass)
            m = float(np.max(b, where=below, initial=-np.inf)) if n_below else -np.inf
        if m > nxt:
            nxt, at_nxt = m, int(np.count_nonzero(b == m))
        elif m == nxt and m > -np.inf:
            at_nxt += int(np.count_nonzero(b == m))
        a, e = max(off, b0), min(off + b.size, b1)
        if e <= a:
            continue
        part = b[a - off : e - off]
        for c in range(0, part.size, _CHUNK):  # temporaries that stay in the cache
            sub = part[c : c + _CHUNK]
            starts, period = _segments(a + c, sub.size, bounds)
            lengths = np.diff(np.append(starts, sub.size))
            w = np.repeat(period_means[period], lengths)  # each sample's period mean; then work
            np.subtract(sub, w, out=w)
            np.maximum(w, 0.0, out=w)
            np.add.at(above, period, np.add.reduceat(w, starts))
            np.subtract(sub, span_mean, out=w)
            np.maximum(w, 0.0, out=w)
            span_above += float(np.sum(w))
    return above, span_above, at_max, at_nxt


#: Samples the second pass works on at a time within a block (512 KiB temporaries: six
#: passes over them run in the cache, not in memory).
_CHUNK = 2**16
