"""Verdicts just inside and just outside each limit, by date, by level, and with thin data."""

import datetime as dt

import pytest

from flickerkit import criteria
from flickerkit.assess import assess
from flickerkit.capture import make_capture
from flickerkit.errors import SettingsError

from .synth import sine

FS = 20_000.0


def record(m, f=100.0, duration=1.0, fs=FS):
    return assess(make_capture(sine(f, m, fs, duration), fs, label=f"sine {m}"))


#: An assessment to set figures on (analytic: 5 % sine at 1234.56 Hz, 1 s at 20 kHz); tests
#: set the figure a criterion reads with ``with_figures`` and judge that.
BASE = record(0.05, f=1234.56)


def with_figures(a=None, *, svm=None, pst=None, pst_short=False, pst_status="provisional",
                 filtered=None, **fields):
    """``a`` (default BASE) with an SVM value, a Pst LM, JA10.6 figures {cut-off: %} or
    other fields replaced (a way to put a figure just inside and just outside a limit)."""
    from dataclasses import replace

    from flickerkit.filtered import FilteredFlicker
    from flickerkit.flickermeter import PstResult

    a = a or BASE
    if svm is not None:
        fields["svm"] = replace(a.svm, value=svm)
    if pst is not None:
        fields["pst_lm"] = PstResult(pst=pst, pst_windows=(pst,), pinst_max=1.0, percentiles={},
                                     signal="light", calibration="x",
                                     calibration_status=pst_status,
                                     observation_s=15.0 if pst_short else 60.0,
                                     method_observation_s=60.0, settling_s=0.0,
                                     working_rate_hz=2000.0, short=pst_short)
    if filtered is not None:
        fields["filtered"] = FilteredFlicker(tuple(filtered), tuple(filtered.values()), 10,
                                             a.n_samples, a.duration_s)
    return replace(a, **fields)


def test_ieee1789_at_100hz_inside_and_outside():
    # IEEE 1789 RP1 at 100 Hz: 0.08 x 100 = 8 % (IEEE Std 1789-2015 line, recalled from memory)
    lr = criteria.REGISTRY["ieee1789-low-risk"]
    assert criteria.judge(record(0.079), lr).status == "pass"
    v = criteria.judge(record(0.081), lr)
    assert v.status == "fail"
    assert v.limit == pytest.approx(8.0, rel=1e-4)
    assert v.margin == pytest.approx(8.0 - 8.1, abs=0.01)
    # RP2 at 100 Hz: 3.33 %
    noel = criteria.REGISTRY["ieee1789-noel"]
    assert criteria.judge(record(0.033), noel).status == "pass"
    assert criteria.judge(record(0.034), noel).status == "fail"


def test_eu_svm_limit_by_date():
    # Regulation (EU) 2019/2020 Annex II Table 4 as amended by (EU) 2021/341: SVM <= 0.9 from
    # 2021-09-01, <= 0.4 from 2024-09-01 (read in the consolidated text of 1 September 2021)
    c = criteria.REGISTRY["eu-2019-2020-svm"]
    assert c.limit_on(dt.date(2022, 1, 1)) == 0.9
    assert c.limit_on(dt.date(2024, 8, 31)) == 0.9
    assert c.limit_on(dt.date(2024, 9, 1)) == 0.4
    assert c.limit_on(dt.date(2021, 8, 31)) is None
    rec = with_figures(svm=0.6)
    assert criteria.judge(rec, c, level=100, date=dt.date(2023, 5, 1)).status == "pass"
    assert criteria.judge(rec, c, level=100, date=dt.date(2025, 5, 1)).status == "fail"
    assert criteria.judge(rec, c, level=100, date=dt.date(2020, 5, 1)).status == "not applicable"
    # at full load only
    v = criteria.judge(rec, c, level=50, date=dt.date(2025, 5, 1))
    assert v.status == "not applicable" and "100 %" in v.reason


def test_missing_value_is_insufficient_never_pass():
    c = criteria.REGISTRY["eu-2019-2020-pst"]
    v = criteria.judge(with_figures(pst_lm=None), c, level=100, date=dt.date(2025, 1, 1))
    assert v.status == "insufficient data"
    v = criteria.judge(with_figures(pst=0.2), c, level=100, date=dt.date(2025, 1, 1))
    assert v.status == "pass"  # the same capture with a figure: the None above decided


