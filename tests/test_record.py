"""The record as a document: verdicts grouped by kind, missing levels, pictures, print set-up."""

import pytest

from flickerkit import criteria
from flickerkit.cli import main
from flickerkit.judgement import group, limiting_text, missing_levels
from flickerkit.export.workbook import FIT_SLACK, PAGE_CHARS, content_width, sig_format


def _v(cid, label, level, status, measured=None, limit=None, margin=None):
    return criteria.Verdict(cid, label, level, status, measured, limit, margin, "")


def test_ja8_without_a_20_percent_capture_is_not_a_pass():
    # California JA10 measures at 100 % and 20 %: with only a 100 % capture that passes,
    # the criterion lists 20 % as missing and is insufficient, never pass
    ja8 = criteria.REGISTRY["ca-title24-ja8"]
    assert missing_levels(ja8, [100.0, 50.0]) == (20.0,)
    assert missing_levels(ja8, [100.0, 20.2]) == ()
    verdicts = [_v(ja8.id, "a", 100.0, "pass", 3.0, 30.0, 27.0),
                _v(ja8.id, "b", 50.0, "not applicable")]
    (g,) = group([ja8], verdicts, [100.0, 50.0])
    o = g.criteria[0]
    assert g.kind == "regulation"
    assert o.status == "insufficient data" and g.status == "insufficient data"
    assert o.missing_levels == (20.0,)
    assert "20 %" in limiting_text([g]) and "not a certification" in limiting_text([g])


def test_groups_keep_recommended_practice_apart_from_regulation():
    # a fail against IEEE 1789 RP2 (recommended practice) leaves the regulation group's pass
    crits = criteria.get(["ieee1789-noel", "eu-2019-2020-svm"])
    verdicts = [_v("ieee1789-noel", "a", 100.0, "fail", 4.0, 3.33, -0.67),
                _v("ieee1789-noel", "b", 10.0, "fail", 50.0, 40.0, -10.0),
                _v("eu-2019-2020-svm", "a", 100.0, "pass", 0.2, 0.4, 0.2),
                _v("eu-2019-2020-svm", "b", 10.0, "not applicable")]
    groups = {g.kind: g for g in group(crits, verdicts, [100.0, 10.0])}
    assert groups["regulation"].status == "pass"
    assert groups["recommended practice"].status == "fail"
    worst = groups["recommended practice"].criteria[0].worst
    assert worst.level == 10.0 and worst.margin == -10.0   # the most negative margin decides
    text = limiting_text(list(groups.values()))
    assert "fails at 100, 10 %" in text and "flickerkit plan --target ieee1789-noel" in text


def test_decided_by_is_the_verdicts_then_its_reason():
    from dataclasses import replace

    from flickerkit.judgement import decided_by

    v = _v("svm", "a", 100.0, "fail", 1.0, 0.4, -0.6)
    assert decided_by(v) == ""          # nothing named, empty reason
    assert decided_by(replace(v, reason="r")) == "r"
    assert decided_by(replace(v, reason="r", decided_by="harmonic 2 at 200 Hz")) \
        == "harmonic 2 at 200 Hz"
    assert decided_by(replace(v, status="insufficient data", reason="r")) == ""


@pytest.mark.parametrize("value, shown", [(0.1346622585655061, "0.1347"),
                                          (3.9469056161229443, "3.947"),
                                          (99.99999980982868, "100.0"),  # 4, not 5
                                          (9.99996, "10.00"), (0.099996, "0.1000"),
                                          (1234.56, "1235"), (20000.0, "20000"),
                                          (1.5e-7, "1.500E-07")])
def test_display_formats_keep_four_significant_digits(value, shown):
    # analytic: the format shows 4 significant digits; checked by formatting the same way
    fmt = sig_format(value)
    if "E" in fmt:
        assert f"{value:.3E}" == shown
    else:
        decimals = len(fmt.split(".")[1]) if "." in fmt else 0
        assert f"{value:.{decimals}f}" == shown


@pytest.fixture(scope="module")
def demo_record(demo_run):
    return demo_run[0]  # the session's one demo run (conftest)


