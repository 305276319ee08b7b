"""Issue 12, every number bounded: absurd counts and values are refused at once, with the limit.

Each case is one command that ran for minutes, gave a traceback or was accepted silently.
A thread with a time-out proves "at once" without timing assertions on the result.
"""

import threading

import numpy as np
import pytest

from flickerkit.cli import main


@pytest.fixture
def cap(tmp_path):
    fs = 10_000.0
    t = np.arange(5000) / fs
    p = tmp_path / "c.csv"
    p.write_text("time,light\n" + "\n".join(
        f"{a:.6f},{1 + 0.3 * np.sin(2 * np.pi * 123.4 * a):.6f}" for a in t) + "\n")
    return p


def _refused(capsys, argv, match, limit_s=30):
    box = {}
    t = threading.Thread(target=lambda: box.setdefault("rc", main([str(a) for a in argv])),
                         daemon=True)
    t.start()
    t.join(limit_s)  # generous on a shared machine; the refusal itself is immediate
    assert not t.is_alive(), f"{argv} still running after {limit_s} s"
    assert box["rc"] == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and match in err[0] and "Traceback" not in err[0], err


@pytest.mark.parametrize("argv,match", [
    (["drive", "--channels", "100000", "--levels", "100"], "channels must be at most 64"),
    (["drive", "--levels", "100:0.1:100000"], "above the limit of 1000"),
    (["drive", "--levels", ",".join(["50"] * 1001)], "above the limit of 1000"),
    (["plan", "-t", "low-risk", "--levels", "10000000"], "above the limit of 200"),
    (["drive", "-f", "1e308", "--levels", "100"], "frequency_hz must be at most 1e+08"),
    (["drive", "--counts", "100000000000", "--levels", "100"], "counts_per_period must be"),
    (["drive", "--counts", "1000", "--dither-bits", "40", "--levels", "100"], "dither_bits"),
    (["plan", "-t", "low-risk", "--range", "10:1e308"], "above the limit of 1e+08 Hz"),
])
def test_absurd_model_numbers_are_refused_at_once(capsys, argv, match):
    _refused(capsys, argv + ["-q"], match)


@pytest.mark.parametrize("opts,match", [
    (["-r", "1e308"], "--sample-rate must be above 0 and at most 1e+10"),
    (["-r", "nan"], "--sample-rate must be a finite number"),
    (["--harmonics", "100000000"], "--harmonics 100000000 is above the limit of 1000"),
    (["--pst-observation", "1e308"], "--pst-observation must be at most 86400"),
    (["--svm-lower", "1e308"], "--svm-lower must be"),
    (["--time-unit", "hours"], "--time-unit 'hours' is not a unit of time"),
    (["-j", "100000000"], "--workers 100000000 is above the limit"),
])
def test_absurd_reading_and_analysis_options(cap, capsys, opts, match):
    _refused(capsys, ["measure", cap, "-q"] + opts, match)


@pytest.mark.parametrize("unit", ["ms", "MS", "Ms", "mS"])
def test_time_unit_ms_in_any_case_means_milliseconds(tmp_path, capsys, unit):
    import json

    fs = 10_000.0
    t = np.arange(5000) / fs
    p = tmp_path / "ms.csv"  # time written in milliseconds
    p.write_text("time,light\n" + "\n".join(
        f"{1000 * a:.4f},{1 + 0.3 * np.sin(2 * np.pi * 123.4 * a):.6f}" for a in t) + "\n")
    assert main(["measure", str(p), "--time-unit", unit, "--json", "-q"]) == 0
    d = json.loads(capsys.readouterr().out)[0]
    assert d["sample_rate_hz"] == pytest.approx(fs)  # analytic: 0.1 ms steps
    assert d["frequency_hz"] == pytest.approx(123.4, rel=1e-6)


def test_drive_file_values_bounded(tmp_path, capsys):
    for body, match in (("frequency_hz = 1e308\n", "frequency_hz must be at most 1e+08"),
                        ("channels = 100000\n", "channels must be at most 64"),
                        ('levels = "100:0.1:100000"\n', "above the limit of 1000")):
        d = tmp_path / "d.toml"
        d.write_text(body)
        _refused(capsys, ["drive", "--drive-file", d, "-q"], match)


def test_project_drive_values_bounded(tmp_path, capsys):
    p = tmp_path / "p.toml"
    p.write_text('[product]\nname = "invented"\n[drive]\nchannels = 100000\n')
    _refused(capsys, ["report", p, "-o", tmp_path / "r.xlsx", "-q"],
             "[drive]: channels must be at most 64")


@pytest.mark.parametrize("key,value", [("lowpass_hz", "1e308"), ("observation_s", "1e308"),
                                       ("f1_hz", "inf")])
def test_calibration_constants_bounded(cap, tmp_path, capsys, key, value):
    import re

    from flickerkit.flickermeter import LIGHT_PROVISIONAL_230V

    text = re.sub(rf"^{key} = .*$", f"{key} = {value}", LIGHT_PROVISIONAL_230V.to_toml(),
                  flags=re.M)
    cal = tmp_path / "lab.toml"
    cal.write_text(text)
    _refused(capsys, ["measure", cap, "--pst-calibration", cal, "-q"], key)


@pytest.mark.parametrize("argv,match", [
    (["camera", "--fps", "1e-308"], "--fps must be 0.01 to 1e+06"),
    (["camera", "--rows", "1000000000"], "--rows 1000000000 is above the limit of 100000"),
    (["camera", "--exposure", "1e308"], "--exposure must be above 0 and at most 100"),
    (["steps", "-n", "64", "--bits", "12", "--pwm-frequency", "1e308"],
     "--pwm-frequency must be at most 1e+08"),
    (["steps", "-n", "64", "--bits", "12", "--visible-step", "1e308"], "--visible-step must be"),
])
def test_camera_and_steps_options_bounded(capsys, argv, match):
    _refused(capsys, argv + ["-q"], match)


def test_steps_output_and_workbook_spelled_differently_are_one_file(tmp_path, capsys):
    _refused(capsys, ["steps", "-n", "8", "--bits", "10", "-o", tmp_path / "s.csv", "--xlsx",
                      f"{tmp_path}/./s.csv", "-q"], "name the same file")


@pytest.mark.parametrize("dark,match", [
    ("1e308", "--dark: dark level 1e+308 is beyond any plausible signal"),
    ("-1e200", "--dark: dark level -1e+200 is beyond any plausible signal"),
    ("SELF", "is the capture itself")])
def test_absurd_dark_level_names_the_option(cap, capsys, dark, match):
    # Second review: --dark 1e308 was blamed on the capture ("samples reach 1e+308 ... check
    # the file's scaling"); the capture as its own dark file gave ~0 mean light and exit 0.
    _refused(capsys, ["measure", cap, f"--dark={cap if dark == 'SELF' else dark}", "-q"], match)