def test_short_capture_is_insufficient_for_ieee():
    # 1.5 periods of 100 Hz: no period can be found, but the light plainly modulates
    # (analytic: a 2 % sine has 2 % percent flicker), so it is not steady light
    rec = record(0.02, duration=0.015)
    assert rec.frequency_hz is None
    for cid in ("ieee1789-low-risk", "ieee1789-noel", "seizure-screen-below-90hz"):
        v = criteria.judge(rec, criteria.REGISTRY[cid], level=100)
        assert v.status == "insufficient data", cid
        assert "no period was found" in v.reason
    # 1.5 periods of 8 Hz at 50 %: the seizure screen must not call it steady
    v = criteria.judge(record(0.5, f=8.0, duration=1.5 / 8.0),
                       criteria.REGISTRY["seizure-screen-below-90hz"])
    assert v.status == "insufficient data"
    # steady light (analytic: percent flicker 0) is the case with nothing to judge
    v = criteria.judge(record(0.0, duration=0.015), criteria.REGISTRY["ieee1789-low-risk"])
    assert v.status == "not applicable" and "steady light" in v.reason


def test_ja10_sampling_requirements():
    # JA10.5: sample interval <= 50 us (>= 20 kHz) and >= 1 s of data
    c = criteria.REGISTRY["ca-title24-ja8"]
    slow = with_figures(sample_rate_hz=10_000.0, duration_s=2.0, filtered={200.0: 5.0})
    assert criteria.judge(slow, c, level=100).status == "insufficient data"
    short = with_figures(slow, sample_rate_hz=50_000.0, duration_s=0.5)
    assert criteria.judge(short, c, level=100).status == "insufficient data"
    ok = with_figures(slow, sample_rate_hz=50_000.0)
    assert criteria.judge(ok, c, level=100).status == "pass"
    assert criteria.judge(with_figures(ok, filtered={200.0: 31.0}), c,
                          level=20).status == "fail"
    assert criteria.judge(ok, c, level=50).status == "not applicable"


def test_seizure_screen():
    # Lehman & Wilkins: Mod% <= 5 % below 90 Hz
    c = criteria.REGISTRY["seizure-screen-below-90hz"]
    assert criteria.judge(record(0.04, f=30.0), c).status == "pass"
    assert criteria.judge(record(0.06, f=30.0), c).status == "fail"
    assert criteria.judge(record(0.5, f=120.0), c).status == "not applicable"


def test_unknown_criterion_lists_known():
    with pytest.raises(SettingsError, match="known: .*ieee1789-low-risk"):
        criteria.get(["nope"])


def test_user_criteria_from_toml(tmp_path):
    p = tmp_path / "mine.toml"
    p.write_text('[[criterion]]\nid = "house-pf"\nmetric = "percent_flicker"\nlimit = 10\n'
                 'comparison = "<"\nlevels = [100, 50]\nsource = "our house rule"\n')
    extra = criteria.load_user_criteria(p)
    (c,) = criteria.get(["house-pf"], extra)
    assert criteria.judge(record(0.09), c, level=50).status == "pass"
    assert criteria.judge(record(0.11), c, level=100).status == "fail"
    bad = tmp_path / "bad.toml"
    bad.write_text('[[criterion]]\nid = "x"\nmetric = "svm"\n')
    with pytest.raises(SettingsError, match="needs 'limit'"):
        criteria.load_user_criteria(bad)


def test_overall():
    V = criteria.Verdict
    mk = lambda s: V("c", "l", None, s, None, None, None)  # noqa: E731
    assert criteria.overall([mk("pass"), mk("fail")]) == "fail"
    assert criteria.overall([mk("pass"), mk("insufficient data")]) == "insufficient data"
    assert criteria.overall([mk("pass"), mk("not applicable")]) == "pass"
    assert criteria.overall([mk("not applicable")]) == "not applicable"


def test_pst_lm_on_a_short_capture_is_insufficient():
    # Pst LM over 15 s where the method observes 60 s: flagged short -> never pass
    c = criteria.REGISTRY["eu-2019-2020-pst"]
    rec = with_figures(pst=0.2, pst_short=True)
    v = criteria.judge(rec, c, level=100, date=dt.date(2025, 1, 1))
    assert v.status == "insufficient data" and "60 s" in v.reason
    rec = with_figures(pst=0.2)
    v = criteria.judge(rec, c, level=100, date=dt.date(2025, 1, 1))
    assert v.status == "pass" and "provisional" in v.reason


