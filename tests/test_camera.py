"""Camera banding: the analytic table of reference/camera_banding.csv and its closed form."""

import numpy as np
import pytest

from flickerkit.camera import Camera, banding, beat_frequency, suggest_frequencies
from flickerkit.drive import Edges, Pwm
from flickerkit.errors import SettingsError

from .refdata import rows


@pytest.mark.parametrize("row", rows("camera_banding.csv"),
                         ids=lambda r: f"{r['frequency_hz']}-{r['exposure_s']}")
def test_band_contrast_table(row):
    # reference/camera_banding.csv (analytic: running mean of the PWM over the exposure), D = 10 %,
    # within the precision printed there (half a unit of its last digit)
    f, t = float(row["frequency_hz"]), float(row["exposure_s"])
    fps = 30.0 if t <= 1 / 30 else 1 / t
    b = banding(Pwm(f, 0.1), Camera(fps, t))
    assert 100 * b.contrast == pytest.approx(float(row["contrast_percent"]),
                                             abs=float(row["precision_percent"]))


def closed_form(f, d, t):
    """Exact Michelson contrast of 0/1 PWM under a window T (analytic, f T = n + r)."""
    ft = f * t
    n, r = np.floor(ft), ft - np.floor(ft)
    smin = n * d + max(0.0, r + d - 1)
    smax = n * d + min(r, d)
    return (smax - smin) / (smax + smin)


@pytest.mark.parametrize("f,d,t", [(1234.5, 0.3, 1 / 97), (830.0, 0.05, 1 / 500),
                                   (4100.0, 0.7, 1 / 3000), (300.0, 0.5, 1 / 60)])
def test_contrast_equals_closed_form(f, d, t):
    b = banding(Pwm(f, d), Camera(1 / t / 1.5, t))
    assert b.contrast == pytest.approx(closed_form(f, d, t), rel=1e-9, abs=1e-12)
    # analytic, simplified form of the peak-to-peak part: min(r, 1-r, D, 1-D) / (f T)
    r = f * t - np.floor(f * t)
    light = Pwm(f, d)
    assert b.depth * light.mean == pytest.approx(min(r, 1 - r, d, 1 - d) / (f * t), rel=1e-9)


def test_beat_and_bands():
    # analytic: bands roll at fps * dist(f/fps, integer): 1 kHz at 30 fps -> 10 band periods/s
    assert beat_frequency(1000.0, 30.0) == pytest.approx(10.0)
    assert beat_frequency(1200.0, 24.0) == pytest.approx(0.0)
    b = banding(Pwm(1000.0, 0.5), Camera(30.0, 1 / 120, readout_s=0.02, rows=1000))
    assert b.bands_per_frame == pytest.approx(20.0)  # f T_readout
    assert b.rows_per_band == pytest.approx(50.0)  # 1 / (f t_line)


def test_edges_soften_bands():
    sharp = banding(Pwm(1000.0, 0.1), Camera(30.0, 1 / 4000)).contrast
    soft = banding(Pwm(1000.0, 0.1, edges=Edges("first-order", 100e-6, 100e-6)),
                   Camera(30.0, 1 / 4000)).contrast
    assert soft < sharp


def test_suggestions_avoid_bands():
    cams = [Camera(fps, 1 / (2 * fps)) for fps in (24, 25, 30, 50, 60)]
    out = suggest_frequencies(lambda f: Pwm(f, 0.1), cams, 1250.0, 20_000.0)
    # analytic: multiples of lcm(24, 25, 30, 50, 60, 48, 50, 60, 100, 120) = 1200 Hz give
    # whole periods in every exposure
    assert out[0].frequency_hz == pytest.approx(2400.0)
    for s in out:
        assert s.worst_contrast == pytest.approx(0.0, abs=1e-9)
        assert all(beat_frequency(s.frequency_hz, c.frame_rate_hz) < 1e-9 for c in cams)


@pytest.mark.parametrize("make,match", [
    (lambda: Camera(-30.0, 1 / 60), "frame rate"),
    (lambda: Camera(30.0, 0.1), "longer than the frame period"),
    (lambda: suggest_frequencies(lambda f: Pwm(f, 0.1), [], 1, 2), "at least one camera"),
])
def test_bad_input(make, match):
    with pytest.raises(SettingsError, match=match):
        make()


def test_suggestion_judged_over_the_clock_band():
    # analytic (running mean of a 10 % pulse train): 3000 Hz = lcm(60 fps, 1/(1/1000 s)) puts 3
    # whole periods in a 1 ms exposure, contrast 0 on an exact clock. At -2 % (2940 Hz) the
    # window holds 2.94 periods: light integral between 0.24 and 0.30 periods' worth, Michelson
    # contrast 0.06 / 0.54 = 1/9; at +2 % (3060 Hz), 0.06 / 0.66 = 1/11.
    cams = [Camera(60.0, 1 / 1000)]
    exact = suggest_frequencies(lambda f: Pwm(f, 0.1), cams, 2900.0, 3100.0)
    assert exact[0].frequency_hz == pytest.approx(3000.0) and exact[0].worst_contrast < 1e-9
    band = suggest_frequencies(lambda f: Pwm(f, 0.1), cams, 2900.0, 3100.0, max_contrast=1.0,
                               tolerance=0.02)
    assert band[0].frequency_hz == pytest.approx(3000.0)
    assert band[0].worst_contrast == pytest.approx(1 / 9, rel=1e-6)
    assert band[0].standing is False and "2 % clock band" in band[0].reason
    assert banding(Pwm(3060.0, 0.1), cams[0]).contrast == pytest.approx(1 / 11, rel=1e-6)
