"""Drive models: the light a dimming drive makes, as samples and as a Fourier series.

A drive model describes the light of one LED drive at one operating point
(pulse-width modulation at a duty, constant current at a level, several
channels, dithered PWM). Each model is a small frozen dataclass that gives

* :meth:`~LightModel.capture`: a sampled light waveform as a
  :class:`~flickerkit.capture.Capture`, each sample the exact average of the
  light over its sample interval (edges need not fall on samples), over a whole
  number of fundamental periods where the model has one; this is what goes
  through :func:`flickerkit.assess.assess` like a measured capture;
* :meth:`~LightModel.fourier_series`: its Fourier series (frequencies,
  amplitudes relative to the mean, phases), computed in closed form from the
  same waveform, so the two agree.

Inside, every model reduces to one or more *trains*: periodic waveforms made of
segments that are constant, linear (slew-limited edges) or first-order
exponential (an edge with a time constant), times an optional line-ripple
factor ``1 + r u(t)`` with ``u`` a finite cosine series. Integrals of such
segments against ``exp(i omega t)`` are elementary, which gives exact interval
averages, exact Fourier coefficients and exact running means (camera exposure).

:class:`Drive` is a dimming scheme (PWM, analogue, hybrid; channels, timer
counts, dithering): :meth:`Drive.at` turns a dimming level into a model.

Levels (duty, off-level, on-level, dimming level) are fractions 0-1 inside;
percent appears only in names that say so (``percent``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields, replace
from fractions import Fraction
from functools import cached_property
from typing import Any, Mapping

import numpy as np

from .capture import Capture, make_capture
from .errors import SettingsError
from .metrics import percent_flicker_of_extremes

#: Edge models of a PWM pulse.
EDGE_KINDS = ("ideal", "first-order", "linear")

#: What the driver does with a light pulse shorter than its minimum on-time.
MIN_ON_MODES = ("clamp", "skip")

#: Dimming methods of :class:`Drive`.
METHODS = ("pwm", "analogue", "hybrid")

#: Harmonics of the ripple frequency kept for the full-wave rectified shape.
#: The shape modelled (and sampled) is this finite series; its coefficients fall
#: as 1/(4n^2 - 1), so the 24th is 0.06 % of the first.
RECTIFIED_HARMONICS = 24

#: Default sample-planning constants of :meth:`LightModel.capture`
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

#: Relative tolerance when deciding that two frequencies coincide (spectral lines,
#: common period of PWM and ripple).
_FREQ_RTOL = 1e-9
#: Largest denominator tried when looking for a common period of two frequencies.
_MAX_DENOMINATOR = 10_000
#: Harmonics per train inspected when looking for a repetition shorter than the PWM
#: period (evenly phased channels), and the relative size below which a Fourier
#: coefficient or a difference of point values counts as zero.
_DIVISOR_HARMONICS = 64
_DIVISOR_RTOL = 1e-9


# --------------------------------------------------------------------------- helpers
def _e1(z: np.ndarray) -> np.ndarray:
    """(exp(z) - 1) / z, with the limit 1 at z = 0 (complex, vectorised)."""
    z = np.asarray(z, dtype=np.complex128)
    out = np.ones_like(z)
    nz = z != 0
    out[nz] = np.expm1(z[nz]) / z[nz]
    return out


_E2_SERIES = np.array([1.0 / (math.factorial(n) * (n + 2)) for n in range(14)])


def _e2(z: np.ndarray) -> np.ndarray:
    """Integral of s exp(z s) over s in [0, 1] = (exp(z)(z - 1) + 1) / z^2."""
    z = np.asarray(z, dtype=np.complex128)
    out = np.empty_like(z)
    small = np.abs(z) < 0.5
    zs = z[small]
    acc = np.zeros_like(zs)
    for c in _E2_SERIES[::-1]:
        acc = acc * zs + c
    out[small] = acc
    zl = z[~small]
    out[~small] = (np.exp(zl) * (zl - 1.0) + 1.0) / (zl * zl)
    return out


#: A repetition period longer than this many periods of the strongest modulation is not
#: sampled whole (the capture holds whole periods of the strongest modulation). Chosen here.
MAX_REPETITION_RATIO = 64


def _common_frequency(f1: float, f2: float) -> float | None:
    """Largest frequency of which both are integer multiples, or None [Hz]."""
    ratio = Fraction(f1 / f2).limit_denominator(_MAX_DENOMINATOR)
    if ratio.numerator == 0:
        return None
    if abs(float(ratio) - f1 / f2) > _FREQ_RTOL * (f1 / f2):
        return None
    return f1 / ratio.numerator


def _check_positive(name: str, value: float, *, allow_zero: bool = False) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise SettingsError(f"{name} must be a number, got {value!r}") from None
    if not math.isfinite(v) or v < 0 or (v == 0 and not allow_zero):
        need = "zero or positive" if allow_zero else "positive"
        raise SettingsError(f"{name} must be a finite {need} number, got {v:g}")
    return v


def _check_fraction(name: str, value: float) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise SettingsError(f"{name} must be a number from 0 to 1, got {value!r}") from None
    if not (0.0 <= v <= 1.0):
        raise SettingsError(f"{name} must be from 0 to 1, got {v:g}")
    return v


# --------------------------------------------------------------------------- trains
@dataclass(frozen=True, eq=False)
class _Train:
    """One periodic waveform made of segments (internal).

    Segment j covers ``[t0[j], t0[j] + length[j]]`` of the period (contiguous,
    from 0 to ``period_s``); with ``v`` the time since its start, its value is
    ``a + b v`` (linear) or ``a + b exp(-v / tau)`` (exponential). The train
    is delayed by ``shift_s``: its value at ``t`` is ``x(t - shift_s)``.
    """

    period_s: float
    t0: np.ndarray
    length: np.ndarray
    is_exp: np.ndarray
    a: np.ndarray
    b: np.ndarray
    tau: np.ndarray
    shift_s: float = 0.0
    feature_s: float = math.inf

    @classmethod
    def constant(cls, level: float, period_s: float) -> "_Train":
        one = np.ones(1)
        return cls(period_s, np.zeros(1), one * period_s, np.zeros(1, bool), one * level,
                   np.zeros(1), one)

    @cached_property
    def is_constant(self) -> bool:
        return bool(np.all(self.b == 0) and np.all(self.a == self.a[0]))

    def _segment_integral(self, j: np.ndarray, v: np.ndarray, omega: float) -> np.ndarray:
        """Integral over the first ``v`` seconds of segment ``j`` of x(t) exp(i omega t)."""
        a, b, tau, t0 = self.a[j], self.b[j], self.tau[j], self.t0[j]
        ex = self.is_exp[j]
        if omega == 0.0:
            lin = a * v + 0.5 * b * v * v
            e = a * v - b * tau * np.expm1(-v / tau)
            return np.where(ex, e, lin)
        z = 1j * omega * v
        base = a * v * _e1(z)
        lin = base + b * v * v * _e2(z)
        e = base + b * v * _e1(z - v / tau)
        return np.exp(1j * omega * t0) * np.where(ex, e, lin)

    def _prefix(self, omega: float) -> np.ndarray:
        j = np.arange(self.t0.size)
        full = self._segment_integral(j, self.length, omega)
        return np.concatenate([[0.0], np.cumsum(full)])

    def _within(self, u: np.ndarray, omega: float) -> np.ndarray:
        """Integral from 0 to u (0 <= u <= period) of x(t) exp(i omega t)."""
        prefix = self._prefix(omega)
        j = np.clip(np.searchsorted(self.t0, u, side="right") - 1, 0, self.t0.size - 1)
        v = np.clip(u - self.t0[j], 0.0, self.length[j])
        return prefix[j] + self._segment_integral(j, v, omega)

    @cached_property
    def mean(self) -> float:
        return float(self._prefix(0.0)[-1].real / self.period_s)

    def cumulative(self, t: np.ndarray, omega: float = 0.0) -> tuple[np.ndarray, np.ndarray]:
        """Integral from -shift to t of the shifted train times exp(i omega t).

        Returned as ``(whole, part)`` with the integral equal to ``whole + part``;
        for omega = 0 ``whole`` is (periods) x (integral over one period), kept
        apart so that differences of nearby values keep their precision.
        """
        T = self.period_s
        tt = np.asarray(t, dtype=np.float64) - self.shift_s
        k = np.floor(tt / T)
        u = np.clip(tt - k * T, 0.0, T)
        if omega == 0.0:
            return k * (self.mean * T), self._within(u, 0.0).real
        one_period = self._prefix(omega)[-1]
        q = np.exp(1j * omega * T)
        if abs(1.0 - q) < 1e-9:
            geo = k.astype(np.complex128)
        else:
            geo = (1.0 - np.exp(1j * omega * T * k)) / (1.0 - q)
        phase_shift = np.exp(1j * omega * self.shift_s)
        whole = phase_shift * one_period * geo
        part = phase_shift * np.exp(1j * omega * T * k) * self._within(u, omega)
        return whole, part

    def coefficients(self, k: np.ndarray) -> np.ndarray:
        """Two-sided complex Fourier coefficients c_k at k / period (shift included)."""
        k = np.asarray(k, dtype=np.float64)
        T = self.period_s
        out = np.zeros(k.shape, dtype=np.complex128)
        j = np.arange(self.t0.size)
        # segments x harmonics, vectorised over k in blocks to bound memory
        for lo in range(0, k.size, 4096):
            kk = k[lo : lo + 4096]
            omega = -2.0 * np.pi * kk[None, :] / T
            a, b, tau = self.a[j][:, None], self.b[j][:, None], self.tau[j][:, None]
            L, t0 = self.length[j][:, None], self.t0[j][:, None]
            z = 1j * omega * L
            base = a * L * _e1(z)
            lin = base + b * L * L * _e2(z)
            e = base + b * L * _e1(z - L / tau)
            seg = np.exp(1j * omega * t0) * np.where(self.is_exp[:, None], e, lin)
            out[lo : lo + 4096] = seg.sum(axis=0) / T
        return out * np.exp(-2j * np.pi * k * self.shift_s / T)

    def values(self, t: np.ndarray) -> np.ndarray:
        """Point values at times t."""
        T = self.period_s
        u = np.mod(np.asarray(t, dtype=np.float64) - self.shift_s, T)
        j = np.clip(np.searchsorted(self.t0, u, side="right") - 1, 0, self.t0.size - 1)
        v = u - self.t0[j]
        lin = self.a[j] + self.b[j] * v
        e = self.a[j] + self.b[j] * np.exp(-v / self.tau[j])
        return np.where(self.is_exp[j], e, lin)

    def area_above(self, level: float) -> float:
        """Exact integral over one period of max(x - level, 0) [light x s].

        Each segment is monotone (constant, linear, or exponential), so the part
        above ``level`` is one interval found in closed form.
        """
        a, b, tau, L = self.a, self.b, self.tau, self.length
        m = float(level)
        ex = self.is_exp
        # value at the segment's start and end
        x0 = np.where(ex, a + b, a)
        x1 = np.where(ex, a + b * np.exp(-L / tau), a + b * L)
        with np.errstate(divide="ignore", invalid="ignore"):
            # time within the segment where x crosses the level (clipped to [0, L])
            v_lin = np.where(b != 0, (m - a) / np.where(b != 0, b, 1.0), 0.0)
            ratio = np.where(b != 0, (m - a) / np.where(b != 0, b, 1.0), 1.0)
            v_exp = np.where(ratio > 0, -tau * np.log(np.where(ratio > 0, ratio, 1.0)), np.inf)
        v = np.clip(np.where(ex, v_exp, v_lin), 0.0, L)
        up = x1 > x0  # rising: above the level from the crossing to the end
        lo_v = np.where(up, v, 0.0)
        hi_v = np.where(up, L, v)
        flat = x0 == x1
        lo_v = np.where(flat, 0.0, lo_v)
        hi_v = np.where(flat, np.where(x0 > m, L, 0.0), hi_v)

        def prim(t):  # integral from 0 to t of (x - m)
            lin = (a - m) * t + 0.5 * b * t * t
            e = (a - m) * t + b * tau * (-np.expm1(-t / tau))
            return np.where(ex, e, lin)

        return float(np.sum(np.maximum(prim(hi_v) - prim(lo_v), 0.0)))

    def breakpoints(self) -> np.ndarray:
        """Segment boundaries in absolute time within one period (shift included)."""
        return np.mod(self.t0 + self.shift_s, self.period_s)


def _pulse_train(
    frame_s: float,
    widths_s: np.ndarray,
    lo: float,
    hi: float,
    edges: "Edges",
    delay_s: float,
    min_on_s: float,
    min_on_mode: str,
    shift_s: float,
) -> _Train:
    """Train of a gate that is on for ``widths_s[j]`` from the start of frame j.

    The light pulse of each gate pulse starts ``delay_s`` after the gate's
    rising edge and ends at its falling edge; a light pulse shorter than
    ``min_on_s`` is stretched to it (``"clamp"``) or dropped (``"skip"``).
    The light then follows the commands through the edge model, in its
    periodic steady state.
    """
    n = widths_s.size
    period = frame_s * n
    starts = np.arange(n) * frame_s
    ends = starts + np.minimum(widths_s, frame_s)
    on = widths_s > 0
    starts, ends = starts[on], ends[on]
    if starts.size == 0:
        return _Train.constant(lo, period)
    # merge gate pulses that touch (full frames), then across the period end
    tol = 1e-12 * period
    ms, me = [float(starts[0])], [float(ends[0])]
    for s, e in zip(starts[1:], ends[1:]):
        if s - me[-1] <= tol:
            me[-1] = float(e)
        else:
            ms.append(float(s))
            me.append(float(e))
    if me[-1] >= period - tol and ms[0] <= tol:
        if len(ms) == 1:
            return _Train.constant(hi, period)
        ms[0] = ms[-1] - period  # the last pulse runs on into the first
        ms.pop()
        me.pop()
    origin = ms[0]
    ps = np.array(ms) - origin
    pe = np.array(me) - origin
    # light pulses: delay at each rising edge, then the minimum on-time
    ls = ps + delay_s
    le = pe.copy()
    nxt = np.append(ps[1:], period)
    width = le - ls
    short = (width > 0) & (width < min_on_s)
    if min_on_mode == "clamp":
        le = np.where(short, np.minimum(ls + min_on_s, nxt), le)
    else:
        le = np.where(short, ls, le)
    keep = le - ls > tol
    ls, le = ls[keep], le[keep]
    if ls.size == 0:
        return _Train.constant(lo, period)
    # (target, duration) pieces from 0 to the period
    bounds = np.concatenate([[0.0], np.column_stack([ls, le]).ravel(), [period]])
    dur = np.diff(bounds)
    target = np.tile([lo, hi], ls.size)
    target = np.append(target, lo)
    keep = dur > tol
    target, dur = target[keep], dur[keep]
    if target.size == 1:
        return _Train.constant(float(target[0]), period)
    feature = float(dur.min())
    t0s, lens, isexp, aa, bb, taus = _edge_segments(target, dur, lo, hi, edges)
    return _Train(period, t0s, lens, isexp, aa, bb, taus, shift_s=shift_s + origin,
                  feature_s=feature)


def _edge_segments(target, dur, lo, hi, edges):
    """Segments of a two-level command sequence through the edge model, in steady state."""
    n = target.size
    rising = target == hi
    if edges.kind == "ideal" or (edges.rise_s == 0 and edges.fall_s == 0):
        t0 = np.concatenate([[0.0], np.cumsum(dur)[:-1]])
        return t0, dur, np.zeros(n, bool), target.astype(float), np.zeros(n), np.ones(n)
    if edges.kind == "first-order":
        tau = np.where(rising, edges.rise_s, edges.fall_s)
        decay = np.where(tau > 0, np.exp(-dur / np.where(tau > 0, tau, 1.0)), 0.0)
        # affine map x -> decay x + (1 - decay) target over each piece; compose
        alpha, beta = 1.0, 0.0
        for d, y in zip(decay, target):
            alpha, beta = d * alpha, d * beta + (1.0 - d) * y
        x = beta / (1.0 - alpha)
        starts = np.empty(n)
        for i in range(n):
            starts[i] = x
            x = decay[i] * x + (1.0 - decay[i]) * target[i]
        t0 = np.concatenate([[0.0], np.cumsum(dur)[:-1]])
        isexp = tau > 0
        a = np.where(isexp, target, target)
        b = np.where(isexp, starts - target, 0.0)
        return t0, dur, isexp, a.astype(float), b, np.where(isexp, tau, 1.0)
    # linear slew: rise at (hi - lo) / rise_s until hi, fall likewise until lo
    sr = (hi - lo) / edges.rise_s if edges.rise_s > 0 else math.inf
    sf = (hi - lo) / edges.fall_s if edges.fall_s > 0 else math.inf
    # each piece is x -> clamp_[L, U](x + C); compose, then take the fixed point
    C, L, U = 0.0, -math.inf, math.inf
    for d, r in zip(dur, rising):
        c2, l2, u2 = (sr * d, -math.inf, hi) if r else (-sf * d, lo, math.inf)
        if math.isinf(c2):
            c2 = math.copysign(1e300, c2)
        C = C + c2
        L, U = min(u2, max(l2, L + c2)), min(u2, max(l2, U + c2))
    if abs(C) <= 1e-12 * (hi - lo):
        x = min(U, max(L, lo))
    else:
        x = U if C > 0 else L
    t0s, lens, aa, bb = [], [], [], []
    t = 0.0
    for d, r in zip(dur, rising):
        y, s = (hi, sr) if r else (lo, -sf)
        reach = abs(y - x) / abs(s) if math.isfinite(s) else 0.0
        if reach >= d:
            t0s.append(t), lens.append(d), aa.append(x), bb.append(s)
            x = x + s * d
        else:
            if reach > 0:
                t0s.append(t), lens.append(reach), aa.append(x), bb.append(s)
            t0s.append(t + reach), lens.append(d - reach), aa.append(y), bb.append(0.0)
            x = y
        t += d
    m = len(t0s)
    return (np.array(t0s), np.array(lens), np.zeros(m, bool), np.array(aa), np.array(bb),
            np.ones(m))


# --------------------------------------------------------------------------- ripple
def _rectified_unit(n_harm: int) -> tuple[np.ndarray, np.ndarray]:
    """Zero-mean full-wave rectified sine |sin(pi f t)| as cosine harmonics of f."""
    n = np.arange(1, n_harm + 1)
    return n, -(4.0 / np.pi) / (4.0 * n * n - 1.0) + 0j


_RIPPLE_SHAPES = {
    "sine": lambda: (np.array([1]), np.array([1.0 + 0j])),
    "rectified": lambda: _rectified_unit(RECTIFIED_HARMONICS),
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
        p = _check_positive("ripple percent", self.percent, allow_zero=True)
        if p >= 100.0:
            raise SettingsError(f"ripple percent must be below 100, got {p:g}")
        _check_positive("line frequency [Hz]", self.line_frequency_hz)
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


# --------------------------------------------------------------------------- results
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
        """Amplitudes after averaging over sample intervals of 1/fs [unitless].

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

    trains: tuple[_Train, ...]
    ripple: Ripple | None
    description: str

    @cached_property
    def base_mean(self) -> float:
        return float(sum(tr.mean for tr in self.trains))

    @cached_property
    def _base_divisor(self) -> int:
        """k such that the trains' sum repeats every T/k, T the trains' period; 0 if steady.

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
        mean = sum(tr.mean for tr in self.trains)
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
        return _common_frequency(fb, fr)

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
        if w.size:
            u = (rho[None, :] * np.exp(1j * w[None, :] * t.reshape(-1, 1))).real.sum(axis=1)
            base = base * (1.0 + u.reshape(t.shape))
        return base

    @cached_property
    def mean(self) -> float:
        """Mean light [relative to the full on-level]."""
        fs = self.fourier_series(0.0)
        return fs.mean

    def extremes(self, grid: int = 4096) -> tuple[float, float]:
        """Largest and smallest light (min, max) over the repetition period.

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
        """Percent flicker of the modelled light [percent] (:func:`metrics.percent_flicker_of_extremes`).

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
        segment (:meth:`_Train.area_above`). Otherwise over one repetition
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
        key = np.round(f / (scale * _FREQ_RTOL * 10)).astype(np.int64)
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
        if f0 is None:
            if self.base_frequency_hz is not None or (self.ripple and self.ripple.percent > 0):
                notes.append("the drive's PWM and ripple have no common period within reach; "
                             "the capture is not a whole number of periods")
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


# --------------------------------------------------------------------------- models
@dataclass(frozen=True)
class Edges:
    """How the light follows the drive command at each edge.

    Parameters
    ----------
    kind : str
        ``"ideal"`` (instant), ``"first-order"`` (exponential approach with
        time constants ``rise_s`` and ``fall_s``) or ``"linear"`` (slew-limited:
        a full swing from off-level to on-level takes ``rise_s``, and back
        ``fall_s``; a short pulse makes a triangle).
    rise_s : float
        Rise time constant or full-swing rise time [s].
    fall_s : float
        Fall time constant or full-swing fall time [s].
    """

    kind: str = "ideal"
    rise_s: float = 0.0
    fall_s: float = 0.0

    def __post_init__(self) -> None:
        if self.kind not in EDGE_KINDS:
            raise SettingsError(f"unknown edge kind {self.kind!r}; choose one of "
                                f"{', '.join(EDGE_KINDS)}")
        _check_positive("rise time [s]", self.rise_s, allow_zero=True)
        _check_positive("fall time [s]", self.fall_s, allow_zero=True)

    def describe(self) -> str:
        if self.kind == "ideal" or (self.rise_s == 0 and self.fall_s == 0):
            return "ideal edges"
        return (f"{self.kind} edges rise {self.rise_s * 1e6:g} us, "
                f"fall {self.fall_s * 1e6:g} us")


IDEAL = Edges()


class LightModel:
    """Shared methods of the drive models (each defines ``light()``)."""

    def light(self) -> Light:
        """The model's light waveform, built once and kept (models are frozen)."""
        lt = self.__dict__.get("_light")
        if lt is None:
            lt = self._build_light()
            object.__setattr__(self, "_light", lt)
        return lt

    def _build_light(self) -> Light:  # pragma: no cover - defined by each model
        raise NotImplementedError

    @property
    def fundamental_hz(self) -> float | None:
        """Repetition frequency of the light [Hz] (None when steady)."""
        return self.light().fundamental_hz

    @property
    def mean(self) -> float:
        """Mean light [relative to the full on-level]."""
        return self.light().mean

    def fourier_series(self, f_max_hz: float = 2000.0) -> FourierSeries:
        """Fourier series up to ``f_max_hz`` [Hz]; see :meth:`Light.fourier_series`."""
        return self.light().fourier_series(f_max_hz)

    def modulation_percent(self) -> float:
        """Percent flicker of the modelled light [percent]."""
        return self.light().modulation_percent()

    def capture(self, sample_rate_hz: float | None = None, duration_s: float | None = None,
                *, max_samples: int = DEFAULT_MAX_SAMPLES, label: str = "") -> Capture:
        """Sampled light; see :meth:`Light.capture`."""
        return self.light().capture(sample_rate_hz, duration_s, max_samples=max_samples,
                                    label=label)


