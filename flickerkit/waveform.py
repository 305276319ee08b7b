"""Piecewise periodic waveforms: the exact maths under the drive models.

A *train* is one periodic waveform made of contiguous segments, each constant,
linear (a slew-limited edge) or first-order exponential (an edge with a time
constant), delayed by a shift. Integrals of such segments against
``exp(i omega t)`` are elementary, which gives exact running integrals
(interval averages, camera exposure), exact Fourier coefficients, point values
and the exact area above a level. :func:`pulse_train` builds the train of a
gate (PWM frames, a dither pattern) seen through an edge model, a turn-on delay
and a minimum on-time, in its periodic steady state.

Pure functions on numpy arrays; no drive, capture or file here.
:mod:`flickerkit.light` sums trains into light, :mod:`flickerkit.drive`
builds them from drive settings.

Times in seconds, frequencies in hertz, angular frequencies in rad/s; levels
in the caller's light unit.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction
from functools import cached_property

import numpy as np

#: Relative tolerance when deciding that two frequencies coincide (spectral lines,
#: common period of PWM and ripple, channels at one PWM frequency).
FREQ_RTOL = 1e-9
#: Largest denominator tried when looking for a common period of two frequencies.
_MAX_DENOMINATOR = 10_000


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


def common_frequency(f1: float, f2: float) -> float | None:
    """Return the largest frequency of which both are integer multiples, or None [Hz].

    Parameters
    ----------
    f1, f2 : float
        Frequencies [Hz], above 0.

    Returns
    -------
    float or None
        ``f1 / p`` for the ratio ``f1 / f2 = p / q`` in lowest terms with q at most
        10,000 (within 1e-9), or None when there is no such ratio [Hz].

    Examples
    --------
    >>> common_frequency(1000.0, 100.0)
    100.0
    """
    ratio = Fraction(f1 / f2).limit_denominator(_MAX_DENOMINATOR)
    if ratio.numerator == 0:
        return None
    if abs(float(ratio) - f1 / f2) > FREQ_RTOL * (f1 / f2):
        return None
    return f1 / ratio.numerator


@dataclass(frozen=True, eq=False)
class Train:
    """One periodic waveform made of segments.

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
    def constant(cls, level: float, period_s: float) -> "Train":
        """Make a steady train at ``level`` with period ``period_s`` [s]."""
        one = np.ones(1)
        return cls(period_s, np.zeros(1), one * period_s, np.zeros(1, bool), one * level,
                   np.zeros(1), one)

    @cached_property
    def is_constant(self) -> bool:
        """Whether the train is steady (one level throughout)."""
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
        """Mean of the train over one period [level unit]."""
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


