"""The drive, plan and camera commands through the entry point."""

import json

import pytest

from flickerkit.cli import main


def run_json(capsys, argv):
    assert main(argv + ["--json", "-q"]) == 0
    return json.loads(capsys.readouterr().out)


def test_drive_json_has_measure_keys_and_level(capsys):
    out = run_json(capsys, ["drive", "-f", "1000", "--levels", "100,50,10,1"])
    recs = out["levels"]
    # dimming levels are percent at the JSON edge, as in report's JSON
    assert [r["level"] for r in recs] == pytest.approx([100.0, 50.0, 10.0, 1.0])
    for r in recs:
        for key in ("frequency_hz", "percent_flicker", "flicker_index", "ieee1789", "warnings",
                    "mean", "sample_rate_hz", "duration_s", "periods", "harmonics", "level",
                    "svm"):
            assert key in r
    # analytic: 0/1 PWM at 1 kHz, FI = 1 - D; full depth at 1 kHz is above low risk
    assert recs[2]["flicker_index"] == pytest.approx(0.9, rel=0.01)
    assert recs[1]["ieee1789"]["region"] == "above-low-risk"
    assert out["first_failing_level"]["ieee1789-low-risk"] == pytest.approx(50.0)
    # Pst LM needs 15 s of light (IEC 61000-4-15 settling plus observation); a sweep models
    # well under a second per level, so the criterion is unknown, not passed
    assert all(r["pst_lm"] is None for r in recs)
    assert out["first_failing_level"]["pst_lm<=1"] is None
    assert out["not_assessed"] == ["pst_lm<=1"]


def test_drive_file_and_workbook(tmp_path, capsys):
    f = tmp_path / "d.toml"
    f.write_text('method = "pwm"\nfrequency_hz = 4000\nlevels = [100, 10, 1]\n'
                 '[edges]\nkind = "linear"\nrise_s = 1e-6\nfall_s = 1e-6\n')
    x = tmp_path / "s.xlsx"
    out = run_json(capsys, ["drive", "--drive-file", str(f), "--xlsx", str(x)])
    assert [r["level"] for r in out["levels"]] == pytest.approx([100.0, 10.0, 1.0])
    # IEEE 1789: above 3 kHz every level is no-observable-effect
    assert out["first_failing_level"]["ieee1789-noel"] is None
    assert "ieee1789-noel" not in out["not_assessed"]  # None here means every level passes
    from openpyxl import load_workbook

    ws = load_workbook(x)["Levels"]
    header = [c.value for c in ws[1]]
    pf_col = header.index("Percent flicker [%]")
    got = [ws.cell(row=i + 2, column=pf_col + 1).value for i in range(3)]
    assert got == pytest.approx([r["percent_flicker"] for r in out["levels"]])


def test_plan_json(capsys):
    out = run_json(capsys, ["plan", "-t", "low-risk", "--clock-mhz", "16", "--prescalers",
                            "1,8", "--bits", "10"])
    assert out["lowest_frequency_hz"] == pytest.approx(1250.0, rel=1e-3)
    assert out["feasible"] is True and out["settings"]


def test_camera_json(capsys):
    out = run_json(capsys, ["camera", "-f", "1000", "--level", "10", "--fps", "30",
                            "--exposure", "1/120", "--suggest", "1250:20000",
                            "--tolerance", "0"])  # an exact clock: whole periods, no bands
    cam = out["cameras"][0]
    assert cam["beat_hz"] == pytest.approx(10.0)  # analytic: fps x dist(f/fps, integer)
    # analytic, reference/camera_banding.csv
    assert cam["band_contrast_percent"] == pytest.approx(5.9, abs=0.05)
    assert out["suggestions"][0]["worst_band_contrast_percent"] == pytest.approx(0, abs=1e-7)