def _check_printable(wb):
    for ws in wb.worksheets:
        ps = ws.page_setup
        assert ps.orientation in ("portrait", "landscape"), ws.title
        assert ws.oddHeader.center.text and ws.oddFooter.center.text == "page &P of &N", ws.title
        if ws.title != "Pictures":  # pictures under their own captions repeat no title row
            assert ws.print_title_rows, ws.title
        width = content_width(ws)
        if ws.sheet_properties.pageSetUpPr.fitToPage:
            # fitted to one page width only when that squeezes it by at most FIT_SLACK
            assert width <= PAGE_CHARS[ps.orientation] * FIT_SLACK + 1e-9, (ws.title, width)
        else:
            assert ws.print_title_cols, ws.title


def test_demo_record_pictures_print_setup_and_formats(demo_record):
    from openpyxl import load_workbook

    wb = load_workbook(demo_record / "ardent12_record.xlsx")
    _check_printable(wb)
    pics = wb["Pictures"]
    n_captures = 5
    assert len(pics._images) >= n_captures   # at least one picture per capture (here two)
    assert len(wb["IEEE 1789 chart"]._images) == 1
    assert len(wb["Metrics by level"]._images) == 1
    for stem in ("ardent12_level020.csv_waveform", "ieee1789_chart", "metrics_by_level"):
        for ext in ("png", "svg"):
            assert (demo_record / "pictures" / f"{stem}.{ext}").stat().st_size > 1000
    # numbers carry display formats, stored values keep full precision
    ms = wb["Metrics"]
    heads = [ms.cell(i, 1).value for i in range(1, ms.max_row + 1)]
    pf = ms.cell(row=heads.index("Percent flicker [%]") + 1, column=2)
    assert isinstance(pf.value, float) and pf.number_format.startswith("0.")
    assert len(repr(pf.value)) > 8
    # the summary shows each kind apart, and the EU tolerance as context
    texts = [c.value for row in wb["Summary"].iter_rows() for c in row if isinstance(c.value, str)]
    assert "Regulations: overall" in texts and "Recommended practices: overall" in texts
    assert any("context" in t for t in texts)
    assert not any("brief" in c.value.lower() for ws in wb.worksheets for row in ws.iter_rows()
                   for c in row if isinstance(c.value, str))


def test_sig_format_of_zero_and_whole_numbers():
    assert sig_format(0.0) == "0"
    assert sig_format(12345.0) == "0"
    assert sig_format(1.0) == "0" and sig_format(1.5) == "0.000"
    assert sig_format(float("inf")) == "0"


def test_every_workbook_prints(demo_record, tmp_path, capsys):
    from openpyxl import load_workbook

    cap = demo_record / "ardent12_level020.csv"
    books = {"measure": ["measure", str(cap), "--pictures", str(tmp_path / "mp")],
             "drive": ["drive", "-f", "1234.56", "--levels", "100,20,1", "--pictures",
                       str(tmp_path / "dp")],
             "plan": ["plan", "--target", "ieee1789-low-risk", "--clock-mhz", "48",
                      "--prescalers", "1,8", "--pictures", str(tmp_path / "pp")],
             "steps": ["steps", "--steps", "16", "--bits", "10"],
             "camera": ["camera", "-f", "1234.56", "--level", "10", "--fps", "24,30,60"]}
    for name, argv in books.items():
        out = tmp_path / f"{name}.xlsx"
        assert main(argv + ["--xlsx", str(out), "-q"]) == 0, name
        wb = load_workbook(out)
        _check_printable(wb)
        if name not in ("steps", "camera"):
            assert len(wb["Pictures"]._images) >= 1, name
    capsys.readouterr()


def test_pdf_of_the_record(demo_record, tmp_path, capsys, monkeypatch):
    from flickerkit.errors import OutputError
    from flickerkit.export import pdf

    with monkeypatch.context() as m:   # without LibreOffice: a clear note, no file
        m.setattr(pdf, "soffice", lambda: None)
        with pytest.raises(OutputError, match="LibreOffice"):
            pdf.workbook_to_pdf(demo_record / "ardent12_record.xlsx", tmp_path / "none.pdf")
        assert not (tmp_path / "none.pdf").exists()
    if pdf.soffice() is None:
        pytest.skip("LibreOffice is not installed")
    out = pdf.workbook_to_pdf(demo_record / "ardent12_record.xlsx", tmp_path / "record.pdf")
    data = out.read_bytes()
    assert data.startswith(b"%PDF")
    import re

    pages = len(re.findall(rb"/Type\s*/Page(?!s)", data))
    # bounded: the demo's record (5 captures, 11 sheets) prints on some tens of pages
    assert 8 <= pages <= 60, pages


