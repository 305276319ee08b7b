"""The period-averaged headline never hides modulation the average lost.

When noise would raise the raw (min/max) percent flicker, the headline is taken from
the period-averaged waveform. That waveform holds only what is locked to the period
found: an envelope or ripple not locked to it, or a period estimate a fraction off
(which smears the fold over a long capture), vanishes from it. The raw figure then
stands, with a warning, rather than a small figure that exits 0.
"""

from __future__ import annotations

import warnings

import numpy as np

import flickerkit as fk


def _assess(y: np.ndarray, fs: float):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return fk.assess_light(fk.make_capture(y, fs, label="invented"))


def _noisy(y: np.ndarray, snr_db: float, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    return y + rng.normal(0.0, np.std(y) * 10 ** (-snr_db / 20), y.size)


def test_three_channels_with_gaps_are_not_read_as_steady():
    # Three PWM channels at 1 kHz, duty 0.3, phased by a third, of unequal light (invented
    # luminaire): the light drops to zero between the pulses, so percent flicker is 100 %
    # (analytic: min 0), at a 1 kHz repetition, above the IEEE 1789 low-risk line there
    # (0.08 x 1000 = 80 %, recalled). 16.9 samples per period, 30 dB SNR. Before the fix
    # the period found was 995.9 Hz, the fold smeared and the headline read 0.96 %
    # ("no-observable-effect").
    fs = 16929.0
    rng = np.random.default_rng(1)
    t = rng.uniform(0, 1) + np.arange(int(1.32 * fs)) / fs
    y = sum(a * (((t * 1000.0 + ph) % 1.0) < 0.3)
            for a, ph in ((1.0, 0.0), (0.8, 1 / 3), (1.1, 2 / 3)))
    r = _assess(_noisy(y, 30.0, 1), fs)
    assert r.percent_flicker > 90.0
    assert r.ieee1789.region == "above-low-risk"
    if r.headline_estimate == "raw" and r.percent_flicker_averaged is not None \
            and r.percent_flicker_averaged < 90.0:
        assert any("not locked" in w for w in r.warnings)


def test_envelope_not_locked_to_the_period_stays_in_the_headline():
    # 1000.3 Hz ripple of 5 % times a 7.1 Hz envelope of 30 % (invented driver): percent
    # flicker (analytic) = (1.05 * 1.3 - 0.95 * 0.7) / (1.05 * 1.3 + 0.95 * 0.7) = 34.48 %.
    # The period found is the envelope's; averaging over it removes the ripple (30.3 %).
    # At 45 dB SNR noise moves the raw figure by a few tenths only.
    truth = (1.05 * 1.3 - 0.95 * 0.7) / (1.05 * 1.3 + 0.95 * 0.7) * 100
    for fs in (8123.0, 47000.0):
        t = np.arange(int(1.7 * fs)) / fs
        y = (1 + 0.05 * np.sin(2 * np.pi * 1000.3 * t)) * (1 + 0.3 * np.sin(2 * np.pi * 7.1 * t))
        r = _assess(_noisy(y, 45.0, 2), fs)
        assert abs(r.percent_flicker - truth) < 1.0, (fs, r.percent_flicker)


def test_locked_noisy_pwm_keeps_the_averaged_headline():
    # The guard leaves the case it was made for alone: 1234.56 Hz PWM, duty 0.3, 3 %
    # off-level, 20 dB SNR: 100 * 0.97 / 1.03 = 94.17 % (analytic), raw reads far above.
    fs = 48000.0
    t = np.arange(int(0.8 * fs)) / fs
    y = 0.03 + 0.97 * (((t * 1234.56) % 1.0) < 0.3)
    r = _assess(_noisy(y, 20.0, 3), fs)
    assert r.headline_estimate.startswith("period-averaged")
    assert abs(r.percent_flicker - 100 * 0.97 / 1.03) < 3.0


def test_few_samples_per_period_warns_that_the_region_may_come_from_folding():
    # 1250 Hz PWM, duty 0.5, at 9846 Hz (7.9 samples per period), 30 dB SNR: the square
    # wave's high harmonics fold to components below 90 Hz that the light does not have
    # (analytic: k * 1250 Hz folds to |k * 1250 - m * 9846| Hz), which can decide the
    # IEEE 1789 region; the warning must say so, not only that percent flicker may be off.
    fs = 9846.0
    t = 0.37 + np.arange(int(0.51 * fs)) / fs
    y = 0.05 + (((t * 1250.0 + 0.3) % 1.0) < 0.5)
    r = _assess(_noisy(y, 30.0, 0), fs)
    spp = [w for w in r.warnings if "samples per period" in w]
    assert spp and "IEEE 1789" in spp[0]


def test_strongest_modulation_with_few_samples_is_insufficient_data():
    # 3123.4 Hz PWM (duty 0.5, 30 % floor) times 60 % ripple at 1250 Hz (invented hybrid
    # driver), sampled at 21852 Hz: 7.0 samples per period of the PWM, the strongest
    # modulation, though the period found (about 625 Hz, the near-common period) has 35.
    # The PWM's 7th harmonic, 21863.8 Hz, folds to |21863.8 - 21852| = 11.8 Hz (analytic),
    # which the light does not have; before, it decided IEEE 1789 "above-low-risk" at
    # 11.8 Hz with no word on sampling, and the criterion failed.
    from flickerkit.criteria import REGISTRY, judge

    fs = 21852.0
    rng = np.random.default_rng(1)
    t = rng.uniform(0, 1) + np.arange(int(1.38 * fs)) / fs
    y = 0.3 + 0.7 * (((t * 3123.4 + rng.uniform()) % 1.0) < 0.5) \
        * (1 + 0.6 * np.sin(2 * np.pi * 1250.0 * t))
    r = _assess(_noisy(y, 40.0, 1), fs)
    assert any("strongest modulation, at 3123" in w for w in r.warnings)
    for cid in ("ieee1789-low-risk", "ieee1789-noel", "seizure-screen-below-90hz"):
        v = judge(r, REGISTRY[cid], level=100.0)
        assert v.status == "insufficient data", (cid, v.status, v.reason)
        assert "strongest modulation" in v.reason


def test_a_reading_on_the_ieee1789_line_says_so():
    # A 200 Hz sine of exactly 16 % modulation sits on the low-risk line, 0.08 x 200 Hz =
    # 16 % (IEEE 1789-2015 RP1, recalled). Captures of it land either side (before: pass
    # or fail with nothing said); every verdict must now say it lies on the line.
    from flickerkit.criteria import REGISTRY, judge

    statuses = set()
    for i, fs in enumerate((22571.0, 30629.0, 40980.0, 91893.0)):
        t = np.arange(int((0.5 + 0.3 * i) * fs)) / fs
        y = 1 + 0.16 * np.sin(2 * np.pi * 200.0 * t + i)
        r = _assess(_noisy(y, 40.0, 10 + i), fs)
        v = judge(r, REGISTRY["ieee1789-low-risk"])
        statuses.add(v.status)
        assert "on the line within the measurement's uncertainty" in v.reason, v.reason
    # and a reading well clear of the line says nothing of the kind (8 %, analytic margin 8)
    t = np.arange(20000) / 20000.0
    r = _assess(_noisy(1 + 0.08 * np.sin(2 * np.pi * 200.0 * t), 40.0, 5), 20000.0)
    v = judge(r, REGISTRY["ieee1789-low-risk"])
    assert v.status == "pass" and "on the line" not in v.reason


def test_folded_square_wave_harmonic_is_not_judged_as_light_below_90hz():
    # 1250 Hz PWM, duty 0.5, 2 % floor, at 54353 Hz (43 samples per period), 40 dB SNR.
    # Harmonic 87 (108750 Hz) folds to |108750 - 2 x 54353| = 44 Hz (analytic) with
    # amplitude 2 / (pi 87) / 0.52 = 0.01407 of the mean -- exactly the bound V / (pi h)
    # that marks a possible alias, so noise put it above the bound on some captures and
    # it decided IEEE 1789 "above-low-risk" at 44 Hz. The light is on the 1250 Hz line
    # at 96 % (low-risk, recalled lines): every capture must say so.
    regions = set()
    for seed in (4, 6, 10, 0):
        rng = np.random.default_rng(seed)
        fs = 54353.0
        t = rng.uniform(0, 1) + np.arange(int(rng.uniform(0.5, 1.5) * fs)) / fs
        y = 0.02 + (((t * 1250.0 + rng.uniform()) % 1.0) < 0.5)
        r = _assess(y + rng.normal(0.0, np.std(y) * 0.01, y.size), fs)
        regions.add((r.ieee1789.region, r.ieee1789.decided_by))
    assert regions == {("low-risk", "fundamental")}, regions


def test_a_short_capture_says_it_cannot_see_slow_flicker():
    # 1234.56 Hz PWM (duty 0.3) times a 20 % envelope at 7.3 Hz (invented dimmer fault),
    # 35 dB SNR. On 1.5 s the envelope is seen: the seizure screen fails (20 % > 5 %,
    # Lehman and Wilkins 2014). On 0.3 s (2.2 cycles of it, below the 3 a component needs)
    # it is drift, and the verdicts read pass / not applicable: before, with nothing said.
    from flickerkit.criteria import REGISTRY, judge

    fs = 15476.0

    def capture(seconds):
        rng = np.random.default_rng(1)
        t = rng.uniform(0, 1) + np.arange(int(seconds * fs)) / fs
        y = (((t * 1234.56) % 1.0) < 0.3) * (1 + 0.2 * np.sin(2 * np.pi * 7.3 * t)) + 0.02
        return _assess(y + rng.normal(0.0, np.std(y) * 10 ** (-35 / 20), y.size), fs)

    long = capture(1.5)
    assert judge(long, REGISTRY["seizure-screen-below-90hz"], level=100.0).status == "fail"
    short = capture(0.3)
    assert any("cannot show modulation slower than 10 Hz" in w for w in short.warnings)
    for cid in ("ieee1789-low-risk", "seizure-screen-below-90hz"):
        v = judge(short, REGISTRY[cid], level=100.0)
        assert v.status == "fail" or "slower flicker would go unseen" in v.reason, (cid, v)