@pytest.mark.parametrize("argv,match", [
    (["drive", "-f", "-5"], "PWM frequency"),
    (["drive", "--levels", "150"], "outside"),
    (["drive", "-f", "1000", "--rise-us", "2000"], "not shorter than the PWM period"),
    (["drive", "--drive-file", "/nonexistent.toml"], "cannot read drive file: no such file"),
    (["plan", "-t", "svm<=0.4", "--clock-mhz", "16", "--prescalers", "1,8", "--prescaler", "3"],
     "no prescaler 3"),
    (["plan", "-t", "low-risk", "--range", "10:1000"], "no PWM frequency"),
    (["camera", "--fps", "30", "--exposure", "0.5"], "no exposure fits"),
    # zero or empty values are refused, not read as "not given"
    (["drive", "--ripple", "3", "--line-hz", "0"], "line frequency [Hz] must be"),
    (["drive", "--levels", ""], "--levels: no level given"),
    (["plan", "-t", "low-risk", "--levels", "0"], "--levels must be at least 2"),
    # a rolling shutter reads all rows within one frame period (1/30 s = 33.3 ms)
    (["camera", "--fps", "30", "--readout-ms", "40"], "longer than the frame period"),
    (["camera", "--max-contrast", "-1"], "--max-contrast must be 0 to 100 %"),
])
def test_bad_input_one_line(capsys, argv, match):
    assert main(argv + ["-q"]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and match in err[0] and "Traceback" not in err[0]


def test_failed_run_leaves_no_workbook(tmp_path, capsys):
    x = tmp_path / "out.xlsx"
    assert main(["drive", "-f", "-1", "--xlsx", str(x), "-q"]) == 1
    assert not x.exists()


def test_levels_are_percent_at_every_edge(capsys):
    # one name, one unit: 'level' is percent in drive, plan and camera JSON as in report's
    out = run_json(capsys, ["plan", "-t", "low-risk", "--min-level", "1", "--levels", "3"])
    assert min(out["levels"]) == pytest.approx(1.0) and max(out["levels"]) == pytest.approx(100)
    assert out["frequency"]["limiting_level"] == pytest.approx(1.0)
    cam = run_json(capsys, ["camera", "-f", "1000", "--level", "10", "--fps", "30",
                            "--exposure", "1/120"])
    assert cam["level"] == pytest.approx(10.0)
    hyb = run_json(capsys, ["drive", "--method", "hybrid", "--crossover-level", "20", "-f",
                            "1250", "--levels", "50,10"])
    assert "crossover 20 %" in hyb["drive"]
    # the old fraction option is refused in one line, never read as 0.2 %
    assert main(["drive", "--method", "hybrid", "--crossover", "0.2", "-q"]) == 1
    err = capsys.readouterr().err
    assert "--crossover-level" in err and len(err.strip().splitlines()) == 1


def test_drive_table_says_what_decided_the_region(capsys):
    # 2 kHz PWM at 50 % whose light carries 20 % sine ripple at 100 Hz: the PWM fundamental is
    # exempt from the low-risk line above 1250 Hz, so the region is decided by the ripple,
    # 20 % against 0.08 x 100 = 8 % (IEEE 1789-2015 RP1 line, recalled from memory); the
    # terminal must say so, as measure does, not only print 2000 Hz and above-low-risk
    assert main(["drive", "-f", "2000", "--ripple", "20", "--levels", "50", "-q"]) == 0
    out = capsys.readouterr().out
    line = next(ln for ln in out.splitlines() if "decided by" in ln)
    assert "50 %" in line and "100 Hz" in line and "8 % low-risk line" in line


def test_drive_harmonics_are_the_models_not_the_aliased_capture(capsys):
    # 2 kHz PWM at 50 % duty with 20 % ripple: the harmonics of 2 kHz have the square wave's
    # closed form C_k = 2 sin(pi k D) / (pi k D) = 4 / (pi k) for odd k, 0 for even k (analytic;
    # the ripple only adds sidebands at k 2000 +- 100 Hz). The sampled capture behind a sweep
    # row has 16 samples per period and folds the upper harmonics (h7 read 40 % high)
    import numpy as np

    out = run_json(capsys, ["drive", "-f", "2000", "--ripple", "20", "--levels", "50"])
    h = out["levels"][0]["harmonics"]
    assert [x["order"] for x in h][:8] == list(range(1, 9))
    for x in h:
        k = x["order"]
        assert x["frequency_hz"] == pytest.approx(2000.0 * k, rel=1e-9)
        want = 4.0 / (np.pi * k) if k % 2 else 0.0
        assert x["amplitude"] == pytest.approx(want, rel=1e-6, abs=1e-9)
    assert len(h) == 20  # as measure reports (AssessSettings.harmonics)


def test_drive_picture_draws_the_limits_it_judges():
    # the sweep judges SVM <= 0.9 and <= 0.4 (Regulation (EU) 2019/2020 as amended, Annex II)
    # and Pst LM <= 1; its metrics-against-level picture says "with limit lines", so the
    # SVM panel must carry both lines
    from flickerkit.drive import Drive
    from flickerkit.export.figures import levels_figure
    from flickerkit.export.modelbooks import sweep_limits
    from flickerkit.sweep import sweep

    out = sweep(Drive(method="pwm", frequency_hz=1234.56), [1.0, 0.5]).to_dict()
    recs = [{**r, "label": f"level {r['level']:g} %"} for r in out["levels"]]
    fig = levels_figure(recs, sweep_limits())
    svm_ax = fig.axes[2]
    assert svm_ax.get_ylabel() == "SVM [1]"
    flat = sorted(float(ln.get_ydata()[0]) for ln in svm_ax.get_lines()
                  if len(set(ln.get_ydata())) == 1 and ln.get_linestyle() == "--")
    assert flat == [0.4, 0.9]


def test_drive_file_levels_in_a_drive_table_are_swept(tmp_path, capsys):
    # a project's [drive] table copied into a drive file: its levels are the sweep's
    # (they were dropped, and the default 25 levels swept)
    f = tmp_path / "d.toml"
    f.write_text('[drive]\nfrequency_hz = 2345.6\nlevels = [80, 12.5]\n')
    out = run_json(capsys, ["drive", "--drive-file", str(f)])
    assert [r["level"] for r in out["levels"]] == pytest.approx([80.0, 12.5])
    assert "2345.6 Hz" in out["drive"]
    # analytic: ideal 0/1 PWM, flicker index = 1 - duty
    assert out["levels"][1]["flicker_index"] == pytest.approx(0.875, rel=0.01)


@pytest.mark.parametrize("text,match", [
    # a key beside [drive] was dropped: the sweep ran at 1000 Hz, not 3000
    ('frequency_hz = 3000\n[drive]\nmethod = "pwm"\n', "frequency_hz beside the [drive] table"),
    ('levels = [100]\n[drive]\nlevels = [50]\n', "levels are given twice"),
    # these ended in a traceback
    ("edges = 3\n", "[edges] must be a table"),
    ('ripple = "x"\n', "[ripple] must be a table"),
    ("channels = 2\nphase_offsets_deg = 5\n", "phase_offsets_deg must be a list of numbers"),
    ('channels = 2\nphase_offsets_deg = "ab"\n', "phase_offsets_deg must be a list of numbers"),
])
def test_bad_drive_file_one_line(tmp_path, capsys, text, match):
    f = tmp_path / "bad.toml"
    f.write_text(text)
    assert main(["drive", "--drive-file", str(f), "--levels", "50", "-q"]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and match in err[0] and str(f) in err[0], err


def test_drive_option_choices_are_the_models_names():
    # the options list the choices by hand (--help must not import numpy); they must be the
    # models' own
    import argparse

    from flickerkit.cli._driveopts import add_drive_options
    from flickerkit.drive import EDGE_KINDS, METHODS, MIN_ON_MODES
    from flickerkit.light import RIPPLE_SHAPES

    p = argparse.ArgumentParser()
    add_drive_options(p)
    choices = {a.dest: tuple(a.choices) for a in p._actions if a.choices}
    assert choices == {"method": METHODS, "edges": EDGE_KINDS, "min_on_mode": MIN_ON_MODES,
                       "ripple_shape": RIPPLE_SHAPES}
