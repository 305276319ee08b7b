"""Percent flicker, flicker index, per-period statistics and the noise floor.

Pure functions on numpy arrays. Percent flicker and flicker index do not
depend on frequency; they are computed over whole periods (the IEC 60050-845
definition of the flicker index requires it).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import overload

import numpy as np


@overload
def percent_flicker_of_extremes(hi: float, lo: float) -> float: ...
@overload
def percent_flicker_of_extremes(hi: np.ndarray, lo: np.ndarray) -> np.ndarray: ...
def percent_flicker_of_extremes(hi: float | np.ndarray,
                                lo: float | np.ndarray) -> float | np.ndarray:
    """Percent flicker from a light's largest and smallest value.

    The one home of the formula; every module that has the extremes already
    (a model light, a filtered waveform, per-period sums) calls this.

    Parameters
    ----------
    hi, lo : float or numpy.ndarray
        Largest and smallest light value, dark level removed [arbitrary
        linear unit]; arrays are evaluated element-wise.

    Returns
    -------
    float or numpy.ndarray
        ``100 (hi - lo) / (hi + lo)`` [percent]; ``nan`` where
        ``hi + lo <= 0`` (no light: percent flicker is undefined). A caller
        that reports a dark light as unmodulated (0.0) says so where it
        replaces the ``nan``.

    References
    ----------
    IEEE Std 1789-2015, "Modulation (Mod%)"; CIE ILV 17-39.

    Examples
    --------
    >>> percent_flicker_of_extremes(3.0, 1.0)
    50.0
    >>> percent_flicker_of_extremes(np.array([3.0, 0.0]), np.array([1.0, 0.0]))
    array([50., nan])
    """
    if np.ndim(hi) == 0 and np.ndim(lo) == 0:
        h, low = float(hi), float(lo)
        total = h + low
        return 100.0 * (h - low) / total if total > 0 else float("nan")
    ha = np.asarray(hi, dtype=np.float64)
    la = np.asarray(lo, dtype=np.float64)
    ta = ha + la
    with np.errstate(invalid="ignore", divide="ignore"):
        pf = 100.0 * (ha - la) / ta
    return np.where(ta > 0, pf, np.nan)


def percent_flicker(samples: np.ndarray) -> float:
    """Percent flicker (modulation depth) of a light signal.

    Parameters
    ----------
    samples : numpy.ndarray
        Light signal over whole periods, linear in light, dark level removed
        [arbitrary linear unit].

    Returns
    -------
    float
        ``100 (L_max - L_min) / (L_max + L_min)`` [percent]; ``nan`` if
        ``L_max + L_min <= 0``.

    References
    ----------
    IEEE Std 1789-2015, "Modulation (Mod%)"; CIE ILV 17-39 (amplitude of
    fluctuation of the luminous flux); California Title 24 JA10.6.

    Examples
    --------
    >>> percent_flicker(np.array([1.0, 3.0]))
    50.0
    """
    x = np.asarray(samples, dtype=np.float64)
    return float(percent_flicker_of_extremes(float(np.max(x)), float(np.min(x))))


def flicker_index(samples: np.ndarray) -> float:
    """Flicker index of a light signal over whole periods.

    Parameters
    ----------
    samples : numpy.ndarray
        Light signal over an integer number of periods [arbitrary linear unit].

    Returns
    -------
    float
        Area above the mean divided by the total area, 0 to 1 [unitless];
        ``nan`` if the total is not positive.

    Notes
    -----
    Discrete form: ``FI = sum(max(x - mean(x), 0)) / sum(x)``.

    References
    ----------
    IES Lighting Handbook definition 5.9.9.4 (flicker index);
    IEC 60050-845:2020, IEV 845-22-094.

    Examples
    --------
    >>> flicker_index(np.array([1.0, 0.0, 0.0, 0.0]))
    0.75
    """
    x = np.asarray(samples, dtype=np.float64)
    total = float(np.sum(x))
    if total <= 0:
        return float("nan")
    mean = total / x.shape[0]
    return float(np.sum(np.maximum(x - mean, 0.0)) / total)


@dataclass(frozen=True)
class PeriodStats:
    """Percent flicker and flicker index of each whole period, summarised.

    Attributes
    ----------
    count : int
        Number of whole periods used.
    percent_flicker_median, percent_flicker_worst : float
        Median and largest per-period percent flicker [percent].
    flicker_index_median, flicker_index_worst : float
        Median and largest per-period flicker index [unitless].
    """

    count: int
    percent_flicker_median: float
    percent_flicker_worst: float
    flicker_index_median: float
    flicker_index_worst: float


def period_bounds(periods: int, period_samples: float, n_samples: int) -> np.ndarray:
    """Sample indices that split a capture into whole periods.

    Parameters
    ----------
    periods : int
        Number of whole periods.
    period_samples : float
        Period length, may be fractional [samples].
    n_samples : int
        Capture length [samples].

    Returns
    -------
    numpy.ndarray
        ``periods + 1`` increasing indices, the first 0, the last at most
        ``n_samples``.
    """
    b = np.rint(np.arange(periods + 1) * period_samples).astype(np.int64)
    return np.minimum(b, n_samples)


def stats_from_sums(hi: np.ndarray, lo: np.ndarray, total: np.ndarray,
                    above: np.ndarray) -> PeriodStats:
    """Per-period statistics from each period's max, min, sum and area above its mean.

    Parameters
    ----------
    hi, lo, total, above : numpy.ndarray
        Per period: largest and smallest sample, sum of samples, and sum of
        ``max(x - period mean, 0)`` [input unit].

    Returns
    -------
    PeriodStats
        Percent flicker ``100 (hi - lo)/(hi + lo)`` and flicker index
        ``above / total`` of each period, summarised.
    """
    if hi.size == 0:
        nan = float("nan")
        return PeriodStats(0, nan, nan, nan, nan)
    pf = percent_flicker_of_extremes(hi, lo)
    with np.errstate(invalid="ignore", divide="ignore"):
        fi = above / total
    fi = np.where(total > 0, fi, np.nan)
    if np.all(np.isnan(pf)):
        nan = float("nan")
        return PeriodStats(int(hi.size), nan, nan, nan, nan)
    return PeriodStats(
        count=int(hi.size),
        percent_flicker_median=float(np.nanmedian(pf)),
        percent_flicker_worst=float(np.nanmax(pf)),
        flicker_index_median=float(np.nanmedian(fi)),
        flicker_index_worst=float(np.nanmax(fi)),
    )


def _fold(x: np.ndarray, period_samples: float) -> tuple[np.ndarray, np.ndarray]:
    bins = int(round(period_samples))
    u = np.arange(x.shape[0], dtype=np.float64)  # in place: the same values, fewer temporaries
    u /= period_samples
    u -= np.floor(u)  # mod 1 of u >= 0, exactly (numpy.mod is ten times slower)
    u *= bins
    np.floor(u, out=u)
    phase = u.astype(np.int64)
    np.minimum(phase, bins - 1, out=phase)
    counts = np.bincount(phase, minlength=bins)
    template = np.bincount(phase, weights=x, minlength=bins) / np.maximum(counts, 1)
    return template, phase


def periodic_average_and_noise(samples: np.ndarray,
                               period_samples: float) -> tuple[np.ndarray, float]:
    """Synchronous average and the noise around it, from one fold of the signal.

    Parameters
    ----------
    samples : numpy.ndarray
        Signal; at most :data:`NOISE_SAMPLES` are used [input unit].
    period_samples : float
        Period [samples].

    Returns
    -------
    template : numpy.ndarray
        See :func:`synchronous_average` [input unit].
    noise_std : float
        ``1.4826 MAD`` of the residual after removing the template [input unit].
    """
    x = np.asarray(samples[:NOISE_SAMPLES], dtype=np.float64)
    template, phase = _fold(x, period_samples)
    resid = np.take(template, phase)
    np.subtract(x, resid, out=resid)
    return template, float(1.4826 * _mad_in_place(resid))


def _median_in_place(a: np.ndarray) -> float:
    """Return ``numpy.median`` of a non-empty 1-D array, partitioning the array itself.

    No copy is made; nan if it holds a nan, as numpy's.
    """
    k = a.shape[0] // 2
    odd = a.shape[0] % 2 == 1
    a.partition((k, -1) if odd else (k - 1, k, -1))  # the last: the largest, or a nan
    if np.isnan(a[-1]):
        return float("nan")
    return float(a[k]) if odd else float((a[k - 1] + a[k]) / 2.0)


def _mad_in_place(a: np.ndarray) -> float:
    """Median absolute deviation from the median of a finite array, overwriting it."""
    np.subtract(a, _median_in_place(a), out=a)
    np.abs(a, out=a)
    return _median_in_place(a)


def synchronous_average(samples: np.ndarray, period_samples: float) -> np.ndarray:
    """Mean waveform of one period, averaged over every period of a capture.

    Parameters
    ----------
    samples : numpy.ndarray
        Signal over whole periods [input unit].
    period_samples : float
        Period, may be fractional [samples].

    Returns
    -------
    numpy.ndarray
        ``round(period_samples)`` phase bins, each the mean of the samples whose
        phase falls in it [input unit]. Noise falls as 1/sqrt(periods), so the
        percent flicker of this waveform is a noise-robust companion to the
        raw one; edges that move between bins are slightly smoothed.
    """
    template, _ = _fold(np.asarray(samples, dtype=np.float64), period_samples)
    return template


#: Samples used to estimate the noise (2**21).
NOISE_SAMPLES = 2**21


def noise_rms(samples: np.ndarray, period_samples: float | None = None) -> float:
    """Robust estimate of the white-noise standard deviation of a signal.

    Parameters
    ----------
    samples : numpy.ndarray
        Signal [arbitrary linear unit].
    period_samples : float, optional
        Period of the modulation, if known [samples].

    Returns
    -------
    float
        Noise standard deviation [input unit].

    Notes
    -----
    With a period, the periodic part is removed by subtracting the
    synchronous average (the mean waveform over all periods, in
    ``round(period)`` phase bins), and the noise is ``1.4826 MAD`` of the
    residual. The median ignores the few samples at edges that move between
    phase bins. Without a period, it is ``1.4826 MAD`` of the second
    differences divided by ``sqrt(6)`` (second differences of white noise have
    variance ``6 sigma^2``; a slowly varying signal has nearly none). At most
    :data:`NOISE_SAMPLES` samples are used.
    """
    x = np.asarray(samples[:NOISE_SAMPLES], dtype=np.float64)
    n = x.shape[0]
    if n < 4:
        return 0.0
    if period_samples is not None and n >= 2 * period_samples and period_samples >= 4:
        return periodic_average_and_noise(x, period_samples)[1]
    return float(1.4826 * _mad_in_place(np.diff(x, 2)) / np.sqrt(6.0))


def noise_percent_flicker(noise_std: float, mean: float, samples_per_period: float) -> float:
    """Percent flicker that noise alone would show on steady light.

    Parameters
    ----------
    noise_std : float
        Noise standard deviation [input unit].
    mean : float
        Mean light [input unit].
    samples_per_period : float
        Samples over which max and min are taken [samples].

    Returns
    -------
    float
        ``100 sigma sqrt(2 ln n) / mean`` [percent]: the expected extreme of n
        Gaussian samples is about ``sigma sqrt(2 ln n)`` either side of the
        mean. A measured percent flicker within a few times this figure is
        noise-limited.
    """
    n = max(float(samples_per_period), 2.0)
    if mean <= 0:
        return float("nan")
    return 100.0 * noise_std * np.sqrt(2.0 * np.log(n)) / mean


def suspected_clipping(samples: np.ndarray, noise_std: float) -> bool:
    """Whether a signal looks clipped at the top of the recorder's range.

    Parameters
    ----------
    samples : numpy.ndarray
        Signal [input unit].
    noise_std : float
        Noise estimate from :func:`noise_rms` [input unit].

    Returns
    -------
    bool
        See :func:`clipping_from_counts`.
    """
    x = np.asarray(samples)
    hi = np.max(x)
    below = x[x < hi]
    at_next = int(np.count_nonzero(below == np.max(below))) if below.size else 0
    return clipping_from_counts(x.shape[0], int(np.count_nonzero(x == hi)), at_next, noise_std)


#: A capture is called clipped when more than one sample in this many sits at a known rail.
RAIL_ONE_IN = 1000


def clipped_at_rail(n: int, at_rail: int) -> bool:
    """Clipping test for a recorder whose full scale is known (integer PCM).

    The one rule when the rail is known; :func:`clipping_from_counts` is the
    rule when it is not (its maximum must be inferred from the samples).

    Parameters
    ----------
    n : int
        Samples in the capture.
    at_rail : int
        Samples exactly at the recorder's smallest or largest code.

    Returns
    -------
    bool
        True when more than ``max(1, n // RAIL_ONE_IN)`` samples sit at a rail
        (one stray full-scale sample is not clipping).

    Notes
    -----
    A heuristic of this project (no published source).

    Examples
    --------
    >>> clipped_at_rail(10_000, 11), clipped_at_rail(10_000, 10)
    (True, False)
    """
    return at_rail > max(1, n // RAIL_ONE_IN)


def clipping_from_counts(n: int, at_max: int, at_next: int, noise_std: float) -> bool:
    """Clipping test from how often the maximum and the next lower value occur.

    Parameters
    ----------
    n : int
        Samples in the capture.
    at_max, at_next : int
        Samples exactly at the maximum, and at the next lower value present.
    noise_std : float
        Noise estimate [input unit].

    Returns
    -------
    bool
        True when the signal is noisy (``noise_std > 0``), at least 1 % of the
        samples equal the maximum exactly, and the maximum occurs more than
        twice as often as the next lower value. Noise does not repeat its
        largest value exactly; a rail does. A noiseless synthetic flat top is
        not flagged.

    Notes
    -----
    A heuristic of this project (no published source). Quantised recorders
    whose noise is below one code step are not flagged: their top code is
    in the tail of the noise distribution, rarer than the code below it.
    """
    return noise_std > 0 and rail_counts(n, at_max, at_next)


def rail_counts(n: int, at_max: int, at_next: int) -> bool:
    """The counts half of :func:`clipping_from_counts` (no noise estimate needed).

    True when at least 1 % of ``n`` samples sit exactly at the maximum and it
    occurs more than twice as often as the next lower value (``at_next``).
    A caller can test this first and estimate the noise only when it holds.
    """
    if n < 100 or at_max < 0.01 * n or at_next == 0:
        return False
    return bool(at_max > 2 * at_next)


#: Noise below this fraction of the mean is numerical residue, not measurement noise
#: (float64 rounding is about 1e-16; the finest recorders resolve about 1e-7 of full scale).
NUMERICAL_NOISE = 1e-9


@dataclass(frozen=True)
class RobustFlicker:
    """Percent flicker and flicker index of the period-averaged waveform, noise mostly removed.

    Attributes
    ----------
    percent_flicker : float
        [percent].
    flicker_index : float
        [unitless].
    noise_limit_percent : float
        How far the remaining noise may still raise the percent flicker
        [percentage points].
    method : str
        ``"period-averaged"`` or ``"period-averaged, harmonics above the noise"``.
    """

    percent_flicker: float
    flicker_index: float
    noise_limit_percent: float
    method: str


def robust_flicker(template: np.ndarray, noise_std: float, periods: int) -> RobustFlicker:
    """Percent flicker and flicker index that do not grow with noise.

    Parameters
    ----------
    template : numpy.ndarray
        One period, averaged over ``periods`` periods (:func:`synchronous_average`)
        [input unit].
    noise_std : float
        Noise standard deviation of one sample [input unit].
    periods : int
        Periods averaged into the template.

    Returns
    -------
    RobustFlicker

    Notes
    -----
    Averaging P periods leaves noise ``sigma_t = sigma / sqrt(P)`` per phase
    bin. The template's harmonics (``X = rfft(template)``, M bins) that stand
    above ``sigma_t sqrt(M ln(M / 1e-3))`` are real; if none lies above
    ``M / 8`` the waveform is smooth and resolved, and it is rebuilt from those
    harmonics alone (noise falls to ``sigma_t sqrt(2K / M)`` for K kept);
    otherwise (edges: rebuilding would ring) the template is used as it is.
    The noise limit is ``100 * 2 delta / (max + min)`` with ``delta`` the
    remaining noise times ``sqrt(2 ln M)`` (the expected largest of M
    Gaussian deviations).
    """
    t = np.asarray(template, dtype=np.float64)
    M = t.shape[0]
    s_t = float(noise_std) / np.sqrt(max(int(periods), 1))
    y, method, s_y = t, "period-averaged", s_t
    if M >= 8 and s_t > 0:
        X = np.fft.rfft(t)
        thr = s_t * np.sqrt(M * np.log(M / 1e-3))
        keep = np.abs(X) > thr
        keep[0] = True
        k_top = int(np.flatnonzero(keep)[-1])
        if k_top <= M // 8:
            y = np.fft.irfft(np.where(keep, X, 0.0), M)
            kept = int(np.count_nonzero(keep)) - 1
            s_y = s_t * np.sqrt(2.0 * max(kept, 1) / M)
            method = "period-averaged, harmonics above the noise"
    hi, lo = float(np.max(y)), float(np.min(y))
    pf = percent_flicker_of_extremes(hi, lo)
    delta = s_y * np.sqrt(2.0 * np.log(max(M, 2)))
    limit = 100.0 * 2.0 * delta / (hi + lo) if hi + lo > 0 else float("nan")
    return RobustFlicker(pf, flicker_index(y), float(limit), method)
