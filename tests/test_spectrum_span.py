"""Choice of the whole-period span by FFT cost: spans stay whole periods, cheap at any fundamental,
and give the analytic harmonic amplitudes."""

import numpy as np
import pytest
from scipy import fft

from flickerkit.fftlength import fft_cost, next_fast_len
from flickerkit.periodicity import Periodicity
from flickerkit.spectrum import averaged_spectrum, modulation_spectrum, whole_period_span

#: Harmonic amplitudes within 0.1 %: a span of round(p T) samples is off whole periods by at
#: most half a sample, which leaves harmonic h off its bin by h / (2 T) and lowers it by
#: sinc of that (analytic: 7e-4 at h = 8, T = 200).
AMP_RTOL = 1e-3
#: Modelled cost of the chosen span at most this many fast-length samples per sample of the
#: longest span (a Bluestein length costs 10 in the same model).
COST_BOUND = 2.0


def _factors(n: int) -> list[int]:
    out, d = [], 2
    while d * d <= n:
        while n % d == 0:
            out.append(d)
            n //= d
        d += 1
    return out + ([n] if n > 1 else [])


def _period(fs: float, f: float, n: int) -> Periodicity:
    T = fs / f
    return Periodicity(f, T, int(np.floor(n / T + 0.01)), 1.0)


def test_fast_lengths_are_those_of_scipy():
    # reference: scipy.fft.next_fast_len(n, real=True) == n exactly for lengths of factors 2, 3, 5
    rng = np.random.default_rng(13)
    lengths = np.concatenate([np.arange(1, 5000), rng.integers(1, 2**31, 3000),
                              [10_000_000, 9_953_280, 2**23, 5**10]])
    fast = np.array([fft.next_fast_len(int(n), real=True) == n for n in lengths])
    np.testing.assert_array_equal(fft_cost(lengths) == lengths, fast)
    assert [next_fast_len(int(n)) for n in lengths] == [
        fft.next_fast_len(int(n), real=True) for n in lengths]


@pytest.mark.parametrize("n", [2**10 * 7 * 7 * 199, 2**12 * 23 * 101, 2**8 * 27 * 37 * 37,
                               8 * 1_249_939, 2**10 * 9767, 9_999_991, 5 * 11**6])
def test_cost_model_follows_the_factors(n):
    # the model as documented: 1 + 0.01 * (sum of prime factors > 5) per sample when the
    # largest prime factor squared is at most n, else 10 (Bluestein); factors by trial division
    f = _factors(n)
    expected = n * (10.0 if max(f) ** 2 > n else 1.0 + 0.01 * sum(q for q in f if q > 5))
    assert fft_cost([n])[0] == pytest.approx(expected, rel=1e-12)


def test_exact_fast_span_is_kept():
    # 1 kHz at 1 MS/s: 1e7 samples are 10,000 whole periods and 1e7 = 2^7 5^7 (analytic)
    assert whole_period_span(10_000_000, _period(1e6, 1000.0, 10_000_000)) == (10_000_000, 10_000)


#: 1234.5 Hz and 1234.56 Hz (issue 13) and 24 seeded random fundamentals [Hz]
AWKWARD_HZ = [1234.5, 1234.56, *np.random.default_rng(2026).uniform(50, 20_000, 24)]


@pytest.mark.parametrize("f", AWKWARD_HZ)
def test_span_is_whole_periods_and_cheap(f):
    n = 10_000_000
    period = _period(1e6, f, n)
    longest, p_max = whole_period_span(n, period, fast=False)
    length, p = whole_period_span(n, period)
    assert abs(length - p * period.period_samples) <= 0.5
    assert p_max / 2 <= p <= p_max and length <= n
    assert fft_cost([length])[0] <= COST_BOUND * longest
    assert fft_cost([longest])[0] >= fft_cost([length])[0]


def _harmonic_signal(f: float, fs: float, n: int, rng) -> tuple[np.ndarray, np.ndarray]:
    a = rng.uniform(0.02, 0.3, 8)
    t = np.arange(n) / fs
    x = np.ones(n)
    for h, (ah, ph) in enumerate(zip(a, rng.uniform(0, 2 * np.pi, 8)), start=1):
        x += ah * np.cos(2 * np.pi * h * f * t + ph)
    return x, a


