"""The compliance record: a workbook a laboratory can file.

Sheets: Summary (product, overall verdict, verdict per criterion and level,
cautions), Verdicts (every verdict with figure, limit, margin and reason),
Metrics (all figures per capture or level), Harmonics, IEEE 1789 chart
(log-log boundary lines and each capture's point), Metrics by level (with a
chart), Brightness table (when requested), Inputs (files, sizes, SHA-256,
rates, durations, dark level, version, settings, time of the run) and Method
notes. Every value is computed in Python and written as a value; text from
inputs is always written as text.
"""

from __future__ import annotations

from pathlib import Path
import numpy as np

from .. import __version__
from ..fileio import write_with
from .workbook import (MEASURE_COLUMNS, add_pictures, fit_rows, lookup, print_setup, put,
                       set_properties, workbook_text, write_rows, write_turned)

STATUS_FILL = {"pass": "C6EFCE", "fail": "FFC7CE", "insufficient data": "FFEB9C",
               "not applicable": "E7E6E6"}
STATUS_FONT = {"pass": "006100", "fail": "9C0006", "insufficient data": "9C5700",
               "not applicable": "595959"}

REPORT_COLUMNS: tuple[tuple[str, str], ...] = (
    ("Capture", "label"),
    ("Dimming level [%]", "level"),
    *MEASURE_COLUMNS[1:4],
    ("Percent flicker, period-averaged [%]", "percent_flicker_averaged"),
    ("SVM [1]", "svm"),
    ("Pst LM [1]", "pst_lm"),
    *[(f"Filtered percent flicker below {c:g} Hz [%]", f"filtered_percent_flicker.{c:g}")
      for c in (40, 90, 200, 400, 1000)],
    *MEASURE_COLUMNS[4:],
)

METHOD_NOTES: tuple[tuple[str, str, str], ...] = (
    ("Percent flicker", "IEEE Std 1789-2015 (Mod%); CIE ILV 17-39; California JA10.6",
     "100 (max - min)/(max + min) over whole periods of the fundamental. Sourced definition."),
    ("Flicker index", "IES Lighting Handbook 5.9.9.4; IEC 60050-845 IEV 845-22-094",
     "Area above the mean over total area, over an integer number of periods. Sourced "
     "definition. On sampled data its bias is about 1/(samples per period)."),
    ("Fundamental frequency", "flickerkit's own method (no published source)",
     "Autocorrelation of the mean-removed signal, refined at multiples of the period (or by a "
     "least-squares harmonic fit for short captures)."),
    ("IEEE 1789 regions", "IEEE Std 1789-2015, clause 8, Recommended Practices 1 and 2",
     "Low risk: Mod% < 0.025 f below 90 Hz, < 0.08 f to 1250 Hz. No observable effect: "
     "< 0.01 f, < 0.0333 f to 3000 Hz. RECALLED, not read in the standard (internally "
     "consistent). The per-harmonic mode is this project's extension."),
    ("SVM", "CIE TN 006:2016; IEC TR 63158:2018 (+COR1); Perz et al., JOSA A 35(2) 309 (2018)",
     "(sum (C_m / T(f_m))^3.7)^(1/3.7) over components up to 2 kHz, over whole periods. "
     "Default threshold T(f) = 2.865e-5 f^1.543 + 0.225 (sourced power form); which form IEC TR "
     "63158 makes normative is UNRESOLVED."),
    ("Pst LM", "IEC TR 61547-1:2020, built on the IEC 61000-4-15 flickermeter",
     "Shared IEC 61000-4-15 blocks (recalled and numerically cross-checked); the light-domain "
     "weighting and scaling constants of IEC TR 61547-1 were not available: the calibration "
     "used is PROVISIONAL and named in the Inputs sheet."),
    ("Filtered percent flicker", "California 2022 Reference Appendices, JA10.6",
     "Percent flicker after setting the Fourier components above 40, 90, 200, 400 and 1000 Hz "
     "to zero; a component exactly at a cut-off is kept."),
    ("Noise floor", "flickerkit's own method (no published source)",
     "Percent flicker that the measured white noise alone would show on steady light "
     "(sigma sqrt(2 ln n)/mean). When it exceeds 1 % of the raw figure, the headline percent "
     "flicker and flicker index are the period-averaged waveform's (raw min/max kept beside)."),
    ("Composite light", "this project",
     "Every spectral component above the noise is listed (Hann-windowed whole-period "
     "spectrum). Components not harmonics of the strongest period are judged against IEEE 1789 "
     "at their own frequency, with the band-limited depth of the segment holding them; the "
     "headline region is the worst and names what decided it. The seizure screen judges the "
     "light low-passed below 90 Hz. An extension of this project: IEEE 1789 does not say how "
     "to read light with more than one modulation."),
    ("Band edges", "this project",
     "A component within its frequency uncertainty (at least 20 ppm) of the SVM band ends, a "
     "JA10.6 cut-off or an IEEE 1789 break is taken as on it: included, kept, 90 Hz in the "
     "upper segment, the line applying at 1250 and 3000 Hz; noted per capture."),
    ("Aliasing", "this project; sampling theorem",
     "With the detector bandwidth above half the sample rate and content in the top half of "
     "the band, what the capture shows may be folded down from above: verdicts are "
     "insufficient data."),
)


