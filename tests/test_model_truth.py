"""One truth for modelled and measured light (issue 10, item 6).

``drive`` (the sweep), ``plan`` (the planner's figures) and ``steps`` (a
brightness table through a drive) must give, for a model, the figures that
``measure`` gives for a faithful capture of that model's light. The faithful
capture here is the model's point values sampled at megahertz rates with a
random start and length, written to a .npy file and measured through the
measure path (reader + assess); its figures are "computed" (by this code's
measure path), the closed forms beside them "analytic".
"""

import math
import zlib

import numpy as np
import pytest

from flickerkit.assess import AssessSettings
from flickerkit.batch import measure_one
from flickerkit.drive import Drive, Edges, Ripple
from flickerkit.planner import figures
from flickerkit.readers import ReadOptions
from flickerkit.stepflicker import step_flicker_from_drive
from flickerkit.sweep import model_record, sweep

#: Agreement asked by issue 10 between a model's figures and measure of a faithful
#: capture (percent flicker, flicker index, SVM), relative.
TRUTH_REL = 0.005
#: Closed form against the model's own figures (quadrature and exact extremes).
EXACT_REL = 1e-6
#: SVM of light with nothing in the 80 Hz-2 kHz band: the faithful capture's point
#: sampling leaves ~1e-4 of leakage; below a thousandth no SVM limit (0.4, 0.9) is near.
SVM_ABS = 1e-3
#: Samples per repetition period of the faithful capture: point sampling errs by
#: about one sample at each edge, 5e-5 of a period here.
DENSE_SAMPLES_PER_PERIOD = 20_000


def faithful_measure(model, tmp_path, rng, periods=24, spp=DENSE_SAMPLES_PER_PERIOD):
    """measure of a finely point-sampled capture of the model's light (random start/length)."""
    light = model.light()
    f0 = light.fundamental_hz
    fs = spp * f0 * rng.uniform(0.93, 1.07)
    n = int((periods + rng.uniform(0.0, 0.9)) * fs / f0)
    t = rng.uniform(0.0, 1.0 / f0) + np.arange(n) / fs
    path = tmp_path / "faithful.npy"
    np.save(path, light.values(t))
    out = measure_one(str(path), ReadOptions(sample_rate_hz=fs), AssessSettings())
    assert out.error is None, out.error
    return out.record


def _close(a, b, rel=TRUTH_REL, abs_=1e-9):
    return a == pytest.approx(b, rel=rel, abs=abs_)


# analytic: first-order edges in steady state; the light falls from x_max to
# x_min = x_max exp(-t_off / tau_fall) during the off time, so
# percent flicker = (1 - b) / (1 + b) with b = exp(-100 us / 43 us) = 0.0977 -> 82.19 %,
# above IEEE 1789's low-risk line of 8 % x 1000 Hz / 100 = 80 % (IEEE 1789-2015 clause 8).
EDGE_B = math.exp(-100e-6 / 43e-6)
EDGE_PF = 100.0 * (1.0 - EDGE_B) / (1.0 + EDGE_B)


def test_first_order_edges_drive_reports_the_exact_figure(tmp_path):
    drive = Drive(frequency_hz=1000.0, edges=Edges("first-order", 30e-6, 43e-6))
    row = sweep(drive, [0.9]).rows[0]
    assert row.assessment.percent_flicker == pytest.approx(EDGE_PF, rel=EXACT_REL)  # analytic
    assert row.assessment.ieee1789.region == "above-low-risk"
    # the sampled capture of the sweep's budget alone reads ~2.5 points low (79.7 %)
    assert row.light.capture_figures.percent_flicker < EDGE_PF - 1.0
    rec = row.to_dict()  # the JSON says the same
    assert rec["percent_flicker"] == row.assessment.percent_flicker and rec["level"] == 90.0
    assert rec["capture_figures"]["percent_flicker"] < EDGE_PF - 1.0
    fig = figures(drive.at(0.9))
    assert fig.percent_flicker == pytest.approx(EDGE_PF, rel=EXACT_REL)  # plan: analytic
    assert fig.ieee1789.region == "above-low-risk"
    meas = faithful_measure(drive.at(0.9), tmp_path, np.random.default_rng(1789))
    assert _close(meas["percent_flicker"], EDGE_PF)  # computed: measure of a fine capture
    assert meas["ieee1789"]["region"] == "above-low-risk"
    assert _close(meas["flicker_index"], rec["flicker_index"])
    # (SVM is compared in the matrix below at 1010.1 Hz: at 1000 Hz the second harmonic sits
    # exactly on SVM's 2 kHz band end, where measure's estimate decides it -- issue 10 item 3)


