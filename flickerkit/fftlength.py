"""Cost of a real FFT by its length: which lengths are fast, and an estimate for the others.

numpy and scipy both ship the pocketfft library; its speed depends on the prime
factors of the length (lengths of factors 2, 3 and 5 are fastest; a length with
a large prime factor goes through Bluestein's algorithm at several times the
time and memory). Spans of whole periods rarely have a fast length, so the
spectrum weighs candidate spans with :func:`fft_cost`.
"""

from __future__ import annotations

import numpy as np

#: Cost model of a real FFT, per sample relative to a length with factors 2, 3 and 5 only
#: (computed here: numpy 2.4 / scipy 1.17 pocketfft on the project's 2-core machine, lengths
#: near 1e7: prime factors above 5 add about 0.01 per unit of their sum; a length whose
#: largest prime factor squared exceeds it goes through Bluestein's algorithm at 7-11x).
_GENERIC_RADIX_COST = 0.01
_BLUESTEIN_COST = 10.0
_SMALL_PRIMES = (2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71,
                 73, 79, 83, 89, 97)


def fft_cost(lengths) -> np.ndarray:
    """Estimated time of a real FFT of each length, in fast-length samples.

    Parameters
    ----------
    lengths : array_like of int
        Transform lengths [samples].

    Returns
    -------
    numpy.ndarray
        ``n * c(n)``, with c = 1 for lengths whose prime factors are 2, 3 and 5,
        ``1 + 0.01 * (sum of the prime factors above 5)`` for other lengths whose
        largest prime factor squared is at most n, and 10 for the rest (the FFT
        library uses Bluestein's algorithm for them, with three transforms of
        twice the length) [fast-length samples].

    Notes
    -----
    A model of the pocketfft implementation that numpy and scipy ship: it has
    hard-coded real passes for 2, 3, 4 and 5 and a generic pass, of cost
    proportional to the factor, for other primes; a length with a prime factor
    above its square root goes through Bluestein's algorithm. The weights were
    fitted to timings near 1e7 samples, where the transform is memory bound.
    Factors up to 97 are found by trial division; a cofactor above 97 squared
    with no such factor is costed as Bluestein.
    """
    n = np.atleast_1d(np.asarray(lengths, dtype=np.int64))
    if n.size > _CACHED_UP_TO:
        return _fft_cost(n)
    # a batch of short captures asks again and again about lengths near its capture length
    keys = n.ravel().tolist()
    known = {k: _COSTS.get(k) for k in keys}  # read once: safe if another thread clears it
    new = [k for k, v in known.items() if v is None]
    if new:
        got = dict(zip(new, _fft_cost(np.array(new, dtype=np.int64)).tolist()))
        known.update(got)
        if len(_COSTS) + len(got) > _COSTS_KEPT:
            _COSTS.clear()
        _COSTS.update(got)
    return np.array([known[k] for k in keys], dtype=np.float64).reshape(n.shape)


#: :func:`fft_cost` keeps the costs of the lengths it was asked about, when asked about at
#: most this many at once, and at most this many lengths in all.
_CACHED_UP_TO = 4096
_COSTS_KEPT = 1 << 16
_COSTS: dict[int, float] = {}


def _fft_cost(n: np.ndarray) -> np.ndarray:
    """Return :func:`fft_cost` of a 1-D int64 array, computed."""
    rest = n // np.maximum(n & -n, 1)  # every factor 2 at once: n & -n is the lowest set bit
    extra = np.zeros(n.shape)
    for q in _SMALL_PRIMES[1:]:
        idx = np.flatnonzero(rest % q == 0)
        while idx.size:
            rest[idx] //= q
            if q > 5:
                extra[idx] += q
            idx = idx[rest[idx] % q == 0]
    per = 1.0 + _GENERIC_RADIX_COST * extra
    big = rest > 1
    generic = big & (rest < _SMALL_PRIMES[-1] ** 2) & (rest * rest <= n)  # rest is prime
    per[generic] += _GENERIC_RADIX_COST * rest[generic]
    per[big & ~generic] = _BLUESTEIN_COST
    return n * per


def next_fast_len(n: int) -> int:
    """Smallest length of factors 2, 3 and 5 only that is at least ``n``.

    Parameters
    ----------
    n : int
        Shortest acceptable length [samples].

    Returns
    -------
    int
        The fast length [samples] (the same as ``scipy.fft.next_fast_len(n,
        real=True)``, without importing scipy.fft).
    """
    n = max(1, int(n))
    best = 1 << max(0, (n - 1).bit_length())
    p5 = 1
    while p5 < best:
        p35 = p5
        while p35 < best:
            m = p35
            while m < n:
                m *= 2
            best = min(best, m)
            p35 *= 3
        p5 *= 5
    return best
