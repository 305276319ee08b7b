"""The report command: project file, verdicts, and the workbook read back."""

import json
import shutil
import subprocess

import numpy as np
import pytest

from flickerkit.cli import main
from flickerkit.errors import SettingsError
from flickerkit.project import level_from_name, load_project

from .synth import pwm, sine

FS = 25_000.0


@pytest.fixture
def project(tmp_path):
    # full output: 100 Hz ripple of 3 % (inside low risk, outside NOEL); 20 %: 1.5 kHz PWM
    np.save(tmp_path / "full.npy", np.column_stack([np.arange(int(1.2 * FS)) / FS,
                                                    sine(100.0, 0.03, FS, 1.2)]))
    np.save(tmp_path / "twenty.npy", np.column_stack([np.arange(int(1.2 * FS)) / FS,
                                                      pwm(1500.0, 0.2, 0.0, FS, 1.2)]))
    (tmp_path / "broken.csv").write_text("time,light\n0,1\n0.1,oops\n0.2,1\n0.3,1\n")
    p = tmp_path / "proj.toml"
    p.write_text("""
[product]
name = "=HYPERLINK(\\"x\\")"
model = "+T-100"
description = "@invented test product"

[setup]
judged_on = 2025-03-01
operator = "-1+2"

[[capture]]
level = 100
file = "full.npy"

[[capture]]
level = 20
file = "twenty.npy"
label = "=1+1"

[criteria]
apply = ["ieee1789-low-risk", "ieee1789-noel", "ca-title24-ja8"]

[steps]
steps = 16
bits = 10
pwm_frequency_hz = 1500
""")
    return p


