"""SVM threshold form: a verdict that the choice of form decides says so (issue 10, item 8)."""

import datetime as dt
import json

import numpy as np
import pytest
from openpyxl import load_workbook

from flickerkit import criteria, svm
from flickerkit.assess import AssessSettings, assess
from flickerkit.capture import make_capture
from flickerkit.cli import main

from .synth import sine

FS = 50_000.0
F = 1234.56
EU_SVM = criteria.REGISTRY["eu-2019-2020-svm"]
AFTER_2024 = dt.date(2025, 3, 1)  # EU 2019/2020 as amended by 2021/341: SVM <= 0.4 from 2024-09-01


def _forms(c, f=F):
    """analytic: one sine component C at f gives SVM = C / T(f) under either form."""
    return (c / float(svm.threshold_power(np.array([f]))[0]),
            c / float(svm.threshold_sigmoid(np.array([f]))[0]))


def _record(m, rng):
    """A capture of the sine with random start phase and length."""
    x = sine(F, m, FS, rng.uniform(0.45, 0.6), phase=rng.uniform(0.0, 2 * np.pi))
    return assess(make_capture(x, FS, label=f"sine {m}"))


def test_forms_bracket_the_limit():
    power, sigmoid = _forms(0.5)
    # analytic: T_power(1234.56 Hz) = 2.865e-5 f^1.543 + 0.225 = 1.91, T_sigmoid = 0.992
    assert power == pytest.approx(0.2614, abs=2e-3) and sigmoid == pytest.approx(0.504, abs=2e-3)
    assert power < 0.4 < sigmoid


@pytest.mark.parametrize("seed", range(4))
def test_verdict_between_the_forms_says_it_depends(seed):
    rec = _record(0.5, np.random.default_rng(seed))
    power, sigmoid = _forms(0.5)
    assert rec.svm.value == pytest.approx(power, rel=5e-3)
    assert rec.svm.other_threshold == "sigmoid"
    assert rec.svm.other_value == pytest.approx(sigmoid, rel=5e-3)
    v = criteria.judge(rec, EU_SVM, level=100, date=AFTER_2024)
    assert v.status == "pass" and v.depends_on_threshold_form
    assert "depends on the threshold form" in v.reason and "sigmoid" in v.threshold_form
    d = v.to_dict()
    assert d["depends_on_threshold_form"] is True and "fail" in d["threshold_form"]


def test_verdict_clear_of_both_forms_is_silent():
    # analytic: C = 0.1 gives 0.052 (power) and 0.101 (sigmoid), both far under 0.4
    rec = _record(0.1, np.random.default_rng(7))
    v = criteria.judge(rec, EU_SVM, level=100, date=AFTER_2024)
    assert v.status == "pass" and not v.depends_on_threshold_form and v.threshold_form == ""
    assert "depends" not in v.reason
    # the sigmoid form as the chosen one: the power form is the other
    r2 = assess(make_capture(sine(F, 0.5, FS, 0.5), FS),
                AssessSettings(svm_threshold="sigmoid"))
    v2 = criteria.judge(r2, EU_SVM, level=100, date=AFTER_2024)
    assert v2.status == "fail" and "power form" in v2.threshold_form


def test_report_terminal_json_and_workbook(tmp_path, capsys):
    # a modelled analogue drive with 50 % sine ripple at 2 x 617.28 Hz = 1234.56 Hz (invented)
    p = tmp_path / "drive.toml"
    p.write_text('[product]\nname = "invented ripple lamp"\n[setup]\njudged_on = 2025-03-01\n'
                 '[drive]\nmethod = "analogue"\nlevels = [100]\n'
                 '[drive.ripple]\npercent = 50\nline_frequency_hz = 617.28\n'
                 '[criteria]\napply = ["eu-2019-2020-svm"]\n')
    out = tmp_path / "r.xlsx"
    assert main(["report", str(p), "-o", str(out), "--json", "-q"]) == 0
    data = json.loads(capsys.readouterr().out)
    (v,) = data["verdicts"]
    assert v["status"] == "pass" and v["depends_on_threshold_form"] is True
    assert "depends on the threshold form" in v["reason"]
    wb = load_workbook(out)
    ws = wb["Verdicts"]
    heads = [c.value for c in ws[1]]
    col = heads.index("Depends on the SVM threshold form") + 1
    assert "sigmoid form" in ws.cell(row=2, column=col).value
    summary = [c.value for row in wb["Summary"].iter_rows() for c in row if c.value]
    assert "pass *" in summary
    out2 = tmp_path / "r2.xlsx"
    main(["report", str(p), "-o", str(out2), "-q"])
    assert "depends on the threshold form" in capsys.readouterr().out