def test_first_order_edges_twelve_captures(tmp_path):
    # the same light captured twelve times (random start, length, sample rate around 2 MHz):
    # measure gives the model's figures and its region every time (computed)
    model = Drive(frequency_hz=1000.0, edges=Edges("first-order", 30e-6, 43e-6)).at(0.9)
    rec = model_record(model)
    rng = np.random.default_rng(43)
    for _ in range(12):
        meas = faithful_measure(model, tmp_path, rng, periods=10, spp=2000)
        assert _close(meas["percent_flicker"], EDGE_PF)
        assert _close(meas["flicker_index"], rec["flicker_index"])
        assert meas["ieee1789"]["region"] == rec["ieee1789"]["region"] == "above-low-risk"


def test_evenly_phased_channels_report_the_lights_repetition():
    # analytic: three identical pulse trains shifted by T/3 repeat every T/3, so the light's
    # fundamental is 3 f; at duty 0.2 each pulse (height 1/3) lasts 0.2 T, the light is on
    # 60 % of the time at 1/3 over a mean of 0.2: flicker index = 0.6 (1/3 - 0.2) / 0.2 = 0.4
    f = 1234.56
    drive = Drive(frequency_hz=f, channels=3)
    model = drive.at(0.2)
    assert model.fundamental_hz == pytest.approx(3 * f, rel=1e-12)
    rec = sweep(drive, [0.2]).rows[0].assessment
    assert rec.frequency_hz == pytest.approx(3 * f, rel=1e-12)
    assert rec.flicker_index == pytest.approx(0.4, rel=EXACT_REL)
    assert rec.percent_flicker == pytest.approx(100.0, rel=EXACT_REL)
    # IEEE 1789-2015 clause 8: no limit above 3000 Hz
    assert rec.ieee1789.region == "no-observable-effect"
    assert figures(model).frequency_hz == pytest.approx(3 * f, rel=1e-12)
    # two channels at 50 % opposite in phase add up to steady light (analytic)
    steady = Drive(frequency_hz=f, channels=2).at(0.5)
    assert steady.fundamental_hz is None and steady.modulation_percent() == 0.0


def test_uneven_phases_keep_the_pwm_period():
    # analytic: channels at 0 and 100 degrees do not repeat within the PWM period
    m = Drive(frequency_hz=1000.0, channels=2, phase_offsets_deg=(0.0, 100.0)).at(0.3)
    assert m.fundamental_hz == pytest.approx(1000.0)


def test_ripple_under_pwm_passes_the_strongest_period_and_the_common_one():
    # analytic: 2000 Hz PWM times 100 Hz ripple repeats every 1/100 s (common period); its
    # strongest modulation is the PWM (50 % duty: C1 = 4/pi = 1.27 against 0.02), the
    # period measure finds and refers the figures to; the ripple is judged at 100 Hz
    model = Drive(frequency_hz=2000.0, ripple=Ripple(2.0)).at(0.5)
    assert model.fundamental_hz == pytest.approx(100.0)
    assert model.light().dominant_hz == pytest.approx(2000.0)
    meta = model.capture().meta
    assert meta["fundamental_hz"] == pytest.approx(2000.0)
    assert meta["repetition_hz"] == pytest.approx(100.0)
    rec = sweep(Drive(frequency_hz=2000.0, ripple=Ripple(2.0)), [0.5]).rows[0].assessment
    assert rec.frequency_hz == pytest.approx(2000.0)
    assert rec.modulation.repetition_hz == pytest.approx(100.0)


def test_strong_ripple_under_pwm_is_judged_at_100_hz():
    # IEEE 1789-2015: low-risk line 0.08 x 100 Hz = 8 % (from memory);
    # a 20 % ripple under 2 kHz PWM is above it, in drive and in measure alike
    model = Drive(frequency_hz=2000.0, ripple=Ripple(20.0)).at(0.5)
    rec = model_record(model)
    assert rec["ieee1789"]["region"] == "above-low-risk"
    assert "100 Hz" in rec["ieee1789"]["decided_by"]


def test_ripple_under_pwm_measure_agrees(tmp_path):
    model = Drive(frequency_hz=2000.0, ripple=Ripple(2.0)).at(0.5)
    rec = model_record(model)
    meas = faithful_measure(model, tmp_path, np.random.default_rng(2000), periods=6)
    assert meas["frequency_hz"] == pytest.approx(rec["frequency_hz"], rel=1e-3)
    assert meas["ieee1789"]["region"] == rec["ieee1789"]["region"]


MODELS = {
    "ideal 1234.56 Hz 37.3 %": (Drive(frequency_hz=1234.56), 0.373),
    "first-order 30/43 us 90 %": (Drive(frequency_hz=1010.1,
                                        edges=Edges("first-order", 30e-6, 43e-6)), 0.9),
    "linear 2/1 us 10 % off-level": (Drive(frequency_hz=1876.5, off_level=0.05,
                                           edges=Edges("linear", 2e-6, 1e-6)), 0.1),
    "3 channels 1234.56 Hz 23 %": (Drive(frequency_hz=1234.56, channels=3), 0.23),
    "2 channels uneven 987.6 Hz 41 %": (Drive(frequency_hz=987.6, channels=2,
                                              phase_offsets_deg=(0.0, 77.0)), 0.41),
    "ripple 100 Hz rectified 3 % at 1000 Hz": (Drive(frequency_hz=1000.0,
                                                     ripple=Ripple(3.0, shape="rectified")),
                                               0.6),
}


