"""Excel workbooks (openpyxl): values computed in Python, written as values.

Text that comes from inputs (labels, file names, notes) is always written as
text, never as a formula, even when it starts with ``=``, ``+``, ``-`` or ``@``.
"""

from __future__ import annotations

import datetime as _dt
import re
from pathlib import Path
from typing import Any, Iterable, Sequence

from .. import __version__
from ..fileio import write_with

CAUTION = (
    "Caution: modulated light at roughly 3-70 Hz can trigger seizures in people with "
    "photosensitive epilepsy, and modulation at higher frequencies can cause headaches and "
    "other effects. This workbook is an engineering assessment of the captures or models "
    "given, not a certification; the applicable standards, local codes and an accredited "
    "laboratory decide compliance."
)


#: Characters a workbook cannot hold (XML 1.0 forbids C0 controls but tab, LF and CR).
_ILLEGAL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")
#: The cell comment that says a cell's text was changed.
REPLACED_NOTE = ("control characters in the input text, which a workbook cannot hold, are "
                 "shown as [U+XXXX] markers")


def workbook_text(text: str) -> tuple[str, bool]:
    """``text`` with each control character a workbook cannot hold replaced by a visible
    ``[U+XXXX]`` marker; and whether anything was replaced."""
    out, n = _ILLEGAL.subn(lambda m: f"[U+{ord(m.group()):04X}]", text)
    return out, bool(n)


def put(ws, row: int, col: int, value: Any, *, number_format: str | None = None):
    """Write one cell; strings are forced to text so they can never run as formulas.

    Control characters a workbook cannot hold (from input names, labels, descriptions) are
    replaced by visible ``[U+XXXX]`` markers and the cell carries a comment saying so.
    """
    cell = ws.cell(row=row, column=col)
    replaced = False
    if isinstance(value, str):
        value, replaced = workbook_text(value)
    if isinstance(value, float) and value != value:
        value = None
    if isinstance(value, float) and value in (float("inf"), float("-inf")):
        value = "exempt" if value > 0 else "-inf"
    cell.value = value
    if isinstance(value, str):
        cell.data_type = "s"
    if replaced:
        from openpyxl.comments import Comment

        cell.comment = Comment(REPLACED_NOTE, "flickerkit")
    if number_format and isinstance(value, (int, float)):
        cell.number_format = number_format
    return cell


def write_rows(ws, headers: Sequence[str], rows: Iterable[Sequence[Any]], *, start_row: int = 1,
               widths: Sequence[int] | None = None) -> int:
    """Write a header row (bold, frozen) and rows; return the last row written."""
    from openpyxl.styles import Font

    for j, h in enumerate(headers, start=1):
        put(ws, start_row, j, h).font = Font(bold=True)
    r = start_row
    for r, row in enumerate(rows, start=start_row + 1):
        for j, v in enumerate(row, start=1):
            put(ws, r, j, v)
    ws.freeze_panes = ws.cell(row=start_row + 1, column=1)
    for j, h in enumerate(headers, start=1):
        width = (widths[j - 1] if widths else max(10, min(40, len(h) + 2)))
        ws.column_dimensions[ws.cell(row=1, column=j).column_letter].width = width
    return r


def print_setup(wb) -> None:
    """Landscape pages, every sheet fitted to one page wide (charts stay whole in print/PDF)."""
    for ws in wb.worksheets:
        ws.page_setup.orientation = "landscape"
        ws.page_setup.fitToWidth = 1
        ws.page_setup.fitToHeight = 0
        ws.sheet_properties.pageSetUpPr.fitToPage = True


def set_properties(wb, title: str, subject: str) -> None:
    """Set the document properties every flickerkit workbook carries."""
    props = wb.properties
    props.title = workbook_text(title)[0]
    props.subject = workbook_text(subject)[0]
    props.creator = f"flickerkit {__version__}"
    props.keywords = "temporal light modulation; flicker; IEEE 1789"
    props.description = CAUTION
    now = _dt.datetime.now(_dt.timezone.utc).replace(tzinfo=None, microsecond=0)
    props.created = now
    props.modified = now


