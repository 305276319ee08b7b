"""The command line through its entry point: help, output, errors, start-up."""

import json
import subprocess
import sys

import numpy as np
import pytest

from flickerkit.cli import COMMANDS, build_parser, main

from .synth import pwm

FS = 20_000.0


@pytest.fixture
def capture_file(tmp_path):
    x = pwm(123.4, 0.25, 0.0, FS, 0.5)
    t = np.arange(x.size) / FS
    p = tmp_path / "cap.csv"
    p.write_text("time (s),light\n" + "\n".join(f"{a:.8f},{b:.7f}" for a, b in zip(t, x)) + "\n")
    return p


def test_every_command_has_help(capsys):
    for name in COMMANDS:
        with pytest.raises(SystemExit) as exc:
            main([name, "--help"])
        assert exc.value.code == 0
        out = capsys.readouterr().out
        assert "usage: flickerkit " + name in out
        assert "example" in out  # the help teaches by example
        assert "%%" not in out  # argparse leaves %% in raw descriptions as it is
        for line in out.splitlines():  # a lost line continuation joins two example lines
            if line.startswith("  flickerkit "):
                assert "   " not in line.strip().split("#")[0].rstrip(), line


def test_no_command_prints_help_and_fails(capsys):
    assert main([]) == 2
    assert "COMMAND" in capsys.readouterr().err