def _check_pwm_timing(frequency_hz: float, edges: Edges, delay_s: float, min_on_s: float,
                      mode: str) -> float:
    f = _check_positive("PWM frequency [Hz]", frequency_hz)
    T = 1.0 / f
    for name, v in (("rise time", edges.rise_s), ("fall time", edges.fall_s)):
        if v >= T:
            raise SettingsError(f"{name} {v * 1e6:g} us is not shorter than the PWM period "
                                f"{T * 1e6:g} us at {f:g} Hz")
    _check_positive("turn-on delay [s]", delay_s, allow_zero=True)
    _check_positive("minimum on-time [s]", min_on_s, allow_zero=True)
    if delay_s >= T:
        raise SettingsError(f"turn-on delay {delay_s * 1e6:g} us is not shorter than the PWM "
                            f"period {T * 1e6:g} us")
    if min_on_s >= T:
        raise SettingsError(f"minimum on-time {min_on_s * 1e6:g} us is not shorter than the "
                            f"PWM period {T * 1e6:g} us")
    if mode not in MIN_ON_MODES:
        raise SettingsError(f"unknown minimum on-time mode {mode!r}; choose one of "
                            f"{', '.join(MIN_ON_MODES)}")
    return f


def _check_levels(on_level: float, off_level: float) -> None:
    _check_positive("on-level", on_level)
    _check_positive("off-level", off_level, allow_zero=True)
    if off_level >= on_level:
        raise SettingsError(f"off-level {off_level:g} must be below the on-level {on_level:g}")


