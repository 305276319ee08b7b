"""Fundamental frequency of PWM (1-99 % duty), sines, rectified sines, noisy and steady light."""

import numpy as np
import pytest

from flickerkit.periodicity import fundamental_frequency
from flickerkit.spectrum import modulation_spectrum

from .synth import pwm, rectified, sine

#: Frequency estimates within 0.05 % (common practice for bench counters, no source).
REL_TOL = 5e-4


@pytest.mark.parametrize("duty", [0.01, 0.05, 0.3, 0.5, 0.7, 0.95, 0.99])
@pytest.mark.parametrize("freq", [97.3, 1234.5])
def test_pwm_duty_range(freq, duty):
    fs = 100_000.0
    x = pwm(freq, duty, 0.0, fs, 0.5)
    p = fundamental_frequency(x, fs)
    assert p.frequency_hz == pytest.approx(freq, rel=REL_TOL)
    assert p.periods == int(0.5 * freq + 1e-6) or p.periods == int(0.5 * freq) - 1


def test_sine_and_rectified():
    fs = 20_000.0
    assert fundamental_frequency(sine(100.0, 0.1, fs, 1.0), fs).frequency_hz == pytest.approx(
        100.0, rel=REL_TOL)
    # analytic: a full-wave rectified 60 Hz sine repeats at 120 Hz
    assert fundamental_frequency(rectified(60.0, 0.0, fs, 1.0), fs).frequency_hz == pytest.approx(
        120.0, rel=REL_TOL)


def test_noisy_pwm_is_found():
    rng = np.random.default_rng(1)
    fs = 50_000.0
    x = pwm(777.0, 0.2, 0.1, fs, 1.0) + 0.3 * rng.standard_normal(int(fs))
    assert fundamental_frequency(x, fs).frequency_hz == pytest.approx(777.0, rel=REL_TOL)


def test_steady_light_with_noise_has_no_periodic_modulation():
    rng = np.random.default_rng(2)
    p = fundamental_frequency(1.0 + 0.01 * rng.standard_normal(100_000), 20_000.0)
    assert p.frequency_hz is None
    assert "no periodic modulation" in p.reason


def test_constant_signal():
    p = fundamental_frequency(np.ones(1000), 1000.0)
    assert p.frequency_hz is None and p.periods == 0


def test_whole_period_spectrum_has_no_leakage():
    # analytic: C_k = 2|sin(pi k D)|/(pi k D) for continuous PWM; interval averaging by the
    # detector multiplies each by sinc(k f / fs), which is included here.
    fs, f, D = 200_000.0, 1000.0, 0.3
    x = pwm(f, D, 0.0, fs, 0.2037)
    p = fundamental_frequency(x, fs)
    s = modulation_spectrum(x, fs, p)
    bins = s.harmonic_bins()[:5]
    k = np.arange(1, 6)
    expected = 2 * np.abs(np.sin(np.pi * k * D)) / (np.pi * k * D) * np.sinc(k * f / fs)
    assert s.window == "rectangular"
    np.testing.assert_allclose(s.amplitudes[bins], expected, rtol=2e-3)
    np.testing.assert_allclose(s.frequencies_hz[bins], f * k, rtol=REL_TOL)


def test_period_is_precise_enough_for_band_edges():
    # 70-200 periods of a sine or PWM at random sample rates: the period must be within
    # 1 ppm (analytic: the frequency the light was made with), far inside the 20 ppm edge
    # tolerance, so a component on a band edge is found on it every time
    rng = np.random.default_rng(90)
    for _ in range(12):
        fs = float(rng.uniform(20e3, 120e3))
        f = float(rng.choice([80.0, 90.0, 1234.56]))
        d = float(rng.uniform(70, 200)) / f
        x = (sine(f, 0.2, fs, d, phase=float(rng.uniform(0, 6)))
             if f < 100 else pwm(f, 0.3, 0.1, fs, d, phase=float(rng.uniform())))
        p = fundamental_frequency(x, fs)
        assert abs(p.frequency_hz / f - 1) < 1e-6


@pytest.mark.parametrize("seed", range(4))
def test_bounded_minimiser_agrees_with_scipy(seed):
    # reference: scipy.optimize.minimize_scalar(method="bounded"), the same Brent procedure
    from scipy.optimize import minimize_scalar

    from flickerkit.periodicity import _minimise_bounded

    rng = np.random.default_rng(seed)
    c, s = rng.uniform(0.5, 1.5), rng.uniform(0.1, 10.0)
    funcs = [lambda x: s * (x - c) ** 2 + 0.3 * np.cos(3 * x),
             lambda x: (x - c) ** 4 + abs(x - c),
             lambda x: -np.exp(-((x - c) / 0.05) ** 2)]
    for f in funcs:
        ref = minimize_scalar(f, bounds=(0.0, 2.0), method="bounded",
                              options={"xatol": 1e-10})
        x, fx = _minimise_bounded(f, 0.0, 2.0, 1e-10)
        assert x == pytest.approx(ref.x, abs=1e-7)  # both stop within 1.5e-8 |x| + xatol
        assert fx <= ref.fun + 1e-7  # slopes here are below 1: f within 1e-7 of its minimum
