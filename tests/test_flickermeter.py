"""Tests of flickerkit.flickermeter: the IEC 61000-4-15 chain in voltage and light mode."""

from __future__ import annotations

import csv
import math
import warnings
from pathlib import Path

import numpy as np
import pytest
from scipy.signal import freqz, sosfreqz

from flickerkit import flickermeter as fm
from flickerkit.errors import CaptureWarning, FlickerkitWarning, InputError, SettingsError

REFERENCE = Path(__file__).resolve().parents[1] / "reference" / "iec61000-4-15.csv"

#: Project tolerance (issue 3): sinusoidal fluctuations give Pinst,max = 1.00 within 2 %.
PINST_TOL = 0.02
#: Project tolerance (issue 3), the IEC 61000-4-15 tolerance as recalled from memory (+-5 %):
#: rectangular Pst = 1.00 within 5 %.
PST_RECT_TOL = 0.05
#: Project tolerance (issue 3): Pst unchanged within 1 % between 10 kS/s and 100 kS/s.
RATE_TOL = 0.01
#: Digital vs analogue magnitude of blocks 3a-3c: at a 2 kHz working rate, 0.05-30 Hz and
#: 30-45 Hz; at the lowest accepted rate (1 kHz) four times looser (bilinear warping ~ 1/fs^2).
#: Chosen from the design, no source.
MAG_TOL_2K = (0.0015, 0.01)
MAG_TOL_1K = (0.006, 0.04)
#: "Near 0" for pure 100/120 Hz ripple: a fiftieth of the Pst LM = 1 level (chosen, no source).
PST_RIPPLE_MAX = 0.02
#: Proportionality: Pinst is exactly quadratic in the depth, so Pst is linear (analytic).
LINEAR_TOL = 1e-3

#: The voltage tables run at 2 kS/s (working rate 2 kHz, no decimation): cheap and exact.
FS_VOLT = 2000.0
OBS_SINE_S = 20.0


def _table(kind: str) -> list[dict]:
    with REFERENCE.open(newline="") as fh:
        rows = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    return [r for r in rows if r["table"] == kind and r["in_test"] == "yes"]


def _mains(envelope: np.ndarray, t: np.ndarray, mains_hz: float) -> np.ndarray:
    return envelope * 325.0 * np.sin(2 * np.pi * mains_hz * t + 0.1)


MAINS = {"230V": 50.0, "120V": 60.0}