@dataclass(frozen=True)
class Pwm(LightModel):
    """Pulse-width-modulated light.

    Parameters
    ----------
    frequency_hz : float
        PWM frequency [Hz].
    duty : float
        Commanded on-fraction of the period (gate) [unitless, 0-1].
    on_level : float
        Light while on [relative to full output].
    off_level : float
        Light while off (leakage or a floor current) [relative to full output].
    edges : Edges
        Rise and fall of the light.
    turn_on_delay_s : float
        Delay from the gate's rising edge to the start of the light pulse [s].
    min_on_time_s : float
        Shortest light pulse the driver makes [s].
    min_on_mode : str
        ``"clamp"``: a shorter pulse is stretched to the minimum; ``"skip"``:
        it is not made.
    phase_deg : float
        Delay of the whole waveform as a phase of the PWM period [degree].
    ripple : Ripple, optional
        Line ripple multiplying the light.

    Examples
    --------
    >>> fs = Pwm(1000.0, 0.5).fourier_series(3000.0)
    >>> [round(float(c), 6) for c in fs.amplitudes]
    [1.27324, 0.424413]
    """

    frequency_hz: float
    duty: float
    on_level: float = 1.0
    off_level: float = 0.0
    edges: Edges = IDEAL
    turn_on_delay_s: float = 0.0
    min_on_time_s: float = 0.0
    min_on_mode: str = "clamp"
    phase_deg: float = 0.0
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        _check_fraction("duty", self.duty)
        _check_levels(self.on_level, self.off_level)
        _check_pwm_timing(self.frequency_hz, self.edges, self.turn_on_delay_s,
                          self.min_on_time_s, self.min_on_mode)

    @property
    def period_s(self) -> float:
        """PWM period [s]."""
        return 1.0 / self.frequency_hz

    def describe(self) -> str:
        s = f"PWM {self.frequency_hz:g} Hz duty {self.duty * 100:.6g} %"
        if self.off_level:
            s += f", off-level {self.off_level:g}"
        if self.edges.kind != "ideal":
            s += ", " + self.edges.describe()
        if self.ripple:
            s += f", {self.ripple.percent:g} % {self.ripple.shape} ripple"
        return s

    def _train(self) -> _Train:
        T = self.period_s
        return _pulse_train(T, np.array([self.duty * T]), self.off_level, self.on_level,
                            self.edges, self.turn_on_delay_s, self.min_on_time_s,
                            self.min_on_mode, self.phase_deg / 360.0 * T)

    def _build_light(self) -> Light:
        return Light((self._train(),), self.ripple, self.describe())


