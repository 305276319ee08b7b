"""Workbooks of modelled light: the dimming sweep (``drive``) and the frequency plan (``plan``).

Values are computed in Python and written as values; every sheet gets the
page set-up of :func:`flickerkit.export.workbook.print_setup`. The figures are
those of the model as described, not of a built product.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Any, Sequence

from .. import __version__
from ..fileio import write_with
from .workbook import (CAUTION, add_pictures, fit_rows, lookup, print_setup, put, set_properties,
                       write_rows)

if TYPE_CHECKING:  # pragma: no cover - types only
    from ..planner import Plan

_MODEL_NOTE = ("Modelled light: figures hold for the model as described; measure the built "
               "product.")

SWEEP_COLUMNS = (
    ("Level [%]", "level", None),
    ("Relative light [%]", "relative_light", 100.0),
    ("Fundamental frequency [Hz]", "frequency_hz", None),
    ("Percent flicker [%]", "percent_flicker", None),
    ("Flicker index [1]", "flicker_index", None),
    ("SVM [1]", "svm", None),
    ("IEEE 1789 region", "ieee1789.region", None),
    ("Low-risk margin [% points]", "ieee1789.low_risk_margin_percent", None),
    ("NOEL margin [% points]", "ieee1789.noel_margin_percent", None),
    ("Per-harmonic region", "ieee1789.per_harmonic.region", None),
    ("Model percent flicker [%]", "model_percent_flicker", None),
    ("Sample rate [Hz]", "sample_rate_hz", None),
    ("Model", "model", None),
)


def _notes(ws, row: int, texts: Sequence[str], ncols: int) -> None:
    from openpyxl.styles import Alignment, Font

    for i, text in enumerate(texts):
        c = put(ws, row + i, 1, text)
        c.font = Font(italic=True)
        c.alignment = Alignment(wrap_text=True, vertical="top")
        ws.merge_cells(start_row=row + i, start_column=1, end_row=row + i,
                       end_column=max(2, ncols))
    fit_rows(ws, row)


def write_sweep_workbook(path: str | Path, out: dict[str, Any], *, force: bool = False,
                         pictures: Sequence[Any] | None = None) -> Path:
    """Write the ``drive`` sweep (``SweepResult.to_dict()``) as a workbook, atomically."""
    from openpyxl import Workbook
    from openpyxl.styles import Alignment

    wb = Workbook()
    ws = wb.active
    ws.title = "Levels"

    def cell(r, key, scale):
        v = lookup(r, key)
        return v * scale if scale and isinstance(v, (int, float)) else v

    last = write_rows(ws, [h for h, _, _ in SWEEP_COLUMNS],
                      ([cell(r, k, s) for _, k, s in SWEEP_COLUMNS] for r in out["levels"]),
                      widths=[8, 9, 11, 10, 9, 8, 14, 10, 10, 14, 10, 10, 30])
    wrap = Alignment(wrap_text=True, vertical="top")
    for row in ws.iter_rows(min_row=1, max_row=last):
        for c in row:
            if isinstance(c.value, str):
                c.alignment = wrap
    fit_rows(ws)
    _notes(ws, last + 2, [CAUTION, _MODEL_NOTE], 10)
    warn = [[r["level"], w] for r in out["levels"] for w in r.get("warnings") or []]
    wsw = wb.create_sheet("Warnings")
    write_rows(wsw, ["Level [%]", "Warning"], warn, widths=[10, 120])
    for row in wsw.iter_rows(min_row=2):
        row[1].alignment = wrap
    fit_rows(wsw)
    fs = wb.create_sheet("First failing level")
    write_rows(fs, ["Criterion", "First failing level [%]"],
               [[k, "not assessed" if k in out.get("not_assessed", ()) else
                 v] for k, v in out["first_failing_level"].items()],
               widths=[30, 24])
    hs = wb.create_sheet("Harmonics")
    rows = []
    for r in out["levels"]:
        for h in r.get("harmonics") or []:
            rows.append([r["level"], h["order"], h["frequency_hz"], h["amplitude"],
                         h["phase_deg"]])
    write_rows(hs, ["Level [%]", "Harmonic order", "Frequency [Hz]", "Amplitude / mean [1]",
                    "Phase [deg]"], rows)
    ss = wb.create_sheet("Inputs and settings")
    write_rows(ss, ["Setting", "Value"], [["flickerkit version", __version__],
                                          ["command", "drive"], ["drive", out["drive"]]],
               widths=[30, 60])
    return _finish(wb, ss, str(out.get("drive", "")), path, force, pictures,
                   ("flickerkit dimming sweep",
                   "Modelled temporal light modulation per level",
                   "Dimming sweep (modelled light)"))


#: Display format of PWM frequencies in the plan workbook [Hz]: 0.01 Hz.
FREQUENCY_FORMAT = "0.00"


def write_plan_workbook(path: str | Path, plan: Plan, *, force: bool = False,
                        pictures: Sequence[Any] | None = None) -> Path:
    """Write a plan (:class:`flickerkit.planner.Plan`) as a workbook, atomically.

    Levels are shown in percent, as the JSON gives them.
    """
    from openpyxl import Workbook
    from openpyxl.styles import Alignment

    from ..levels import percent

    wrap = Alignment(wrap_text=True, vertical="top")
    wb = Workbook()
    ws = wb.active
    ws.title = "Plan"
    rows: list[list[Any]] = [
            ["Drive", plan.drive], ["Targets", ", ".join(t.name for t in plan.targets)],
            ["Lowest frequency, exact clock [Hz]", plan.lowest_frequency_hz],
            ["Clock tolerance [+- %]", 100.0 * plan.tolerance],
            ["Recommended frequency [Hz]", plan.recommended_frequency_hz],
            ["Smallest level [%]", percent(min(plan.levels))],
            ["Resolution needed", plan.resolution.describe()],
            ["Counts needed", plan.resolution.counts],
            ["Verdict", plan.verdict]]
    rows += [["Warning", w] for w in plan.warnings]
    rows += [[f"Lowest frequency for {r.targets[0].name} [Hz]", r.frequency_hz]
             for r in plan.per_target]
    last = write_rows(ws, ["Item", "Value"], rows, widths=[40, 60])
    for row in ws.iter_rows(min_row=2):
        row[1].alignment = wrap
        # frequencies to 0.01 Hz: a line end (SVM's 2 kHz, IEEE 1789's 3 kHz) is met only
        # just above it, and 4 significant digits would print the failing 2000 for 2000.06
        if str(row[0].value).endswith("[Hz]") and isinstance(row[1].value, float):
            row[1].number_format = FREQUENCY_FORMAT
    fit_rows(ws)
    _notes(ws, last + 2, [CAUTION, "Modelled light: verify the chosen setting by measuring "
                                   "the product."], 2)
    heads = ["Mode", "Prescaler", "TOP", "Frequency [Hz]", "Counts per period", "Bits",
             "Duty step [1]", "Tick [s]", "Minimum duty [1]", "Minimum count", "Meets"]
    ts = wb.create_sheet("Timer settings")
    write_rows(ts, heads, [[r.setting.mode, r.setting.prescaler, r.setting.top,
                            r.setting.frequency_hz, r.setting.counts, r.setting.bits,
                            r.setting.duty_step, r.setting.tick_s, r.minimum_duty,
                            r.minimum_count, ", ".join(r.meets)] for r in plan.settings],
               widths=[8, 9, 8, 12, 10, 7, 10, 10, 10, 9, 30])
    for c in ts[1]:
        c.alignment = wrap
    for row in ts.iter_rows(min_row=2, min_col=4, max_col=4):
        row[0].number_format = FREQUENCY_FORMAT
    fit_rows(ts)
    ab = wb.create_sheet("Abrupt changes")
    write_rows(ab, ["PWM frequency [Hz]", "Target", "Cause", "Worst just below", "Worst at",
                    "Worst just above", "Inside recommended band"],
               [[a.frequency_hz, a.target, a.cause, a.figure_below, a.figure_at,
                 a.figure_above, "yes" if a.inside_band else "no"]
                for a in plan.abrupt_changes], widths=[12, 9, 50, 11, 11, 11, 11])
    for row in ab.iter_rows(min_row=1):
        for c in row:
            c.alignment = wrap
    for row in ab.iter_rows(min_row=2, max_col=1):
        row[0].number_format = FREQUENCY_FORMAT
    fit_rows(ab)
    os_ = wb.create_sheet("Options")
    write_rows(os_, ["Option", "Cost"], [[o.option, o.cost] for o in plan.options],
               widths=[30, 100])
    for row in os_.iter_rows(min_row=2):
        for c in row:
            c.alignment = wrap
    fit_rows(os_)
    ss = wb.create_sheet("Inputs and settings")
    timer = plan.to_dict()["timer"]  # shown as the JSON gives it
    write_rows(ss, ["Setting", "Value"],
               [["flickerkit version", __version__], ["command", "plan"],
                ["range [Hz]", f"{plan.range_hz[0]:g}..{plan.range_hz[1]:g}"],
                ["timer", str(timer)]], widths=[30, 60])
    return _finish(wb, ss, plan.drive, path, force, pictures, ("flickerkit frequency plan",
                   "PWM frequency and timer plan", "PWM frequency plan"))


def _finish(wb, settings_sheet, product: str, path: str | Path, force: bool,
            pictures: Sequence[Any] | None, titles: tuple[str, str, str]) -> Path:
    """Finish a model workbook and write it atomically.

    Wraps the settings sheet, adds the pictures and sets the properties and
    page set-up; ``titles`` are (title, subject, printed document name).
    """
    from openpyxl.styles import Alignment

    wrap = Alignment(wrap_text=True, vertical="top")
    for row in settings_sheet.iter_rows(min_row=2):
        row[1].alignment = wrap
    fit_rows(settings_sheet)
    if pictures:
        add_pictures(wb, pictures)
    title, subject, document = titles
    set_properties(wb, title, subject)
    print_setup(wb, product=product, document=document)
    return write_with(path, lambda tmp: wb.save(tmp), force=force)


def sweep_pictures(out: dict[str, Any]) -> list[Any]:
    """Draw the sweep's IEEE 1789 chart and its metrics against level (per product)."""
    from .figures import ieee_figure, levels_figure, render

    recs = [{**r, "label": r.get("label") or f"level {r['level']:.4g} %"}
            for r in out["levels"]]
    return [render(ieee_figure(recs, "IEEE 1789-2015 chart (modelled)"), "ieee1789_chart",
                   "Pictures", "IEEE 1789 chart of the modelled levels"),
            render(levels_figure(recs, sweep_limits()), "metrics_by_level", "Pictures",
                   "metrics against dimming level (modelled)")]


def sweep_limits() -> list[tuple[str, float, str]]:
    """Return the limit lines (metric, limit, name) of the sweep's threshold criteria."""
    from ..sweep import CRITERIA

    out = []
    for name, _ in CRITERIA:
        metric, _, lim = name.partition("<=")
        if lim:
            out.append((metric, float(lim), name))
    return out


def plan_pictures(plan: Plan) -> list[Any]:
    """Draw the plan's timer settings against the lowest frequency and the resolution needed."""
    from .figures import plan_figure, render

    # the picture is drawn from the plan's JSON object, as the other pictures are
    return [render(plan_figure(plan.to_dict()), "frequency_plan", "Pictures", "frequency plan")]


__all__ = ["SWEEP_COLUMNS", "plan_pictures", "sweep_pictures", "write_plan_workbook",
           "write_sweep_workbook"]
