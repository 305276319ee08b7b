"""A period found where the light does not modulate is never reported without a word.

PWM at 3123.4 Hz (duty 0.3) under 60 % ripple at 1250 Hz: analytic, the light's components
are k x 3123.4 +- 1250 Hz and 1250 Hz (the product of the PWM's Fourier series and
1 + 0.6 sin); none sits at the near-common periods a finite capture may find (about 624.7 Hz,
3123.4 / 5 and 1250 / 2 within 0.05 %) nor at 1561.7 Hz (3123.4 / 2). IEEE 1789's
fundamental-mode reading there puts 100 % percent flicker at that frequency, and which one
is found depends on the capture: the verdict may change between captures of the same light,
so the assessment must say so whenever the period found is not the strongest modulation's.
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from flickerkit import assess_light, make_capture

F_PWM = 3123.4
F_RIPPLE = 1250.0


def _capture(fs: float, duration_s: float, t0: float, seed: int):
    rng = np.random.default_rng(seed)
    t = t0 + np.arange(int(fs * duration_s)) / fs
    x = ((t * F_PWM) % 1.0 < 0.3).astype(float) * (1.0 + 0.6 * np.sin(2 * np.pi * F_RIPPLE * t))
    x += rng.normal(0.0, x.std() / 100.0, x.size)  # 40 dB SNR
    return make_capture(x, fs)


@pytest.mark.parametrize("fs, duration_s, t0", [
    (37829.0, 1.44, 0.11), (50000.0, 1.39, 0.3), (64123.0, 0.86, 0.52),
    (41234.5, 1.69, 0.07), (86165.0, 1.04, 0.9), (99001.0, 1.86, 0.25)])
def test_a_common_period_without_modulation_is_warned(fs, duration_s, t0):
    a = assess_light(_capture(fs, duration_s, t0, seed=int(fs)))
    own = abs(a.frequency_hz / F_PWM - 1.0) < 1e-3
    warned = [w for w in a.warnings if "carries" in w and "of its own" in w]
    # either the strongest modulation's own period, or a warning that names the period found
    assert own or warned, (a.frequency_hz, a.warnings)
    if warned:
        assert f"{a.frequency_hz:.6g} Hz" in warned[0]
        assert re.search(r"at 312[34]\.\d+ Hz", warned[0])  # harmonic h of the period found


@pytest.mark.parametrize("duty", [0.3, 0.5])
def test_plain_pwm_and_ripple_locked_to_it_are_not_warned(duty):
    # analytic: PWM's fundamental is its strongest component for any duty (2 sin(pi D) / (pi D)
    # falls with k); 1200 Hz PWM under 100 Hz ripple: whichever of the two periods is found,
    # its own frequency carries modulation (the PWM's, or the ripple's)
    fs = 50_000.0
    t = np.arange(int(fs * 1.2)) / fs
    pwm = ((t * 1234.56) % 1.0 < duty).astype(float)
    a = assess_light(make_capture(pwm, fs))
    assert not [w for w in a.warnings if "of its own" in w]
    x = ((t * 1200.0) % 1.0 < duty) * (1.0 + 0.3 * np.sin(2 * np.pi * 100.0 * t))
    b = assess_light(make_capture(x.astype(float), fs))
    assert min(abs(b.frequency_hz - 100.0), abs(b.frequency_hz - 1200.0)) < 0.01
    assert not [w for w in b.warnings if "of its own" in w]