@dataclass(frozen=True)
class ConstantCurrent(LightModel):
    """Constant-current (analogue) dimming: steady light with optional ripple.

    Parameters
    ----------
    level : float
        Light [relative to full output].
    ripple : Ripple, optional
        Residual ripple at twice the line frequency.
    """

    level: float
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        _check_positive("analogue level", self.level)

    def describe(self) -> str:
        s = f"analogue {self.level * 100:.6g} %"
        if self.ripple:
            s += f", {self.ripple.percent:g} % {self.ripple.shape} ripple"
        return s

    def _build_light(self) -> Light:
        period = 1.0 / self.ripple.frequency_hz if self.ripple else 0.01
        return Light((_Train.constant(self.level, period),), self.ripple, self.describe())


@dataclass(frozen=True)
class MultiChannel(LightModel):
    """Several PWM channels or strings whose light adds.

    Parameters
    ----------
    channels : tuple of Pwm
        Channels at one PWM frequency, each with its own duty, levels, edges
        and ``phase_deg``; give ripple here, not on the channels.
    ripple : Ripple, optional
        Ripple of the common supply, multiplying the sum.
    """

    channels: tuple[Pwm, ...]
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        if not self.channels:
            raise SettingsError("a multi-channel drive needs at least one channel")
        f = self.channels[0].frequency_hz
        for i, ch in enumerate(self.channels):
            if abs(ch.frequency_hz - f) > _FREQ_RTOL * f:
                raise SettingsError(f"channel {i + 1} runs at {ch.frequency_hz:g} Hz, channel 1 "
                                    f"at {f:g} Hz; channels must share one PWM frequency")
            if ch.ripple is not None:
                raise SettingsError("give ripple on the multi-channel drive, not on a channel")

    def describe(self) -> str:
        ph = ", ".join(f"{c.phase_deg:g}" for c in self.channels)
        s = (f"{len(self.channels)} channels PWM {self.channels[0].frequency_hz:g} Hz duty "
             f"{self.channels[0].duty * 100:.6g} %, phases {ph} deg")
        if self.ripple:
            s += f", {self.ripple.percent:g} % {self.ripple.shape} ripple"
        return s

    def _build_light(self) -> Light:
        return Light(tuple(c._train() for c in self.channels), self.ripple, self.describe())


