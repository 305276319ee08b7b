"""Inputs are sacred: no output, with or without --force, may replace a file the run reads.

Each case of issue 12 (data loss) is one test; a property test spells the same input in many
ways (relative, ./, .., symbolic link, hard link) and checks that every spelling is refused.
"""

import os
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from flickerkit.cli import main
from flickerkit.errors import OutputError
from flickerkit.fileio import check_writable, forget_inputs, note_input


def _capture(path: Path, f=123.4, m=0.3, fs=10_000.0, seconds=0.5):
    t = np.arange(int(fs * seconds)) / fs
    path.write_text("time,light\n" + "\n".join(
        f"{a:.6f},{1 + m * np.sin(2 * np.pi * f * a):.6f}" for a in t) + "\n")
    return path


def _refused(capsys, argv, *protected: Path):
    before = {p: p.read_bytes() for p in protected}
    assert main([str(a) for a in argv]) == 1
    err = capsys.readouterr().err
    assert "is an input of this run" in err, err
    assert err.count("\n") == 1 and "Traceback" not in err
    for p, data in before.items():
        assert p.read_bytes() == data, f"{p} was modified"
    assert not list(protected[0].parent.glob(".*.part"))


@pytest.fixture
def cap(tmp_path):
    return _capture(tmp_path / "cap.csv")


def test_measure_workbook_onto_its_capture(cap, capsys, monkeypatch):
    monkeypatch.chdir(cap.parent)
    _refused(capsys, ["measure", "cap.csv", "--xlsx", "cap.csv", "--force", "-q"], cap)


def test_measure_workbook_onto_the_dark_capture(cap, tmp_path, capsys):
    dark = tmp_path / "dark.csv"
    dark.write_text("light\n" + "0.01\n" * 200)
    _refused(capsys, ["measure", cap, "-r", "10000", "--dark", dark, "--xlsx", dark, "--force",
                      "-q"], dark, cap)


def test_measure_workbook_onto_the_calibration_file(cap, tmp_path, capsys):
    from flickerkit.flickermeter import LIGHT_PROVISIONAL_230V

    cal = tmp_path / "lab.toml"
    cal.write_text(LIGHT_PROVISIONAL_230V.to_toml())
    _refused(capsys, ["measure", cap, "--pst-calibration", cal, "--xlsx", cal, "--force", "-q"],
             cal, cap)


@pytest.fixture
def project(tmp_path):
    _capture(tmp_path / "a.csv")
    (tmp_path / "rules.toml").write_text(
        '[[criterion]]\nid = "house-pf"\nmetric = "percent_flicker"\nlimit = 40\n')
    (tmp_path / "dark.csv").write_text("light\n" + "0.0\n" * 100)
    p = tmp_path / "proj.toml"
    p.write_text('[product]\nname = "invented lamp"\n[read]\ndark = "dark.csv"\n'
                 '[[capture]]\nlevel = 100\nfile = "a.csv"\n'
                 '[criteria]\nfile = "rules.toml"\napply = ["house-pf"]\n')
    return p


def test_report_onto_the_project_file(project, capsys):
    _refused(capsys, ["report", project, "-o", project, "--force", "-q"], project)


def test_report_onto_a_capture_through_a_relative_spelling(project, capsys, monkeypatch):
    monkeypatch.chdir(project.parent.parent)
    rel = Path(project.parent.name) / "." / "a.csv"
    _refused(capsys, ["report", project, "-o", rel, "--force", "-q"], project.parent / "a.csv")


def test_report_onto_the_dark_capture_and_criteria_file(project, capsys):
    for name in ("dark.csv", "rules.toml"):
        _refused(capsys, ["report", project, "-o", project.parent / name, "--force", "-q"],
                 project.parent / name)


def test_steps_onto_the_calibration_file(tmp_path, capsys):
    cal = tmp_path / "cal.csv"
    cal.write_text("count,light\n0,0\n512,0.4\n1023,1\n")
    for opt in ("-o", "--xlsx"):
        _refused(capsys, ["steps", "-n", "16", "--bits", "10", "--calibration", cal, opt, cal,
                          "--force", "-q"], cal)


def test_steps_onto_the_curve_file(tmp_path, capsys):
    curve = tmp_path / "curve.csv"
    curve.write_text("0,0\n0.5,0.2\n1,1\n")
    _refused(capsys, ["steps", "-n", "16", "--bits", "10", "--curve-file", curve, "-o", curve,
                      "--force", "-q"], curve)


def test_drive_workbook_onto_the_drive_file(tmp_path, capsys):
    d = tmp_path / "drv.toml"
    d.write_text('method = "pwm"\nfrequency_hz = 1234.5\n')
    _refused(capsys, ["drive", "--drive-file", d, "--levels", "100,50", "--xlsx", d, "--force",
                      "-q"], d)


def test_hard_link_and_symlink_to_a_capture(cap, tmp_path, capsys):
    os.link(cap, tmp_path / "hard.csv")
    os.symlink(cap, tmp_path / "soft.xlsx")
    for out in ("hard.csv", "soft.xlsx"):
        _refused(capsys, ["measure", cap, "--xlsx", tmp_path / out, "--force", "-q"], cap)


def test_an_ordinary_output_is_still_written(cap, tmp_path, capsys):
    out = tmp_path / "out.xlsx"
    assert main(["measure", str(cap), "--xlsx", str(out), "-q"]) == 0
    assert out.stat().st_size > 0
    assert main(["measure", str(cap), "--xlsx", str(out), "-q", "--force"]) == 0


def _spellings(target: Path, root: Path):
    """Ways to name ``target`` (which lives in ``root/sub``) from ``root`` as working folder."""
    sub = target.parent
    yield st.sampled_from([
        str(target), f"sub/{target.name}", f"./sub/{target.name}", f"sub/./{target.name}",
        f"sub//{target.name}", f"sub/../sub/{target.name}", f"{root}/sub/../sub/{target.name}",
        "link/" + target.name, "hard_" + target.name, "soft_" + target.name,
        str(sub.resolve() / target.name),
    ])


@settings(max_examples=80, deadline=2000,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_property_no_output_path_ever_equals_an_input(tmp_path_factory, data, monkeypatch):
    """Property: for any spelling of an input (and any way the input was itself named),
    check_writable refuses it, with or without force."""
    root = tmp_path_factory.mktemp("spell")
    (root / "sub").mkdir()
    target = root / "sub" / "in.csv"
    target.write_text("light\n1\n")
    os.symlink(root / "sub", root / "link")
    os.link(target, root / ("hard_" + target.name))
    os.symlink(target, root / ("soft_" + target.name))
    monkeypatch.chdir(root)
    given_as = data.draw(next(_spellings(target, root)), label="input spelled")
    output = data.draw(next(_spellings(target, root)), label="output spelled")
    force = data.draw(st.booleans(), label="force")
    forget_inputs()
    note_input(given_as)
    with pytest.raises(OutputError, match="is an input of this run"):
        check_writable(output, force=force)
    assert target.read_text() == "light\n1\n"
    forget_inputs()