def test_decided_by_names_the_svm_component_from_the_record():
    # a 1234.56 Hz square wave: its fundamental carries most of the SVM sum
    # (analytic: harmonic amplitudes fall as 1/n, the threshold rises with f)
    from flickerkit.assess import assess
    from flickerkit.capture import make_capture

    from .synth import pwm

    fs = 200_000.0
    rec = assess(make_capture(pwm(1234.56, 0.5, 0.0, fs, 0.5), fs, label="sq"))
    svm = criteria.REGISTRY["gbt50034-svm"]
    v = criteria.judge(rec, svm)
    (g,) = group([svm], [v], [None])
    assert g.criteria[0].decided_by.startswith("component at 1234.6 Hz")


def test_pictures_refuse_to_overwrite_and_a_file_in_the_way(demo_record, tmp_path, capsys,
                                                            monkeypatch):
    cap = str(demo_record / "ardent12_level010.txt")
    dark = str(demo_record / "ardent12_dark.csv")
    pics = tmp_path / "pics"
    assert main(["measure", cap, "--dark", dark, "-q", "--pictures", str(pics)]) == 0
    first = sorted(p.name for p in pics.iterdir())
    assert first == ["ardent12_level010.txt_spectrum.png", "ardent12_level010.txt_spectrum.svg",
                     "ardent12_level010.txt_waveform.png", "ardent12_level010.txt_waveform.svg"]
    capsys.readouterr()
    import flickerkit.export.figures as figures

    drawn = []
    real_render = figures.render
    monkeypatch.setattr(figures, "render",
                        lambda *a, **k: drawn.append(a[1]) or real_render(*a, **k))
    assert main(["measure", cap, "--dark", dark, "--json", "--pictures", str(pics)]) == 1
    monkeypatch.undo()
    out = capsys.readouterr()
    assert "--force" in out.err
    # refused before anything is drawn or written: no JSON half-delivered with a failing exit
    assert drawn == [] and out.out == ""
    assert main(["measure", cap, "--dark", dark, "-q", "--pictures", str(pics), "--force"]) == 0
    blocker = tmp_path / "afile"
    blocker.write_text("x")
    assert main(["measure", cap, "--dark", dark, "-q", "--pictures", str(blocker)]) == 1
    err = capsys.readouterr().err
    assert "not a folder" in err and "Traceback" not in err


def test_figures_of_steady_noisy_and_short_light():
    # steady light with 40 dB noise: no period, the spectrum says so; a capture of 1.5 periods
    import numpy as np

    from flickerkit.assess import assess
    from flickerkit.capture import make_capture
    from flickerkit.export.figures import capture_pictures, trace_of

    rng = np.random.default_rng(20261202)
    fs = 25_000.0
    steady = 1.0 + 0.01 * rng.standard_normal(int(0.4 * fs))
    t = np.arange(int(1.5 / 1234.56 * fs)) / fs
    short = 1.0 + 0.3 * np.sin(2 * np.pi * 1234.56 * t)
    recs, traces = [], {}
    for label, x in (("steady", steady), ("short", short)):
        cap = make_capture(x, fs, label=label)
        rec = assess(cap).to_dict()
        recs.append(rec)
        tr = trace_of(cap, rec.get("frequency_hz"))
        # no period found: 20 ms shown, or the whole capture when shorter
        assert tr.samples.size == min(x.size, int(np.ceil(0.02 * fs)))
        traces[label] = tr
    pics = capture_pictures(recs, traces)
    assert [p.name for p in pics] == ["steady_waveform", "steady_spectrum", "short_waveform",
                                      "short_spectrum"]
    assert all(p.png.startswith(b"\x89PNG") and b"<svg" in p.svg for p in pics)


def test_report_without_a_20_percent_capture_lists_it_missing(demo_record, tmp_path, capsys):
    import json

    p = tmp_path / "p.toml"
    p.write_text(f'[product]\nname = "invented"\n[read]\ndark = "{demo_record}/ardent12_dark.csv"\n'
                 f'[[capture]]\nlevel = 100\nfile = "{demo_record}/ardent12_level100.wav"\n'
                 f'[[capture]]\nlevel = 50\nfile = "{demo_record}/ardent12_level050.csv"\n'
                 '[criteria]\napply = ["ca-title24-ja8", "eu-2019-2020-svm"]\n')
    assert main(["report", str(p), "-o", str(tmp_path / "r.xlsx"), "--json", "-q",
                 "-j", "1"]) == 0
    data = json.loads(capsys.readouterr().out)
    (reg,) = data["by_kind"]
    ja8 = next(c for c in reg["criteria"] if c["criterion"] == "ca-title24-ja8")
    # the 100 % capture passes JA8 (3.6 % below 200 Hz), but 20 % is required and absent
    assert ja8["counts"]["pass"] == 1 and ja8["missing_levels"] == [20.0]
    assert ja8["status"] == "insufficient data" and reg["status"] == "insufficient data"
    assert data["overall"] == "insufficient data"
    assert "20 %" in data["limiting"]