def test_startup_imports_no_heavy_library():
    code = ("import sys, flickerkit.cli as c; c.build_parser(); "
            "print(sorted(m for m in ('numpy', 'scipy', 'pandas', 'openpyxl', 'colour') "
            "if m in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_measure_json_keys(capture_file, capsys):
    assert main(["measure", str(capture_file), "--json", "-q"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert isinstance(data, list) and len(data) == 1
    r = data[0]
    for key in ("frequency_hz", "percent_flicker", "flicker_index", "ieee1789", "warnings",
                "mean", "sample_rate_hz", "duration_s", "periods", "harmonics"):
        assert key in r
    # analytic: PWM D = 0.25, off 0: PF 100 %, FI = 0.75; full depth at 123 Hz is above low risk
    assert r["percent_flicker"] == pytest.approx(100.0, rel=0.01)
    assert r["flicker_index"] == pytest.approx(0.75, rel=0.01)
    assert r["ieee1789"]["region"] == "above-low-risk"
    assert r["ieee1789"]["mode"] == "fundamental"
    assert r["ieee1789"]["per_harmonic"]["mode"] == "per-harmonic"


def test_measure_table(capture_file, capsys):
    assert main(["measure", str(capture_file)]) == 0
    captured = capsys.readouterr()
    assert "cap.csv" in captured.out and "above-low-risk" in captured.out
    assert "not a certification" in captured.err  # caution on every judging output


def test_workbook_agrees_with_json(capture_file, tmp_path, capsys):
    from openpyxl import load_workbook

    out = tmp_path / "m.xlsx"
    assert main(["measure", str(capture_file), "--json", "-q", "--xlsx", str(out)]) == 0
    r = json.loads(capsys.readouterr().out)[0]
    wb = load_workbook(out)
    assert wb.sheetnames == ["Captures", "Harmonics", "Inputs and settings"]
    ws = wb["Captures"]  # turned: figures down column A, the capture in column B
    row = {ws.cell(i, 1).value: ws.cell(i, 2).value for i in range(1, ws.max_row + 1)}
    assert row["Percent flicker [%]"] == pytest.approx(r["percent_flicker"], rel=1e-12)
    assert row["Flicker index [1]"] == pytest.approx(r["flicker_index"], rel=1e-12)
    assert row["Fundamental frequency [Hz]"] == pytest.approx(r["frequency_hz"], rel=1e-12)
    assert row["IEEE 1789 region"] == r["ieee1789"]["region"]
    hs = wb["Harmonics"]
    assert hs.cell(2, 4).value == pytest.approx(r["harmonics"][0]["amplitude"], rel=1e-12)
    # refuses to overwrite without --force
    assert main(["measure", str(capture_file), "-q", "--xlsx", str(out)]) == 1
    assert "--force" in capsys.readouterr().err
    assert main(["measure", str(capture_file), "-q", "--xlsx", str(out), "--force"]) == 0


def test_formula_looking_label_stays_text(tmp_path, capsys):
    from openpyxl import load_workbook

    x = pwm(123.4, 0.5, 0.0, FS, 0.3)
    p = tmp_path / "=SUM(A1).csv"
    p.write_text("light\n" + "\n".join(f"{v:.6f}" for v in x) + "\n")
    out = tmp_path / "f.xlsx"
    assert main(["measure", str(p), "-r", str(FS), "-q", "--xlsx", str(out)]) == 0
    cell = load_workbook(out)["Captures"].cell(1, 2)
    assert cell.value == "=SUM(A1).csv" and cell.data_type == "s"


@pytest.mark.parametrize("args,message", [
    (["measure", "nope.csv"], "nope.csv: no such file"),
    (["measure", "{cap}", "--column", "x"], "unknown column 'x'"),
    (["measure", "{cap}", "--xlsx", "/nonexistent/dir/o.xlsx"], "does not exist"),
    (["measure", "{cap}", "--harmonics", "0"], "--harmonics"),
])
def test_bad_input_one_line_nonzero_no_output(capture_file, tmp_path, capsys, args, message):
    args = [a.replace("{cap}", str(capture_file)) for a in args]
    before = capture_file.read_bytes()
    assert main(args) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and message in err[0] and "Traceback" not in err[0]
    assert capture_file.read_bytes() == before
    assert not list(tmp_path.glob("*.xlsx")) and not list(tmp_path.glob(".*part"))


@pytest.mark.parametrize("args,message", [
    (["measure", "{cap}", "--harmonics", "abc"], "measure: argument --harmonics: invalid int"),
    (["measure"], "measure: the following arguments are required: CAPTURE"),
    (["steps", "-n", "64"], "steps: one of the arguments --bits --top is required"),
    (["drive", "--method", "nope"], "drive: argument --method: invalid choice"),
    (["bogus"], "argument COMMAND: invalid choice"),
    (["steps", "--bits", "8", "--nope"], "steps: unrecognized arguments: --nope (see "
                                         "'flickerkit steps --help')"),
])
def test_usage_errors_are_one_line(capture_file, capsys, args, message):
    args = [a.replace("{cap}", str(capture_file)) for a in args]
    with pytest.raises(SystemExit) as exc:
        main(args)
    assert exc.value.code == 2  # argparse's convention for usage errors
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("flickerkit: error: ") and message in err[0]
    assert "--help" in err[0]


def test_judging_json_outputs_carry_the_caution(capture_file, capsys):
    # project rule: output that judges risk defers to standards and accredited laboratories
    runs = [["measure", str(capture_file), "--json", "-q"],
            ["drive", "--levels", "100,10", "--json", "-q"],
            ["plan", "--target", "ieee1789-low-risk", "--json", "-q"],
            ["steps", "-n", "8", "--bits", "8", "--pwm-frequency", "1000", "--format", "json",
             "-q"]]
    for args in runs:
        assert main(args) == 0
        data = json.loads(capsys.readouterr().out)
        for obj in data if isinstance(data, list) else [data]:
            assert "accredited laborator" in obj["caution"], args
            assert "not a certification" in obj["caution"], args


def test_python_dash_m_entry_point(capture_file):
    out = subprocess.run([sys.executable, "-m", "flickerkit", "measure", str(capture_file),
                          "--json", "-q"], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)[0]["periods"] > 50


def test_demo_runs_end_to_end(demo_run, capsys):
    folder, printed = demo_run  # the session's one demo run (conftest), into a new folder
    data = json.loads(printed)
    capsys.readouterr()  # only what the refusal below prints is read
    records = data["records"]
    assert len(records) == 5
    assert (folder / "ardent12_record.xlsx").exists()
    # the invented product's analogue levels carry 100 Hz ripple, its PWM levels 1.2 kHz
    assert records[0]["frequency_hz"] == pytest.approx(100.0, rel=1e-3)
    assert records[-1]["frequency_hz"] == pytest.approx(1200.0, rel=1e-3)
    # 7 % peak-to-peak ripple is 3.5 % percent flicker (period-averaged, noise removed)
    assert records[0]["percent_flicker_averaged"] == pytest.approx(3.5, rel=0.02)
    # analytic: the 20 % level is full-depth PWM at 1.2 kHz, and IEEE 1789's low-risk line
    # there is 0.08 x 1200 = 96 % (IEEE Std 1789-2015 RP1 line, recalled from memory), so the
    # record must fail
    assert data["overall"] == "fail"
    assert {v["criterion"] for v in data["verdicts"]} >= {"ieee1789-low-risk", "eu-2019-2020-svm"}
    assert main(["demo", "--out", str(folder), "-q"]) == 1  # refuses to replace without --force
    assert "--force" in capsys.readouterr().err


def test_example_project_is_the_demo_project():
    from pathlib import Path

    from flickerkit.demo import PROJECT_TOML

    example = Path(__file__).resolve().parent.parent / "examples" / "ardent12_project.toml"
    assert example.read_text(encoding="utf-8") == PROJECT_TOML


def test_parser_builds():
    assert build_parser().prog == "flickerkit"