#: Models whose frequency and region measure does not reproduce (none now: the model refers
#: its figures to its strongest modulation, the period measure finds).
PERIOD_GAP: set[str] = set()


@pytest.mark.parametrize("name", list(MODELS))
def test_drive_plan_steps_and_measure_agree(name, tmp_path):
    drive, level = MODELS[name]
    model = drive.at(level)
    rec = model_record(model)
    fig = figures(model, level)
    steps = step_flicker_from_drive(np.array([level]), drive)
    meas = faithful_measure(model, tmp_path, np.random.default_rng(zlib.crc32(name.encode())))
    # drive (sweep record) = plan = steps, all the model's exact figures
    assert rec["percent_flicker"] == pytest.approx(fig.percent_flicker, rel=1e-12)
    assert rec["svm"] == pytest.approx(fig.svm, rel=1e-9)
    assert rec["frequency_hz"] == pytest.approx(fig.frequency_hz, rel=1e-12)
    assert rec["ieee1789"]["region"] == fig.ieee1789.region == steps.ieee1789_region[0]
    assert steps.percent_flicker[0] == pytest.approx(rec["percent_flicker"], rel=1e-12)
    assert steps.flicker_index[0] == pytest.approx(rec["flicker_index"], rel=1e-12)
    assert steps.svm[0] == pytest.approx(rec["svm"], rel=1e-9)
    # ... = measure of a faithful capture (computed), within issue 10's 0.5 %
    if name not in PERIOD_GAP:
        assert meas["frequency_hz"] == pytest.approx(rec["frequency_hz"], rel=1e-3)
        assert meas["ieee1789"]["region"] == rec["ieee1789"]["region"]
    assert _close(meas["percent_flicker"], rec["percent_flicker"])
    assert _close(meas["flicker_index"], rec["flicker_index"])
    assert _close(meas["svm"], rec["svm"], abs_=SVM_ABS)


@pytest.mark.parametrize("duty,off", [(0.373, 0.0), (0.05, 0.1), (0.9, 0.25)])
def test_flicker_index_closed_form(duty, off):
    # analytic: a pulse of duty D between off-level o and 1 has mean m = D + o (1 - D) and
    # area above the mean D (1 - m) per period: FI = D (1 - m) / m (IES definition)
    m = duty + off * (1 - duty)
    model = Drive(frequency_hz=1234.56, off_level=off).at(duty)
    assert model.light().flicker_index() == pytest.approx(duty * (1 - m) / m, rel=1e-12)
    # the quadrature used for several channels and ripple agrees (two channels in phase)
    two = Drive(frequency_hz=1234.56, off_level=off, channels=2,
                phase_offsets_deg=(0.0, 0.0)).at(duty)
    assert two.light().flicker_index() == pytest.approx(duty * (1 - m) / m, rel=1e-6)


def test_camera_beats_with_the_lights_repetition():
    # analytic: three evenly phased channels at 1010 Hz repeat at 3030 Hz; at 30 fps the light
    # folds to 3030 - 101 x 30 = 0 Hz (standing bands), where the PWM frequency alone would
    # give 1010 - 34 x 30 = -10 -> 10 Hz
    from flickerkit.camera import Camera, banding

    b = banding(Drive(frequency_hz=1010.0, channels=3).at(0.2), Camera(30.0, 1 / 120))
    assert b.beat_hz == pytest.approx(0.0, abs=1e-9)
    b1 = banding(Drive(frequency_hz=1010.0).at(0.2), Camera(30.0, 1 / 120))
    assert b1.beat_hz == pytest.approx(10.0)


def test_sweep_limits_are_the_registry_limits():
    """Commission Regulation (EU) 2019/2020 as amended: SVM <= 0.9 from 1 Sep 2021 and <= 0.4
    from 1 Sep 2024, Pst LM <= 1.0; a sweep reads them from criteria.REGISTRY."""
    from flickerkit import criteria
    from flickerkit import sweep as sweep_mod
    names = [name for name, _ in sweep_mod.CRITERIA]
    svm = [lim for _, lim in criteria.REGISTRY["eu-2019-2020-svm"].schedule]
    pst = [lim for _, lim in criteria.REGISTRY["eu-2019-2020-pst"].schedule]
    assert names == ["ieee1789-low-risk", "ieee1789-noel",
                     *(f"svm<={v:g}" for v in svm), *(f"pst_lm<={v:g}" for v in pst)]
    assert svm == [0.9, 0.4] and pst == [1.0]