def test_report_workbook_matches_json(project, tmp_path, capsys):
    from openpyxl import load_workbook

    out = tmp_path / "record.xlsx"
    assert main(["report", str(project), "-o", str(out), "--json", "-q", "-j", "1"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["overall"] == "fail"
    verdicts = {(v["criterion"], v["label"]): v for v in data["verdicts"]}
    # 3 % at 100 Hz: low-risk line 8 %, NOEL 3.33 % (IEEE Std 1789-2015 lines, recalled from memory)
    assert verdicts[("ieee1789-low-risk", "full.npy")]["status"] == "pass"
    assert verdicts[("ieee1789-noel", "full.npy")]["status"] == "pass"
    # full-depth 1.5 kHz PWM: exempt from RP1 above 1250 Hz, fails NOEL (limit 49.95 %)
    assert verdicts[("ieee1789-low-risk", "=1+1")]["status"] == "pass"
    assert verdicts[("ieee1789-noel", "=1+1")]["status"] == "fail"

    wb = load_workbook(out)
    assert wb.sheetnames == ["Summary", "Verdicts", "Metrics", "Harmonics", "IEEE 1789 chart",
                             "Metrics by level", "Brightness table", "Brightness steps",
                             "Inputs", "Method notes"]
    vs = wb["Verdicts"]
    rows = list(vs.iter_rows(min_row=2, values_only=True))
    assert len(rows) == len(data["verdicts"])
    for row, v in zip(rows, data["verdicts"]):
        assert row[0] == v["criterion"] and row[2] == v["label"] and row[4] == v["status"]
        if v["measured"] is not None:
            assert row[5] == pytest.approx(v["measured"], rel=1e-12)
    ms = wb["Metrics"]  # turned: figures down column A, captures across
    first = {ms.cell(i, 1).value: ms.cell(i, 2).value for i in range(1, ms.max_row + 1)}
    rec = data["records"][0]
    assert first["Percent flicker [%]"] == pytest.approx(rec["percent_flicker"], rel=1e-12)
    assert first["Dimming level [%]"] == 100

    # formula-looking text from inputs stays text
    summ = wb["Summary"]
    texts = {c.value: c for row in summ.iter_rows() for c in row if isinstance(c.value, str)}
    assert '=HYPERLINK("x")' in texts and texts['=HYPERLINK("x")'].data_type == "s"
    assert "+T-100" in texts and "@invented test product" in texts
    cautions = " ".join(t for t in texts if t.startswith(("Modulated", "This report")))
    assert "photosensitive epilepsy" in cautions and "not a certification" in cautions
    label_cells = [r[2] for r in vs.iter_rows(min_row=2) if r[2].value == "=1+1"]
    assert label_cells and all(c.data_type == "s" for c in label_cells)

    # the IEEE 1789 chart: log-log with two boundary lines and the capture points
    chart = wb["IEEE 1789 chart"]._charts[0]
    assert chart.x_axis.scaling.logBase == 10 and chart.y_axis.scaling.logBase == 10
    # two boundary lines and one series per capture (titled with its label)
    assert len(chart.series) == 2 + len(data["records"])
    assert len(wb["Metrics by level"]._charts) == 1
    assert len(wb["Brightness table"]._charts) == 1

    # traceability: SHA-256 of each input
    import hashlib

    ins = wb["Inputs"]  # turned: fields down column A, inputs across
    row = {ins.cell(i, 1).value: ins.cell(i, 2).value for i in range(1, 15)}
    assert row["SHA-256"] == hashlib.sha256((tmp_path / "full.npy").read_bytes()).hexdigest()
    assert wb.properties.title.startswith("Flicker record")
    assert "not a certification" in wb.properties.description


def test_report_refuses_to_overwrite_and_keeps_going_past_a_bad_capture(project, tmp_path,
                                                                         capsys):
    out = tmp_path / "record.xlsx"
    out.write_bytes(b"keep me")
    assert main(["report", str(project), "-o", str(out), "-q"]) == 1
    assert "--force" in capsys.readouterr().err
    assert out.read_bytes() == b"keep me"
    text = project.read_text().replace('[criteria]', '[[capture]]\nlevel = 50\n'
                                       'file = "broken.csv"\n\n[criteria]')
    project.write_text(text)
    assert main(["report", str(project), "-o", str(out), "-q", "--force", "--json"]) == 1
    captured = capsys.readouterr()
    data = json.loads(captured.out)
    assert "broken.csv" in captured.err and "oops" in captured.err
    assert {v["status"] for v in data["verdicts"] if v["label"] == "broken.csv"} == {
        "insufficient data"}
    assert len(data["records"]) == 2


@pytest.mark.parametrize("old,new,message", [
    ("steps = 16", 'steps = "many"', r"proj.toml \[steps\]"),
    ("bits = 10", "bits = 40", r"proj.toml \[steps\]: bits must be 1 to 32"),
    ('apply = ["ieee1789-low-risk"', 'apply = ["nope"', r"proj.toml \[criteria\]: unknown"),
    ("[steps]", '[analysis]\nharmonics = "x"\n\n[steps]', r"proj.toml \[analysis\]"),
    ("[steps]", '[analysis]\nieee1789_mode = "x"\n\n[steps]', r"\[analysis\]: ieee1789_mode"),
    ('file = "full.npy"', 'file = "missing.npy"', "no capture could be measured"),
])
def test_bad_project_values_one_line_and_no_workbook(project, tmp_path, capsys, old, new,
                                                    message):
    import re

    text = project.read_text()
    assert old in text
    text = text.replace(old, new)
    if "missing" in new:  # every capture unreadable: no record is worth writing
        text = text.replace('file = "twenty.npy"', 'file = "broken.csv"')
    project.write_text(text)
    out = tmp_path / "record.xlsx"
    assert main(["report", str(project), "-o", str(out), "-q"]) == 1
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("flickerkit: error: ")
    assert re.search(message, err[0]), err[0]
    assert not out.exists() and not list(tmp_path.glob(".*part"))


def test_project_errors_name_the_key(tmp_path):
    p = tmp_path / "bad.toml"
    p.write_text('[product]\nname = "x"\n[[capture]]\nlevel = 100\nfile = "a.csv"\ncolour = 1\n')
    with pytest.raises(SettingsError, match=r"\[\[capture\]\] 1: unknown key\(s\) colour"):
        load_project(p)
    p.write_text('[product]\nname = "x"\n')
    with pytest.raises(SettingsError, match="no captures"):
        load_project(p)
    p.write_text('[product]\nname = "x"\n[[capture]]\nlevel = 150\nfile = "a.csv"\n')
    with pytest.raises(SettingsError, match="outside 0-100"):
        load_project(p)
    p.write_text("not toml [")
    with pytest.raises(SettingsError, match="not valid TOML"):
        load_project(p)


def test_levels_from_file_names():
    assert level_from_name("lamp_level050.csv") == 50
    assert level_from_name("lamp_12p5pct.csv") == 12.5
    assert level_from_name("lamp.csv") is None


def test_folder_of_captures(tmp_path, capsys):
    fs = 100_000.0
    for lv, d in ((100, 0.9), (20, 0.2)):
        np.save(tmp_path / f"unit_level{lv:03d}.npy",
                np.column_stack([np.arange(int(fs / 2)) / fs, pwm(4000.0, d, 0.0, fs, 0.5)]))
    out = tmp_path / "r.xlsx"
    assert main(["report", str(tmp_path), "-o", str(out), "--json", "-q"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert sorted(r["level"] for r in data["records"]) == [20.0, 100.0]
    # full-depth PWM at 4 kHz: above 3 kHz, no observable effect (IEEE Std 1789-2015 lines,
    # recalled from memory)
    assert {v["status"] for v in data["verdicts"] if v["criterion"] == "ieee1789-noel"} == {
        "pass"}


def test_drive_project(tmp_path, capsys):
    p = tmp_path / "drive.toml"
    p.write_text('[product]\nname = "modelled"\n[drive]\nmethod = "pwm"\nfrequency_hz = 200\n'
                 'levels = [100, 50, 10]\n[criteria]\napply = ["ieee1789-low-risk"]\n')
    out = tmp_path / "d.xlsx"
    assert main(["report", str(p), "-o", str(out), "--json", "-q"]) == 0
    data = json.loads(capsys.readouterr().out)
    st = {v["level"]: v["status"] for v in data["verdicts"]}
    # at 100 % a PWM drive is steady (no modulation); below, 200 Hz full depth fails RP1
    assert st[50.0] == "fail" and st[10.0] == "fail"


@pytest.mark.skipif(shutil.which("soffice") is None, reason="LibreOffice not installed")
def test_workbook_renders_in_libreoffice(project, tmp_path):
    out = tmp_path / "record.xlsx"
    assert main(["report", str(project), "-o", str(out), "-q", "-j", "1"]) == 0
    r = subprocess.run(["soffice", "--headless", "--convert-to", "pdf", "--outdir",
                        str(tmp_path), str(out)], capture_output=True, text=True, timeout=180)
    pdf = tmp_path / "record.pdf"
    assert r.returncode == 0 and pdf.exists(), r.stderr
    import re

    data = pdf.read_bytes()
    assert data.startswith(b"%PDF")
    pages = len(re.findall(rb"/Type\s*/Page(?![s\w])", data))
    assert pages >= 3  # summary, verdicts, metrics, charts ... each at least a page


def test_workbook_values_do_not_depend_on_workers(project, tmp_path, capsys):
    from openpyxl import load_workbook

    books = []
    for j in ("1", "2"):
        out = tmp_path / f"r{j}.xlsx"
        assert main(["report", str(project), "-o", str(out), "-q", "-j", j]) == 0
        wb = load_workbook(out)
        books.append({name: [list(r) for r in wb[name].iter_rows(values_only=True)]
                      for name in wb.sheetnames if name != "Inputs"})
        inputs = [list(r) for r in wb["Inputs"].iter_rows(values_only=True)]
        books[-1]["Inputs"] = [r for r in inputs if r[0] not in ("run at",)]
        books[-1]["Summary"] = [r for r in books[-1]["Summary"] if r[0] != "Run at"]
    capsys.readouterr()
    assert books[0] == books[1]