def sigma_delta_counts(target_counts: float, extra_bits: int) -> np.ndarray:
    """Per-frame counts of first-order sigma-delta dithering over one pattern.

    Parameters
    ----------
    target_counts : float
        Wanted mean count per PWM period [counts]; quantised to 1 / 2^m.
    extra_bits : int
        m, the dither bits: the pattern spans at most 2^m PWM periods.

    Returns
    -------
    numpy.ndarray
        Integer counts of the frames of one repetition of the pattern
        (length 2^m / gcd(p, 2^m) for fraction p / 2^m; 1 without a fraction).

    Notes
    -----
    The accumulator starts at 0 and adds p each frame; a frame carries N + 1
    counts when it overflows 2^m: ``n_j = N + floor((j+1) p / P) - floor(j p / P)``
    with P = 2^m.

    Examples
    --------
    >>> sigma_delta_counts(1 + 1 / 4, 2).tolist()
    [1, 1, 1, 2]
    """
    P = 1 << int(extra_bits)
    q = int(round(target_counts * P))
    N, p = divmod(q, P)
    if p == 0:
        return np.array([N], dtype=np.int64)
    g = math.gcd(p, P)
    frames = P // g
    j = np.arange(frames, dtype=np.int64)
    return N + ((j + 1) * p) // P - (j * p) // P