@pytest.mark.parametrize("seed", range(6))
def test_cheap_span_gives_the_analytic_harmonics(seed):
    # analytic: 1 + sum a_h cos(2 pi h f t + phi_h) has C_h = a_h
    rng = np.random.default_rng(seed)
    fs, f = 1e6, float(rng.uniform(200, 5000))
    n = int(rng.integers(300_000, 400_000))
    x, a = _harmonic_signal(f, fs, n, rng)
    period = _period(fs, f, n)
    s = modulation_spectrum(x, fs, period)
    assert (s.n_samples, s.whole_periods) == whole_period_span(n, period)
    np.testing.assert_allclose(s.amplitudes[s.harmonic_bins()[:8]], a, rtol=AMP_RTOL)
    np.testing.assert_allclose(s.frequencies_hz[s.harmonic_bins()[:8]], f * np.arange(1, 9),
                               rtol=1e-6)


def test_averaged_windows_are_chosen_by_cost_too():
    # analytic as above, through averaged whole-period windows at an awkward fundamental
    rng = np.random.default_rng(7)
    fs, f, n = 1e6, 1234.56, 2_000_000
    x, a = _harmonic_signal(f, fs, n, rng)
    s = averaged_spectrum(x, fs, _period(fs, f, n), window_samples=2**18)
    T = fs / f
    assert abs(s.n_samples - s.whole_periods * T) <= 0.5
    assert fft_cost([s.n_samples])[0] <= COST_BOUND * s.n_samples
    np.testing.assert_allclose(s.amplitudes[s.harmonic_bins()[:8]], a, rtol=AMP_RTOL)


@pytest.mark.parametrize("seed", range(8))
def test_same_light_many_captures_same_components(seed):
    # the same 1234.56 Hz PWM (30 % duty, off 0) captured with a random start, length and rate;
    # analytic: C_k = 2 |sin(pi k D)| / (pi k D) * sinc(k f / fs) for interval-averaged samples
    # (as in test_periodicity), and SVM = C_1 / T(f_1), the only component in 80 Hz - 2 kHz
    from flickerkit.assess import assess
    from flickerkit.capture import make_capture
    from flickerkit.svm import svm_from_components

    from .synth import pwm

    rng = np.random.default_rng(100 + seed)
    f, D = 1234.56, 0.3
    fs = float(rng.uniform(150_000, 250_000))
    x = pwm(f, D, 0.0, fs, float(rng.uniform(0.3, 0.6)), phase=float(rng.uniform(0, 1)))
    a = assess(make_capture(x, fs))
    k = np.arange(1, 6)
    expected = 2 * np.abs(np.sin(np.pi * k * D)) / (np.pi * k * D) * np.sinc(k * f / fs)
    np.testing.assert_allclose([h.amplitude for h in a.harmonics[:5]], expected, rtol=2e-3)
    assert a.svm.value == pytest.approx(svm_from_components([f], [expected[0]]), rel=2e-3)
    assert abs(a.spectrum.n_samples - a.spectrum.whole_periods * fs / a.frequency_hz) <= 0.5 + 1e-6


def test_fft_cost_is_the_same_asked_at_once_in_pieces_and_again():
    """The costs kept between calls are the costs computed (analytic values of the model:
    19,683 = 3^9 and 20,000 = 2^5 5^4 are fast; 19,992 = 2^3 3 7^2 17 costs
    1 + 0.01 (7 + 7 + 17); 19,999 = 7 x 2,857 goes through Bluestein's algorithm, 10)."""
    from flickerkit import fftlength

    lengths = np.arange(1, 20_001)
    whole = fft_cost(lengths)  # more than the kept requests hold: computed directly
    for _ in range(2):  # first asked, then answered from what was kept
        pieces = np.concatenate([fft_cost(lengths[i:i + 1000]) for i in range(0, 20_000, 1000)])
        np.testing.assert_array_equal(pieces, whole)
    fftlength._COSTS.clear()
    assert fft_cost([19_683, 20_000, 19_992, 19_999]).tolist() == [
        19_683.0, 20_000.0, 19_992 * (1 + 0.01 * 31), 19_999 * 10.0]
