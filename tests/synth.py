"""Test waveforms with known answers, made independently of flickerkit's own models.

PWM samples are exact interval averages (what a detector that integrates over
each sample interval records), so edges need not fall on samples.
"""

from __future__ import annotations

import numpy as np


def pwm(frequency_hz: float, duty: float, off_level: float, sample_rate_hz: float,
        duration_s: float, phase: float = 0.137) -> np.ndarray:
    """Rectangular PWM between ``off_level`` and 1, averaged over each sample interval."""
    n = int(round(duration_s * sample_rate_hz))
    dt = 1.0 / sample_rate_hz
    t = np.arange(n + 1) * dt
    u = frequency_hz * t + phase
    whole = np.floor(u)
    v = u - whole
    per_period = duty + off_level * (1.0 - duty)
    g = np.where(v < duty, v, duty + off_level * (v - duty))
    G = whole * per_period + g
    return np.diff(G) / (frequency_hz * dt)


def sine(frequency_hz: float, modulation: float, sample_rate_hz: float, duration_s: float,
         phase: float = 0.4) -> np.ndarray:
    """``1 + m sin(2 pi f t + phase)``, point-sampled."""
    t = np.arange(int(round(duration_s * sample_rate_hz))) / sample_rate_hz
    return 1.0 + modulation * np.sin(2 * np.pi * frequency_hz * t + phase)


def rectified(mains_hz: float, floor: float, sample_rate_hz: float, duration_s: float,
              phase: float = 0.3) -> np.ndarray:
    """``a + (1 - a) |sin(2 pi f_mains t)|`` (ripple at twice the mains frequency)."""
    t = np.arange(int(round(duration_s * sample_rate_hz))) / sample_rate_hz
    return floor + (1.0 - floor) * np.abs(np.sin(2 * np.pi * mains_hz * t + phase))