@dataclass(frozen=True)
class DitheredPwm(LightModel):
    """PWM whose count is dithered across periods by first-order sigma-delta.

    Parameters
    ----------
    frequency_hz : float
        PWM frequency [Hz].
    duty : float
        Wanted mean duty [unitless, 0-1].
    counts_per_period : int
        Timer counts in one PWM period (TOP + 1 edge-aligned, TOP
        centre-aligned); one count is the smallest duty step [counts].
    extra_bits : int
        m dither bits: the duty resolves to 1 / (counts 2^m).
    on_level, off_level, edges, turn_on_delay_s, min_on_time_s, min_on_mode, ripple
        As for :class:`Pwm`.

    Notes
    -----
    For a mean count N + 1/P the light carries components at f_pwm / P and its
    harmonics, of amplitude about (2/P) / (N + 1/P) relative to the mean
    (computed here, by simulation); their depth is largest at the dimmest
    levels.
    """

    frequency_hz: float
    duty: float
    counts_per_period: int
    extra_bits: int
    on_level: float = 1.0
    off_level: float = 0.0
    edges: Edges = IDEAL
    turn_on_delay_s: float = 0.0
    min_on_time_s: float = 0.0
    min_on_mode: str = "clamp"
    ripple: Ripple | None = None

    def __post_init__(self) -> None:
        _check_fraction("duty", self.duty)
        _check_levels(self.on_level, self.off_level)
        _check_pwm_timing(self.frequency_hz, self.edges, self.turn_on_delay_s,
                          self.min_on_time_s, self.min_on_mode)
        if int(self.counts_per_period) != self.counts_per_period or self.counts_per_period < 1:
            raise SettingsError(f"counts per period must be a positive whole number, got "
                                f"{self.counts_per_period!r}")
        if int(self.extra_bits) != self.extra_bits or not (0 <= self.extra_bits <= 12):
            raise SettingsError(f"dither bits must be a whole number from 0 to 12, got "
                                f"{self.extra_bits!r}")

    def frame_counts(self) -> np.ndarray:
        """Counts of each PWM period over one pattern repetition [counts]."""
        return sigma_delta_counts(self.duty * self.counts_per_period, self.extra_bits)

    def describe(self) -> str:
        return (f"PWM {self.frequency_hz:g} Hz duty {self.duty * 100:.6g} % on "
                f"{self.counts_per_period} counts with {self.extra_bits}-bit sigma-delta dither")

    def _build_light(self) -> Light:
        T = 1.0 / self.frequency_hz
        widths = self.frame_counts() / self.counts_per_period * T
        tr = _pulse_train(T, widths, self.off_level, self.on_level, self.edges,
                          self.turn_on_delay_s, self.min_on_time_s, self.min_on_mode, 0.0)
        return Light((tr,), self.ripple, self.describe())


