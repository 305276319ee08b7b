"""Piecewise trains (flickerkit.waveform) against scipy quadrature of independent formulas."""

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from flickerkit.waveform import common_frequency, pulse_train, rectified_unit
from tests.test_drive import _first_order_reference

#: Closed forms against scipy.integrate.quad of a formula written here (quad's own
#: error is ~1e-12 on these smooth pieces).
QUAD_TOL = 1e-9
QUAD = dict(limit=200, epsabs=1e-13, epsrel=1e-12)


def trapezoid_pulse(t, T, w, t_rise, t_fall):
    """0/1 gate of width w through a linear slew (full swing in t_rise, t_fall), w > t_rise:
    corners at 0, t_rise, w, w + t_fall (independent of the package: numpy.interp)."""
    u = np.mod(t, T)
    return np.interp(u, [0.0, t_rise, w, w + t_fall, T], [0.0, 1.0, 1.0, 0.0, 0.0])


def periodic_quad(fn, T, points, a=0.0, b=None):
    b = T if b is None else b
    return quad(fn, a, b, points=[p for p in points if a < p < b], **QUAD)[0]


def quad_coefficient(ref, T, k, points):
    """c_k = (1/T) int_0^T x(t) exp(-i 2 pi k t / T) dt by scipy quad."""
    w = 2 * math.pi * k / T
    re = periodic_quad(lambda s: ref(s) * math.cos(w * s), T, points)
    im = periodic_quad(lambda s: -ref(s) * math.sin(w * s), T, points)
    return complex(re, im) / T


def quad_area_above(ref, T, level, points):
    """int_0^T max(x(t) - level, 0) dt by scipy quad."""
    return periodic_quad(lambda s: max(ref(s) - level, 0.0), T, points)


def test_linear_slew_train_integrals_match_quadrature():
    # awkward numbers: 1234.56 Hz, 23 % gate, 17 us rise, 41 us fall
    f = 1234.56
    T, w, tr, tf = 1 / f, 0.23 / f, 17e-6, 41e-6
    train = pulse_train(T, np.array([w]), 0.0, 1.0, edge_kind="linear", rise_s=tr, fall_s=tf)
    corners = [0.0, tr, w, w + tf]
    ref = lambda t: float(trapezoid_pulse(t, T, w, tr, tf))  # noqa: E731

    # mean and point values
    assert train.mean == pytest.approx(periodic_quad(ref, T, corners) / T, abs=QUAD_TOL)
    t = np.linspace(0, 2 * T, 997)
    np.testing.assert_allclose(train.values(t), trapezoid_pulse(t, T, w, tr, tf), atol=1e-12)
    # complex Fourier coefficients c_k = (1/T) int x(t) exp(-i 2 pi k t / T) dt
    for k in (1, 2, 7, 31):
        assert complex(train.coefficients(np.array([k]))[0]) == pytest.approx(
            quad_coefficient(ref, T, k, corners), abs=QUAD_TOL)
    # area above a level (the flicker index numerator), exact per monotone segment
    for level in (0.05, train.mean, 0.9):
        area = quad_area_above(ref, T, level, corners + [tr * level, w + tf * (1 - level)])
        assert train.area_above(level) == pytest.approx(area, abs=QUAD_TOL * T)
    # running integral between two times that are not period-aligned
    a, b = 0.37 * T, 3.81 * T
    (wa, pa), (wb, pb) = train.cumulative(np.array([a])), train.cumulative(np.array([b]))
    pts = [c + n * T for n in range(4) for c in corners]
    assert float(((wb - wa) + (pb - pa))[0]) == pytest.approx(
        periodic_quad(ref, T, pts, a, b), abs=QUAD_TOL * T)


def test_first_order_train_coefficients_and_area_match_quadrature():
    f, duty, tau_r, tau_f = 2345.6, 0.37, 31e-6, 57e-6
    T = 1 / f
    train = pulse_train(T, np.array([duty * T]), 0.0, 1.0, edge_kind="first-order",
                        rise_s=tau_r, fall_s=tau_f)
    ref = lambda t: float(_first_order_reference(f, duty, tau_r, tau_f, np.array(t)))  # noqa: E731
    pts = [duty * T]
    for k in (1, 3, 10):
        assert complex(train.coefficients(np.array([k]))[0]) == pytest.approx(
            quad_coefficient(ref, T, k, pts), abs=QUAD_TOL)
    m = train.mean
    assert m == pytest.approx(periodic_quad(ref, T, pts) / T, abs=QUAD_TOL)
    # crossings of the mean, on the rise and on the fall, found by scipy's brentq
    w = duty * T
    up = brentq(lambda s: ref(s) - m, 1e-12 * T, w, xtol=1e-15 * T)
    down = brentq(lambda s: ref(s) - m, w, T * (1 - 1e-12), xtol=1e-15 * T)
    area = quad(lambda s: ref(s) - m, up, w, **QUAD)[0] + quad(lambda s: ref(s) - m, w, down,
                                                                **QUAD)[0]
    assert train.area_above(m) == pytest.approx(area, abs=QUAD_TOL * T)


def test_gate_pulses_merge_and_short_pulses_are_clamped_or_skipped():
    T = 1 / 987.65
    # full frames touching across the period end make steady light
    assert pulse_train(T, np.array([T, T]), 0.1, 1.0).is_constant
    assert pulse_train(T, np.array([0.0, 0.0]), 0.1, 1.0).mean == pytest.approx(0.1)
    # analytic: a dither pattern of 1,1,1,2 counts of T/100 has mean (5/4)/100 of the on-level
    tr = pulse_train(T, np.array([1, 1, 1, 2]) * T / 100, 0.0, 1.0)
    assert tr.period_s == pytest.approx(4 * T) and tr.mean == pytest.approx(0.0125, rel=1e-12)
    # a 2 us pulse under a 7 us minimum on-time: 7 us of light, or none
    assert pulse_train(T, np.array([2e-6]), 0.0, 1.0, min_on_s=7e-6).mean == pytest.approx(
        7e-6 / T, rel=1e-12)
    assert pulse_train(T, np.array([2e-6]), 0.0, 1.0, min_on_s=7e-6,
                       min_on_mode="skip").mean == 0.0


def test_rectified_sine_series_matches_quadrature():
    # |sin(pi t)| over its period 1: cosine amplitudes 2 int_0^1 |sin(pi t)| cos(2 pi n t) dt
    n, coef = rectified_unit(24)
    assert n.tolist() == list(range(1, 25))
    for i in (0, 1, 5, 23):
        c = quad_coefficient(lambda t: math.sin(math.pi * t), 1.0, int(n[i]), [])
        assert coef[i] == pytest.approx(2 * c, abs=QUAD_TOL)


def test_common_frequency():
    # analytic: 1 kHz PWM on 100 Hz ripple repeats at 100 Hz; 2000.06 Hz on 100 Hz at
    # 0.02 Hz (2000.06 / 100 = 100003 / 5000); a ratio 1/pi has no common period in reach
    assert common_frequency(1000.0, 100.0) == pytest.approx(100.0, rel=1e-12)
    assert common_frequency(2000.06, 100.0) == pytest.approx(0.02, rel=1e-9)
    assert common_frequency(1000.0, 1000.0 * math.pi) is None
