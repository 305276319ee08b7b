"""Block-wise reductions of long signals, so any capture is analysed in bounded memory.

Every function here walks a signal in blocks of at most ``block`` samples and
combines per-block results exactly (sums, extremes, counts). A signal is
anything with a length and slicing that returns numbers -- a numpy array, a
``numpy.memmap`` of any dtype, or :class:`LazySignal` -- so an in-memory
capture and one larger than memory go through the same code, and differ only
in the block size (and the last bits of floating-point summation order).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Iterator

import numpy as np

#: Default block length [samples]: 2**22 float64 values are 32 MiB.
BLOCK = 2**22


class LazySignal:
    """A read-only view of stored samples as float64, with a dark level subtracted.

    Parameters
    ----------
    raw : array_like
        1-D samples (a memmap or array of any real dtype).
    offset : float
        Subtracted from every sample (the dark level) [input unit].
    """

    def __init__(self, raw: Any, offset: float = 0.0) -> None:
        self.raw = raw
        self.offset = float(offset)
        self.shape = (int(raw.shape[0]),)
        self.dtype = np.dtype(np.float64)
        self.ndim = 1

    def __len__(self) -> int:
        return self.shape[0]

    def __getitem__(self, key: slice) -> np.ndarray:
        if not isinstance(key, slice):
            raise TypeError("a LazySignal is read in slices")
        out = np.asarray(self.raw[key], dtype=np.float64)
        if self.offset:
            out = out - self.offset
        return out

    def __array__(self, dtype=None, copy=None):  # whole-array access: only for small signals
        a = self[:]
        return a.astype(dtype) if dtype is not None else a


def length(x: Any) -> int:
    return int(x.shape[0])


def blocks(x: Any, start: int = 0, stop: int | None = None,
           block: int = BLOCK) -> Iterator[tuple[int, np.ndarray]]:
    """Yield ``(offset, float64 block)`` covering ``x[start:stop]``."""
    stop = length(x) if stop is None else stop
    for a in range(start, stop, block):
        b = min(a + block, stop)
        yield a, np.asarray(x[a:b], dtype=np.float64)


@dataclass(frozen=True)
class Totals:
    """Sum, extremes and the first non-finite sample of a signal."""

    n: int
    total: float
    hi: float
    lo: float
    first_bad: int | None


def totals(x: Any, *, block: int = BLOCK, feed=None) -> Totals:
    """Sum, max and min of every sample; ``feed(block)`` sees each block in order."""
    total, hi, lo = 0.0, -np.inf, np.inf
    bad = None
    for off, b in blocks(x, block=block):
        finite = np.isfinite(b)
        if bad is None and not finite.all():
            bad = off + int(np.flatnonzero(~finite)[0])
            break
        total += float(np.sum(b))
        hi = max(hi, float(np.max(b)))
        lo = min(lo, float(np.min(b)))
        if feed is not None:
            feed(b)
    return Totals(length(x), total, hi, lo, bad)


def _segments(off: int, size: int, bounds: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Cut a block at period boundaries: local starts and the period of each piece."""
    lo = np.searchsorted(bounds, off, side="right")
    hi = np.searchsorted(bounds, off + size, side="left")
    cuts = np.concatenate([[off], bounds[lo:hi], ]).astype(np.int64)
    cuts = np.unique(cuts[(cuts >= off) & (cuts < off + size)])
    period = np.searchsorted(bounds, cuts, side="right") - 1
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


def period_sums(x: Any, bounds: np.ndarray, *, block: int = BLOCK) -> PeriodSums:
    """Max, min and sum of each period ``[bounds[k], bounds[k+1])``."""
    p = bounds.size - 1
    hi = np.full(p, -np.inf)
    lo = np.full(p, np.inf)
    total = np.zeros(p)
    for off, b in blocks(x, int(bounds[0]), int(bounds[-1]), block):
        starts, period = _segments(off, b.size, bounds)
        np.maximum.at(hi, period, np.maximum.reduceat(b, starts))
        np.minimum.at(lo, period, np.minimum.reduceat(b, starts))
        np.add.at(total, period, np.add.reduceat(b, starts))
    return PeriodSums(hi, lo, total, np.diff(bounds), float(hi.max()), float(lo.min()),
                      float(total.sum()))


def above_sums(x: Any, bounds: np.ndarray, period_means: np.ndarray, span_mean: float, *,
               block: int = BLOCK) -> tuple[np.ndarray, float]:
    """Per period, sum of ``max(x - period mean, 0)``; and over the span, ``max(x - span mean, 0)``."""
    p = bounds.size - 1
    above = np.zeros(p)
    span_above = 0.0
    for off, b in blocks(x, int(bounds[0]), int(bounds[-1]), block):
        starts, period = _segments(off, b.size, bounds)
        lengths = np.diff(np.append(starts, b.size))
        work = b - np.repeat(period_means[period], lengths)
        np.maximum(work, 0.0, out=work)
        np.add.at(above, period, np.add.reduceat(work, starts))
        np.subtract(b, span_mean, out=work)
        np.maximum(work, 0.0, out=work)
        span_above += float(np.sum(work))
    return above, span_above


def top_counts(x: Any, hi: float, *, block: int = BLOCK) -> tuple[int, int]:
    """How many samples equal the maximum, and how many equal the next lower value."""
    at_max = 0
    nxt, at_nxt = -np.inf, 0
    for _, b in blocks(x, block=block):
        at_max += int(np.count_nonzero(b == hi))
        below = b[b < hi]
        if below.size:
            m = float(below.max())
            if m > nxt:
                nxt, at_nxt = m, int(np.count_nonzero(below == m))
            elif m == nxt:
                at_nxt += int(np.count_nonzero(below == m))
    return at_max, at_nxt
