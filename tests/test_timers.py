"""Timer arithmetic against tables computed from the counter relations (reference/timer_*.csv)."""

import math

import pytest

from flickerkit.errors import SettingsError
from flickerkit.timers import (
    Timer, TimerSetting, bits_available, clock_needed, counts_needed, minimum_duty, pwm_frequency,
)

from .refdata import rows

#: reference/timer_tables.csv prints 3-4 significant figures: half a unit of the 4th is 5e-4
#: relative.
TABLE_RTOL = 5e-4


@pytest.mark.parametrize("row", rows("timer_tables.csv"),
                         ids=lambda r: f"{r['clock_hz']}-{r['bits']}")
def test_frequency_against_resolution(row):
    clk, n = float(row["clock_hz"]), int(row["bits"])
    assert pwm_frequency(clk, 1, 2**n - 1, "edge") == pytest.approx(float(row["edge_hz"]),
                                                                    rel=TABLE_RTOL)
    assert pwm_frequency(clk, 1, 2**n, "centre") == pytest.approx(float(row["centre_hz"]),
                                                                 rel=TABLE_RTOL)
    assert TimerSetting(clk, "edge", 1, 2**n - 1).bits == pytest.approx(n)
    assert TimerSetting(clk, "centre", 1, 2**n).bits == pytest.approx(n)


@pytest.mark.parametrize("row", rows("timer_needs.csv"), ids=lambda r: r["kind"])
def test_needs(row):
    v, tol = float(row["value"]), float(row["precision"])
    kind = row["kind"]
    if kind == "bits":
        got = bits_available(float(row["clock_hz"]), float(row["frequency_hz"]))
    elif kind == "counts":
        got = counts_needed(float(row["min_level"]), float(row["max_step"]))
    elif kind == "clock":
        got = clock_needed(counts_needed(float(row["min_level"]), float(row["max_step"])),
                           float(row["frequency_hz"]))
    else:
        got = minimum_duty(float(row["frequency_hz"]), rise_s=float(row["t_loss_s"]))
    assert got == pytest.approx(v, abs=tol)


def test_ticks_eaten_by_one_microsecond():
    # analytic: a 1 us loss is 1e-6 x f_clk = 16, 48, 170 ticks at 16, 48, 170 MHz
    for clk, ticks in ((16e6, 16), (48e6, 48), (170e6, 170)):
        assert 1e-6 / TimerSetting(clk, "edge", 1, 1000).tick_s == pytest.approx(ticks)


def test_settings_at_least():
    t = Timer(16e6, (1, 8, 64), max_top=65535)
    s = t.settings_at_least(1000.0)
    # analytic: edge prescaler 1: TOP = floor(16e6 / 1000) - 1 = 15999 (16000 counts, 13.97 bits)
    best = s[0]
    assert (best.mode, best.prescaler, best.top, best.counts) == ("edge", 1, 15999, 16000)
    assert best.frequency_hz == pytest.approx(1000.0)
    assert all(x.frequency_hz >= 1000.0 * (1 - 1e-12) for x in s)
    centre = [x for x in s if x.mode == "centre" and x.prescaler == 1][0]
    assert centre.top == 8000 and centre.frequency_hz == pytest.approx(1000.0)
    # the counter's width caps TOP: 16 bits at 100 Hz needs prescaler 8 to stay at or above
    low = Timer(16e6, (1, 8)).settings_at_least(100.0)
    assert all(x.top <= 65535 for x in low)
    assert min(x.frequency_hz for x in low) >= 100.0


def test_minimum_count():
    # D_min = (t_D + t_rise) f: 1 us delay + 1 us rise at 20 kHz = 4 %, i.e. 40 of 1000 counts
    s = TimerSetting(20e6, "edge", 1, 999)
    assert s.frequency_hz == pytest.approx(20_000.0)
    assert s.minimum_count(turn_on_delay_s=1e-6, rise_s=1e-6) == 40


@pytest.mark.parametrize("make,match", [
    (lambda: Timer(16e6, (1, 8)).check_prescaler(3), "no prescaler 3"),
    (lambda: Timer(-1.0), "clock must be positive"),
    (lambda: Timer(16e6, (0,)), "prescaler"),
    (lambda: pwm_frequency(16e6, 1, 255, "diagonal"), "unknown counter mode"),
    (lambda: Timer(16e6).settings_at_least(-5.0), "must be positive"),
    (lambda: counts_needed(0.0, 0.01), "smallest level"),
])
def test_bad_input(make, match):
    with pytest.raises(SettingsError, match=match):
        make()


def test_bits_are_log2_of_counts():
    s = TimerSetting(48e6, "edge", 2, 2399)
    assert s.bits == pytest.approx(math.log2(2400)) and s.duty_step == pytest.approx(1 / 2400)