#: Short forms of the statuses in the summary's matrix (a legend follows it).
_SHORT = {"not applicable": "n/a", "insufficient data": "insufficient"}


def _style_status(cell, status: str) -> None:
    from openpyxl.styles import Font, PatternFill

    if status in STATUS_FILL:
        cell.fill = PatternFill("solid", start_color=STATUS_FILL[status],
                                end_color=STATUS_FILL[status])
        cell.font = Font(bold=True, color=STATUS_FONT[status])


def write_report_workbook(path: str | Path, report, *, force: bool = False,
                          pictures=None) -> Path:
    """Write a :class:`~flickerkit.report.Report` as a workbook, atomically.

    Parameters
    ----------
    pictures : sequence of flickerkit.export.figures.Picture, optional
        Placed as images on the sheets they explain (captures on "Pictures").
    """
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    from ..report import CAUTIONS

    wb = Workbook()
    prod = report.project.product
    set_properties(wb, f"Flicker record: {prod.get('name', '')}",
                   "Temporal light modulation assessment")
    wb.properties.category = "flicker assessment"

    # ---------------------------------------------------------------- summary
    ws = wb.active
    ws.title = "Summary"
    bold = Font(bold=True)
    wrap = Alignment(wrap_text=True, vertical="top")
    put(ws, 1, 1, "Temporal light modulation record").font = Font(bold=True, size=14)
    r = 3
    for key in ("name", "model", "maker", "description"):
        if key in prod:
            put(ws, r, 1, key.capitalize()).font = bold
            put(ws, r, 2, prod[key])
            r += 1
    put(ws, r, 1, "Judged on").font = bold
    put(ws, r, 2, report.project.judged_on.isoformat())
    r += 1
    put(ws, r, 1, "Run at").font = bold
    put(ws, r, 2, report.run_at)
    r += 2
    put(ws, r, 1, "Verdicts by kind of document (each kind is summed up apart)").font = \
        Font(bold=True, size=12)
    heads = ["Criterion", "Verdict", "Worst level [%]", "Capture", "Measured", "Limit",
             "Margin (+ inside)", "Verification tolerance", "Missing levels [%]", "Decided by"]
    for g in report.groups:
        r += 2
        put(ws, r, 1, f"{g.title}: overall").font = Font(bold=True, size=12)
        _style_status(put(ws, r, 2, g.status.upper()), g.status)
        r += 1
        for j, h in enumerate(heads, start=1):
            c = put(ws, r, j, h)
            c.font = bold
            c.alignment = wrap
        for o in g.criteria:
            r += 1
            w = o.worst
            tol = o.criterion.verification_tolerance
            vals = [f"{o.criterion.title} [{o.criterion.id}]", o.status,
                    None if w is None else w.level, None if w is None else w.label,
                    None if w is None else w.measured, None if w is None else w.limit,
                    None if w is None else w.margin,
                    None if tol is None else f"{tol:g} (context, Annex IV)",
                    ", ".join(f"{x:g}" for x in o.missing_levels) or None, o.decided_by]
            for j, v in enumerate(vals, start=1):
                c = put(ws, r, j, v)
                # text after a right-aligned number starts one indent in (the margin and
                # the tolerance printed as one "0.26530.1")
                c.alignment = wrap if j != 8 else Alignment(
                    wrap_text=True, vertical="top", horizontal="left", indent=1)
            _style_status(ws.cell(row=r, column=2), o.status)
    r += 2
    put(ws, r, 1, "What limits the product").font = Font(bold=True, size=12)
    r += 1
    c = put(ws, r, 1, report.limiting)
    c.alignment = wrap
    ws.merge_cells(start_row=r, start_column=1, end_row=r, end_column=len(heads))
    r += 2
    # the grid starts a printed page: its upright header row is tall, and a page break
    # inside it would leave the title alone at the foot of the page before
    from openpyxl.worksheet.pagebreak import Break

    ws.row_breaks.append(Break(id=r - 1))
    put(ws, r, 1, "Verdict per criterion and capture").font = Font(bold=True, size=12)
    r += 1
    labels = list(dict.fromkeys(v.label for v in report.verdicts))
    by_key = {(v.criterion, v.label): v for v in report.verdicts}
    put(ws, r, 1, "Criterion").font = bold
    rec_level = {rec["label"]: rec.get("level") for rec in report.records}
    # the capture names turned upright: the columns are the verdict tables' (narrow ones
    # among them), and a name such as "ardent12_level010.txt" has no space to wrap at
    longest = 0
    for j, label in enumerate(labels, start=2):
        lv = rec_level.get(label)
        head = f"{label}" + (f" ({lv:g} %)" if isinstance(lv, (int, float)) else "")
        h = put(ws, r, j, head)
        h.font = bold
        h.alignment = Alignment(text_rotation=90, horizontal="center", vertical="bottom")
        longest = max(longest, len(str(h.value)))
    ws.row_dimensions[r].height = min(GRID_HEAD_MAX_PT, GRID_HEAD_PT_PER_CHAR * longest + 8)
    for crit in report.criteria:
        r += 1
        put(ws, r, 1, f"{crit.title} [{crit.id}]").alignment = wrap
        for j, label in enumerate(labels, start=2):
            v = by_key.get((crit.id, label))
            if v is None:
                continue
            text = _SHORT.get(v.status, v.status)
            c = put(ws, r, j, f"{text} *" if v.depends_on_threshold_form else text)
            _style_status(c, v.status)
            c.alignment = wrap
    r += 1
    put(ws, r, 1, "n/a: not applicable (the criterion's reason is on the Verdicts sheet); "
                  "insufficient: insufficient data").font = Font(italic=True, size=9)
    if any(v.depends_on_threshold_form for v in report.verdicts):
        r += 1
        put(ws, r, 1, "* depends on the SVM threshold form: the other form gives the other "
                      "verdict (see Verdicts)").font = Font(italic=True, size=9)
    r += 2
    put(ws, r, 1, "Cautions").font = bold
    for text in CAUTIONS:
        r += 1
        cell = put(ws, r, 1, text)
        cell.alignment = wrap
        ws.merge_cells(start_row=r, start_column=1, end_row=r, end_column=len(heads))
    for j, width in enumerate([44, 14, 9, 22, 10, 10, 10, 14, 10, 32], start=1):
        ws.column_dimensions[ws.cell(row=1, column=j).column_letter].width = width
    for j in range(len(heads) + 1, len(labels) + 2):
        ws.column_dimensions[ws.cell(row=1, column=j).column_letter].width = 14
    fit_rows(ws)

    # ---------------------------------------------------------------- verdicts
    vs = wb.create_sheet("Verdicts")
    crit_by_id = {c.id: c for c in report.criteria}
    rows = []
    for v in report.verdicts:
        c = crit_by_id.get(v.criterion)
        tol = None if c is None else c.verification_tolerance
        rows.append([v.criterion, c.kind if c else "", v.label, v.level, v.status, v.measured,
                     v.limit, v.margin, c.unit if c else "",
                     None if tol is None else f"{tol:g} (context)", v.reason,
                     c.confidence if c else "", v.threshold_form or ""])
    last = write_rows(vs, ["Criterion", "Kind", "Capture", "Level [%]", "Verdict",
                           "Measured", "Limit", "Margin (positive = inside)", "Unit",
                           "Verification tolerance (not a loosened limit)", "Reason",
                           "Confidence in the limit", "Depends on the SVM threshold form"],
                      rows, widths=[22, 19, 22, 9, 13, 10, 10, 10, 5, 14, 32, 11, 20])
    for i in range(2, last + 1):
        _style_status(vs.cell(row=i, column=5), vs.cell(row=i, column=5).value)
        for j in (2, 3, 10, 11):
            vs.cell(row=i, column=j).alignment = wrap
    for cell in vs[1]:
        cell.alignment = wrap
    fit_rows(vs)

    # ---------------------------------------------------------------- metrics
    ms = wb.create_sheet("Metrics")
    # turned: figures run down, captures across (45 figures would not fit a page's width)
    write_turned(ms, REPORT_COLUMNS, report.records)

    hs = wb.create_sheet("Harmonics")
    hrows = []
    for rec in report.records:
        for h in rec.get("harmonics") or []:
            hrows.append([rec["label"], rec.get("level"), h["order"], h["frequency_hz"],
                          h["amplitude"], None if h["amplitude"] is None else 100 * h["amplitude"],
                          h["phase_deg"]])
    write_rows(hs, ["Capture", "Dimming level [%]", "Harmonic order", "Frequency [Hz]",
                    "Amplitude / mean [1]", "Amplitude / mean [%]", "Phase [deg]"], hrows,
               widths=[26, 12, 10, 14, 18, 18, 12])
    for cell in hs[1]:
        cell.alignment = wrap
    fit_rows(hs)

    anchors: dict[str, str | None] = {}
    anchors["ieee1789_chart"] = _ieee_chart_sheet(wb, report.records)
    anchors["metrics_by_level"] = _level_sheet(wb, report.records)
    if report.steps is not None:
        from .stepsbook import add_steps_sheets

        add_steps_sheets(wb, report.steps, dict(report.project.steps or {}),
                         summary_title="Brightness table", steps_title="Brightness steps")

    # ---------------------------------------------------------------- inputs
    ins = wb.create_sheet("Inputs")
    keys = ["label", "level", "file", "status", "size_bytes", "sha256", "sample_rate_hz",
            "duration_s", "n_samples", "column", "unit", "channel_choice", "layout",
            "time_base", "rows_skipped", "dark_level", "dark_file", "dark_sha256",
            "description"]
    heads = ["Capture", "Dimming level [%]", "File", "Status", "Size [bytes]", "SHA-256",
             "Sample rate [Hz]", "Duration [s]", "Samples", "Column measured", "Unit",
             "Why this column", "Layout read", "Time base from", "Lines skipped",
             "Dark level [input unit]", "Dark capture", "Dark capture SHA-256", "Model"]
    # turned: one column per input, fields down (the fields would not fit a page's width)
    ncol = max(1, len(report.inputs))
    last = write_turned(ins, list(zip(heads, keys)), list(report.inputs), head_width=24,
                        value_width=max(18, min(30, 110 // ncol)))
    r = last + 2
    put(ins, r, 1, "Setting").font = bold
    put(ins, r, 2, "Value").font = bold
    settings = {**report.settings, "run at": report.run_at, "tool": f"flickerkit {__version__}"}
    for rec in report.records[:1]:
        if rec.get("pst_lm_calibration"):
            settings["Pst LM calibration"] = str(rec["pst_lm_calibration"])
    lines: list[tuple[str, object]] = [(str(k), v if isinstance(v, (int, float)) or v is None
                                        else str(v)) for k, v in settings.items()]
    for rec in report.records:
        lines += [(f"note: {rec['label']}", n) for n in rec.get("notes") or []]
        lines += [(f"warning: {rec['label']}", w) for w in rec.get("warnings") or []]
    lines += [(f"not measured: {label}", err) for label, err in report.failures]
    first = r + 1
    for k, v in lines:
        r += 1
        put(ins, r, 1, k).alignment = wrap
        put(ins, r, 2, v).alignment = Alignment(wrap_text=True, vertical="top",
                                                 horizontal="left")
        if ncol > 1:
            ins.merge_cells(start_row=r, start_column=2, end_row=r, end_column=ncol + 1)
    fit_rows(ins, first)

    # ---------------------------------------------------------------- method notes
    ns = wb.create_sheet("Method notes")
    nrows = [list(n) for n in METHOD_NOTES]
    nrows += [[f"Criterion {c.id}", c.source, f"{c.note} Applies to: {c.applies_to}. "
               f"Confidence: {c.confidence}." + (f" Exemptions: {c.exemptions}." if c.exemptions
                                                 else "")] for c in report.criteria]
    nrows += [[f"Criterion {c.id}: text read", c.read_in, c.tolerance_note]
              for c in report.criteria if c.read_in or c.tolerance_note]
    write_rows(ns, ["Item", "Source", "How, and how sure"], nrows, widths=[26, 44, 76])
    for row in ns.iter_rows(min_row=1):
        for cell in row:
            cell.alignment = Alignment(wrap_text=True, vertical="top")
    fit_rows(ns)
    if pictures:
        add_pictures(wb, [p for p in pictures if p.sheet == "Pictures"])
        add_pictures(wb, [p for p in pictures if p.sheet != "Pictures"],
                     anchors={k: v for k, v in anchors.items() if v})
        if "Pictures" in wb.sheetnames:  # captures' pictures after the metrics they explain
            wb.move_sheet("Pictures", offset=wb.sheetnames.index("Harmonics")
                          - wb.sheetnames.index("Pictures") + 1)
    print_setup(wb, product=_product_line(prod), document="Temporal light modulation record",
                run_at=report.run_at, title_rows={"Pictures": 0})

    def save(tmp: Path) -> None:
        wb.save(tmp)

    return write_with(path, save, force=force)


def _product_line(prod: dict) -> str:
    """Product name, and the model when both fit a page header's third."""
    line = " ".join(str(prod[k]) for k in ("name", "model") if prod.get(k))
    return line if len(line) <= 40 else str(prod.get("name", line))


#: Height of the verdict grid's upright capture names: points per character (bold, 10 pt)
#: and the most a header row takes [pt].
GRID_HEAD_PT_PER_CHAR = 6.5
GRID_HEAD_MAX_PT = 220.0


def _ieee_chart_sheet(wb, records) -> str:
    """Boundary lines of IEEE 1789 and each capture's point, on log-log axes."""
    from openpyxl.chart import Reference, ScatterChart, Series

    from ..ieee1789 import low_risk_limit_percent, noel_limit_percent

    ws = wb.create_sheet("IEEE 1789 chart")
    f = np.geomspace(1.0, 10_000.0, 161)
    f = np.sort(np.concatenate([f, [89.999, 90.0, 1250.0, 1250.01, 3000.0, 3000.01]]))
    lr = np.minimum(low_risk_limit_percent(f), 100.0)
    noel = np.minimum(noel_limit_percent(f), 100.0)
    write_rows(ws, ["Frequency [Hz]", "Low-risk limit [%] (100 = no restriction)",
                    "NOEL limit [%] (100 = no restriction)"],
               ([float(a), float(b), float(c)] for a, b, c in zip(f, lr, noel)),
               widths=[14, 20, 20])
    n = f.size
    # each capture where IEEE 1789 judged it (the headline: a composite light's envelope or
    # ripple when that decided, else the fundamental and its percent flicker)
    pts = []
    for rec in records:
        ieee = rec.get("ieee1789") or {}
        fx, m = ieee.get("frequency_hz"), ieee.get("modulation_percent")
        if not (fx and m):
            fx, m = rec.get("frequency_hz"), rec.get("percent_flicker")
        if fx and m:
            pts.append((fx, m, rec["label"]))
    put(ws, 1, 5, "Capture")
    put(ws, 1, 6, "Frequency judged [Hz]")
    put(ws, 1, 7, "Modulation judged [%]")
    for i, (fx, pf, label) in enumerate(pts, start=2):
        put(ws, i, 5, label)
        put(ws, i, 6, float(fx))
        put(ws, i, 7, float(max(pf, 1e-3)))

    ch = ScatterChart()
    ch.title = "IEEE 1789-2015 boundaries (recalled) and captures"
    ch.style = 13
    ch.x_axis.title = "Modulation frequency [Hz]"
    ch.y_axis.title = "Percent flicker [%]"
    ch.x_axis.scaling.logBase = 10
    ch.y_axis.scaling.logBase = 10
    ch.x_axis.scaling.min, ch.x_axis.scaling.max = 1, 10_000
    ch.y_axis.scaling.min, ch.y_axis.scaling.max = 0.01, 200
    ch.y_axis.number_format = "General"  # a log axis from 0.01: "0.0" printed 0.01 as 0.0
    ch.x_axis.number_format = "General"
    ch.x_axis.delete = False
    ch.y_axis.delete = False
    ch.legend.position = "b"
    xs = Reference(ws, min_col=1, min_row=2, max_row=n + 1)
    for col, title, colour in ((2, "Low-risk boundary", "C00000"), (3, "NOEL boundary", "2F5597")):
        s = Series(Reference(ws, min_col=col, min_row=2, max_row=n + 1), xs, title=title)
        s.marker.symbol = "none"
        s.smooth = False
        s.graphicalProperties.line.solidFill = colour
        s.graphicalProperties.line.width = 22000
        ch.series.append(s)
    colours = ("1F4E79", "C55A11", "548235", "7030A0", "BF9000", "2E75B6")
    symbols = ("circle", "diamond", "square", "triangle", "x", "star")
    for i, (_, _, label) in enumerate(pts):  # one series per capture: the legend labels it
        row = i + 2
        s = Series(Reference(ws, min_col=7, min_row=row, max_row=row),
                   Reference(ws, min_col=6, min_row=row, max_row=row),
                   title=workbook_text(str(label))[0])
        s.marker.symbol = symbols[i % len(symbols)]
        s.marker.size = 8
        s.marker.graphicalProperties.solidFill = colours[i % len(colours)]
        s.marker.graphicalProperties.line.solidFill = colours[i % len(colours)]
        s.graphicalProperties.line.noFill = True
        ch.series.append(s)
    ch.height, ch.width = 10, 15
    # the labelled picture (when drawn) goes first, under the points; this chart below it
    from openpyxl.worksheet.pagebreak import Break

    top = len(pts) + 4
    ws.row_breaks.append(Break(id=top + 24))
    ws.add_chart(ch, f"E{top + 26}")
    # printed: the points, the labelled picture and the chart; the boundary table (the
    # chart's data, columns A-C) stays in the workbook but off the printed pages
    ws.print_area = f"E1:L{top + 46}"
    for letter, w in (("D", 3), ("E", 24), ("F", 22), ("G", 22)):  # headers on one line
        ws.column_dimensions[letter].width = w
    return f"E{top}"


def _level_sheet(wb, records) -> str | None:
    """Metrics against dimming level, with a chart."""
    from openpyxl.chart import Reference, ScatterChart, Series

    ws = wb.create_sheet("Metrics by level")
    rows = sorted((r for r in records if isinstance(r.get("level"), (int, float))),
                  key=lambda r: -r["level"])
    heads = ["Dimming level [%]", "Percent flicker [%]", "Flicker index [1]", "SVM [1]",
             "Pst LM [1]", "Fundamental frequency [Hz]"]
    keys = ["level", "percent_flicker", "flicker_index", "svm", "pst_lm", "frequency_hz"]
    last = write_rows(ws, heads, ([lookup(r, k) for k in keys] for r in rows),
                      widths=[16, 18, 16, 10, 10, 22])
    if not rows:
        return None
    ch = ScatterChart()
    ch.title = "Percent flicker against dimming level"
    ch.style = 13
    ch.x_axis.title = "Dimming level [%]"
    ch.y_axis.title = "Percent flicker [%]"
    ch.x_axis.delete = False
    ch.y_axis.delete = False
    ch.legend = None
    xs = Reference(ws, min_col=1, min_row=2, max_row=last)
    s = Series(Reference(ws, min_col=2, min_row=2, max_row=last), xs, title="Percent flicker [%]")
    s.marker.symbol = "circle"
    s.smooth = False
    ch.series.append(s)
    ch.height, ch.width = 9, 16
    # the picture of every metric (when drawn) first; this chart on the next page
    ws.add_chart(ch, f"A{last + 28}")
    from openpyxl.worksheet.pagebreak import Break

    ws.row_breaks.append(Break(id=last + 26))
    return f"A{last + 3}"
