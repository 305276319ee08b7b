"""Modulation spectrum: Fourier components of a light signal relative to its mean.

Components are taken over an integer number of fundamental periods with a
rectangular window, so each harmonic falls on one bin and there is no leakage
(a window that is a quarter period off biases SVM by -10 % to -23 %, computed
here). Captures without a clean period get a Hann-windowed spectrum,
flagged as such.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property, lru_cache

import numpy as np

from .fftlength import fft_cost
from .periodicity import Periodicity

#: An exact fast FFT length (factors 2, 3 and 5 only) is taken when one is a whole-period
#: span keeping at least this fraction of the periods.
_EXACT_FRACTION_KEPT = 0.9
#: Otherwise spans down to this fraction of the periods are weighed by transform cost.
_MIN_FRACTION_KEPT = 0.5
#: The longest span whose estimated transform cost is at most this many times that of a fast
#: length of the longest span is taken; when none is, the cheapest.
_COST_SLACK = 1.25
#: Candidate spans costed at a time (the search stops at the first block with a good one).
_COST_BLOCK = 4096


@dataclass(frozen=True, eq=False)
class Spectrum:
    """Single-sided Fourier components relative to the mean.

    Attributes
    ----------
    bin_hz : float
        Bin spacing, ``sample_rate / n_samples`` [Hz]; bin k is at ``k * bin_hz``
        (:attr:`frequencies_hz` forms the whole axis on first use; :meth:`bin_range`
        and :meth:`frequencies_at` do not).
    amplitudes : numpy.ndarray
        C_k = single-sided amplitude of bin k divided by the mean; C_0 = 0
        [unitless]. For ``1 + m sin(2 pi f t)``, C at f is m.
    coefficients : numpy.ndarray
        The complex DFT of the span (windowed when ``window == "hann"``).
    mean : float
        Mean of the samples used [input unit].
    n_samples : int
        Samples used.
    start : int
        Index of the first sample used.
    whole_periods : int
        Number of whole fundamental periods spanned (0 when windowed).
    fundamental_hz : float or None
        Fundamental modulation frequency [Hz].
    window : str
        ``"rectangular"`` (whole periods) or ``"hann"``.
    """

    bin_hz: float
    amplitudes: np.ndarray
    coefficients: np.ndarray
    mean: float
    n_samples: int
    start: int
    whole_periods: int
    fundamental_hz: float | None
    window: str

    @cached_property
    def frequencies_hz(self) -> np.ndarray:
        """Bin frequencies, ``k * bin_hz`` [Hz] (formed on first use: millions of bins)."""
        return self.frequencies_at(np.arange(self.amplitudes.shape[0]))

    def frequencies_at(self, bins: np.ndarray) -> np.ndarray:
        """Frequencies of selected bins, the same values as ``frequencies_hz[bins]`` [Hz]."""
        return np.asarray(bins) * self.bin_hz

    def bin_range(self, f_lo_hz: float, f_hi_hz: float) -> tuple[int, int]:
        """Bins ``lo:hi`` whose frequencies lie in ``[f_lo_hz, f_hi_hz]`` (both included).

        The same as ``searchsorted(frequencies_hz, f_lo_hz, "left")`` and
        ``searchsorted(frequencies_hz, f_hi_hz, "right")``, without forming the axis.
        """
        K = int(self.amplitudes.shape[0])
        df = self.bin_hz
        if K == 0 or not df > 0:
            return 0, 0

        def first(f: float, above: bool) -> int:  # first k with k df >= f (> f when above)
            if not f > 0:
                return 0 if (f < 0 or not above) else 1
            k = min(K, max(0, int(np.floor(f / df))))
            while k > 0 and ((k - 1) * df > f if above else (k - 1) * df >= f):
                k -= 1
            while k < K and (k * df <= f if above else k * df < f):
                k += 1
            return k

        return first(f_lo_hz, False), first(f_hi_hz, True)

    @property
    def highest_frequency_hz(self) -> float:
        """Frequency of the last bin, ``frequencies_hz[-1]`` (0 without bins) [Hz]."""
        K = int(self.amplitudes.shape[0])
        return float((K - 1) * self.bin_hz) if K else 0.0

    @cached_property
    def phases_rad(self) -> np.ndarray:
        """Phase of each bin, cosine convention, relative to the first sample [rad]."""
        return np.angle(self.coefficients)

    def phase_at(self, bins: np.ndarray) -> np.ndarray:
        """Phases of selected bins only (cheaper than :attr:`phases_rad`) [rad]."""
        return np.angle(self.coefficients[bins])

    @property
    def resolution_hz(self) -> float:
        """Bin spacing [Hz]."""
        return float(self.bin_hz) if self.amplitudes.shape[0] > 1 else float("nan")

    def harmonic_bins(self, max_frequency_hz: float | None = None) -> np.ndarray:
        """Bin indices of the fundamental and its harmonics (empty when windowed).

        Parameters
        ----------
        max_frequency_hz : float, optional
            Highest harmonic frequency to include [Hz]; default all below Nyquist.
        """
        if self.whole_periods < 1 or self.fundamental_hz is None:
            return np.zeros(0, dtype=np.int64)
        last = self.amplitudes.shape[0] - 1
        bins = np.arange(self.whole_periods, last + 1, self.whole_periods, dtype=np.int64)
        if max_frequency_hz is not None:
            bins = bins[self.frequencies_at(bins) <= max_frequency_hz * (1 + 1e-12)]
        return bins

    def noise_floor(self) -> float:
        """Median relative amplitude of the bins that are not harmonics [unitless].

        For white noise of standard deviation sigma on a mean mu over N samples
        this is about ``sqrt(pi / N) * sigma / mu`` (median of a Rayleigh
        amplitude); it is the level a single component must clear to be told
        apart from noise.

        Notes
        -----
        The median is taken over at most :data:`NOISE_FLOOR_BINS` evenly
        strided bins (no full-length mask or copy: a long capture has millions
        of bins); harmonic bins (multiples of the whole-period count) and, for
        a Hann spectrum, the four lowest bins are left out.
        """
        K = self.amplitudes.size
        first = 4 if self.window == "hann" else 1
        if K <= first:
            return 0.0
        step = max(1, (K - first) // NOISE_FLOOR_BINS)
        idx = np.arange(first, K, step)
        if self.whole_periods >= 1 and self.fundamental_hz is not None:
            idx = idx[idx % self.whole_periods != 0]
        rest = self.amplitudes[idx]
        return float(np.median(rest)) if rest.size else 0.0


#: Bins the noise floor's median uses at most.
NOISE_FLOOR_BINS = 65_536


def whole_period_span(n_samples: int, period: Periodicity, *, fast: bool = True) -> tuple[int, int]:
    """Length and period count of the whole-period span of a capture to transform.

    Parameters
    ----------
    n_samples : int
        Length of the capture [samples].
    period : Periodicity
        Result of :func:`~flickerkit.periodicity.fundamental_frequency`.
    fast : bool, optional
        Choose the span by the cost of its transform (see Notes); otherwise the
        longest whole-period span.

    Returns
    -------
    length : int
        Samples in the span (from the first sample) [samples]; 0 without a period.
    periods : int
        Whole periods in the span.

    Notes
    -----
    A span of p periods is ``round(p T)`` samples, T the period [samples]. In
    order: the longest span of at least 90 % of the periods whose length has
    only the factors 2, 3 and 5; else the longest of at least half the periods
    whose estimated cost (:func:`fft_cost`) is at most 1.25 times that of a
    fast length of the longest span; else the cheapest of those. Short spans
    are chosen the same way: a Bluestein length there costs a new plan on
    every call (a 20,000-sample capture took twice the CPU time). For a
    periodic signal every whole-period span gives the same harmonic
    components, so the choice changes time and memory, not the figures (the
    frequency resolution and the noise per bin follow the span).
    """
    if period.period_samples is None or period.periods < 1:
        return 0, 0
    T = period.period_samples
    p_max = period.periods
    length = min(n_samples, int(round(p_max * T)))
    if not fast or p_max < 2:
        return length, p_max
    return _cheap_span(n_samples, float(T), p_max)


@lru_cache(maxsize=64)
def _cheap_span(n_samples: int, T: float, p_max: int) -> tuple[int, int]:
    """Length and periods of the span chosen by :func:`whole_period_span` (fast).

    Cached: the spectrum and JA10.6 filtering of one capture ask for the same span.
    """
    length = min(n_samples, int(round(p_max * T)))

    def spans(p_hi: int, p_lo: int) -> tuple[np.ndarray, np.ndarray]:
        p = np.arange(p_hi, p_lo - 1, -1, dtype=np.int64)
        return p, np.minimum(n_samples, np.round(p * T).astype(np.int64))

    p_exact = max(1, int(np.ceil(_EXACT_FRACTION_KEPT * p_max)))
    p, n = spans(p_max, p_exact)
    cost = fft_cost(n)
    smooth = np.flatnonzero(cost == n)
    if smooth.size:
        return int(n[smooth[0]]), int(p[smooth[0]])
    budget = _COST_SLACK * length
    best = (np.inf, length, p_max)
    p_lo = max(1, int(np.ceil(_MIN_FRACTION_KEPT * p_max)))
    hi = p_exact - 1
    while True:
        good = np.flatnonzero(cost <= budget)
        if good.size:
            return int(n[good[0]]), int(p[good[0]])
        k = int(np.argmin(cost))
        if cost[k] < best[0]:
            best = (float(cost[k]), int(n[k]), int(p[k]))
        if hi < p_lo:
            break
        p, n = spans(hi, max(p_lo, hi - _COST_BLOCK + 1))
        cost = fft_cost(n)
        hi -= _COST_BLOCK
    return best[1], best[2]


def modulation_spectrum(
    samples: np.ndarray,
    sample_rate_hz: float,
    period: Periodicity,
) -> Spectrum:
    """Fourier components of a signal relative to its mean.

    Parameters
    ----------
    samples : numpy.ndarray
        1-D signal, linear in light [arbitrary linear unit]; its mean must be
        positive.
    sample_rate_hz : float
        Sample rate [Hz].
    period : Periodicity
        The fundamental, from
        :func:`~flickerkit.periodicity.fundamental_frequency`.

    Returns
    -------
    Spectrum

    Notes
    -----
    With a fundamental, the span is P whole periods (N samples) and
    ``C_k = 2 |X[k]| / X[0]`` with X the DFT of the span; harmonic h lies on
    bin ``h P``. Without one, a Hann window w is applied and
    ``C_k = 2 |X_w[k]| / sum(w x)`` (coherent-gain corrected); the four
    lowest bins then hold leakage of the mean and should not be read as
    modulation.

    References
    ----------
    CIE TN 006:2016 and IEC TR 63158:2018, definition of the Fourier
    component amplitudes relative to the DC level (as read in a secondary
    summary, not in the documents themselves).
    """
    from numpy import fft

    x = np.asarray(samples, dtype=np.float64)
    n_span, p = whole_period_span(x.shape[0], period)
    if p >= 1:
        seg = x[:n_span]
        spec = fft.rfft(seg)
        window = "rectangular"
        dc = spec[0].real
    else:
        seg = x
        w = np.hanning(seg.shape[0])
        spec = fft.rfft(seg * w)
        window = "hann"
        dc = spec[0].real
        n_span = seg.shape[0]
    mean = dc / (n_span if window == "rectangular" else np.sum(w))
    amps = np.abs(spec)
    if dc != 0:
        amps *= 2.0 / abs(dc)
    amps[0] = 0.0
    if n_span % 2 == 0 and amps.size > 1:
        amps[-1] /= 2.0  # the Nyquist bin is not doubled in a real signal
    return Spectrum(
        bin_hz=sample_rate_hz / n_span,
        amplitudes=amps,
        coefficients=spec,
        mean=float(mean),
        n_samples=int(n_span),
        start=0,
        whole_periods=int(p),
        fundamental_hz=period.frequency_hz if p >= 1 else None,
        window=window,
    )


#: Longest whole-period span transformed in one piece [samples] (2**24: 128 MiB of
#: float64 plus its transform). Longer captures use averaged whole-period windows.
SINGLE_FFT_MAX_SAMPLES = 2**24
#: Length aimed at for each averaged window [samples], and the most windows used.
WINDOW_SAMPLES = 2**21
MAX_WINDOWS = 48


def averaged_spectrum(samples, sample_rate_hz: float, period: Periodicity, *,
                      window_samples: int = WINDOW_SAMPLES,
                      max_windows: int = MAX_WINDOWS) -> Spectrum:
    """Components relative to the mean, averaged over whole-period windows of a long capture.

    Parameters
    ----------
    samples : array_like
        1-D signal that may be larger than memory (array, memmap or
        :class:`~flickerkit.readers.FileSignal`) [input unit].
    sample_rate_hz : float
        Sample rate [Hz].
    period : Periodicity
        The fundamental; it must have been found.
    window_samples : int
        Target window length; each window is the whole number of periods
        nearest to it, or fewer (down to half) for a cheaper transform, as
        :func:`whole_period_span` chooses a span [samples].
    max_windows : int
        Windows used at most, spread evenly over the capture.

    Returns
    -------
    Spectrum
        ``window`` is ``"rectangular, averaged"``; amplitudes are the mean of
        the windows' amplitudes (each relative to its own mean), phases those
        of the first window, ``n_samples`` one window's length and
        ``whole_periods`` the periods per window, so harmonic bins work as for
        a single transform.

    Notes
    -----
    Each window spans whole periods, so a stationary periodic signal gives the
    same components as one transform of the whole capture, at a frequency
    resolution of one window (about 2 s at 1 MS/s). Averaging amplitudes (not
    complex values) keeps components whose phase drifts between windows;
    noise is not averaged down. Used for captures longer than
    :data:`SINGLE_FFT_MAX_SAMPLES`.
    """
    from numpy import fft

    if period.period_samples is None:
        raise ValueError("averaged_spectrum needs the fundamental's period; none was found")
    T = float(period.period_samples)
    n_total = int(samples.shape[0])
    window_samples = min(window_samples, max(int(T), n_total // 4))  # at least 4 windows
    m = max(1, int(round(window_samples / T)))
    L, m = _cheap_span(n_total, T, m) if m >= 2 else (int(round(m * T)), m)
    count = int((n_total - L) // (m * T)) + 1 if n_total >= L else 0
    if count < 1:
        raise ValueError("capture shorter than one averaging window")
    picks = np.unique(np.linspace(0, count - 1, min(count, max_windows)).round().astype(int))
    acc: np.ndarray | None = None
    first: np.ndarray | None = None
    for j in picks:
        s = int(round(j * m * T))
        seg = np.asarray(samples[s : s + L], dtype=np.float64)
        spec = fft.rfft(seg)
        dc = spec[0].real
        amps = np.abs(spec)
        if dc != 0:
            amps *= 2.0 / abs(dc)
        amps[0] = 0.0
        if L % 2 == 0:
            amps[-1] /= 2.0
        if acc is None:
            acc = amps
        else:
            acc += amps
        if first is None:
            first = spec
    assert acc is not None and first is not None  # count >= 1: at least one window
    amps = acc
    amps /= picks.size
    return Spectrum(
        bin_hz=sample_rate_hz / L,
        amplitudes=amps, coefficients=first,
        mean=float(first[0].real / L), n_samples=L, start=0, whole_periods=m,
        fundamental_hz=period.frequency_hz, window="rectangular, averaged",
    )