# --------------------------------------------------------------------------- dimming scheme
@dataclass(frozen=True)
class Drive:
    """A dimming scheme: how a dimming level becomes light.

    Parameters
    ----------
    method : str
        ``"pwm"``: duty = level; ``"analogue"``: constant current = level;
        ``"hybrid"``: analogue down to ``crossover``, then PWM at the
        crossover current with duty = level / crossover.
    frequency_hz : float
        PWM frequency [Hz].
    edges, off_level, turn_on_delay_s, min_on_time_s, min_on_mode
        As for :class:`Pwm` (off-level relative to full output).
    ripple : Ripple, optional
        Line ripple on the light (on-level and off-level alike).
    crossover : float
        Hybrid crossover level [unitless, 0-1].
    channels : int
        Channels or strings driven together; each carries 1/channels of the
        output, at duty = level.
    phase_offsets_deg : tuple of float
        Phase of each channel [degree]; default evenly spread over 360.
    counts_per_period : int, optional
        Timer counts per PWM period; the duty is rounded to whole counts
        (or dithered with ``dither_bits``). None: any duty.
    dither_bits : int
        First-order sigma-delta dither bits across PWM periods (needs
        ``counts_per_period``).
    """

    method: str = "pwm"
    frequency_hz: float = 1000.0
    edges: Edges = IDEAL
    off_level: float = 0.0
    turn_on_delay_s: float = 0.0
    min_on_time_s: float = 0.0
    min_on_mode: str = "clamp"
    ripple: Ripple | None = None
    crossover: float = 0.1
    channels: int = 1
    phase_offsets_deg: tuple[float, ...] = ()
    counts_per_period: int | None = None
    dither_bits: int = 0

    def __post_init__(self) -> None:
        if self.method not in METHODS:
            raise SettingsError(f"unknown dimming method {self.method!r}; choose one of "
                                f"{', '.join(METHODS)}")
        if self.method != "analogue":
            _check_pwm_timing(self.frequency_hz, self.edges, self.turn_on_delay_s,
                              self.min_on_time_s, self.min_on_mode)
        _check_fraction("off-level", self.off_level)
        if self.off_level >= 1.0:
            raise SettingsError("off-level must be below 1 (the full output)")
        c = _check_fraction("crossover", self.crossover)
        if self.method == "hybrid" and not (0 < c < 1):
            raise SettingsError(f"hybrid crossover must lie between 0 and 1, got {c:g}")
        if int(self.channels) != self.channels or self.channels < 1:
            raise SettingsError(f"channels must be a positive whole number, got "
                                f"{self.channels!r}")
        if self.phase_offsets_deg and len(self.phase_offsets_deg) != self.channels:
            raise SettingsError(f"{len(self.phase_offsets_deg)} phase offsets given for "
                                f"{self.channels} channels")
        if self.counts_per_period is not None and (
                int(self.counts_per_period) != self.counts_per_period
                or self.counts_per_period < 1):
            raise SettingsError(f"counts per period must be a positive whole number, got "
                                f"{self.counts_per_period!r}")
        if self.dither_bits and self.counts_per_period is None:
            raise SettingsError("dithering needs the timer counts per period "
                                "(counts_per_period)")
        if int(self.dither_bits) != self.dither_bits or not (0 <= self.dither_bits <= 12):
            raise SettingsError(f"dither bits must be a whole number from 0 to 12, got "
                                f"{self.dither_bits!r}")
        if self.channels > 1 and self.dither_bits:
            raise SettingsError("dithering of several channels is not modelled; use one channel")

    @property
    def phases_deg(self) -> tuple[float, ...]:
        """Channel phases [degree]."""
        if self.phase_offsets_deg:
            return tuple(float(p) for p in self.phase_offsets_deg)
        return tuple(360.0 * i / self.channels for i in range(self.channels))

    def with_frequency(self, frequency_hz: float) -> "Drive":
        """The same scheme at another PWM frequency."""
        return replace(self, frequency_hz=frequency_hz)

    def describe(self, *, frequency: bool = True) -> str:
        """One line naming the drive; ``frequency=False`` when a plan chooses it."""
        parts = [self.method]
        if self.method != "analogue":
            parts.append(f"{self.frequency_hz:g} Hz" if frequency else "frequency from the plan")
        if self.method == "hybrid":
            parts.append(f"crossover {self.crossover * 100:g} %")
        if self.edges.kind != "ideal":
            parts.append(self.edges.describe())
        if self.off_level:
            parts.append(f"off-level {self.off_level:g}")
        if self.turn_on_delay_s:
            parts.append(f"turn-on delay {self.turn_on_delay_s * 1e6:g} us")
        if self.min_on_time_s:
            parts.append(f"min on-time {self.min_on_time_s * 1e6:g} us ({self.min_on_mode})")
        if self.channels > 1:
            parts.append(f"{self.channels} channels at {', '.join(f'{p:g}' for p in self.phases_deg)} deg")
        if self.counts_per_period:
            parts.append(f"{self.counts_per_period} counts/period")
        if self.dither_bits:
            parts.append(f"{self.dither_bits}-bit dither")
        if self.ripple:
            parts.append(f"{self.ripple.percent:g} % {self.ripple.shape} ripple at "
                         f"{self.ripple.frequency_hz:g} Hz")
        return ", ".join(parts)

    def _pwm(self, duty: float, on_level: float) -> LightModel:
        off = self.off_level * on_level if self.method == "hybrid" else self.off_level
        off = min(off, on_level * 0.999999)
        edges, delay_s = self.edges, self.turn_on_delay_s
        min_on_s, min_on_mode = self.min_on_time_s, self.min_on_mode
        if self.dither_bits:
            assert self.counts_per_period is not None  # __post_init__ refuses dither without
            return DitheredPwm(self.frequency_hz, duty, int(self.counts_per_period),
                               int(self.dither_bits), on_level=on_level, off_level=off,
                               ripple=self.ripple, edges=edges, turn_on_delay_s=delay_s,
                               min_on_time_s=min_on_s, min_on_mode=min_on_mode)
        if self.counts_per_period:
            duty = round(duty * self.counts_per_period) / self.counts_per_period
        if self.channels == 1:
            return Pwm(self.frequency_hz, duty, on_level=on_level, off_level=off,
                       ripple=self.ripple, edges=edges, turn_on_delay_s=delay_s,
                       min_on_time_s=min_on_s, min_on_mode=min_on_mode)
        n = self.channels
        chans = tuple(Pwm(self.frequency_hz, duty, on_level=on_level / n, off_level=off / n,
                          phase_deg=p, edges=edges, turn_on_delay_s=delay_s,
                          min_on_time_s=min_on_s, min_on_mode=min_on_mode)
                      for p in self.phases_deg)
        return MultiChannel(chans, ripple=self.ripple)

    def at(self, level: float) -> LightModel:
        """The light model at a dimming level.

        Parameters
        ----------
        level : float
            Dimming level, the command (duty for PWM, current for analogue)
            [unitless, 0-1, above 0].
        """
        lv = _check_fraction("dimming level", level)
        if lv <= 0:
            raise SettingsError("dimming level must be above 0")
        if self.method == "analogue" or (self.method == "hybrid" and lv >= self.crossover):
            return ConstantCurrent(lv, self.ripple)
        if self.method == "hybrid":
            return self._pwm(lv / self.crossover, self.crossover)
        return self._pwm(lv, 1.0)


