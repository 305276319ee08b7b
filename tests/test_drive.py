"""Drive models: exact Fourier series and interval-averaged captures against analytic results."""

import numpy as np
import pytest
from scipy.integrate import trapezoid  # numpy >= 2 only has np.trapezoid; the floor is 1.24

from flickerkit.assess import assess
from flickerkit.drive import (
    ConstantCurrent, DitheredPwm, Drive, Edges, MultiChannel, Pwm, sigma_delta_counts,
)
from flickerkit.drivefile import drive_from_mapping
from flickerkit.errors import SettingsError
from flickerkit.light import Ripple

#: Closed-form series against closed-form series: floating-point agreement.
EXACT = 1e-10
#: Sampled DFT against the analytic alias sum truncated at |j| <= 4000 (tail ~ 1e-8).
ALIAS_SUM_TOL = 1e-6
#: Percent flicker / flicker index of an interval-averaged capture whose edges
#: fall between samples (one edge sample is a partial value): about 1/samples per period.
SAMPLED_REL = 0.01
#: Fundamental found by the shared period finder on a modelled capture of 64 periods:
#: sharp PWM edges give ~1e-6, a smooth sine ~3e-5 (measured on this code; the finder's own limit).
PERIOD_RTOL = 1e-5
#: Harmonic amplitudes of a capture at 1000 samples per period against the exact series.
ALIAS_REL = 5e-3
SMOOTH_PERIOD_RTOL = 1e-4


def analytic_pwm_c(k, duty):
    """Two-sided c_k of a 0/1 pulse on [0, D T) (analytic).

    c_k = (1/(pi k)) sin(pi k D) exp(-i pi k D).
    """
    k = np.asarray(k, float)
    return np.sin(np.pi * k * duty) / (np.pi * k) * np.exp(-1j * np.pi * k * duty)


@pytest.mark.parametrize("duty", [0.5, 0.25, 0.1, 0.01, 0.9])
def test_pwm_fourier_coefficients_analytic(duty):
    # analytic: C_k = 2 |sin(pi k D)| / (pi k D) relative to the mean (Fourier series of 0/1 PWM)
    fs = Pwm(1000.0, duty).fourier_series(40_000.0)
    k = np.round(fs.frequencies_hz / 1000.0)
    expected = 2 * np.abs(np.sin(np.pi * k * duty)) / (np.pi * k * duty)
    np.testing.assert_allclose(fs.amplitudes, expected, rtol=EXACT, atol=EXACT)
    np.testing.assert_allclose(np.abs(fs.frequencies_hz - k * 1000.0), 0, atol=1e-6)
    assert fs.mean == pytest.approx(duty, rel=EXACT)
    # phases of the cosine series: arg c_k = -pi k D (mod pi where sin changes sign)
    c = analytic_pwm_c(k, duty)
    np.testing.assert_allclose(np.cos(fs.phases_rad - np.angle(c)), 1.0, atol=1e-9)


@pytest.mark.parametrize("duty,m", [(0.25, 200), (0.013, 128), (0.5, 64)])
def test_sampled_capture_equals_interval_average_of_analytic_series(duty, m):
    # analytic: averaging e^{i w t} over [n D, (n+1) D] gives e^{i w n D} e^{i w D/2} sinc;
    # harmonics k + j M alias onto bin k; the sampled DFT must equal that sum
    f = 1000.0
    cap = Pwm(f, duty, phase_deg=0.0).capture(sample_rate_hz=m * f, duration_s=4 / f)
    x = cap.samples
    n = x.size
    X = np.fft.rfft(x) / n
    js = np.arange(-4000, 4001)
    for k in range(1, 6):
        kk = k + js * (m * 4) / 4  # harmonic index of the alias, in PWM harmonics
        kk = kk[kk != 0]
        c = analytic_pwm_c(kk, duty) * np.exp(1j * np.pi * kk / m) * np.sinc(kk / m)
        assert X[4 * k] == pytest.approx(c.sum(), abs=ALIAS_SUM_TOL)
    assert X[0].real == pytest.approx(duty, abs=1e-12)  # the mean is exact


