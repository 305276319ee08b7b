"""``flickerkit steps`` through the command-line entry point."""

from __future__ import annotations

import csv
import io
import json
import re
import shutil
import subprocess
import tomllib
import zipfile
from pathlib import Path

import pytest

from flickerkit.cli import main

REFERENCE = Path(__file__).resolve().parent.parent / "reference"
LSTAR = tomllib.loads((REFERENCE / "lstar_64_steps.toml").read_text())
CC = shutil.which("gcc") or shutil.which("cc") or shutil.which("clang")


def run(capsys, *argv):
    code = main(["steps", *argv])
    out, err = capsys.readouterr()
    return code, out, err


def test_json_has_steps_and_summary(capsys):
    code, out, _ = run(capsys, "-n", "64", "--bits", "8", "--rounding", "nearest",
                       "--format", "json")
    assert code == 0
    d = json.loads(out)
    assert set(d) == {"steps", "summary"}
    counts = [s["count"] for s in d["steps"]]
    assert counts == LSTAR["table"][0]["counts"]  # computed: CIE 15:2004 inverse L*, 8-bit
    assert all("relative_light" in s for s in d["steps"])
    assert d["summary"]["steps_lost"] == 5 and d["summary"]["lit_steps_dark"] == [1]


def test_csv_matches_json(capsys):
    _, out_csv, _ = run(capsys, "-n", "30", "--bits", "12", "--format", "csv",
                        "--pwm-frequency", "500")
    _, out_json, _ = run(capsys, "-n", "30", "--bits", "12", "--format", "json",
                         "--pwm-frequency", "500", "-q")
    rows = list(csv.DictReader(io.StringIO(out_csv)))
    steps = json.loads(out_json)["steps"]
    assert [int(r["count"]) for r in rows] == [s["count"] for s in steps]
    assert {"percent_flicker", "flicker_index", "ieee1789_region", "svm"} <= set(rows[0])
    assert float(rows[5]["relative_light"]) == steps[5]["relative_light"]


def test_terminal_table_and_summary(capsys):
    code, out, err = run(capsys, "-n", "255", "--curve", "iec62386", "--off", "--bits", "8",
                         "--rounding", "nearest")
    assert code == 0
    assert "steps not shown" in out and "distinct counts: 109 of 255" in out  # computed
    assert "caution" not in err  # no flicker judgement asked for


def test_flicker_prints_a_caution(capsys):
    code, out, err = run(capsys, "-n", "16", "--bits", "10", "--pwm-frequency", "1000")
    assert code == 0 and "first step outside IEEE 1789 low-risk" in out
    assert "accredited laboratory" in err


@pytest.mark.skipif(CC is None, reason="no C compiler on this machine")
def test_c_header_to_file_compiles(tmp_path, capsys):
    h = tmp_path / "fade.h"
    code, out, err = run(capsys, "-n", "64", "--bits", "12", "--format", "c", "--name",
                         "fade_table", "-o", str(h))
    assert code == 0 and out == "" and f"written: {h}" in err
    text = h.read_text()
    assert "static const uint16_t fade_table[FADE_TABLE_STEPS]" in text
    subprocess.run([CC, "-std=c99", "-Wall", "-Wextra", "-pedantic", "-Werror", "-fsyntax-only",
                    "-x", "c", str(h)], check=True, capture_output=True, timeout=60)


def test_workbook_has_the_lstar_chart(tmp_path, capsys):
    x = tmp_path / "t.xlsx"
    code, _, _ = run(capsys, "-n", "40", "--bits", "10", "--pwm-frequency", "2000",
                     "--xlsx", str(x), "-q")
    assert code == 0
    from openpyxl import load_workbook

    wb = load_workbook(x)
    assert wb.sheetnames == ["Summary", "Steps"]
    ws = wb["Steps"]
    assert ws.cell(1, 6).value == "L* [0-100]" and ws.max_row == 41
    charts = wb["Summary"]._charts
    assert len(charts) == 1 and len(charts[0].series) == 1
    with zipfile.ZipFile(x) as z:
        xml = next(z.read(n).decode() for n in z.namelist() if n.startswith("xl/charts/chart"))
    assert len(re.findall(r'<(?:c:)?delete val="0"\s*/>', xml)) == 2  # both axes visible
    assert "'Steps'!$F$2:$F$41" in xml and "'Steps'!$A$2:$A$41" in xml  # L* against step


def test_calibration_file(tmp_path, capsys):
    cal = tmp_path / "cal.csv"
    cal.write_text("count,light\n0,0\n50,0\n100,0.05\n400,0.3\n1023,1.0\n")  # invented product
    code, out, _ = run(capsys, "-n", "16", "--bits", "10", "--calibration", str(cal),
                       "--format", "json")
    assert code == 0
    d = json.loads(out)
    assert "calibration" in d["summary"]
    assert {"uncalibrated_count", "uncalibrated_light"} <= set(d["steps"][0])
    assert d["summary"]["calibration"]["dead_zone_to_count"] == 50
    assert all(s["count"] > 50 for s in d["steps"][1:])  # the dead zone is skipped