# --------------------------------------------------------------------------- from a file
_EDGE_KEYS = {f.name for f in fields(Edges)}
_RIPPLE_KEYS = {f.name for f in fields(Ripple)}
_DRIVE_KEYS = {f.name for f in fields(Drive)} - {"edges", "ripple"}


def drive_from_mapping(data: Mapping[str, Any], *, source: str = "drive description") -> Drive:
    """Build a :class:`Drive` from a mapping (a parsed TOML drive file).

    Top-level keys are :class:`Drive`'s fields (``method``, ``frequency_hz``,
    ``off_level``, ...); optional tables ``[edges]`` (``kind``, ``rise_s``,
    ``fall_s``) and ``[ripple]`` (``percent``, ``line_frequency_hz``,
    ``shape``, ``phase_deg``). A ``[drive]`` table holding all of this is
    accepted too.

    Raises
    ------
    SettingsError
        On an unknown key or an impossible value, naming it and ``source``.
    """
    d = dict(data)
    if set(d) <= {"drive", "levels"} and isinstance(d.get("drive"), Mapping):
        d = dict(d["drive"])
    d.pop("levels", None)

    def table(name: str, keys: set[str]) -> dict[str, Any] | None:
        t = d.pop(name, None)
        if t is None:
            return None
        if not isinstance(t, Mapping):
            raise SettingsError(f"{source}: [{name}] must be a table")
        unknown = sorted(set(t) - keys)
        if unknown:
            raise SettingsError(f"{source}: unknown key(s) {', '.join(unknown)} in [{name}]; "
                                f"known: {', '.join(sorted(keys))}")
        return dict(t)

    edges = table("edges", _EDGE_KEYS)
    ripple = table("ripple", _RIPPLE_KEYS)
    unknown = sorted(set(d) - _DRIVE_KEYS)
    if unknown:
        raise SettingsError(f"{source}: unknown key(s) {', '.join(unknown)}; known: "
                            f"{', '.join(sorted(_DRIVE_KEYS | {'edges', 'ripple'}))}")
    if "phase_offsets_deg" in d:
        d["phase_offsets_deg"] = tuple(float(p) for p in d["phase_offsets_deg"])
    try:
        if edges is not None:
            d["edges"] = Edges(**edges)
        if ripple is not None:
            d["ripple"] = Ripple(**ripple)
        return Drive(**d)
    except SettingsError as exc:
        raise SettingsError(f"{source}: {exc}") from None
    except TypeError as exc:
        raise SettingsError(f"{source}: {exc}") from None


__all__ = [
    "ConstantCurrent", "DitheredPwm", "Drive", "Edges", "FourierSeries", "Light", "LightModel",
    "MultiChannel", "Pwm", "Ripple", "drive_from_mapping", "sigma_delta_counts",
    "EDGE_KINDS", "METHODS", "MIN_ON_MODES", "RIPPLE_SHAPES",
]