def _first_order_reference(f, duty, tau_r, tau_f, t):
    """Independent steady state of a first-order light, by stepping 400 periods (analytic ODE)."""
    T = 1 / f
    w = duty * T
    x = 0.0
    for _ in range(400):
        x = 1 + (x - 1) * np.exp(-w / tau_r)
        x = x * np.exp(-(T - w) / tau_f)
    u = np.mod(t, T)
    on = u < w
    top = 1 + (x - 1) * np.exp(-w / tau_r)
    return np.where(on, 1 + (x - 1) * np.exp(-u / tau_r), top * np.exp(-(u - w) / tau_f))


def test_first_order_edges_values_and_interval_means():
    f, duty, tr, tf = 2000.0, 0.3, 60e-6, 90e-6
    model = Pwm(f, duty, edges=Edges("first-order", tr, tf))
    t = np.linspace(0, 3 / f, 3001)
    np.testing.assert_allclose(model.light().values(t), _first_order_reference(f, duty, tr, tf, t),
                               atol=1e-9)
    # interval means against a fine trapezoid integral of the independent formula
    fs = 37_000.0  # not a multiple of f: edges fall inside sample intervals
    cap = model.capture(sample_rate_hz=fs, duration_s=0.002)
    sub = np.linspace(0, 1, 4001)
    for i in (0, 5, 17, 40, 73):
        tt = (i + sub) / fs
        ref = trapezoid(_first_order_reference(f, duty, tr, tf, tt), tt) * fs
        assert cap.samples[i] == pytest.approx(ref, abs=1e-7)


def test_first_order_mean_gains_fall_and_loses_rise():
    # analytic (full settling): mean = D + (tau_f - tau_r) f
    f, d, tr, tf = 500.0, 0.4, 20e-6, 50e-6
    assert Pwm(f, d, edges=Edges("first-order", tr, tf)).mean == pytest.approx(
        d + (tf - tr) * f, rel=1e-9)


def test_linear_slew_makes_a_triangle_when_the_pulse_is_short():
    # analytic: rise and fall at slope 1/t; a pulse w < t peaks at w/t, area w^2/t
    f, t_slew = 1000.0, 20e-6
    w = 5e-6
    model = Pwm(f, w * f, edges=Edges("linear", t_slew, t_slew))
    lo, hi = model.light().extremes()
    assert hi == pytest.approx(w / t_slew, rel=1e-12)
    assert model.mean == pytest.approx(w * w / t_slew * f, rel=1e-12)


def test_delay_and_minimum_on_time():
    f = 1000.0
    # analytic: the delay shortens the light pulse by t_d
    assert Pwm(f, 0.2, turn_on_delay_s=30e-6).mean == pytest.approx(0.2 - 30e-6 * f, rel=1e-12)
    # a 1 us pulse with a 5 us minimum: stretched to 5 us, or not made
    assert Pwm(f, 0.001, min_on_time_s=5e-6).mean == pytest.approx(0.005, rel=1e-12)
    assert Pwm(f, 0.001, min_on_time_s=5e-6, min_on_mode="skip").mean == 0.0


def test_off_level_through_assess():
    # analytic (percent flicker and IEC 60050-845 flicker index of the waveform, peak-normalised):
    # PF = 100 (1-b)/(1+b),
    # FI = D(1-D)(1-b) / (b + D(1-b)); PWM D = 0.1, b = 0.2: 66.6667 %, 0.257143
    a = assess(Pwm(1234.5, 0.1, off_level=0.2).capture())
    assert a.percent_flicker == pytest.approx(66.6667, rel=SAMPLED_REL)
    assert a.flicker_index == pytest.approx(0.257143, rel=SAMPLED_REL)
    assert a.frequency_hz == pytest.approx(1234.5, rel=PERIOD_RTOL)


@pytest.mark.parametrize("duty", [0.5, 0.1, 0.02])
def test_capture_assessed_like_a_measurement(duty):
    # analytic: 0/1 PWM has PF 100 %, FI = 1 - D; harmonics C_k as above
    model = Pwm(777.7, duty)
    a = assess(model.capture(sample_rate_hz=777.7 * 1000))
    assert a.percent_flicker == pytest.approx(100.0, rel=1e-9)
    assert a.flicker_index == pytest.approx(1 - duty, rel=SAMPLED_REL)
    assert a.frequency_hz == pytest.approx(777.7, rel=PERIOD_RTOL)
    assert not [w for w in a.warnings if "period" in w and "holds" in w]
    fs = model.fourier_series(5 * 777.7 + 1)
    exact = dict(zip(np.round(fs.frequencies_hz / 777.7).astype(int),
                     fs.interval_averaged(a.sample_rate_hz)))
    # aliasing of harmonics near 1000 f adds about C_1000 ~ 1e-3 relative
    for h in a.harmonics[:5]:
        assert h.amplitude == pytest.approx(exact.get(h.order, 0.0),
                                            abs=ALIAS_REL * fs.amplitudes[0])