def test_eu_rows_as_read_in_the_consolidated_text():
    # Regulation (EU) 2019/2020 Annex II Table 4 as amended by (EU) 2021/341, consolidated text
    # of 1 September 2021: "Pst LM <= 1,0 at full-load" (no exemption on this row) and
    # "SVM <= 0,9 at full-load (except ... outdoor ... industrial ... CRI < 80)"; Annex IV
    # Table 6: verification tolerance 0,1 on the mean of 10 units.
    pst = criteria.REGISTRY["eu-2019-2020-pst"]
    svm = criteria.REGISTRY["eu-2019-2020-svm"]
    assert pst.exemptions == ""
    assert "CRI < 80" in svm.exemptions and "outdoor" in svm.exemptions
    for c in (pst, svm):
        assert c.kind == "regulation"
        assert c.confidence == "sourced"
        assert "consolidated text of 1 September 2021" in c.read_in
        assert "2021/341" in c.source and "Annex II, Table 4" in c.source
        assert c.verification_tolerance == 0.1
        assert "Annex IV" in c.tolerance_note and "not a loosening" in c.tolerance_note
        assert c.levels == (100.0,)
    assert pst.limit_on(dt.date(2022, 1, 1)) == 1.0
    # the tolerance is context only: 1.05 fails the 1,0 limit
    rec = with_figures(pst=1.05, pst_status="sourced")
    assert criteria.judge(rec, pst, level=100.0, date=dt.date(2025, 1, 1)).status == "fail"


def test_gbt50034_clause_4_4():
    # GB/T 50034-2024 clause 4.4: Pst LM <= 1; SVM <= 1.3 where people work or stay long
    pst = criteria.REGISTRY["gbt50034-pst"]
    svm = criteria.REGISTRY["gbt50034-svm"]
    assert pst.limit_on(dt.date(2025, 1, 1)) == 1.0
    assert svm.limit_on(dt.date(2025, 1, 1)) == 1.3
    assert "long periods" in svm.applies_to and "GB 55016" in svm.applies_to
    assert criteria.judge(with_figures(svm=1.29), svm).status == "pass"
    assert criteria.judge(with_figures(svm=1.31), svm).status == "fail"
    assert {pst.kind, svm.kind} == {"recommended practice"}


def test_every_criterion_has_a_kind_and_no_internal_source():
    for c in criteria.REGISTRY.values():
        assert c.kind in criteria.KINDS
        text = " ".join([c.source, c.note, c.applies_to, c.exemptions, c.read_in,
                         c.tolerance_note]).lower()
        assert "brief" not in text, c.id
    user = criteria.from_mapping({"id": "mine", "metric": "svm", "limit": 0.5})
    assert user.kind == "user"
    with pytest.raises(SettingsError):
        criteria.Criterion(id="k", title="", source="", applies_to="", metric="svm",
                           comparison="<=", schedule=((None, 1.0),), kind="law")


def test_a_misspelt_metric_is_refused_not_read_as_no_value():
    """analytic: 1 + 0.2 sin(2 pi 123.4 t) has percent flicker 20 %; a user metric that names
    no figure ('percent_flicer', 'svm.value') is an error naming the criterion when the
    criterion is made, never an 'insufficient data' verdict; a figure held as None still
    reads as no value."""
    rec = record(0.2, f=123.4)
    good = criteria.from_mapping({"id": "house-pf", "metric": "percent_flicker", "limit": 25.0})
    assert criteria.judge(rec, good).status == "pass"
    assert criteria.judge(rec, good).measured == pytest.approx(20.0, rel=1e-3)
    worst = criteria.from_mapping({"id": "house-w", "metric": "per_period.percent_flicker_worst",
                                   "limit": 25.0})
    assert criteria.judge(rec, worst).measured == pytest.approx(20.0, rel=1e-2)
    for typo in ("percent_flicer", "per_period.percent_flicker_wrost", "svm.value",
                 "ieee1789.region", "harmonics", "filtered_percent_flicker.x"):
        with pytest.raises(SettingsError, match="house-typo.*no figure"):
            criteria.from_mapping({"id": "house-typo", "metric": typo, "limit": 1.0})
    with pytest.raises(SettingsError, match="did you mean 'percent_flicker'"):
        criteria.from_mapping({"id": "house-typo", "metric": "percent_flicer", "limit": 1.0})
    with pytest.raises(SettingsError, match="'k'.*no figure 'svn'"):
        criteria.Criterion(id="k", title="", source="", applies_to="", metric="svn",
                           comparison="<=", schedule=((None, 1.0),))
    # a figure the assessment does not hold: no value, so insufficient data (never a pass)
    from dataclasses import replace

    v = criteria.judge(replace(rec, svm=None), criteria.REGISTRY["gbt50034-svm"])
    assert v.status == "insufficient data" and v.measured is None
    cut = criteria.from_mapping({"id": "house-cut", "metric": "filtered_percent_flicker.200",
                                 "limit": 30.0})
    assert criteria.judge(rec, cut).status in ("pass", "insufficient data")


