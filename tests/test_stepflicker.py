"""Flicker per step: the vectorised exact series against the drive model and assess."""

from __future__ import annotations

import numpy as np
import pytest

from flickerkit.assess import assess
from flickerkit.drive import Drive, Edges, Pwm
from flickerkit.errors import SettingsError
from flickerkit.ieee1789 import region_of
from flickerkit.stepflicker import pwm_series, step_flicker, step_flicker_from_drive
from flickerkit.steps import build_table
from flickerkit.svm import svm_from_components, svm_of_spectrum

#: Two double-precision evaluations of the same closed form.
SERIES_TOL = 1e-12
#: svm_of_spectrum on a whole-period sampled capture against the exact series: the project
#: tolerance of tests/test_svm.py, 1 %; interval-averaged samples lower each harmonic by sinc(f/fs).
SVM_SAMPLED_RTOL = 0.01


def test_series_is_the_drive_models_exact_series():
    for d in (0.001, 0.0153, 0.25, 0.5, 0.7, 0.999):
        fs = Pwm(250.0, d).fourier_series(2000.0)  # drive model, closed form per segment
        f, a = pwm_series(np.array([d]), 250.0, 2000.0)
        # the drive model leaves out components below 1e-14 (zeros of the sinc at k D = 1, 2..)
        listed = np.isin(f, fs.frequencies_hz)
        np.testing.assert_allclose(f[listed], fs.frequencies_hz, rtol=SERIES_TOL)
        np.testing.assert_allclose(a[0][listed], fs.amplitudes, rtol=0, atol=SERIES_TOL)
        assert np.all(a[0][~listed] < 1e-14)


def test_series_closed_form():
    f, a = pwm_series(np.array([0.5, 0.0, 1.0]), 1000.0, 3000.0)
    # analytic: square wave C_1 = 4/pi, C_2 = 0, C_3 = 4/(3 pi); no modulation at 0 and 1
    np.testing.assert_allclose(a[0], [4 / np.pi, 0, 4 / (3 * np.pi)], atol=SERIES_TOL)
    assert np.all(a[1:] == 0)
    assert f.tolist() == [1000.0, 2000.0, 3000.0]


@pytest.mark.parametrize("frequency_hz", [300.0, 1000.0])
def test_per_step_figures_agree_with_assess_of_sampled_light(frequency_hz):
    t = build_table(64, bits=12, pwm_frequency_hz=frequency_hz)
    fl = t.flicker
    for k in (1, 9, 32, 63):
        d = float(t.duty[k])
        cap = Pwm(frequency_hz, d).capture() if d < 1 else None
        if cap is None:  # full scale: steady light
            assert fl.percent_flicker[k] == 0 and fl.flicker_index[k] == 0
            assert fl.ieee1789_region[k] == "no-observable-effect"
            continue
        a = assess(cap)
        assert fl.percent_flicker[k] == pytest.approx(a.percent_flicker, abs=1e-9)
        # analytic bound: the sample straddling an edge moves the area above the mean by
        # at most one sample in N per period, so FI by at most 1/(N D)
        n = cap.sample_rate_hz / frequency_hz
        assert fl.flicker_index[k] == pytest.approx(a.flicker_index, abs=1 / (n * d))
        assert fl.ieee1789_region[k] == a.ieee1789.region
        sampled = svm_of_spectrum(a.spectrum).value
        assert fl.svm[k] == pytest.approx(sampled, rel=SVM_SAMPLED_RTOL)


def test_svm_is_svm_from_components_of_each_step():
    d = np.array([0.01, 0.2, 0.5])
    fl = step_flicker(d, 400.0)
    for i, di in enumerate(d):
        f, a = pwm_series(np.array([di]), 400.0)
        assert fl.svm[i] == pytest.approx(svm_from_components(f, a[0]), rel=1e-12)


def test_drive_path_agrees_with_the_vectorised_path():
    t = build_table(12, bits=10, pwm_frequency_hz=800.0)
    fd = step_flicker_from_drive(t.duty, Drive(method="pwm", frequency_hz=800.0))
    lit = t.duty > 0
    np.testing.assert_allclose(fd.percent_flicker[lit], t.flicker.percent_flicker[lit], atol=1e-9)
    np.testing.assert_allclose(fd.svm[lit], t.flicker.svm[lit], rtol=1e-9)
    assert fd.ieee1789_region.tolist() == t.flicker.ieee1789_region.tolist()
    assert np.isnan(fd.percent_flicker[0])  # step 0 is off


def test_drive_with_an_off_level_changes_the_modulation():
    drive = Drive(method="pwm", frequency_hz=1000.0, off_level=0.2,
                  edges=Edges(kind="linear", rise_s=2e-6, fall_s=2e-6))
    t = build_table(8, bits=10, drive=drive)
    lit = t.duty > 0
    pf = t.flicker.percent_flicker[lit & (t.duty < 1)]
    # analytic: light between 0.2 and 1 has 100 (1 - 0.2)/(1 + 0.2) = 66.7 % modulation
    np.testing.assert_allclose(pf, 100 * 0.8 / 1.2, rtol=1e-6)
    assert t.summary()["flicker"]["model"].startswith("drive model through assess")


def test_first_step_leaving_the_target_region():
    duty = np.array([0.0, 0.01, 0.5, 1.0])
    # recalled IEEE 1789 boundaries (flickerkit.ieee1789): 100 % modulation is above the
    # low-risk line below 1250 Hz and exempt above it; the NOEL line reaches 99.9 % at 3000 Hz
    s = step_flicker(duty, 1000.0).summary()
    assert s["first_step_outside"] == 1 and s["steps_outside"] == 2 and s["inside_from_step"] == 3
    assert step_flicker(duty, 1300.0).summary()["first_step_outside"] is None
    noel = step_flicker(duty, 3000.0, target_region="no-observable-effect").summary()
    assert noel["first_step_outside"] == 1
    assert step_flicker(duty, 3001.0,
                        target_region="no-observable-effect").summary()["steps_outside"] == 0
    assert region_of(1000.0, 100.0) == "above-low-risk"
    with pytest.raises(SettingsError, match="target region"):
        step_flicker(duty, 1000.0, target_region="above-low-risk")


def test_calibrated_table_uses_the_light_as_effective_duty():
    from flickerkit.steps import fit_transfer

    tr = fit_transfer([0, 100, 1023], [0, 0, 1.0], top=1023)  # invented: dark up to count 100
    t = build_table(10, bits=10, transfer=tr, pwm_frequency_hz=500.0)
    lit = t.relative_light > 0
    np.testing.assert_allclose(t.flicker.flicker_index[lit], 1 - t.relative_light[lit])


def test_65536_steps_are_vectorised():
    t = build_table(65536, bits=16, pwm_frequency_hz=1000.0)
    assert t.flicker.svm.shape == (65536,)
    lit = t.relative_light > 0
    assert np.all(np.isnan(t.flicker.svm[~lit])) and np.all(np.isfinite(t.flicker.svm[lit]))
    assert lit.sum() > 40000


def test_bad_frequency():
    with pytest.raises(SettingsError, match="positive number of hertz"):
        build_table(8, bits=8, pwm_frequency_hz=0)
    with pytest.raises(SettingsError, match="differs from the drive"):
        build_table(8, bits=8, pwm_frequency_hz=500, drive=Drive(frequency_hz=1000.0))