def test_two_channels_at_180_degrees_give_steady_light():
    # analytic: two 50 % pulses half a period apart cover the period exactly once
    m = MultiChannel((Pwm(1000.0, 0.5, on_level=0.5), Pwm(1000.0, 0.5, on_level=0.5,
                                                           phase_deg=180.0)))
    assert m.modulation_percent() == pytest.approx(0.0, abs=1e-9)
    assert np.all(m.fourier_series(20_000.0).amplitudes < 1e-12)
    x = m.capture(sample_rate_hz=123_456.0, duration_s=0.01).samples
    np.testing.assert_allclose(x, 0.5, atol=1e-12)
    # equal linear slews: one string's fall mirrors the other's rise, so the sum stays steady
    e = Edges("linear", 50e-6, 50e-6)
    m2 = MultiChannel((Pwm(1000.0, 0.5, on_level=0.5, edges=e),
                       Pwm(1000.0, 0.5, on_level=0.5, edges=e, phase_deg=180.0)))
    assert m2.modulation_percent() == pytest.approx(0.0, abs=1e-9)
    # a Drive with two channels spreads them at 0 and 180 degrees by default
    assert Drive(channels=2).at(0.5).modulation_percent() == pytest.approx(0.0, abs=1e-9)


@pytest.mark.parametrize("n_count,amp_pct,frame_mod_pct", [
    (1, 11.8, 33), (4, 3.1, 11), (16, 0.78, 3), (100, 0.12, 0.5)])
def test_dither_subharmonics(n_count, amp_pct, frame_mod_pct):
    # analytic, first-order sigma-delta dither (4 dither bits, P = 16): each component at f/P
    # multiples has amplitude (2/P)/(N + 1/P); frame-average modulation 1/(2N+1)
    P, counts, f = 16, 1000, 1000.0
    model = DitheredPwm(f, (n_count + 1 / P) / counts, counts, 4)
    fs = model.fourier_series(5 * f / P + 1)
    analytic = (2 / P) / (n_count + 1 / P)
    assert fs.frequencies_hz[0] == pytest.approx(f / P)
    np.testing.assert_allclose(fs.amplitudes[:5], analytic, rtol=1e-4)  # sinc of a 1-count pulse
    assert 100 * analytic == pytest.approx(amp_pct, abs=0.5 * 10 ** np.floor(np.log10(amp_pct) - 1))
    means = model.light().interval_means(np.arange(P + 1) / f)
    mod = 100 * (means.max() - means.min()) / (means.max() + means.min())
    assert mod == pytest.approx(100 / (2 * n_count + 1), rel=1e-9)
    assert mod == pytest.approx(frame_mod_pct, rel=0.12)  # figures rounded to 1-2 digits


def test_sigma_delta_pattern():
    # first-order sigma-delta with the accumulator from 0 (analytic): p/P ones spread evenly
    assert sigma_delta_counts(3 + 3 / 8, 3).tolist() == [3, 3, 4, 3, 3, 4, 3, 4]
    assert sigma_delta_counts(5.0, 4).tolist() == [5]
    assert sigma_delta_counts(2 + 8 / 16, 4).tolist() == [2, 3]