def test_spectrum_picture_draws_the_modulation_that_decided_the_region():
    # 1234.56 Hz PWM at 40 % duty whose on-level carries 10 % at 17.3 Hz: the light's mean is
    # 0.4 (1 + 0.1 sin), so its 17.3 Hz component is 10 % of the mean (analytic) and it is what
    # decides IEEE 1789 (0.025 f = 0.43 % line, IEEE 1789-2015 RP1, from memory).
    # The spectrum picture must show that component, not only the PWM's harmonics.
    import numpy as np

    from flickerkit.assess import assess
    from flickerkit.capture import make_capture
    from flickerkit.export.figures import spectrum_figure

    rec = assess(make_capture(*_pwm_with_envelope(0.1), label="pwm x 17.3 Hz")).to_dict()
    assert rec["ieee1789"]["frequency_hz"] == pytest.approx(17.3, rel=1e-3)
    fig = spectrum_figure(rec)
    points = [(fx, a) for line in fig.axes[0].get_lines()
              for fx, a in zip(np.atleast_1d(line.get_xdata()), np.atleast_1d(line.get_ydata()))
              if line.get_marker() not in (None, "None", "")]
    near = [a for fx, a in points if abs(fx - 17.3) < 0.1]
    assert near and near[0] == pytest.approx(10.0, rel=0.01)  # analytic: 10 % of the mean


def test_limiting_text_reads_and_names_line_ripple():
    # IEEE 1789 RP2 failing at 100 % on modulation at 100 Hz (twice the 50 Hz line, common
    # practice, no source): a higher PWM frequency does not touch it, so the suggestion names
    # the line ripple; the paragraph sits under the heading "What limits the product" and
    # does not repeat it as a sentence
    crit = criteria.get(["ieee1789-noel"])
    v = criteria.Verdict("ieee1789-noel", "a", 100.0, "fail", 4.5, 3.33, -1.17,
                         "fundamental mode at 99.998 Hz")
    text = limiting_text(group(crit, [v], [100.0]))
    assert "What limits the product" not in text
    assert "ripple" in text and "`" not in text
    assert "flickerkit plan --target ieee1789-noel" in text


def test_workbook_ieee_chart_places_composite_light_where_it_was_judged():
    # 1234.56 Hz PWM whose on-level carries 10 % at 17.3 Hz: IEEE 1789 is decided at 17.3 Hz,
    # 10 % (analytic: the envelope is 10 % of the mean; 0.025 f line of IEEE 1789-2015 RP1,
    # from memory), so the workbook's chart point sits there, as the picture's
    # does, not at the PWM's 1234.56 Hz and 100 %; the log axis labels 0.01 as 0.01, not 0.0
    from openpyxl import Workbook

    from flickerkit.assess import assess
    from flickerkit.capture import make_capture
    from flickerkit.export.report_workbook import _ieee_chart_sheet

    rec = assess(make_capture(*_pwm_with_envelope(0.1), label="pwm x 17.3 Hz")).to_dict()
    wb = Workbook()
    _ieee_chart_sheet(wb, [rec])
    ws = wb["IEEE 1789 chart"]
    assert ws.cell(2, 6).value == pytest.approx(17.3, rel=1e-3)
    assert ws.cell(2, 7).value == pytest.approx(10.0, rel=0.01)
    assert ws._charts[0].y_axis.numFmt.formatCode == "General"