def test_drive_description(tmp_path, capsys):
    drv = tmp_path / "drive.toml"
    drv.write_text('method = "pwm"\nfrequency_hz = 1000.0\noff_level = 0.2\n')  # invented
    code, out, _ = run(capsys, "-n", "6", "--bits", "8", "--drive-file", str(drv), "--format",
                       "json", "-q")
    assert code == 0
    pf = [s["percent_flicker"] for s in json.loads(out)["steps"][1:-1]]
    assert pf == pytest.approx([100 * 0.8 / 1.2] * len(pf), rel=1e-6)  # analytic: 0.2..1 light
    code, out, _ = run(capsys, "-n", "6", "--bits", "8", "--pwm-frequency", "1000",
                       "--off-level", "0.5", "--format", "json", "-q")
    pf = [s["percent_flicker"] for s in json.loads(out)["steps"][1:-1]]
    assert pf == pytest.approx([100 * 0.5 / 1.5] * len(pf), rel=1e-6)  # analytic: 0.5..1 light
    code, _, err = run(capsys, "-n", "6", "--bits", "8", "--off-level", "0.5")
    assert code == 1 and "needs --pwm-frequency" in err


@pytest.mark.parametrize("argv, match", [
    (["-n", "1", "--bits", "8"], "step count must be at least 2"),
    (["-n", "300", "--bits", "8"], "do not fit"),
    (["-n", "10", "--bits", "8", "--min", "50", "--max", "20"], "below the maximum"),
    (["-n", "10", "--bits", "8", "--gamma", "2"], "--gamma belongs to --curve gamma"),
    (["-n", "10", "--bits", "8", "--format", "c", "--name", "2x"], "not a C identifier"),
    (["-n", "10", "--top", "0"], "TOP must be"),
])
def test_bad_input_is_one_line(capsys, argv, match):
    code, out, err = run(capsys, *argv)
    assert code == 1 and out == ""
    assert err.count("\n") == 1 and err.startswith("flickerkit: error: ") and match in err


@pytest.mark.parametrize("rows, match", [
    ("count,light\n1023,1\n", "at least 2"),
    ("0,0\n500,0.8\n700,0.3\n1023,1\n", "not monotonic"),
    ("0,0\n500,0.5\n400,0.6\n1023,1\n", "not strictly increasing"),
])
def test_bad_calibration_leaves_no_output(tmp_path, capsys, rows, match):
    cal = tmp_path / "cal.csv"
    cal.write_text(rows)
    out_file = tmp_path / "table.json"
    xlsx = tmp_path / "table.xlsx"
    code, out, err = run(capsys, "-n", "16", "--bits", "10", "--calibration", str(cal),
                         "--format", "json", "-o", str(out_file), "--xlsx", str(xlsx))
    assert code == 1 and match in err and err.count("\n") == 1
    assert not out_file.exists() and not xlsx.exists()
    assert list(tmp_path.iterdir()) == [cal]  # no temporary file left either


def test_existing_output_needs_force(tmp_path, capsys):
    f = tmp_path / "t.csv"
    f.write_text("keep me")
    code, _, err = run(capsys, "-n", "8", "--bits", "8", "--format", "csv", "-o", str(f))
    assert code == 1 and "exists" in err and f.read_text() == "keep me"
    code, _, _ = run(capsys, "-n", "8", "--bits", "8", "--format", "csv", "-o", str(f),
                     "--force", "-q")
    assert code == 0 and f.read_text().startswith("step,count")


def test_calibration_from_captures_matches_the_csv(tmp_path, capsys):
    # invented product: dark up to count 60, then light rising; captures carry a dark offset
    counts = [0, 30, 60, 120, 300, 600, 1023]
    light = [0.0, 0.0, 0.0, 0.04, 0.22, 0.55, 1.0]
    dark = 0.01
    args = []
    for c, v in zip(counts, light):
        f = tmp_path / f"cap{c}.csv"
        t = [i / 10000 for i in range(200)]
        # constant light plus a zero-mean wiggle of 4 samples: the mean is v + dark
        x = [v + dark + 0.001 * (1, -1, 1, -1)[i % 4] for i in range(200)]
        f.write_text("time (s),light\n" + "".join(f"{a:.6f},{b:.6f}\n" for a, b in zip(t, x)))
        args += ["--calibration-capture", f"{c}={f}"]
    cal = tmp_path / "cal.csv"
    cal.write_text("".join(f"{c},{v}\n" for c, v in zip(counts, light)))
    _, a, _ = run(capsys, "-n", "20", "--bits", "10", "--dark", str(dark), *args,
                  "--format", "json")
    _, b, _ = run(capsys, "-n", "20", "--bits", "10", "--calibration", str(cal), "--format", "json")
    ca = [s["count"] for s in json.loads(a)["steps"]]
    assert ca == [s["count"] for s in json.loads(b)["steps"]]
    code, _, err = run(capsys, "-n", "20", "--bits", "10", "--calibration-capture", "x=1")
    assert code == 1 and "COUNT=CAPTURE" in err