def test_ripple_on_constant_current_and_on_pwm():
    # the ripple's own percent flicker is as given; a sine ripple r at 100 Hz has C = r
    cc = ConstantCurrent(0.4, Ripple(12.0, 50.0))
    assert cc.modulation_percent() == pytest.approx(12.0, rel=1e-9)
    fs = cc.fourier_series()
    assert fs.frequencies_hz.tolist() == [100.0]
    assert fs.amplitudes[0] == pytest.approx(0.12, rel=1e-12)
    a = assess(cc.capture())
    assert a.percent_flicker == pytest.approx(12.0, rel=1e-3)
    assert a.frequency_hz == pytest.approx(100.0, rel=SMOOTH_PERIOD_RTOL)
    rect = ConstantCurrent(1.0, Ripple(30.0, 60.0, shape="rectified"))
    assert rect.modulation_percent() == pytest.approx(30.0, rel=1e-3)
    assert rect.fundamental_hz == 120.0
    # product theorem (analytic): PWM x (1 + r cos) has lines at k f +- 100 Hz of C_k r / 2
    p = Pwm(1000.0, 0.5, ripple=Ripple(10.0, 50.0))
    s = p.fourier_series(1200.0)
    got = dict(zip(np.round(s.frequencies_hz, 6), s.amplitudes))
    c1 = 4 / np.pi
    assert got[1100.0] == pytest.approx(c1 * 0.1 / 2, rel=1e-12)
    assert got[900.0] == pytest.approx(c1 * 0.1 / 2, rel=1e-12)
    assert got[100.0] == pytest.approx(0.1, rel=1e-12)
    assert p.fundamental_hz == 100.0  # common period of 1 kHz PWM and 100 Hz ripple
    a = assess(p.capture())
    # the shared period finder takes the first strong autocorrelation peak (the 1 ms PWM
    # period), so compare the depth, which does not depend on the period chosen
    assert a.percent_flicker == pytest.approx(p.modulation_percent(), rel=1e-6)


def test_drive_levels():
    hyb = Drive(method="hybrid", crossover=0.2, frequency_hz=2000.0)
    assert isinstance(hyb.at(0.5), ConstantCurrent)
    low = hyb.at(0.05)
    assert isinstance(low, Pwm) and low.duty == pytest.approx(0.25) and low.on_level == 0.2
    assert low.mean == pytest.approx(0.05)
    q = Drive(counts_per_period=256).at(0.3)
    assert q.duty == round(0.3 * 256) / 256
    d = Drive(counts_per_period=1000, dither_bits=4).at(0.0010625)
    assert isinstance(d, DitheredPwm) and d.mean == pytest.approx(0.0010625, rel=1e-9)


@pytest.mark.parametrize("make,match", [
    (lambda: Pwm(1000.0, 1.5), "duty must be from 0 to 1"),
    (lambda: Pwm(-5.0, 0.5), "PWM frequency"),
    (lambda: Pwm(1000.0, 0.5, edges=Edges("linear", 2e-3, 0)), "not shorter than the PWM period"),
    (lambda: Pwm(1000.0, 0.5, min_on_time_s=1e-3), "minimum on-time"),
    (lambda: Edges("smooth"), "unknown edge kind"),
    (lambda: Pwm(1000.0, 0.5, off_level=1.0), "off-level"),
    (lambda: Ripple(120.0), "below 100"),
    (lambda: Drive(method="pulse"), "unknown dimming method"),
    (lambda: Drive(dither_bits=3), "counts_per_period"),
    (lambda: Drive().at(0.0), "above 0"),
    # not numbers: one message, not a ValueError or TypeError from int()
    (lambda: Drive(counts_per_period="1000"), "counts per period must be a positive whole"),
    (lambda: Drive(channels=None), "channels must be a positive whole number"),
    (lambda: DitheredPwm(1000.0, 0.5, 100, "3"), "dither bits must be a whole number"),
    (lambda: Drive(channels=float("nan")), "channels must be a positive whole number"),
])
def test_bad_input(make, match):
    with pytest.raises(SettingsError, match=match):
        make()


def test_drive_from_mapping():
    d = drive_from_mapping({"method": "pwm", "frequency_hz": 2500,
                            "edges": {"kind": "linear", "rise_s": 1e-6, "fall_s": 2e-6},
                            "ripple": {"percent": 5, "shape": "rectified"}})
    assert d.frequency_hz == 2500 and d.edges.kind == "linear" and d.ripple.percent == 5
    with pytest.raises(SettingsError, match="unknown key.*frequency"):
        drive_from_mapping({"frequency": 1000}, source="x.toml")
    with pytest.raises(SettingsError, match=r"x.toml: .*\[edges\]"):
        drive_from_mapping({"edges": {"rise": 1}}, source="x.toml")
