"""Fundamental modulation frequency of a light signal.

The period is found in the time domain, from the autocorrelation of the
mean-removed signal, so that it is robust to harmonics that alias above the
Nyquist frequency (narrow PWM pulses) and to waveforms whose harmonics are all
about equally strong (1 % duty PWM). A coarse estimate from the first
:data:`SEGMENT_SAMPLES` samples is refined at large multiples of the period within
the segment, so a capture of any length costs one FFT of the segment.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

#: Samples used for the coarse autocorrelation (2**20: 1 s at 1 MS/s).
SEGMENT_SAMPLES = 2**20

#: Normalised autocorrelation at one period below which a signal is said to
#: have no periodic modulation (noise dominates). Chosen here, not from a
#: standard: white noise gives about 5/sqrt(n) at its largest lag; a periodic
#: signal with noise power equal to its own reaches 0.5.
MIN_STRENGTH = 0.3

#: Below this many periods in the segment the autocorrelation peak is biased by
#: the ends of the capture (0.1 % at 8 periods); the period is then refined by a
#: least-squares fit of a harmonic series instead; above it, by the phase drift of the
#: fundamental between the two halves of the segment (:func:`_refine_by_phase`): the
#: autocorrelation alone leaves up to 20 ppm at 70 periods, enough to put a component on
#: the wrong side of a band edge by chance.
FIT_BELOW_PERIODS = 64
#: Harmonics in that fit, and the most samples it uses (strided above that).
_FIT_HARMONICS = 8
_FIT_MAX_SAMPLES = 8_000

#: A later autocorrelation peak is preferred over the first one only if it is
#: higher than the first by more than this factor (guards against taking a
#: multiple of the period).
_PEAK_RATIO = 0.8


@dataclass(frozen=True)
class Periodicity:
    """The fundamental modulation of a capture.

    Attributes
    ----------
    frequency_hz : float or None
        Fundamental modulation frequency [Hz]; ``None`` if no periodic
        modulation was found.
    period_samples : float or None
        Period in samples (fractional) [samples].
    periods : int
        Whole periods in the capture (0 if none found).
    strength : float
        Normalised autocorrelation at one period, 0 to 1: how much of the
        signal's variance is periodic [unitless].
    reason : str
        Empty when a period was found, otherwise why not.
    """

    frequency_hz: float | None
    period_samples: float | None
    periods: int
    strength: float
    reason: str = ""


def _autocorrelation(x0: np.ndarray, max_lag: int) -> tuple[np.ndarray, np.ndarray, int]:
    """Unbiased normalised autocorrelation for lags 0..max_lag (r[0] = 1), the power
    spectrum it came from, and that spectrum's transform length (zero-padded to at
    least ``n + max_lag``, so no lag up to max_lag wraps round: 1.5 n for half the
    signal, a quarter less work than twice its length)."""
    from numpy import fft

    from .fftlength import next_fast_len

    n = x0.shape[0]
    nfft = next_fast_len(n + max_lag)
    spec = fft.rfft(x0, nfft)
    power = spec.real**2
    power += spec.imag**2
    r = fft.irfft(power, nfft)[: max_lag + 1]
    r /= n - np.arange(max_lag + 1)
    return r / r[0], power, nfft


#: A candidate period holds the strongest component this close to a whole number of
#: times (plus the errors of both estimates) [cycles]. Chosen here.
_HARMONIC_TOL = 0.005


def _strongest_frequency(power: np.ndarray, nfft: int, max_lag: int) -> float | None:
    """Frequency of the strongest component [cycles per sample], from the zero-padded power
    spectrum of the autocorrelation, among those whose period fits in ``max_lag`` samples;
    None when the spectrum is too short."""
    k_min = max(1, int(np.ceil(nfft / max_lag)))
    if power.size < 8 or k_min >= power.size:
        return None
    mag = np.sqrt(power)
    k = k_min + int(np.argmax(mag[k_min:]))
    frac = _parabolic_peak(mag[k - 1], mag[k], mag[k + 1]) if 0 < k < mag.size - 1 else 0.0
    return (k + frac) / nfft


def _parabolic_peak(y_minus: float, y0: float, y_plus: float) -> float:
    """Offset (-0.5..0.5) of a parabola's vertex through three equally spaced points."""
    denom = y_minus - 2.0 * y0 + y_plus
    if denom >= 0:
        return 0.0
    return float(np.clip(0.5 * (y_minus - y_plus) / denom, -0.5, 0.5))


