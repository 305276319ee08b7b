"""Output names and folder projects: refused with one line before any work, or done right.

Captures are invented (a 123.4 Hz sine of modulation 0.3 on CH1 and 0.1 on CH2: percent
flicker 30 % and 10 %, analytic), written in a sample-index layout with the time base in a
metadata block and a trailing separator, as loggers write; the layout is our own.
"""

from __future__ import annotations

import hashlib
import json

import numpy as np
import pytest

from flickerkit.cli import main

from .cliutil import one_line_error

FS = 10_000.0


def _two_channel(path):
    t = np.arange(int(0.6 * FS)) / FS
    a = 1 + 0.3 * np.sin(2 * np.pi * 123.4 * t)
    b = 1 + 0.1 * np.sin(2 * np.pi * 123.4 * t)
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("Logger,invented bench\nSample interval,0.0001\n\nIndex,CH1,CH2,\n"
                    + "".join(f"{i},{x:.6f},{y:.6f},\n" for i, (x, y) in enumerate(zip(a, b))))
    return path




def _digest(p):
    return hashlib.sha256(p.read_bytes()).hexdigest()


@pytest.mark.parametrize("argv", [
    ["measure", "{cap}", "--column", "CH1", "--xlsx", "{out}"],
    ["drive", "-f", "1234.56", "--levels", "100,20", "--xlsx", "{out}"],
    ["plan", "--target", "ieee1789-low-risk", "--clock-mhz", "16", "--xlsx", "{out}"],
    ["steps", "-n", "16", "--bits", "10", "--xlsx", "{out}"],
])
def test_a_workbook_name_must_end_in_xlsx(tmp_path, capsys, argv):
    # --xlsx out.txt wrote a workbook under a .txt name (neither a text file nor openable
    # as a workbook by its name); now refused before any work, and nothing is written
    cap = _two_channel(tmp_path / "cap.csv")
    out = tmp_path / "out.txt"
    one_line_error(capsys, [a.format(cap=cap, out=out) for a in argv], "ending in .xlsx")
    assert not out.exists()


def test_report_output_and_pdf_names(tmp_path, capsys):
    cap = _two_channel(tmp_path / "caps" / "lamp_level100.csv")
    before = _digest(cap)
    one_line_error(capsys, ["report", tmp_path / "caps", "-o", tmp_path / "rec.txt",
                             "--column", "CH1"], "ending in .xlsx")
    # --pdf naming an input (here the capture itself) is refused, with or without --force
    one_line_error(capsys, ["report", tmp_path / "caps", "-o", tmp_path / "rec.xlsx",
                             "--column", "CH1", "--pdf", cap, "--force"], "ending in .pdf")
    assert _digest(cap) == before
    assert not (tmp_path / "rec.xlsx").exists()


def test_a_folder_project_can_name_its_column(tmp_path, capsys):
    # Before: a folder of two-channel captures could not be reported at all (report
    # requires the column, and only a project file could give it)
    folder = tmp_path / "caps"
    for level in ("100", "050"):
        _two_channel(folder / f"lamp_level{level}.csv")
    one_line_error(capsys, ["report", folder, "-o", tmp_path / "a.xlsx", "-q"],
                    "report --column")
    assert main(["report", str(folder), "-o", str(tmp_path / "b.xlsx"), "-q", "--json",
                 "--column", "CH2"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert len(d["records"]) == 2
    for r in d["records"]:
        assert r["read"]["column"] == "CH2"
        assert abs(r["percent_flicker"] - 10.0) < 0.05  # analytic: modulation 0.1
    assert (tmp_path / "b.xlsx").is_file()


def test_column_option_with_a_project_file_is_refused(tmp_path, capsys):
    cap = _two_channel(tmp_path / "cap.csv")
    proj = tmp_path / "p.toml"
    proj.write_text(f'[product]\nname = "invented"\n[[capture]]\nlevel = 100\n'
                    f'file = "{cap.name}"\ncolumn = "CH1"\n')
    one_line_error(capsys, ["report", proj, "-o", tmp_path / "r.xlsx", "--column", "CH2"],
                    "[read]")


@pytest.mark.parametrize("argv", [
    ["measure", "{cap}", "--column", "CH1"],
    ["drive", "-f", "1234.56", "--levels", "100,20"],
])
def test_pictures_inside_a_missing_folder_are_refused(tmp_path, capsys, argv):
    # --pictures a/b/pics with no a/ made the whole tree (while --xlsx a/b/x.xlsx is
    # refused); now refused before any work, and nothing is created
    cap = _two_channel(tmp_path / "cap.csv")
    pics = tmp_path / "missing" / "deeper" / "pics"
    one_line_error(capsys, [*(a.format(cap=cap) for a in argv), "--pictures", pics, "-q"],
                    "does not exist")
    assert not (tmp_path / "missing").exists()
