"""Modelled light: trains of segments summed, times a line-ripple factor.

:class:`Light` is the waveform every drive model (:mod:`flickerkit.drive`) reduces to:
a sum of :class:`~flickerkit.waveform.Train` (one per channel) with a common period,
times ``1 + r u(t)`` with ``u`` a finite cosine series (:class:`Ripple`). It gives

* :meth:`Light.capture`: a sampled :class:`~flickerkit.capture.Capture`, each sample
  the exact average of the light over its sample interval, over whole periods of its
  strongest modulation (:meth:`Light.plan_sampling`); this is what goes through
  :func:`flickerkit.assess.assess` like a measured capture;
* :meth:`Light.fourier_series`: its Fourier series in closed form
  (:class:`FourierSeries`), from the same waveform, so the two agree;
* exact extremes, percent flicker and flicker index, the repetition frequency and
  the strongest modulation (:attr:`Light.dominant_hz`).

Levels are relative to the full on-level; percent appears only in names that say so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from .capture import Capture, make_capture
from .errors import SettingsError
from .metrics import percent_flicker_of_extremes
from .validate import check_positive
from .waveform import FREQ_RTOL, Train, common_frequency, rectified_unit

#: Harmonics of the ripple frequency kept for the full-wave rectified shape.
#: The shape modelled (and sampled) is this finite series; its coefficients fall
#: as 1/(4n^2 - 1), so the 24th is 0.06 % of the first.
RECTIFIED_HARMONICS = 24

#: Default sample-planning constants of :meth:`Light.capture`
#: (engineering choices, not from a standard).
SAMPLES_PER_FEATURE = 8  #: samples across the narrowest pulse or gap, where the budget allows
MIN_SAMPLES_PER_PERIOD = 64  #: samples per fundamental period at least
MIN_SAMPLE_RATE_HZ = 20_000.0  #: at least the 20 kHz of California JA10.5
MIN_PERIODS = 8  #: whole fundamental periods at least (period finding needs 4)
PREFERRED_PERIODS = 64  #: periods aimed for: the shared period finder's error falls with them
MIN_DURATION_S = 0.1  #: capture length aimed for when the budget allows [s]
DEFAULT_MAX_SAMPLES = 2**17  #: sample budget of one modelled capture
#: Quadrature points over one repetition period for the model's flicker index.
FLICKER_INDEX_POINTS = 2**14

#: Harmonics per train inspected when looking for a repetition shorter than the PWM
#: period (evenly phased channels), and the relative size below which a Fourier
#: coefficient or a difference of point values counts as zero.
_DIVISOR_HARMONICS = 64
_DIVISOR_RTOL = 1e-9

#: A repetition period longer than this many periods of the strongest modulation is not
#: sampled whole (the capture holds whole periods of the strongest modulation). Chosen here.
MAX_REPETITION_RATIO = 64


_RIPPLE_SHAPES = {
    "sine": lambda: (np.array([1]), np.array([1.0 + 0j])),
    "rectified": lambda: rectified_unit(RECTIFIED_HARMONICS),
}

#: Ripple shapes: ``"sine"`` (pure twice-line-frequency ripple) and
#: ``"rectified"`` (the shape of a full-wave rectified sine, as an LED current
#: that follows the rectified mains with little hold-up).
RIPPLE_SHAPES = tuple(_RIPPLE_SHAPES)


@dataclass(frozen=True)
class Ripple:
    """Line-frequency ripple on the light: ``L(t) = L_base(t) (1 + r u(t))``.

    Parameters
    ----------
    percent : float
        Percent flicker of the ripple alone (of a steady light carrying it),
        100 (max - min) / (max + min) [percent].
    line_frequency_hz : float
        Mains frequency; the ripple repeats at twice it [Hz].
    shape : str
        One of :data:`RIPPLE_SHAPES`.
    phase_deg : float
        Phase of the ripple at t = 0 [degree].
    """

    percent: float
    line_frequency_hz: float = 50.0
    shape: str = "sine"
    phase_deg: float = 0.0

    def __post_init__(self) -> None:
        p = check_positive(self.percent, "ripple percent", allow_zero=True)
        if p >= 100.0:
            raise SettingsError(f"ripple percent must be below 100, got {p:g}")
        check_positive(self.line_frequency_hz, "line frequency [Hz]")
        if self.shape not in _RIPPLE_SHAPES:
            raise SettingsError(f"unknown ripple shape {self.shape!r}; choose one of "
                                f"{', '.join(RIPPLE_SHAPES)}")

    @property
    def frequency_hz(self) -> float:
        """Ripple fundamental, twice the line frequency [Hz]."""
        return 2.0 * float(self.line_frequency_hz)

    @cached_property
    def _series(self) -> tuple[np.ndarray, np.ndarray]:
        """(angular frequencies [rad/s], complex rho_n) with u = sum Re(rho_n e^{i w t})."""
        n, coef = _RIPPLE_SHAPES[self.shape]()
        w = 2 * np.pi * self.frequency_hz * n
        # extremes of the unit shape on a dense grid of one ripple period
        t = np.linspace(0.0, 1.0 / self.frequency_hz, 8192, endpoint=False)
        u = (coef[None, :] * np.exp(1j * w[None, :] * t[:, None])).real.sum(axis=1)
        umax, umin = float(u.max()), float(u.min())
        pf = self.percent / 100.0
        r = 2.0 * pf / ((umax - umin) - pf * (umax + umin))
        rho = r * coef * np.exp(1j * np.deg2rad(self.phase_deg) * n)
        return w, rho


def _ripple_factor(w: np.ndarray, rho: np.ndarray, fundamental_hz: float,
                   t: np.ndarray) -> np.ndarray:
    """Return ``u(t) = sum Re(rho_n e^{i w_n t})`` for harmonics of one fundamental.

    Horner's rule in ``z = e^{i w_1 t}``: one complex exponential per time and a
    multiply-add per harmonic, instead of a (times x harmonics) matrix of
    exponentials (which, at 400,000 times and 24 harmonics, took 150 MB and
    most of a plan's run time); falls back to that sum if the frequencies are
    not whole multiples of the fundamental.
    """
    w1 = 2.0 * np.pi * float(fundamental_hz)
    n = np.rint(w / w1).astype(np.int64)
    tt = t.ravel()
    if w1 <= 0 or n.min() < 0 or not np.allclose(n * w1, w, rtol=1e-12, atol=0.0):
        u = (rho[None, :] * np.exp(1j * w[None, :] * tt[:, None])).real.sum(axis=1)
        return u.reshape(t.shape)
    coef = np.zeros(int(n.max()) + 1, dtype=complex)
    np.add.at(coef, n, rho)
    z = np.exp(1j * w1 * tt)
    acc = np.full(tt.shape, coef[-1], dtype=complex)
    for c in coef[-2::-1]:
        acc *= z
        acc += c
    return acc.real.reshape(t.shape)


@dataclass(frozen=True, eq=False)
class FourierSeries:
    """Single-sided Fourier series of modelled light.

    ``L(t) = mean (1 + sum_k C_k cos(2 pi f_k t + phi_k))``.

    Attributes
    ----------
    frequencies_hz : numpy.ndarray
        Component frequencies, ascending, all in (0, f_max_hz] [Hz].
    amplitudes : numpy.ndarray
        C_k, amplitude relative to the mean [unitless].
    phases_rad : numpy.ndarray
        phi_k, cosine phase at t = 0 [rad].
    mean : float
        Mean light [relative to full on-level].
    fundamental_hz : float or None
        Fundamental (repetition) frequency of the light; None when steady or
        when PWM and ripple have no common period within reach [Hz].
    f_max_hz : float
        Highest frequency the series was computed to [Hz].
    """

    frequencies_hz: np.ndarray
    amplitudes: np.ndarray
    phases_rad: np.ndarray
    mean: float
    fundamental_hz: float | None
    f_max_hz: float

    def interval_averaged(self, sample_rate_hz: float) -> np.ndarray:
        """Return the amplitudes after averaging over sample intervals of 1/fs [unitless].

        Averaging over an interval Delta scales a component at f by
        ``|sinc(f Delta)|`` (numpy's normalised sinc); aliasing is not included.
        """
        return self.amplitudes * np.abs(np.sinc(self.frequencies_hz / sample_rate_hz))


@dataclass(frozen=True, eq=False)
class Light:
    """Modelled light: a sum of trains with a common period, times a ripple factor.

    Returned by every model's ``light()``; most users call the model's own
    methods, which delegate here.
    """

    trains: tuple[Train, ...]
    ripple: Ripple | None
    description: str

    @cached_property
    def base_mean(self) -> float:
        """Mean of the trains' sum before ripple [relative light]."""
        return float(sum(tr.mean for tr in self.trains))

    @cached_property
    def _base_divisor(self) -> int:
        """Divisor k: the trains' sum repeats every T/k, T the trains' period; 0 if steady.

        Evenly phased channels repeat k times per PWM period (three channels at
        120 degrees: the light repeats at 3 f). Found from the Fourier
        coefficients of the sum (only multiples of k are non-zero), then checked
        on point values one sub-period apart.
        """
        if all(tr.is_constant for tr in self.trains):
            return 0
        if len(self.trains) == 1:
            return 1  # one pulse per frame, and a dither pattern is its own shortest repeat
        T = self.trains[0].period_s
        j = np.arange(1, _DIVISOR_HARMONICS * len(self.trains) + 1)
        c = sum(tr.coefficients(j) for tr in self.trains)
        scale = max(abs(self.base_mean), 1e-300)
        t = np.concatenate([np.linspace(0.0, T, 4096, endpoint=False),
                            *[np.mod(tr.breakpoints() + 1e-9 * T, T) for tr in self.trains]])
        base = sum((tr.values(t) for tr in self.trains), np.zeros(t.shape))
        nz = j[np.abs(c) > _DIVISOR_RTOL * scale]
        if nz.size == 0:
            if float(base.max() - base.min()) <= _DIVISOR_RTOL * scale:
                return 0  # the channels add up to steady light
            return 1
        k = int(np.gcd.reduce(nz))
        if k > 1:
            moved = sum(tr.values(t + T / k) for tr in self.trains)
            if float(np.max(np.abs(moved - base))) > _DIVISOR_RTOL * scale:
                k = 1
        return k

    @cached_property
    def base_frequency_hz(self) -> float | None:
        """Repetition frequency of the trains' sum, without ripple (None when steady) [Hz]."""
        k = self._base_divisor
        if k == 0:
            return None
        return k / self.trains[0].period_s

    @cached_property
    def dominant_hz(self) -> float | None:
        """Frequency of the light's strongest periodic modulation [Hz] (None when steady).

        The trains' repetition frequency or the ripple's, whichever has the larger
        fundamental component relative to the mean: the period ``measure`` finds in
        a capture of this light and the one its figures are referred to, so that a
        model and a faithful capture of it are judged alike. The other modulation,
        when not a harmonic of it, is judged at its own frequency, as in
        :mod:`flickerkit.modulation`.
        """
        fb = self.base_frequency_hz
        fr = self.ripple.frequency_hz if self.ripple and self.ripple.percent > 0 else None
        if fb is None or fr is None:
            return fb if fr is None else fr
        return fb if self.base_amplitude >= self.ripple_amplitude else fr

    @cached_property
    def base_amplitude(self) -> float:
        """Fundamental component of the trains' sum relative to its mean [unitless]."""
        k = self._base_divisor
        mean = self.base_mean
        if k == 0 or mean <= 0:
            return 0.0
        c = sum(complex(tr.coefficients(np.array([k]))[0]) for tr in self.trains)
        return float(2.0 * abs(c) / mean)

    @cached_property
    def ripple_amplitude(self) -> float:
        """Fundamental component of the ripple relative to the mean [unitless]."""
        _, rho = self._ripple_terms()
        return float(abs(rho[0])) if rho.size else 0.0

    @cached_property
    def fundamental_hz(self) -> float | None:
        """Repetition frequency of the light, None when steady or without one [Hz]."""
        fb = self.base_frequency_hz
        fr = self.ripple.frequency_hz if self.ripple and self.ripple.percent > 0 else None
        if fb is None:
            return fr
        if fr is None:
            return fb
        return common_frequency(fb, fr)

    @cached_property
    def feature_s(self) -> float:
        """Shortest pulse or gap of the light [s]."""
        return min(tr.feature_s for tr in self.trains)

    def _ripple_terms(self) -> tuple[np.ndarray, np.ndarray]:
        if self.ripple is None or self.ripple.percent == 0:
            return np.zeros(0), np.zeros(0, complex)
        return self.ripple._series

    def integral(self, t_start: np.ndarray, t_end: np.ndarray) -> np.ndarray:
        """Exact integral of the light over [t_start, t_end] [relative light x s]."""
        ts = np.asarray(t_start, dtype=np.float64)
        te = np.asarray(t_end, dtype=np.float64)
        out = np.zeros(np.broadcast(ts, te).shape)
        w, rho = self._ripple_terms()
        for tr in self.trains:
            wa, pa = tr.cumulative(ts)
            wb, pb = tr.cumulative(te)
            out += (wb - wa) + (pb - pa)
            for wn, rn in zip(w, rho):
                wa, pa = tr.cumulative(ts, wn)
                wb, pb = tr.cumulative(te, wn)
                out += (rn * ((wb - wa) + (pb - pa))).real
        return out

    def interval_means(self, edges_s: np.ndarray) -> np.ndarray:
        """Mean light over each interval between consecutive times in ``edges_s``."""
        e = np.asarray(edges_s, dtype=np.float64)
        out = np.zeros(e.size - 1)
        w, rho = self._ripple_terms()
        for tr in self.trains:
            whole, part = tr.cumulative(e)
            out += np.diff(whole) + np.diff(part)
            for wn, rn in zip(w, rho):
                whole, part = tr.cumulative(e, wn)
                out += (rn * (np.diff(whole) + np.diff(part))).real
        return out / np.diff(e)

    def values(self, t: np.ndarray) -> np.ndarray:
        """Point values of the light at times t [relative light]."""
        t = np.asarray(t, dtype=np.float64)
        base = sum((tr.values(t) for tr in self.trains), np.zeros(t.shape))
        w, rho = self._ripple_terms()
        if w.size and self.ripple is not None:
            base = base * (1.0 + _ripple_factor(w, rho, self.ripple.frequency_hz, t))
        return base

    @cached_property
    def mean(self) -> float:
        """Mean light [relative to the full on-level]."""
        fs = self.fourier_series(0.0)
        return fs.mean

    def extremes(self, grid: int = 4096) -> tuple[float, float]:
        """Return the smallest and largest light (min, max) over the repetition period.

        Exact for a single train without ripple (its segments are monotone, so
        extremes lie at segment boundaries); otherwise the boundaries plus a
        grid of ``grid`` points per base period and per ripple period.
        """
        T = self.trains[0].period_s
        if len(self.trains) == 1 and self._ripple_terms()[0].size == 0:
            tr = self.trains[0]
            start = np.where(tr.is_exp, tr.a + tr.b, tr.a)
            end = np.where(tr.is_exp, tr.a + tr.b * np.exp(-tr.length / tr.tau),
                           tr.a + tr.b * tr.length)
            v = np.concatenate([start, end])
            return float(v.min()), float(v.max())
        f0 = self.fundamental_hz
        span = 1.0 / f0 if f0 else T
        span = min(span, 100 * T)
        pts = [np.linspace(0.0, span, grid * max(1, int(round(span / T))), endpoint=False)]
        for tr in self.trains:
            bp = tr.breakpoints()
            reps = np.arange(max(1, int(round(span / T)))) * T
            b = (bp[None, :] + reps[:, None]).ravel()
            eps = 1e-12 * T
            pts += [b + eps, np.maximum(b - eps, 0)]
            end = tr.t0 + tr.length + tr.shift_s
            pts.append(((np.mod(end, T) - 1e-12 * T)[None, :] + reps[:, None]).ravel())
        t = np.concatenate(pts)
        v = self.values(t)
        return float(v.min()), float(v.max())

    def modulation_percent(self) -> float:
        """Return the percent flicker of the modelled light [percent].

        From the exact extremes through :func:`~flickerkit.metrics.percent_flicker_of_extremes`.

        A dark model light (max + min = 0) is reported as unmodulated, 0.0,
        where the measurement side says ``nan``: a model that is off has no
        flicker to judge, and the planner and sweep compare it with limits.
        """
        lo, hi = self.extremes()
        pf = percent_flicker_of_extremes(hi, lo)
        return 0.0 if math.isnan(pf) else pf  # dark model: 0.0 by choice (see above)

    def flicker_index(self, points: int = FLICKER_INDEX_POINTS) -> float:
        """Flicker index of the modelled light: area above the mean over total area [unitless].

        Parameters
        ----------
        points : int
            Quadrature points over one repetition period.

        Notes
        -----
        One train without ripple (single-channel PWM): exact, segment by
        segment (:meth:`~flickerkit.waveform.Train.area_above`). Otherwise over one repetition
        period (or 100 PWM periods when PWM and ripple have none), split at
        every segment boundary of every train; each piece is integrated by the
        midpoint rule on ``points`` points in all. The light is smooth within a
        piece, so the only error is at the crossings of the mean, of order
        (piece / points)^2: below 1e-6 of the figure at the default.
        ``FI = int max(L - mean, 0) dt / int L dt`` (IES definition).
        """
        if self.base_frequency_hz is None and self._ripple_terms()[0].size == 0:
            return 0.0
        T = self.trains[0].period_s
        if len(self.trains) == 1 and self._ripple_terms()[0].size == 0:
            tr = self.trains[0]  # closed form: monotone segments
            total = tr.mean * T
            return tr.area_above(tr.mean) / total if total > 0 else 0.0
        f0 = self.fundamental_hz
        span = 1.0 / f0 if f0 else 100 * T
        reps = np.arange(max(1, int(math.ceil(span / T - 1e-9)))) * T
        bounds = [np.array([0.0, span])]
        for tr in self.trains:
            b = (tr.breakpoints()[None, :] + reps[:, None]).ravel()
            bounds.append(np.mod(b, span))
        cuts = np.unique(np.concatenate(bounds))
        cuts = cuts[(cuts >= 0) & (cuts <= span)]
        lens = np.diff(cuts)
        keep = lens > 1e-12 * span
        starts, lens = cuts[:-1][keep], lens[keep]
        per = np.maximum(4, np.ceil(points * lens / span)).astype(np.int64)
        piece = np.repeat(np.arange(lens.size), per)
        first = np.concatenate([[0], np.cumsum(per)[:-1]])
        idx = np.arange(piece.size) - first[piece]
        h = lens[piece] / per[piece]
        t = starts[piece] + (idx + 0.5) * h
        v = self.values(t)
        total = float(np.dot(v, h))
        if total <= 0:
            return 0.0
        mean = total / span
        return float(np.dot(np.maximum(v - mean, 0.0), h) / total)

    def fourier_series(self, f_max_hz: float = 2000.0) -> FourierSeries:
        """Fourier series of the light up to ``f_max_hz``.

        Parameters
        ----------
        f_max_hz : float
            Highest component frequency returned [Hz].

        Notes
        -----
        Each train's two-sided coefficients ``c_k = (1/T) int_0^T x(t)
        exp(-i 2 pi k t / T) dt`` are summed in closed form over its segments;
        with ripple, the product ``x(t) (1 + r u(t))`` has lines at
        ``k / T + n f_r`` with coefficient ``c_k d_n``; coinciding lines are
        added. ``C = 2 |c| / c_0`` and ``phi = arg c``.
        """
        T = self.trains[0].period_s
        fb = 1.0 / T
        w, rho = self._ripple_terms()
        fr_max = float(w.max()) / (2 * np.pi) if w.size else 0.0
        const = self.base_frequency_hz is None
        kmax = 0 if const else int(np.ceil((f_max_hz + fr_max) / fb)) + 1
        k = np.arange(-kmax, kmax + 1)
        c = sum(tr.coefficients(k) for tr in self.trains)
        freqs = [k * fb]
        coefs = [c]
        for wn, rn in zip(w, rho):
            fn = wn / (2 * np.pi)
            freqs += [k * fb + fn, k * fb - fn]
            coefs += [c * rn / 2.0, c * np.conj(rn) / 2.0]
        f = np.concatenate(freqs)
        cc = np.concatenate(coefs)
        scale = max(f_max_hz, fb, 1.0)
        key = np.round(f / (scale * FREQ_RTOL * 10)).astype(np.int64)
        uniq, inv = np.unique(key, return_inverse=True)
        summed = np.zeros(uniq.size, dtype=np.complex128)
        np.add.at(summed, inv, cc)
        fsum = np.zeros(uniq.size)
        cnt = np.zeros(uniq.size)
        np.add.at(fsum, inv, f)
        np.add.at(cnt, inv, 1.0)
        fexact = fsum / cnt  # the members' own frequency, not the rounded key
        dc_idx = np.flatnonzero(uniq == 0)
        c0 = float(summed[dc_idx[0]].real) if dc_idx.size else 0.0
        sel = (uniq > 0) & (fexact <= f_max_hz * (1 + 1e-12))
        amp = 2.0 * np.abs(summed[sel]) / c0 if c0 > 0 else np.zeros(int(sel.sum()))
        tiny = amp < 1e-14
        fr = fexact[sel][~tiny]
        return FourierSeries(
            frequencies_hz=fr,
            amplitudes=amp[~tiny],
            phases_rad=np.angle(summed[sel])[~tiny],
            mean=c0,
            fundamental_hz=self.fundamental_hz,
            f_max_hz=float(f_max_hz),
        )

    def plan_sampling(
        self,
        sample_rate_hz: float | None = None,
        duration_s: float | None = None,
        max_samples: int = DEFAULT_MAX_SAMPLES,
    ) -> tuple[float, int, list[str]]:
        """Choose sample rate and length; returns (rate [Hz], samples, notes)."""
        notes: list[str] = []
        f0 = self.fundamental_hz
        fd = self.dominant_hz
        if fd is not None and (f0 is None or f0 < fd / MAX_REPETITION_RATIO):
            # PWM and ripple share no period within reach (2000.06 Hz on 100 Hz ripple repeat
            # every 50 s): whole periods of the strongest modulation, the other one leaks
            notes.append(f"the light repeats only every {1 / f0:.3g} s" if f0 else
                         "the drive's PWM and ripple have no common period")
            notes[-1] += (f"; the capture holds whole periods of its strongest modulation "
                          f"({fd:.6g} Hz), not of the light's repetition")
            f0 = fd
        if f0 is None:  # steady light (a modulated light has a dominant frequency)
            fs = float(sample_rate_hz or max(MIN_SAMPLE_RATE_HZ, 64.0 / self.trains[0].period_s))
            n = int(round((duration_s or 1.0) * fs))
            if n > max_samples and duration_s is None:
                n = max_samples
            return fs, max(n, 16), notes
        T0 = 1.0 / f0
        if sample_rate_hz is None:
            m_feature = SAMPLES_PER_FEATURE * T0 / self.feature_s if math.isfinite(
                self.feature_s) else 0.0
            m = int(math.ceil(max(m_feature, MIN_SAMPLE_RATE_HZ * T0, MIN_SAMPLES_PER_PERIOD)))
            if duration_s is not None:
                p = max(1, int(round(duration_s * f0)))
            else:
                p = max(PREFERRED_PERIODS, int(math.ceil(MIN_DURATION_S * f0)))
                p = max(MIN_PERIODS, min(p, max_samples // m))
            if m * p > max_samples and duration_s is None:
                m_fit = max(MIN_SAMPLES_PER_PERIOD, max_samples // p)
                if m_fit < m_feature:
                    notes.append(
                        f"sample rate limited by the sample budget: the narrowest pulse or gap "
                        f"({self.feature_s * 1e6:.3g} us) spans {m_fit * self.feature_s * f0:.2g} "
                        f"samples; point values (percent flicker with an off-level, flicker "
                        f"index) are those an instrument of that bandwidth would see")
                m = m_fit
            return m * f0, m * p, notes
        fs = float(sample_rate_hz)
        if duration_s is not None:
            n = int(round(duration_s * fs))
        else:
            p = max(PREFERRED_PERIODS, int(math.ceil(MIN_DURATION_S * f0)))
            n = min(int(round(p * fs / f0)), max(max_samples, int(round(MIN_PERIODS * fs / f0))))
            n = int(round(round(n * f0 / fs) * fs / f0))
        per = n * f0 / fs
        if abs(per - round(per)) > 1e-6:
            notes.append(f"the capture holds {per:.3f} periods, not a whole number")
        return fs, n, notes

    def capture(
        self,
        sample_rate_hz: float | None = None,
        duration_s: float | None = None,
        *,
        max_samples: int = DEFAULT_MAX_SAMPLES,
        label: str = "",
    ) -> Capture:
        """Sample the light by exact interval averaging.

        Parameters
        ----------
        sample_rate_hz : float, optional
            Sample rate [Hz]; default a whole multiple of the fundamental that
            puts :data:`SAMPLES_PER_FEATURE` samples across the narrowest pulse
            or gap, within ``max_samples``.
        duration_s : float, optional
            Capture length [s]; default a whole number of fundamental periods
            (at least :data:`MIN_PERIODS`, aiming for :data:`PREFERRED_PERIODS`
            and :data:`MIN_DURATION_S`).
        max_samples : int
            Sample budget when rate or length is chosen here.
        label : str
            Label of the capture.

        Returns
        -------
        Capture
            Sample i is the mean light over ``[i / fs, (i + 1) / fs]``.
        """
        fs, n, notes = self.plan_sampling(sample_rate_hz, duration_s, max_samples)
        edges = np.arange(n + 1, dtype=np.float64) / fs
        x = self.interval_means(edges)
        np.maximum(x, 0.0, out=x)
        f0 = self.dominant_hz  # the period measure finds; the repetition period beside it
        meta = {"model": self.description, "fundamental_hz": f0,
                "repetition_hz": self.fundamental_hz,
                "periods": (n * f0 / fs) if f0 else None, "sampling": "interval average"}
        return make_capture(x, fs, label=label or self.description,
                            source=f"model: {self.description}",
                            notes=("modelled light, samples are exact interval averages",),
                            warnings=tuple(notes), meta=meta)



__all__ = ["FourierSeries", "Light", "Ripple", "RIPPLE_SHAPES"]