def fundamental_frequency(
    samples: np.ndarray,
    sample_rate_hz: float,
    *,
    min_strength: float = MIN_STRENGTH,
    mean: float | None = None,
    n_total: int | None = None,
) -> Periodicity:
    """Find the fundamental modulation frequency of a signal.

    Parameters
    ----------
    samples : numpy.ndarray
        1-D signal [arbitrary linear unit].
    sample_rate_hz : float
        Sample rate [Hz].
    min_strength : float, optional
        Smallest normalised autocorrelation at one period that counts as
        periodic modulation [unitless].
    mean : float, optional
        Mean of the whole capture, when ``samples`` holds only its first
        :data:`SEGMENT_SAMPLES` (streaming) [input unit]; default the mean of
        ``samples``.
    n_total : int, optional
        Length of the whole capture, when ``samples`` is only its start.

    Returns
    -------
    Periodicity

    Notes
    -----
    1. Remove the mean and compute the unbiased autocorrelation r(k) of the
       first ``SEGMENT_SAMPLES`` samples by FFT, smoothed over three lags so that
       the height of a narrow peak does not depend on where the true period
       falls between two samples.
    2. Past the first lag where r < 0, the highest peak r_max is found; the
       period is the first peak at least 0.8 r_max high. If r_max is below
       ``min_strength`` there is no periodic modulation.
    3. The period is refined with parabolic interpolation at growing
       multiples of it (each at most 4 times the last), up to half the
       segment: the error falls as 1/multiple.

    The longest period that can be found is a quarter of the segment (or of
    the capture, if shorter): two whole periods must fit in half of it.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.arange(20000) / 20000.0
    >>> p = fundamental_frequency(1 + 0.3 * np.sin(2 * np.pi * 100 * t), 20000.0)
    >>> f"{p.frequency_hz:.4f} Hz", p.periods   # 1e-5 from the true 100 Hz
    ('100.0000 Hz', 100)
    """
    x = np.asarray(samples[:SEGMENT_SAMPLES], dtype=np.float64)
    if n_total is None:
        n_total = int(np.shape(samples)[0])
        if mean is None:
            mean = float(np.mean(samples))
    elif mean is None:
        raise ValueError("give the whole capture's mean with n_total")
    seg = x[: min(n_total, SEGMENT_SAMPLES)] - mean
    n = seg.shape[0]
    if n < 8 or not np.any(seg):
        return Periodicity(None, None, 0, 0.0, "the signal is constant")
    scale = float(np.max(np.abs(seg)))
    if not np.isfinite(scale) or scale == 0.0:
        return Periodicity(None, None, 0, 0.0, "the signal is constant")
    seg = seg / scale  # the autocorrelation is scale-free; this keeps its squares finite
    max_lag = n // 2
    r, power, nfft = _autocorrelation(seg, max_lag)
    rs = np.empty_like(r)
    rs[1:-1] = (r[:-2] + r[1:-1] + r[2:]) / 3.0
    rs[0] = r[0]
    rs[-1] = r[-1]
    below = np.flatnonzero(rs[1:] < 0.0)
    if below.size == 0:
        return Periodicity(None, None, 0, 0.0,
                           "no whole period fits in the capture (slow drift or too short)")
    k0 = int(below[0]) + 1
    if k0 >= max_lag - 2:
        return Periodicity(None, None, 0, 0.0, "no whole period fits in the capture")
    region = rs[k0:max_lag]
    r_max = float(region.max())
    if r_max < min_strength:
        return Periodicity(None, None, 0, max(r_max, 0.0),
                           f"no periodic modulation above the noise (autocorrelation "
                           f"{max(r_max, 0.0):.2f} < {min_strength:.2f})")
    # local maxima of the smoothed autocorrelation that are high enough
    interior = region[1:-1]
    is_peak = (interior >= region[:-2]) & (interior >= region[2:]) & (
        interior >= _PEAK_RATIO * r_max)
    peaks = np.flatnonzero(is_peak) + 1 + k0
    lag = int(peaks[0]) if peaks.size else int(np.argmax(region)) + k0
    # the period holds the strongest spectral component a whole number of times: a first
    # peak that does not is a near-coincidence of two modulations (100 Hz ripple on 1 kHz:
    # 9 ms, where the 1 kHz is in phase and the 100 Hz nearly so), not the period
    f_strong = _strongest_frequency(power, nfft, max_lag)
    unrelated = False
    if f_strong is not None:
        # error of h: the strongest frequency to a quarter bin, the lag to two samples
        tol = _HARMONIC_TOL + 0.25 * peaks / n + 2.0 * f_strong
        h = f_strong * peaks
        fits = (np.round(h) >= 1) & (np.abs(h - np.round(h)) <= tol)
        if fits.any():
            lag = int(peaks[np.argmax(fits)])
        else:  # no common period: the strongest modulation's own
            own = int(round(1.0 / f_strong))
            if k0 <= own < max_lag and rs[own] >= min_strength:
                lag, unrelated = own, True
    # move to the local maximum of the raw autocorrelation near the smoothed one
    lo, hi = max(lag - 1, 1), min(lag + 2, max_lag + 1)
    lag = lo + int(np.argmax(r[lo:hi]))
    period = lag + (_parabolic_peak(r[lag - 1], r[lag], r[lag + 1]) if 0 < lag < max_lag else 0.0)
    strength = float(r[lag])

    if unrelated and f_strong is not None:
        # the autocorrelation's peaks mix both modulations: the strongest one's own period
        # from its spectral peak, refined by its phase drift alone
        period = 1.0 / f_strong
        if n / period >= FIT_BELOW_PERIODS:
            period = _refine_by_phase(seg, period)
        periods = int(np.floor(n_total / period + 0.01))
        return Periodicity(sample_rate_hz / period, period, periods, float(rs[lag]))

    # refine at growing multiples of the period, within the segment
    period = _refine(r, period, max_lag)
    if n / period < FIT_BELOW_PERIODS:
        period = _refine_by_fit(seg, period)
    else:
        period = _refine_by_phase(seg, period)

    periods = int(np.floor(n_total / period + 0.01))
    frequency = sample_rate_hz / period
    if periods < 1:
        return Periodicity(None, None, 0, strength, "no whole period fits in the capture")
    return Periodicity(frequency, period, periods, strength)