MEASURE_COLUMNS: tuple[tuple[str, str], ...] = (
    ("Capture", "label"),
    ("Fundamental frequency [Hz]", "frequency_hz"),
    ("Percent flicker [%]", "percent_flicker"),
    ("Flicker index [1]", "flicker_index"),
    ("IEEE 1789 region", "ieee1789.region"),
    ("IEEE 1789 mode", "ieee1789.mode"),
    ("Low-risk limit [%]", "ieee1789.low_risk_limit_percent"),
    ("Low-risk margin [% points]", "ieee1789.low_risk_margin_percent"),
    ("NOEL limit [%]", "ieee1789.noel_limit_percent"),
    ("NOEL margin [% points]", "ieee1789.noel_margin_percent"),
    ("Per-harmonic region", "ieee1789.per_harmonic.region"),
    ("IEEE 1789 decided by", "ieee1789.decided_by"),
    ("IEEE 1789 standard reading (fundamental)", "ieee1789.fundamental.region"),
    ("Modulations found", "modulation.statement"),
    ("Repetition frequency [Hz]", "modulation.repetition_hz"),
    ("Modulation below 90 Hz, low-passed [%]", "below_90hz.modulation_percent"),
    ("Figures on a band edge", "edge_notes"),
    ("Percent flicker, raw min/max [%]", "percent_flicker_raw"),
    ("Headline figures from", "headline_estimate"),
    ("Aliasing check", "acquisition.reason"),
    ("Whole periods used", "periods"),
    ("Percent flicker, median period [%]", "per_period.percent_flicker_median"),
    ("Percent flicker, worst period [%]", "per_period.percent_flicker_worst"),
    ("Flicker index, median period [1]", "per_period.flicker_index_median"),
    ("Flicker index, worst period [1]", "per_period.flicker_index_worst"),
    ("Noise floor of percent flicker [%]", "noise.percent_flicker_floor"),
    ("SVM [1]", "svm"),
    ("SVM threshold model", "svm_detail.threshold"),
    ("SVM method", "svm_detail.method"),
    ("Pst LM [1]", "pst_lm"),
    ("Pst LM calibration", "pst_lm_calibration"),
    ("Pst LM calibration status", "pst_lm_detail.calibration_status"),
    ("Pst LM observation [s]", "pst_lm_detail.observation_s"),
    ("Percent flicker <= 40 Hz (JA10.6) [%]", "filtered_percent_flicker.40"),
    ("Percent flicker <= 90 Hz (JA10.6) [%]", "filtered_percent_flicker.90"),
    ("Percent flicker <= 200 Hz (JA10.6) [%]", "filtered_percent_flicker.200"),
    ("Percent flicker <= 400 Hz (JA10.6) [%]", "filtered_percent_flicker.400"),
    ("Percent flicker <= 1000 Hz (JA10.6) [%]", "filtered_percent_flicker.1000"),
    ("Mean [input unit]", "mean"),
    ("Min [input unit]", "min"),
    ("Max [input unit]", "max"),
    ("Sample rate [Hz]", "sample_rate_hz"),
    ("Duration [s]", "duration_s"),
    ("Samples per period", "samples_per_period"),
    ("Warnings", "warnings"),
)


#: Columns of the ``measure --signal voltage`` workbook (supply Pst).
VOLTAGE_COLUMNS: tuple[tuple[str, str], ...] = (
    ("Capture", "label"),
    ("Mains frequency [Hz]", "frequency_hz"),
    ("RMS [input unit]", "rms"),
    ("Lamp constants", "lamp"),
    ("Pst [1]", "pst"),
    ("Pst calibration", "pst_calibration"),
    ("Pinst,max [1]", "pst_detail.pinst_max"),
    ("Pst observation [s]", "pst_detail.observation_s"),
    ("Short capture", "pst_detail.short"),
    ("Sample rate [Hz]", "sample_rate_hz"),
    ("Duration [s]", "duration_s"),
    ("Warnings", "warnings"),
)


def lookup(d: dict[str, Any], dotted: str) -> Any:
    """Value at a dotted key path of a nested dict (None where missing)."""
    cur: Any = d
    for part in dotted.split("."):
        if not isinstance(cur, dict) or part not in cur:
            return None
        cur = cur[part]
    if isinstance(cur, list):
        return "; ".join(str(x) for x in cur)
    return cur


def write_measure_workbook(path: str | Path, records: Sequence[dict[str, Any]],
                           settings: dict[str, Any], *, force: bool = False,
                           columns: Sequence[tuple[str, str]] = MEASURE_COLUMNS) -> Path:
    """Write the ``measure`` workbook: summary, harmonics, inputs and settings.

    Parameters
    ----------
    path : str or Path
        Output ``.xlsx``; written atomically.
    records : sequence of dict
        ``Assessment.to_dict()`` of each capture (the same objects as the JSON).
    settings : dict
        Settings and provenance to record (flat name -> value).
    force : bool
        Replace an existing file.
    columns : sequence of (header, dotted key)
        Summary columns.
    """
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    wb = Workbook()
    ws = wb.active
    ws.title = "Captures"
    last = write_rows(ws, [h for h, _ in columns],
                      ([lookup(r, key) for _, key in columns] for r in records),
                      widths=[max(12, min(36, len(h) + 2)) for h, _ in columns])
    note = put(ws, last + 2, 1, CAUTION)
    note.font = Font(italic=True)
    note.alignment = Alignment(wrap_text=False)

    hs = wb.create_sheet("Harmonics")
    rows = []
    for r in records:
        for h in r.get("harmonics") or []:
            rows.append([r["label"], h["order"], h["frequency_hz"], h["amplitude"],
                         None if h["amplitude"] is None else 100.0 * h["amplitude"],
                         h["phase_deg"]])
    write_rows(hs, ["Capture", "Harmonic order", "Frequency [Hz]",
                    "Amplitude / mean [1]", "Amplitude / mean [%]", "Phase [deg]"], rows,
               widths=[24, 16, 16, 22, 22, 14])

    ss = wb.create_sheet("Inputs and settings")
    srows: list[list[Any]] = [["flickerkit version", __version__],
                              ["Run at (UTC)", _dt.datetime.now(_dt.timezone.utc)
                               .strftime("%Y-%m-%d %H:%M:%S")]]
    srows += [[k, v if isinstance(v, (int, float, str)) or v is None else str(v)]
              for k, v in settings.items()]
    from ..capture import describe_read

    for r in records:
        if r.get("read"):
            srows.append([f"read: {r['label']}", describe_read(r["read"])])
        for n in r.get("notes") or []:
            srows.append([f"note: {r['label']}", n])
    write_rows(ss, ["Setting", "Value"], srows, widths=[36, 90])

    set_properties(wb, "flickerkit measurement", "Temporal light modulation of captures")
    print_setup(wb)

    def save(tmp: Path) -> None:
        wb.save(tmp)

    return write_with(path, save, force=force)