def test_every_figure_name_is_the_json_key_path_of_the_same_value():
    """A criterion's metric names the typed field whose JSON key path it is: for a composite
    light (analytic: 1234.56 Hz PWM at 30 % duty with 5 % ripple at 100 Hz, seeded noise at
    40 dB) every name reads the value the JSON holds there (nan as None)."""
    import math

    import numpy as np

    from flickerkit.keypath import FIGURES, figure, figure_or_none

    from .synth import pwm

    fs, d = 48_017.0, 0.6
    t = np.arange(int(fs * d)) / fs
    x = pwm(1234.56, 0.3, 0.02, fs, d) * (1 + 0.05 * np.sin(2 * np.pi * 100.0 * t))
    x = x + 0.01 * np.random.default_rng(15).standard_normal(x.size) * x.mean()
    a = assess(make_capture(x, fs, label="composite"))
    js = a.to_dict()
    for name in [*FIGURES, "filtered_percent_flicker.200", "filtered_percent_flicker.40"]:
        got = figure(a, name)
        want = figure_or_none(js, name)
        if got is None or not math.isfinite(got):
            assert want is None, name
        else:
            assert want == pytest.approx(got, rel=1e-12), name
    assert figure(a, "filtered_percent_flicker.123") is None  # a cut-off not computed


def test_a_level_without_light_is_never_a_pass():
    """A drive level that makes no light (a skipped pulse): nothing modulates, so the IEEE
    1789 lines and the seizure screen are not applicable; a figure-limit criterion has no
    figure: insufficient data (common practice, no source: never pass without a figure)."""
    when = dt.date(2025, 3, 1)
    for cid, want in (("ieee1789-low-risk", "not applicable"),
                      ("seizure-screen-below-90hz", "not applicable"),
                      ("eu-2019-2020-svm", "insufficient data"),
                      ("gbt50034-svm", "insufficient data")):
        v = criteria.judge(None, criteria.REGISTRY[cid], level=100.0, date=when, label="dark")
        assert v.status == want and "no light" in v.reason and v.label == "dark", cid
        assert v.measured is None


def test_report_of_a_drive_with_a_skipped_pulse(tmp_path):
    """A 1234.56 Hz PWM drive with a 30 us shortest pulse that it skips (invented): at 2 %
    the pulse (16 us) is skipped and there is no light; at 37 % it is full-depth PWM
    (analytic: 100 % percent flicker, over IEEE 1789's low-risk line only above 1250 Hz:
    0.08 x 1234.56 = 98.8 % < 100 %, so it fails)."""
    from flickerkit.project import load_project
    from flickerkit.report import build_report

    p = tmp_path / "skip.toml"
    p.write_text('[product]\nname = "invented skip lamp"\n[setup]\njudged_on = 2025-03-01\n'
                 '[drive]\nmethod = "pwm"\nfrequency_hz = 1234.56\nmin_on_time_s = 30e-6\n'
                 'min_on_mode = "skip"\nlevels = [37, 2]\n'
                 '[criteria]\napply = ["ieee1789-low-risk", "gbt50034-svm"]\n')
    rep = build_report(load_project(p))
    by = {(v.label, v.criterion): v for v in rep.verdicts}
    lit, dark = rep.records[0]["label"], rep.records[1]["label"]
    assert rep.records[0]["level"] == 37 and rep.records[1]["level"] == 2  # percent as given
    assert rep.records[0]["percent_flicker"] == pytest.approx(100.0, rel=1e-9)
    assert by[(lit, "ieee1789-low-risk")].status == "fail"
    assert rep.records[1]["percent_flicker"] is None
    assert by[(dark, "ieee1789-low-risk")].status == "not applicable"
    assert by[(dark, "gbt50034-svm")].status == "insufficient data"