def pulse_train(
    frame_s: float,
    widths_s: np.ndarray,
    lo: float,
    hi: float,
    *,
    edge_kind: str = "ideal",
    rise_s: float = 0.0,
    fall_s: float = 0.0,
    delay_s: float = 0.0,
    min_on_s: float = 0.0,
    min_on_mode: str = "clamp",
    shift_s: float = 0.0,
) -> Train:
    """Train of a gate that is on for ``widths_s[j]`` from the start of frame j.

    The light pulse of each gate pulse starts ``delay_s`` after the gate's
    rising edge and ends at its falling edge; a light pulse shorter than
    ``min_on_s`` is stretched to it (``"clamp"``) or dropped (``"skip"``).
    The light then follows the commands through the edge model, in its
    periodic steady state.

    Parameters
    ----------
    frame_s : float
        Length of one frame (PWM period) [s]; the train repeats every
        ``frame_s * widths_s.size``.
    widths_s : numpy.ndarray
        Gate on-time of each frame [s].
    lo, hi : float
        Light while off and while on [light unit].
    edge_kind : str
        ``"ideal"``, ``"first-order"`` (time constants ``rise_s``, ``fall_s``)
        or ``"linear"`` (full-swing slew times ``rise_s``, ``fall_s``) [s].
    rise_s, fall_s : float
        Edge times [s].
    delay_s : float
        Turn-on delay [s].
    min_on_s : float
        Shortest light pulse [s].
    min_on_mode : str
        ``"clamp"`` or ``"skip"``.
    shift_s : float
        Delay of the whole train [s].

    Returns
    -------
    Train
        The light's train over one repetition.
    """
    n = widths_s.size
    period = frame_s * n
    starts = np.arange(n) * frame_s
    ends = starts + np.minimum(widths_s, frame_s)
    on = widths_s > 0
    starts, ends = starts[on], ends[on]
    if starts.size == 0:
        return Train.constant(lo, period)
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
            return Train.constant(hi, period)
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
        return Train.constant(lo, period)
    # (target, duration) pieces from 0 to the period
    bounds = np.concatenate([[0.0], np.column_stack([ls, le]).ravel(), [period]])
    dur = np.diff(bounds)
    target = np.tile([lo, hi], ls.size)
    target = np.append(target, lo)
    keep = dur > tol
    target, dur = target[keep], dur[keep]
    if target.size == 1:
        return Train.constant(float(target[0]), period)
    feature = float(dur.min())
    t0s, lens, isexp, aa, bb, taus = _edge_segments(target, dur, lo, hi, edge_kind,
                                                     rise_s, fall_s)
    return Train(period, t0s, lens, isexp, aa, bb, taus, shift_s=shift_s + origin,
                  feature_s=feature)


def _edge_segments(target: np.ndarray, dur: np.ndarray, lo: float, hi: float, kind: str,
                   rise_s: float, fall_s: float) -> tuple[np.ndarray, ...]:
    """Segments of a two-level command sequence through the edge model, in steady state."""
    n = target.size
    rising = target == hi
    if kind == "ideal" or (rise_s == 0 and fall_s == 0):
        t0 = np.concatenate([[0.0], np.cumsum(dur)[:-1]])
        return t0, dur, np.zeros(n, bool), target.astype(float), np.zeros(n), np.ones(n)
    if kind == "first-order":
        tau = np.where(rising, rise_s, fall_s)
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
        b = np.where(isexp, starts - target, 0.0)
        return t0, dur, isexp, target.astype(float), b, np.where(isexp, tau, 1.0)
    # linear slew: rise at (hi - lo) / rise_s until hi, fall likewise until lo
    sr = (hi - lo) / rise_s if rise_s > 0 else math.inf
    sf = (hi - lo) / fall_s if fall_s > 0 else math.inf
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
    segs: list[tuple[float, float, float, float]] = []  # (start, length, a, b) of a + b v
    t = 0.0
    for d, r in zip(dur, rising):
        y, s = (hi, sr) if r else (lo, -sf)
        reach = abs(y - x) / abs(s) if math.isfinite(s) else 0.0
        if reach >= d:
            segs.append((t, d, x, s))
            x = x + s * d
        else:
            if reach > 0:
                segs.append((t, reach, x, s))
            segs.append((t + reach, d - reach, y, 0.0))
            x = y
        t += d
    t0s, lens, aa, bb = (np.array(c) for c in zip(*segs))
    m = len(segs)
    return t0s, lens, np.zeros(m, bool), aa, bb, np.ones(m)



def rectified_unit(n_harm: int) -> tuple[np.ndarray, np.ndarray]:
    """Zero-mean full-wave rectified sine |sin(pi f t)| as cosine harmonics of f.

    Parameters
    ----------
    n_harm : int
        Harmonics of f kept.

    Returns
    -------
    tuple of numpy.ndarray
        Harmonic numbers 1..n_harm and their complex cosine amplitudes
        ``-(4 / pi) / (4 n^2 - 1)`` [unitless].
    """
    n = np.arange(1, n_harm + 1)
    return n, -(4.0 / np.pi) / (4.0 * n * n - 1.0) + 0j