def _refine_by_fit(seg: np.ndarray, period: float) -> float:
    """Period that best explains ``seg`` as a sum of harmonics (least squares).

    For each trial period the amplitudes of harmonics 1..K are solved by
    linear least squares and the residual is minimised over the period
    (variable projection), within 2 % of the estimate. Unlike the peak of a
    periodogram or of the autocorrelation, this is not biased by the ends of a
    short capture.
    """
    step = max(1, int(np.ceil(seg.shape[0] / _FIT_MAX_SAMPLES)))
    y = seg[::step]
    idx = np.arange(y.shape[0], dtype=np.float64) * step
    k_max = int(min(_FIT_HARMONICS, max(1, (period / step) // 2.5)))
    k = np.arange(1, k_max + 1)

    A = np.empty((y.shape[0], 1 + 2 * k_max))
    A[:, 0] = 1.0

    def rss(T: float) -> float:
        ph = np.outer(idx * (2.0 * np.pi / T), k)
        np.cos(ph, out=A[:, 1 : 1 + k_max])
        np.sin(ph, out=A[:, 1 + k_max :])
        coef, *_ = np.linalg.lstsq(A, y, rcond=None)
        res = y - A @ coef
        return float(res @ res)

    with _one_blas_thread():
        x, fx = _minimise_bounded(rss, 0.98 * period, 1.02 * period, period * 1e-10)
        better = fx <= rss(period)
    return float(x) if better else period


def _one_blas_thread():
    """Context in which BLAS/LAPACK use one thread.

    The fit solves a few dozen least-squares problems of about 8,000 x 17; on
    every BLAS thread they take 100x longer when the machine is busy (threads
    wait for each other) and gain nothing when it is idle.
    """
    import sys

    global _CONTROLLER
    # finding the loaded libraries costs ~0.3 ms: again only when modules were imported since
    # (an import may load another BLAS, scipy's), so a batch's worker finds them once
    if _CONTROLLER is None or _CONTROLLER[0] != len(sys.modules):
        from threadpoolctl import ThreadpoolController  # type: ignore[import-untyped]  # no stubs

        _CONTROLLER = (len(sys.modules), ThreadpoolController())
    return _CONTROLLER[1].limit(limits=1, user_api="blas")


#: The thread-pool controller and the number of modules loaded when it was made.
_CONTROLLER: tuple[int, Any] | None = None


def _minimise_bounded(f, a: float, b: float, xatol: float,
                      max_iter: int = 500) -> tuple[float, float]:
    """Minimum of a scalar function on [a, b]: golden sections with parabolic steps.

    Returns the abscissa and the value there. Here rather than from
    ``scipy.optimize`` (whose import costs more than a short capture's whole
    assessment).

    References
    ----------
    R. P. Brent, Algorithms for Minimization without Derivatives, Prentice-Hall,
    1973, chapter 5 (procedure localmin).
    """
    golden = 0.5 * (3.0 - 5.0**0.5)
    rel = 1.5e-8  # about sqrt(machine epsilon)
    x = w = v = a + golden * (b - a)
    fx = fw = fv = f(x)
    d = e = 0.0
    for _ in range(max_iter):
        m = 0.5 * (a + b)
        tol = rel * abs(x) + xatol / 3.0
        t2 = 2.0 * tol
        if abs(x - m) <= t2 - 0.5 * (b - a):
            break
        parabolic = False
        if abs(e) > tol:
            r = (x - w) * (fx - fv)
            q = (x - v) * (fx - fw)
            p = (x - v) * q - (x - w) * r
            q = 2.0 * (q - r)
            if q > 0.0:
                p = -p
            q = abs(q)
            if abs(p) < abs(0.5 * q * e) and q * (a - x) < p < q * (b - x):
                e, d = d, p / q
                parabolic = True
                if (x + d) - a < t2 or b - (x + d) < t2:
                    d = tol if x < m else -tol
        if not parabolic:
            e = (b - x) if x < m else (a - x)
            d = golden * e
        u = x + (d if abs(d) >= tol else (tol if d > 0 else -tol))
        fu = f(u)
        if fu <= fx:
            if u < x:
                b = x
            else:
                a = x
            v, fv, w, fw, x, fx = w, fw, x, fx, u, fu
        else:
            if u < x:
                a = u
            else:
                b = u
            if fu <= fw or w == x:
                v, fv, w, fw = w, fw, u, fu
            elif fu <= fv or v in (x, w):
                v, fv = u, fu
    return x, fx


def _refine_by_phase(seg: np.ndarray, period: float, passes: int = 2) -> float:
    """Period from the phase drift of the fundamental between two halves of ``seg``.

    Over two equal spans of whole periods, ``z_j = sum x[n] exp(-2 pi i n / T)``;
    if T is slightly off, the fundamental's phase moves between them by
    ``2 pi L (1/T_true - 1/T)`` (L samples apart), which gives the correction.
    Unambiguous while the estimate is better than one part in the number of
    periods; it is far better after :func:`_refine`. Harmonics and the mean
    are nearly orthogonal to the fundamental over whole periods.
    """
    n = seg.shape[0]
    for _ in range(passes):
        half = int(np.floor(n / period / 2.0))
        if half < 4:
            return period
        L = int(round(half * period))
        e = _block_phase(period) if L >= _SUM_BLOCK else None  # the same for both halves
        with _one_blas_thread():  # memory-bound products: threads only wait for each other
            z1 = _fundamental_sum(seg, 0, L, period, e)
            z2 = _fundamental_sum(seg, L, 2 * L, period, e)
        if abs(z1) == 0 or abs(z2) == 0:
            return period
        dnu = float(np.angle(z2 / z1)) / (2.0 * np.pi * L)  # cycles per sample
        new = 1.0 / (1.0 / period + dnu)
        if not np.isfinite(new) or abs(new / period - 1.0) > 0.5 / (2 * half):
            return period
        period = new
    return period


#: Samples per row of the blocked sums in :func:`_fundamental_sum`.
_SUM_BLOCK = 4096


def _block_phase(period: float) -> np.ndarray:
    """Return ``exp(-2 pi i j / period)`` for ``j = 0 .. B - 1`` (B = :data:`_SUM_BLOCK`)."""
    j = np.arange(_SUM_BLOCK, dtype=np.float64)
    return np.exp(-2j * np.pi * j / period)


def _fundamental_sum(x: np.ndarray, a: int, b: int, period: float,
                     e: np.ndarray | None = None) -> complex:
    """``sum x[k] exp(-2 pi i k / period)`` over ``a <= k < b``, without a full-length
    complex array.

    ``k = a + m B + j`` (B = :data:`_SUM_BLOCK`) splits the phase factor into
    ``exp(-2 pi i (a + m B) / T) exp(-2 pi i j / T)``: the rows of ``x`` times one block
    of the phase factor (two real matrix-vector products), then summed with the
    rows' phase factors. The same sum up to rounding (about 1e-13 relative). ``e`` is
    :func:`_block_phase` of ``period`` when the caller has it (both halves share it).
    """
    B = _SUM_BLOCK
    rows = (b - a) // B
    z = 0j
    if rows:
        if e is None:
            e = _block_phase(period)
        body = x[a: a + rows * B].reshape(rows, B)
        s = body @ e.real + 1j * (body @ e.imag)
        starts = a + B * np.arange(rows, dtype=np.float64)
        z = complex(np.dot(s, np.exp(-2j * np.pi * starts / period)))
    t0 = a + rows * B
    if t0 < b:
        k = np.arange(t0, b, dtype=np.float64)
        z += complex(np.dot(x[t0:b], np.exp(-2j * np.pi * k / period)))
    return z


def _refine(r: np.ndarray, period: float, max_lag: int) -> float:
    """Refine a period estimate at growing multiples of it.

    Each step moves to a multiple at most 4 times the previous one and searches
    the autocorrelation peak there within the uncertainty of the current
    estimate, so the peak cannot be confused with a neighbouring multiple.
    """
    m_prev, delta = 1, 1.0  # current multiple and uncertainty of the period [samples]
    while True:
        m = min(4 * m_prev, int(max_lag // period))
        if m <= m_prev:
            return period
        centre = m * period
        half = int(np.ceil(m * delta)) + 2
        half = min(half, int(period / 2) - 1)  # never reach a neighbouring multiple
        if half < 1:
            return period
        lo = max(1, int(round(centre)) - half)
        hi = min(max_lag - 1, int(round(centre)) + half)
        if hi <= lo:
            return period
        k = lo + int(np.argmax(r[lo : hi + 1]))
        if k in (lo, hi):  # peak not inside the window: the estimate is not better
            return period
        peak = k + _parabolic_peak(r[k - 1], r[k], r[k + 1])
        period = float(peak / m)
        m_prev, delta = m, 2.0 / m


def known_fundamental(n_samples: int, sample_rate_hz: float, frequency_hz: float) -> Periodicity:
    """The periodicity of a signal whose fundamental is known exactly (a drive model's light).

    Parameters
    ----------
    n_samples : int
        Length of the signal [samples].
    sample_rate_hz : float
        Sample rate [Hz].
    frequency_hz : float
        Its repetition frequency [Hz].

    Returns
    -------
    Periodicity
        With ``strength`` 1 and no search.
    """
    T = sample_rate_hz / frequency_hz
    periods = int(np.floor(n_samples / T + 0.01))
    if periods < 1:
        return Periodicity(None, None, 0, 0.0, "no whole period fits in the capture")
    return Periodicity(float(frequency_hz), float(T), periods, 1.0)