def _quiet(func, *args, **kwargs):
    """Run a chain call with the expected (short capture / provisional) warnings silenced."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FlickerkitWarning)
        return func(*args, **kwargs)


# -- voltage mode: the standard's tables -----------------------------------------------


@pytest.mark.parametrize("row", _table("sinusoidal"),
                         ids=lambda r: f"{r['lamp']}-{r['frequency_hz']}Hz")
def test_sinusoidal_table_gives_pinst_max_one(row):
    # source: IEC 61000-4-15 sinusoidal table, values from memory (not read in the standard),
    # cross-checked numerically (reference/iec61000-4-15.csv); expected Pinst,max = 1.00 within
    # the project tolerance of 2 %
    f, dv = float(row["frequency_hz"]), float(row["delta_v_percent"]) / 100.0
    settle = fm.SETTLING_S
    t = np.arange(int((settle + OBS_SINE_S) * FS_VOLT)) / FS_VOLT
    u = _mains(1.0 + dv / 2.0 * np.sin(2 * np.pi * f * t), t, MAINS[row["lamp"]])
    result = _quiet(fm.pst_voltage, u, FS_VOLT, lamp=row["lamp"], observation_s=OBS_SINE_S)
    assert result.pinst_max == pytest.approx(float(row["expected"]), rel=PINST_TOL)
    assert result.calibration == fm.LAMPS[row["lamp"]]


def _rectangular(cpm: float, dv: float, mains_hz: float, fs: float, obs_s: float = 600.0):
    """Square envelope with exactly cpm x obs/60 level changes inside the observation window."""
    settle = fm.SETTLING_S
    half = 60.0 / cpm  # time between changes [s]
    t = np.arange(int((settle + obs_s) * fs)) / fs
    n_changes = np.floor((t - settle) / half + 0.5)  # changes at settle + (k + 0.5) * half
    n_changes[t < settle] = 0
    sign = np.where(n_changes % 2 == 0, -1.0, 1.0)
    return _mains(1.0 + dv / 2.0 * sign, t, mains_hz)


@pytest.mark.parametrize("row", _table("rectangular"),
                         ids=lambda r: f"{r['lamp']}-{r['changes_per_minute']}cpm")
def test_rectangular_table_gives_pst_one(row):
    # source: IEC 61000-4-15 rectangular table, values from memory (not read in the standard):
    # 230 V cross-checked numerically; 120 V checked only by this chain
    # (reference/iec61000-4-15.csv).
    # Expected Pst = 1.00 within 5 % (project tolerance); 10 min observation, the standard's.
    cpm, dv = float(row["changes_per_minute"]), float(row["delta_v_percent"]) / 100.0
    u = _rectangular(cpm, dv, MAINS[row["lamp"]], FS_VOLT)
    result = fm.pst_voltage(u, FS_VOLT, lamp=row["lamp"])
    assert not result.short and result.observation_s == pytest.approx(600.0)
    assert result.pst == pytest.approx(float(row["expected"]), rel=PST_RECT_TOL)


def test_voltage_mode_through_decimation():
    # the same table point at 20 kS/s (decimated by 10): source as above, 230 V 39 cpm
    fs = 20_000.0
    u = _rectangular(39.0, 0.00906, 50.0, fs, obs_s=120.0)
    result = _quiet(fm.pst_voltage, u, fs, observation_s=120.0)
    assert result.working_rate_hz == pytest.approx(2000.0)
    # 2 minutes hold 78 changes; the standard's point is for 10 min, so compare loosely
    assert result.pst == pytest.approx(1.0, rel=PST_RECT_TOL)


# -- the digital chain against its analogue prototype ----------------------------------


@pytest.mark.parametrize("cal", [fm.IEC_230V, fm.IEC_120V], ids=lambda c: c.name)
@pytest.mark.parametrize("fw, tols", [(2000.0, MAG_TOL_2K), (1000.0, MAG_TOL_1K)])
def test_digital_magnitude_follows_analogue(cal, fw, tols):
    # analytic: |H(j 2 pi f)| of the analogue HP x Butterworth x F(s) prototype
    sos = fm.digital_chain(cal, fw)
    for band, tol in zip([(0.05, 30.0), (30.0, 45.0)], tols):
        f = np.geomspace(*band, 200)
        _, hd = sosfreqz(sos, worN=f, fs=fw)
        ratio = np.abs(hd) / np.abs(fm.analogue_response(cal, f))
        assert np.max(np.abs(ratio - 1.0)) < tol


def test_analogue_weighting_peak():
    # from memory (IEC 61000-4-15): the weighting filter of the 230 V lamp peaks near 8.8 Hz
    f = np.linspace(5, 15, 2001)
    h = np.abs(fm.analogue_response(fm.IEC_230V, f))
    assert 8.0 < f[np.argmax(h)] < 9.5


@pytest.mark.parametrize("fs", [10_000.0, 20_000.0, 44_100.0, 100_000.0, 1_000_000.0])
def test_decimation_filter_has_unity_dc_gain(fs):
    # measured with scipy 1.17: scipy.signal.decimate's default IIR has DC gain 0.98855 (1.1 % low);
    # analytic requirements: DC gain 1, flat to 100 Hz, >= 90 dB down where aliases reach < 100 Hz
    q = fm.decimation_factor(fs)
    h = fm.decimation_filter(q, fs)
    assert h.sum() == pytest.approx(1.0, abs=1e-12)
    assert (h.size - 1) % q == 0
    fw = fs / q
    _, hp = freqz(h, worN=np.linspace(0, 100, 51), fs=fs)
    assert np.max(np.abs(np.abs(hp) - 1)) < 1e-4
    stop = np.linspace(fw - 100, min(fs / 2, 3 * fw), 400)
    _, hs = freqz(h, worN=stop, fs=fs)
    assert 20 * np.log10(np.max(np.abs(hs))) < -90


def test_chunked_equals_one_shot():
    # analytic: the filter states are carried, so chunking cannot change Pinst
    fs = 20_000.0
    t = np.arange(int(16 * fs)) / fs
    x = (0.6 + 0.4 * np.abs(np.sin(2 * np.pi * 50 * t))) * (1 + 0.003 * np.sin(2 * np.pi * 7 * t))
    one = fm.Flickermeter(fs)
    one.process(x)
    many = fm.Flickermeter(fs)
    rng = np.random.default_rng(3)
    small = np.cumsum(rng.integers(1, 30, 300))  # tiny chunks first (start-up buffering)
    cuts = np.concatenate((small, np.sort(rng.choice(np.arange(small[-1] + 1, x.size), 40,
                                                     replace=False))))
    for chunk in np.split(x, cuts):
        many.process(chunk)
    a, b = one.pinst, many.pinst
    assert a.size == b.size
    np.testing.assert_array_equal(b, a)
    assert _quiet(many.result, 10.0).pst == pytest.approx(_quiet(one.result, 10.0).pst, rel=1e-12)


# -- light mode (Pst LM) ---------------------------------------------------------------


def _light(fs: float, duration_s: float, depth: float = 0.004, f_mod: float = 6.0) -> np.ndarray:
    """Rectified-mains ripple at 100 Hz times a slow sinusoidal modulation of the mean."""
    t = np.arange(int(duration_s * fs)) / fs
    return (0.6 + 0.4 * np.abs(np.sin(2 * np.pi * 50 * t + 0.2))) * (
        1 + depth * np.sin(2 * np.pi * f_mod * t))


def test_pst_lm_unchanged_between_10_and_100_ks():
    # project tolerance: within 1 % between 10 kS/s and 100 kS/s (same signal); also a 1 kHz PWM
    # with edges between samples
    vals = {}
    for fs in (10_000.0, 100_000.0):
        t = np.arange(int(16 * fs)) / fs
        pwm = np.where(((t * 1000 + 0.123) % 1.0) < 0.3, 1.0, 0.0) * (
            1 + 0.004 * np.sin(2 * np.pi * 6 * t))
        vals[fs] = (_quiet(fm.pst_lm, _light(fs, 16), fs, observation_s=10.0).pst,
                    _quiet(fm.pst_lm, pwm, fs, observation_s=10.0).pst)
    for a, b in zip(vals[10_000.0], vals[100_000.0]):
        assert a > 0.3
        assert b == pytest.approx(a, rel=RATE_TOL)


@pytest.mark.parametrize("mains_hz, cal", [(50.0, "light-provisional-230v"),
                                           (60.0, "light-provisional-120v")])
def test_pst_lm_near_zero_for_pure_ripple(mains_hz, cal):
    # analytic (inference from the chain, IEC 61000-4-15 filters from memory): the 35 / 42 Hz
    # 6th-order Butterworth passes (35/100)^6 ~ 0.2 % at 100 Hz, so pure >= 100 Hz ripple gives
    # Pst LM ~ 0
    ripple = 2 * mains_hz
    fs = 200.0 * ripple  # 200 samples per ripple period: PWM edges repeat exactly
    t = np.arange(int(16 * fs)) / fs
    waves = {
        "sine": 1 + 0.5 * np.sin(2 * np.pi * ripple * t),
        "rectified": np.abs(np.sin(2 * np.pi * mains_hz * t)),
        "pwm": np.where(((t * ripple + 0.37 / 200) % 1.0) < 0.5, 1.0, 0.0),
    }
    for name, x in waves.items():
        result = _quiet(fm.pst_lm, x, fs, calibration=cal, observation_s=10.0)
        assert result.pst < PST_RIPPLE_MAX, name
    # analytic: a steady sine ripple gives a constant Pinst = S (m |H|)^2 / 2, so
    # Pst = sqrt(0.5096 Pinst) (sum of the formula's coefficients); the digital chain's stop
    # band near 100 Hz follows the analogue one within 10 %
    c = fm.get_calibration(cal)
    pinst = fm.pinst_scale(c) * (0.5 * abs(fm.analogue_response(c, ripple))) ** 2 / 2
    result = _quiet(fm.pst_lm, waves["sine"], fs, calibration=cal, observation_s=10.0)
    assert result.pst == pytest.approx(math.sqrt(0.5096 * pinst), rel=0.10)


def test_pst_lm_proportional_to_depth():
    # analytic: the chain is linear up to squaring, so Pinst ~ depth^2 and Pst ~ depth
    fs = 10_000.0
    values = [_quiet(fm.pst_lm, _light(fs, 16, depth=d), fs, observation_s=10.0).pst
              for d in (0.002, 0.004, 0.008)]
    assert values[1] / values[0] == pytest.approx(2.0, rel=LINEAR_TOL)
    assert values[2] / values[1] == pytest.approx(2.0, rel=LINEAR_TOL)


def test_light_reference_point_of_provisional_calibration():
    # definition of the provisional calibration (no external source): 0.500 % peak-to-peak light
    # modulation at 8.8 Hz gives Pinst,max = 1; checks that the digital chain keeps it
    fs = 20_000.0
    t = np.arange(int(20 * fs)) / fs
    x = 1 + 0.0025 * np.sin(2 * np.pi * 8.8 * t)
    with pytest.warns(FlickerkitWarning, match="provisional"):
        result = fm.pst_lm(x, fs, observation_s=15.0)
    assert result.pinst_max == pytest.approx(1.0, rel=PINST_TOL)
    assert result.calibration == fm.DEFAULT_LIGHT_CALIBRATION
    assert result.calibration_status == "provisional"
    assert result.signal == "light"


def test_settling_time_is_enough():
    # the documented settling (5 s) gives the same Pst as 30 s (chain started in steady state)
    fs = 4000.0
    x = _light(fs, 45, f_mod=0.7)
    a = _quiet(fm.pst, x[int(25 * fs):], fs, observation_s=15.0).pst
    b = _quiet(fm.pst, x, fs, observation_s=15.0, settling_s=30.0).pst
    assert a == pytest.approx(b, rel=2e-3)


# -- observation time, short captures, errors ------------------------------------------


def test_short_capture_is_flagged_and_too_short_refused():
    fs = 4000.0
    x = _light(fs, 20)  # 15 s after settling: less than the 60 s default observation
    with pytest.warns(FlickerkitWarning) as record:
        result = fm.pst_lm(x, fs)
    assert any(issubclass(w.category, CaptureWarning) and "shorter than the 60 s"
               in str(w.message) for w in record)
    assert result.short and result.observation_s == pytest.approx(15.0, abs=0.01)
    assert result.method_observation_s == 60.0
    assert any("shorter" in w for w in result.warnings)
    with pytest.raises(InputError, match="too short for Pst"):
        fm.pst_lm(_light(fs, 12), fs)
    with pytest.raises(SettingsError, match="at least 10 s"):
        fm.pst_lm(x, fs, observation_s=5.0)


def test_long_capture_gives_windows():
    fs = 2000.0
    x = _light(fs, 5 + 3 * 12, depth=0.003)
    result = _quiet(fm.pst_lm, x, fs, observation_s=12.0)
    assert len(result.pst_windows) == 3 and not result.short
    assert result.pst == max(result.pst_windows)
    np.testing.assert_allclose(result.pst_windows, result.pst, rtol=5e-3)


def test_bad_inputs():
    with pytest.raises(InputError, match="too low for the flickermeter"):
        fm.Flickermeter(500.0)
    with pytest.raises(SettingsError, match="built-in ones are"):
        fm.Flickermeter(2000.0, "no-such-calibration")
    with pytest.raises(SettingsError, match="230V, 120V"):
        fm.pst_voltage(np.ones(100), 2000.0, lamp="240V")
    with pytest.raises(SettingsError, match="for voltage, not light"):
        fm.pst_lm(np.ones(100), 2000.0, calibration="iec61000-4-15-230v")
    with pytest.raises(InputError, match="not positive"):
        fm.pst_lm(np.zeros(40_000), 2000.0)


def test_pst_formula_on_constant_pinst():
    # analytic: all percentiles equal c, so Pst = sqrt(c * (0.0314+0.0525+0.0657+0.28+0.08))
    pst, pc = fm.pst_from_pinst(np.full(1000, 2.0))
    assert pst == pytest.approx(math.sqrt(2.0 * 0.5096))
    assert pc == {"P0.1": 2.0, "P1s": 2.0, "P3s": 2.0, "P10s": 2.0, "P50s": 2.0}


# -- calibrations ----------------------------------------------------------------------


def test_calibration_toml_round_trip(tmp_path):
    path = tmp_path / "lab.toml"
    path.write_text(fm.LIGHT_PROVISIONAL_230V.to_toml(), encoding="utf-8")
    assert fm.load_calibration(path) == fm.LIGHT_PROVISIONAL_230V
    text = fm.LIGHT_PROVISIONAL_230V.to_toml().replace(
        'name = "light-provisional-230v"', 'name = "lab-2024"').replace(
        'status = "provisional"', 'status = "laboratory"').replace(
        "reference_modulation_percent = 0.5", "reference_modulation_percent = 0.4")
    path.write_text(text, encoding="utf-8")
    cal = fm.load_calibration(path)
    assert cal.name == "lab-2024" and cal.reference_modulation == pytest.approx(0.004)
    # analytic: Pinst scales as 1 / reference^2, so Pst as 1 / reference
    fs = 2000.0
    x = _light(fs, 16)
    a = _quiet(fm.pst_lm, x, fs, observation_s=10.0).pst
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", CaptureWarning)
        b = fm.pst_lm(x, fs, calibration=cal, observation_s=10.0)
    assert b.pst == pytest.approx(a * 0.5 / 0.4, rel=1e-9)
    assert b.calibration == "lab-2024" and not any("provisional" in w for w in b.warnings)


@pytest.mark.parametrize("edit, message", [
    (lambda s: s + "colour = 3\n", "unknown calibration key"),
    (lambda s: "\n".join(ln for ln in s.splitlines() if not ln.startswith("f4_hz")),
     "lacks key.*f4_hz"),
    (lambda s: s.replace("k = 1.74802", "k = -1.0"), "k must be a positive number"),
    (lambda s: s.replace('signal = "light"', 'signal = "sound"'), "signal must be one of"),
    (lambda s: s + "[[", "not valid TOML"),
])
def test_bad_calibration_files(tmp_path, edit, message):
    path = tmp_path / "bad.toml"
    path.write_text(edit(fm.LIGHT_PROVISIONAL_230V.to_toml()), encoding="utf-8")
    with pytest.raises(SettingsError, match=message):
        fm.load_calibration(path)
    with pytest.raises(SettingsError, match="cannot read"):
        fm.load_calibration(tmp_path / "missing.toml")


def test_default_calibration_documents_its_origin():
    cal = fm.get_calibration(fm.DEFAULT_LIGHT_CALIBRATION)
    assert cal.signal == "light" and cal.status == "provisional"
    assert "not IEC TR 61547-1" in cal.origin
    assert fm.IEC_120V.lowpass_hz == 42.0 and fm.IEC_230V.lowpass_hz == 35.0
