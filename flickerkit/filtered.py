"""Filtered percent flicker: percent flicker after removing components above a cut-off.

California's Joint Appendix JA10 (section JA10.6) asks for percent amplitude
modulation of the unfiltered data and again after the data above 40, 90, 200,
400 and 1000 Hz have been set to zero in the Fourier domain; JA8 then judges
"reduced flicker operation" on the result below 200 Hz. This module does that
step over a whole number of fundamental periods, so the periodic waveform has
no leakage that would invent components below the cut-off.

A component **exactly at a cut-off is kept**: JA10.6 removes the data *above*
the cut-off, so "below 1000 Hz" includes a 1000 Hz fundamental. A 1 kHz PWM
therefore has a 1000 Hz filtered percent flicker; read a borderline case with
that in mind.

After brick-wall filtering the waveform can dip below zero, so filtered
percent flicker can exceed 100 % (a 50 % PWM keeps only its fundamental below
200 Hz when it runs at 120 Hz: 4/pi = 127.3 %).

References
----------
California Energy Commission, 2022 Reference Appendices, Joint Appendix JA10,
"Test method for measuring flicker of lighting systems and reporting
requirements", sections JA10.5 (data collection) and JA10.6 (calculations).
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, replace

import numpy as np

from .errors import CaptureWarning
from .metrics import percent_flicker_of_extremes
from .periodicity import Periodicity, fundamental_frequency
from .spectrum import whole_period_span

#: Cut-off frequencies of JA10.6 [Hz].
JA10_CUTOFFS_HZ = (40.0, 90.0, 200.0, 400.0, 1000.0)

#: Components smaller than this fraction of the mean are treated as absent.
_NEGLIGIBLE = 1e-12

#: Relative tolerance with which a bin "at" a cut-off is recognised as such: the
#: frequency uncertainty of a harmonic of the found period (20 ppm, see
#: :data:`flickerkit.modulation.EDGE_RTOL`), plus the bin rounding of the span
#: (``0.5 / n``), so a component on a cut-off is kept on every capture of the same light.
_AT_CUTOFF_RTOL = 2e-5


@dataclass(frozen=True)
class FilteredFlicker:
    """Percent flicker of a capture after low-pass filtering at each cut-off.

    Attributes
    ----------
    cutoffs_hz : tuple of float
        Cut-off frequencies; components at or below each are kept [Hz].
    percent_flicker : tuple of float
        ``100 (max - min) / (max + min)`` of the filtered waveform, per cut-off
        [percent]; NaN where ``max + min <= 0``.
    whole_periods : int
        Whole fundamental periods the Fourier transform spanned (0: the whole
        capture, no period found).
    n_samples : int
        Samples transformed (from the first sample).
    duration_s : float
        Their length [s].
    warnings : tuple of str
        Doubts about the figures (also issued as :class:`CaptureWarning`).
    bands : tuple of (float, float, float)
        Band-limited modulation depth ``(low [Hz], high [Hz], percent)``: the
        percent flicker of the mean plus only the components in the band
        (``low <= f < high`` for the lowest band starting at 0, else
        ``low < f <= high``, with the cut-off tolerance) [percent].
    """

    cutoffs_hz: tuple[float, ...]
    percent_flicker: tuple[float, ...]
    whole_periods: int
    n_samples: int
    duration_s: float
    warnings: tuple[str, ...] = ()
    bands: tuple[tuple[float, float, float], ...] = ()

    def as_mapping(self) -> dict[str, float]:
        """``{"40": pf, "90": pf, ...}``: cut-off [Hz] as text -> percent flicker [percent]."""
        return {f"{c:g}": v for c, v in zip(self.cutoffs_hz, self.percent_flicker)}

    def to_dict(self) -> dict:
        """Plain-type dictionary for JSON output (NaN becomes None)."""
        return {
            "cutoffs_hz": list(self.cutoffs_hz),
            "percent_flicker": [None if not np.isfinite(v) else v for v in self.percent_flicker],
            "whole_periods": self.whole_periods,
            "n_samples": self.n_samples,
            "duration_s": self.duration_s,
            "component_at_cutoff": "kept",
            "warnings": list(self.warnings),
        }


def filtered_percent_flicker(
    samples: np.ndarray,
    sample_rate_hz: float,
    period: Periodicity | None = None,
    *,
    cutoffs_hz: tuple[float, ...] | list[float] = JA10_CUTOFFS_HZ,
    max_samples: int | None = None,
    bands_hz: tuple[tuple[float, float], ...] = (),
    transform: tuple[int, np.ndarray] | None = None,
) -> FilteredFlicker:
    """Percent flicker after removing the components above each cut-off (JA10.6).

    Parameters
    ----------
    samples : numpy.ndarray
        1-D light signal, linear, dark level removed [arbitrary linear unit].
    sample_rate_hz : float
        Sample rate [Hz].
    period : Periodicity, optional
        The fundamental, from
        :func:`~flickerkit.periodicity.fundamental_frequency`; found here if
        not given.
    cutoffs_hz : sequence of float, optional
        Cut-offs [Hz]; default 40, 90, 200, 400, 1000.
    max_samples : int, optional
        Use at most this many samples from the start (whole periods within
        them); default the whole capture. Five inverse transforms of a
        10-million-sample capture take about a second; JA10.5 asks for at
        least 1 s of data, so a limit of ``max(2**20, 1 s)`` loses nothing the
        procedure needs.
    bands_hz : sequence of (float, float), optional
        Bands ``(low, high)`` [Hz] whose band-limited modulation depth is also
        wanted (see :attr:`FilteredFlicker.bands`); same transform.
    transform : (int, numpy.ndarray), optional
        ``(m, numpy.fft.rfft(samples[:m]))`` when the caller has it (the
        whole-period spectrum of a capture): used when ``m`` is the span
        chosen here, instead of transforming the span again.

    Returns
    -------
    FilteredFlicker

    Warns
    -----
    CaptureWarning
        When no whole period was found (the whole capture is transformed, and
        leakage may add spurious low-frequency content), or a cut-off lies at
        or above the Nyquist frequency (nothing is removed there).

    Notes
    -----
    Over the span of P whole periods (N samples): ``X = rfft(x)``; for each
    cut-off f_c the bins with ``f_k > f_c`` are set to zero (a bin within a
    relative ``2e-5 + 0.5/N`` of f_c counts as at the cut-off and is kept), ``y = irfft(X)``
    and ``PF = 100 (max y - min y) / (max y + min y)``.

    References
    ----------
    California Energy Commission, Joint Appendix JA10, section JA10.6.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.arange(20000) / 20000.0
    >>> x = 1 + 0.3 * np.cos(2 * np.pi * 120 * t) + 0.1 * np.cos(2 * np.pi * 360 * t)
    >>> r = filtered_percent_flicker(x, 20000.0)
    >>> [round(v, 3) for v in r.percent_flicker]
    [0.0, 0.0, 30.0, 40.0, 40.0]
    """
    from numpy import fft

    x = np.asarray(samples, dtype=np.float64)
    fs = float(sample_rate_hz)
    cutoffs = tuple(float(c) for c in cutoffs_hz)
    if period is None:
        period = fundamental_frequency(x, fs)
    notes: list[str] = []
    n_avail = x.shape[0] if max_samples is None else min(x.shape[0], int(max_samples))
    if period.period_samples is not None and period.periods >= 1:
        T = period.period_samples
        # only the periods within the samples used count: the count may be a longer
        # capture's (assess passes only its start), and a span cut at the end of the
        # samples would not hold whole periods (counted as fundamental_frequency does)
        fit = int(n_avail // T) if n_avail < x.shape[0] else int(np.floor(n_avail / T + 0.01))
        if fit < period.periods:
            period = replace(period, periods=fit)
    n_span, p = whole_period_span(n_avail, period)
    if p >= 1:
        seg = x[:n_span]
    else:
        seg = x[:n_avail]
        notes.append("filtered percent flicker over the whole capture because no whole period "
                     "was found (" + (period.reason or "no period") + "); leakage may add "
                     "spurious components below the cut-offs")
    n = seg.shape[0]
    if transform is not None and p >= 1 and transform[0] == n:
        spec = transform[1]  # read only below
    else:
        spec = fft.rfft(seg)
    freqs = np.arange(spec.shape[0]) * (fs / n)  # increasing: each selection is a slice
    nyquist = fs / 2.0
    out = []
    work = np.empty_like(spec)

    extremes: dict[tuple[int, int], tuple[float, float]] = {}

    def extremes_of(a: int, b: int) -> tuple[float, float]:
        """Return the largest and smallest sample of the mean and bins a:b (a >= 1) [input unit].

        One inverse transform per distinct selection (the band below 90 Hz usually keeps
        the same bins as the 90 Hz cut-off).
        """
        if (a, b) not in extremes:
            work[1:a] = 0.0
            work[a:b] = spec[a:b]
            work[b:] = 0.0
            work[0] = spec[0]
            y = fft.irfft(work, n)
            extremes[(a, b)] = (float(y.max()), float(y.min()))
        return extremes[(a, b)]

    # components below 1e-12 of the mean change a percent flicker by less than 1e-10 %:
    # a cut-off that keeps none of the others gives steady light without an inverse transform,
    # and one that keeps the same ones as the previous cut-off gives the same waveform
    significant = np.abs(spec) > _NEGLIGIBLE * abs(spec[0])
    significant[0] = False
    rtol = _AT_CUTOFF_RTOL + 0.5 / max(n, 1)
    last_count: int | None = None
    last_value, last_fc = float("nan"), -np.inf
    for fc in cutoffs:
        if fc >= nyquist:
            notes.append(f"cut-off {fc:g} Hz is at or above the Nyquist frequency "
                         f"{nyquist:g} Hz; nothing is removed there")
        k_keep = int(np.searchsorted(freqs, fc * (1.0 + rtol), side="right"))  # freqs <= ...
        count = int(np.count_nonzero(significant[:k_keep]))
        if count == 0 and spec[0].real > 0:
            out.append(0.0)
            continue
        if count == last_count and fc >= last_fc:  # nested cut-offs keeping the same components
            out.append(last_value)
            continue
        hi, lo = extremes_of(1, max(k_keep, 1))
        value = percent_flicker_of_extremes(hi, lo)
        out.append(value)
        last_count, last_value, last_fc = count, value, fc
    bands = []
    for lo_hz, hi_hz in bands_hz:
        if lo_hz <= 0:  # freqs < hi (1 - rtol) (the mean is added below in any case)
            a, b = 1, int(np.searchsorted(freqs, hi_hz * (1.0 - rtol), side="left"))
        else:  # hi (1 + rtol) >= freqs > lo (1 + rtol)
            a = max(1, int(np.searchsorted(freqs, lo_hz * (1.0 + rtol), side="right")))
            b = int(np.searchsorted(freqs, hi_hz * (1.0 + rtol), side="right"))
        if b <= a or not np.any(significant[a:b]):
            bands.append((float(lo_hz), float(hi_hz), 0.0))
            continue
        hi, lo = extremes_of(a, b)
        bands.append((float(lo_hz), float(hi_hz), percent_flicker_of_extremes(hi, lo)))
    for note in notes:
        warnings.warn(note, CaptureWarning, stacklevel=2)
    return FilteredFlicker(cutoffs_hz=cutoffs, percent_flicker=tuple(out), whole_periods=int(p),
                           n_samples=int(n), duration_s=n / fs, warnings=tuple(notes),
                           bands=tuple(bands))
