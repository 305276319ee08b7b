"""Excel workbook of a brightness table: the steps, the summary, and a chart of L* by step.

Values are computed in Python and written as values (no formulas). The chart
sits on the summary sheet; its axes are marked visible explicitly
(``delete = False``), see the ecosystem notes §2.2.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from ..fileio import write_with
from .workbook import CAUTION, print_setup, put, set_properties, write_rows

#: (header, row key, number format) of the steps sheet.
STEP_COLUMNS: tuple[tuple[str, str, str | None], ...] = (
    ("Step", "step", "0"),
    ("Count", "count", "0"),
    ("Duty [%]", "duty", "0.0000%"),
    ("Target light [%]", "target_light", "0.0000%"),
    ("Relative light [%]", "relative_light", "0.0000%"),
    ("L* [0-100]", "lightness", "0.000"),
    ("Step in L*", "delta_lightness", "0.000"),
    ("Weber ratio [%]", "weber", "0.00%"),
    ("Visible step", "visible", None),
    ("Uncalibrated count", "uncalibrated_count", "0"),
    ("Uncalibrated light [%]", "uncalibrated_light", "0.0000%"),
    ("Percent flicker [%]", "percent_flicker", "0.00"),
    ("Flicker index [1]", "flicker_index", "0.0000"),
    ("IEEE 1789 region", "ieee1789_region", None),
    ("SVM [1]", "svm", "0.000"),
)


def write_steps_workbook(path: str | Path, table: Any, settings: dict[str, Any], *,
                         force: bool = False) -> Path:
    """Write a brightness table to an ``.xlsx`` file atomically.

    Parameters
    ----------
    path : str or Path
        Output file.
    table : StepTable
        The table.
    settings : dict
        Settings to record (option name -> value).
    force : bool
        Replace an existing file.
    """
    from openpyxl import Workbook

    wb = Workbook()
    set_properties(wb, "flickerkit brightness table", "Brightness steps for a PWM counter")
    add_steps_sheets(wb, table, settings, summary_sheet=wb.active)
    print_setup(wb, document="Brightness table for a PWM counter")

    def save(tmp: Path) -> None:
        wb.save(tmp)

    return write_with(path, save, force=force)


def add_steps_sheets(wb, table: Any, settings: dict[str, Any], *, summary_sheet=None,
                     summary_title: str = "Summary", steps_title: str = "Steps") -> None:
    """Add the brightness table's summary (with its L* chart) and steps sheets to ``wb``.

    Parameters
    ----------
    wb : openpyxl.Workbook
    table : StepTable
    settings : dict
        Settings to record.
    summary_sheet : Worksheet, optional
        Sheet to use for the summary (default: a new sheet ``summary_title``).
    """
    from openpyxl.chart import Reference, ScatterChart, Series
    from openpyxl.styles import Alignment, Font

    rows = table.rows()
    summary = table.summary()
    present = [c for c in STEP_COLUMNS if c[1] in rows[0]]
    ws_sum = summary_sheet if summary_sheet is not None else wb.create_sheet(summary_title)
    ws_sum.title = summary_title
    ws = wb.create_sheet(steps_title)

    def cell_value(row: dict, key: str) -> Any:
        v = row.get(key)
        if key == "weber" and v is None and row["step"] > 0:
            return "from off"
        return "yes" if v is True else ("" if v is False else v)

    last = write_rows(ws, [c[0] for c in present],
                      ([cell_value(r, c[1]) for c in present] for r in rows),
                      widths=[max(8, min(12, len(c[0]) + 2)) for c in present])
    from openpyxl.styles import Alignment as _Al

    for cell in ws[1]:
        cell.alignment = _Al(wrap_text=True, vertical="top")
    ws.row_dimensions[1].height = 42
    for j, (_, _, fmt) in enumerate(present, start=1):
        if fmt:
            for r in range(2, last + 1):
                ws.cell(row=r, column=j).number_format = fmt

    bold = Font(bold=True)
    put(ws_sum, 1, 1, "Brightness table").font = Font(bold=True, size=14)
    r = 3
    for label, value in _summary_lines(table, summary):
        lab = put(ws_sum, r, 1, label)
        lab.font = bold
        lab.alignment = Alignment(vertical="top")
        # a frequency is a setting: shown whole (1234.56 Hz, not 4 digits' 1235)
        cell = put(ws_sum, r, 2, value,
                   number_format="General" if "frequency" in label.lower() else None)
        if label == "Warning":
            cell.font = bold
        if isinstance(value, str) and len(value) > 60:
            # wrapped in the 70-wide column: an unwrapped long line widens the printed page
            # and shrinks the whole summary to fit it
            cell.alignment = Alignment(wrap_text=True, vertical="top")
            ws_sum.row_dimensions[r].height = 15 * (1 + len(value) // 60)
        r += 1
    r += 1
    put(ws_sum, r, 1, "Settings").font = bold
    r += 1
    for k, v in settings.items():
        put(ws_sum, r, 1, str(k))
        put(ws_sum, r, 2, "" if v is None else (v if isinstance(v, (int, float)) else str(v)),
            number_format="General")  # settings as given, not rounded for display
        r += 1
    r += 1
    c = put(ws_sum, r, 1, CAUTION)
    c.alignment = Alignment(wrap_text=True, vertical="top")
    ws_sum.merge_cells(start_row=r, start_column=1, end_row=r + 4, end_column=2)
    chart_row = r + 6
    ws_sum.column_dimensions["A"].width = 34
    ws_sum.column_dimensions["B"].width = 70

    col = {c[1]: j for j, c in enumerate(present, start=1)}
    chart = ScatterChart()
    chart.title = "CIE 1976 L* by step"
    chart.style = 13
    chart.x_axis.title = "Step"
    chart.y_axis.title = "L* (0-100)"
    chart.x_axis.delete = False
    chart.y_axis.delete = False
    chart.y_axis.scaling.min = 0
    chart.y_axis.scaling.max = 100
    chart.x_axis.scaling.min = 0
    chart.x_axis.scaling.max = max(1, len(rows) - 1)
    chart.legend.position = "b"
    xs = Reference(ws, min_col=col["step"], min_row=2, max_row=last)
    ys = Reference(ws, min_col=col["lightness"], min_row=2, max_row=last)
    s = Series(ys, xs, title="realised L*")
    s.marker.symbol = "circle" if len(rows) <= 128 else "none"
    s.marker.size = 4
    s.smooth = False
    chart.series.append(s)
    chart.height, chart.width = 10, 18
    ws_sum.add_chart(chart, f"A{chart_row}")  # below the summary: the page stays one wide


def _summary_lines(table: Any, s: dict) -> list[tuple[str, Any]]:
    cv = s["curve"]
    lines: list[tuple[str, Any]] = [
        ("Curve", f"{cv['method']}: {cv['description']}"),
        ("Range [% of full light]", f"{100 * cv['min_level']:g} to {100 * cv['max_level']:g}"
                                    f"{' (step 0 off)' if cv['off_step'] else ''}"),
        ("Counter", table.counter.describe() + "; duty = count / TOP"),
        ("Rounding", s["rounding"]),
        ("Steps", s["steps"]),
        ("Distinct counts", s["distinct_counts"]),
        ("Steps lost", s["steps_lost"]),
        ("Collapsed steps", _short_list(s["collapsed_steps"])),
        ("Lit steps with no light", _short_list(s["lit_steps_dark"])),
        ("Strictly rising from step", s["monotonic_from_step"]),
    ]
    if s["lowest_lit"]:
        lo = s["lowest_lit"]
        lines.append(("Lowest lit level", f"step {lo['step']}, count {lo['count']}, "
                                          f"{100 * lo['relative_light']:.4g} % light"))
    if s["largest_jump"]:
        j = s["largest_jump"]
        lines.append(("Largest step", f"{j['delta_lightness']:.3f} L* at step {j['step']} "
                                      f"(count {j['from_count']} -> {j['to_count']})"))
    lines += [
        ("Largest L* error", f"{s['max_lightness_error']['value']:.3f} at step "
                             f"{s['max_lightness_error']['step']}"),
        ("Visible-step threshold [L*]", s["visible_step"]),
        ("Threshold source", s["visible_step_source"]),
        ("Steps above the threshold", len(s["visible_steps"])),
        ("Bits needed for this table", s["bits_needed"]),
    ]
    if "calibration" in s:
        c = s["calibration"]
        lines += [("Calibration", f"{c['source']} ({c['points']} points)"),
                  ("Largest count shift from calibration", c["largest_count_shift"]),
                  ("Largest step, uncalibrated [L*]", c["uncalibrated_largest_jump"])]
    if "warning" in s.get("drive_light", {}):
        lines.append(("Warning", s["drive_light"]["warning"]))
    if "flicker" in s:
        f = s["flicker"]
        for k, v in f.items():
            if not isinstance(v, (dict, list)) and k != "caution":  # the caution is below
                lines.append((f"Flicker: {k.replace('_', ' ')}", v))
    return lines


def _short_list(v: list[int], limit: int = 40) -> str:
    if not v:
        return "none"
    head = ", ".join(str(x) for x in v[:limit])
    return head + (f", ... ({len(v)} in all)" if len(v) > limit else "")