def _pwm_with_envelope(depth, fs=200_000.0, duration_s=1.5):
    """1234.56 Hz PWM at 40 % duty times (1 + depth sin(2 pi 17.3 t)), sampled as interval
    averages (a detector faithful to the edges): a 0/1 test on sample times would quantise each
    pulse to whole samples, and 162.0005 samples per period make that a slow duty wobble of
    about 1 % of the mean below 90 Hz, which the tool rightly measures."""
    import numpy as np

    f, duty = 1234.56, 0.4
    n = int(duration_s * fs)
    p = np.arange(n + 1) / fs * f + 0.0123
    on = np.floor(p) * duty + np.minimum(p - np.floor(p), duty)  # on-time [periods]
    t = (np.arange(n) + 0.5) / fs
    return np.diff(on) * fs / f * (1.0 + depth * np.sin(2 * np.pi * 17.3 * t)), fs


def test_ieee_verdict_reason_names_the_fundamental_and_what_decided():
    # the envelope (17.3 Hz, 10 %) decides against the 0.025 f line (IEEE 1789-2015 RP1,
    # from memory); the standard's reading is at the PWM's 1234.56 Hz, so the
    # reason must not say "fundamental mode at 17.3 Hz"
    from flickerkit.assess import assess
    from flickerkit.capture import make_capture

    rec = assess(make_capture(*_pwm_with_envelope(0.1), label="env"))
    v = criteria.judge(rec, criteria.REGISTRY["ieee1789-low-risk"], level=20.0)
    assert v.status == "fail"
    assert "fundamental mode at 17.3 Hz" not in v.reason
    assert "decided by band below 90 Hz (at 17.3 Hz)" in v.reason
    assert "fundamental mode at 1234.6 Hz" in v.reason and "low-risk" in v.reason


def test_summary_and_chart_headers_do_not_run_together(demo_record):
    # seen on the printed pages (LibreOffice): the right-aligned margin and the tolerance text
    # beside it printed as "0.26530.1 (context"; the chart sheet's headers ran into each other
    from openpyxl import load_workbook

    wb = load_workbook(demo_record / "ardent12_record.xlsx")
    tol = [c for row in wb["Summary"].iter_rows() for c in row
           if isinstance(c.value, str) and c.value.endswith("(context, Annex IV)")]
    assert tol and all(c.alignment.horizontal == "left" and c.alignment.indent >= 1 for c in tol)
    ws = wb["IEEE 1789 chart"]
    for col in "FG":
        assert ws.column_dimensions[col].width >= len(ws[f"{col}1"].value)


def test_verdict_grid_names_stand_upright_on_their_own_page(demo_record):
    # seen on the printed pages (LibreOffice): the grid's capture names sat in the verdict
    # tables' narrow columns and wrapped mid-name ("ardent12_l / evel010.tx / t"), and the
    # grid's title was left alone at the foot of page 1
    from openpyxl import load_workbook

    ws = load_workbook(demo_record / "ardent12_record.xlsx")["Summary"]
    title = next(c for row in ws.iter_rows() for c in row
                 if c.value == "Verdict per criterion and capture")
    heads = [c for c in ws[title.row + 1][1:] if isinstance(c.value, str)]
    assert len(heads) == 5
    assert all(c.alignment.text_rotation == 90 for c in heads)
    longest = max(len(c.value) for c in heads)
    assert ws.row_dimensions[title.row + 1].height >= 6 * longest  # points: the names fit
    assert title.row - 1 in [b.id for b in ws.row_breaks.brk]


def test_pictures_of_equal_file_names_in_two_folders_are_kept_apart(tmp_path, capsys):
    # a/cap.npy and b/cap.npy: the table labels them a/cap.npy and b/cap.npy; the pictures
    # took the bare file name, so b's replaced a's with exit 0
    import numpy as np

    fs = 20_000.0
    t = np.arange(20_000) / fs
    for sub, f in (("a", 123.4), ("b", 234.5)):
        (tmp_path / sub).mkdir()
        np.save(tmp_path / sub / "cap.npy", 1.0 + 0.3 * np.sin(2 * np.pi * f * t))
    pics = tmp_path / "pics"
    assert main(["measure", str(tmp_path / "a" / "cap.npy"), str(tmp_path / "b" / "cap.npy"),
                 "-r", "20000", "-q", "--pictures", str(pics)]) == 0
    names = sorted(p.name for p in pics.iterdir())
    assert len(names) == 8 and len({n.split("_", 1)[0] for n in names}) == 2, names


def test_two_pictures_of_one_run_with_one_name_are_refused(tmp_path):
    from flickerkit.errors import OutputError
    from flickerkit.export.figures import check_picture_names

    with pytest.raises(OutputError, match="share the name"):
        check_picture_names(tmp_path / "pics", ["x_spectrum", "x_spectrum"], force=True)
