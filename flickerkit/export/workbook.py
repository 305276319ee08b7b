"""Excel workbooks (openpyxl): values computed in Python, written as values.

Text that comes from inputs (labels, file names, notes) is always written as
text, never as a formula, even when it starts with ``=``, ``+``, ``-`` or ``@``.
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from pathlib import Path
from typing import Any, Iterable, Sequence

from .. import __version__, cautions
from ..fileio import write_with

#: The caution as a workbook note (one home: :mod:`flickerkit.cautions`).
CAUTION = cautions.WORKBOOK


#: Characters a workbook cannot hold (XML 1.0 forbids C0 controls but tab, LF and CR).
_ILLEGAL = re.compile(r"[\x00-\x08\x0b\x0c\x0e-\x1f]")
#: The cell comment that says a cell's text was changed.
REPLACED_NOTE = ("control characters in the input text, which a workbook cannot hold, are "
                 "shown as [U+XXXX] markers")


def workbook_text(text: str) -> tuple[str, bool]:
    """Mark the control characters a workbook cannot hold.

    Returns ``text`` with each such character replaced by a visible ``[U+XXXX]`` marker,
    and whether anything was replaced.
    """
    out, n = _ILLEGAL.subn(lambda m: f"[U+{ord(m.group()):04X}]", text)
    return out, bool(n)


#: Significant digits shown for numbers (stored values keep full precision).
SIGNIFICANT_DIGITS = 4


def sig_format(value: float, digits: int = SIGNIFICANT_DIGITS) -> str:
    """Return an Excel number format showing ``value`` with about ``digits`` significant digits.

    Whole numbers show as whole numbers; very large or small magnitudes in
    scientific notation. Only the display changes: the cell keeps the value.
    """
    if value == 0 or not math.isfinite(value):
        return "0"
    mag = math.floor(math.log10(abs(value)))
    if mag >= 7 or mag <= -4:
        return "0." + "0" * (digits - 1) + "E+00"
    if float(value).is_integer():
        return "0"
    # the magnitude after rounding: 99.99998 shows as 100.0, not 100.00
    rounded = float(f"{value:.{digits}g}")
    mag = math.floor(math.log10(abs(rounded)))
    decimals = max(0, digits - 1 - mag)
    return "0" if decimals == 0 else "0." + "0" * decimals


def put(ws, row: int, col: int, value: Any, *, number_format: str | None = None):
    """Write one cell; strings are forced to text so they can never run as formulas.

    Control characters a workbook cannot hold (from input names, labels, descriptions) are
    replaced by visible ``[U+XXXX]`` markers and the cell carries a comment saying so.
    Floats get a display format of :data:`SIGNIFICANT_DIGITS` significant digits
    unless ``number_format`` is given; the stored value keeps full precision.
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
    elif isinstance(value, float):
        cell.number_format = sig_format(value)
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
    from openpyxl.styles import Alignment

    for j in range(1, len(headers) + 1):  # headings wrap within their column, never overprint
        ws.cell(row=start_row, column=j).alignment = Alignment(wrap_text=True, vertical="top")
    fit_rows(ws, start_row, max_row=start_row)
    return r


#: Printable width of a page in Excel character widths (A4 or Letter, 0.5 inch side margins).
PAGE_CHARS = {"portrait": 100, "landscape": 145}
#: A table at most this much wider than a page is fitted to the page width; a wider one
#: is split across pages (its first column and title row repeated), never squeezed.
FIT_SLACK = 1.25


def content_width(ws) -> float:
    """Width of a sheet's content in Excel character widths: columns, images and charts."""
    from openpyxl.utils import column_index_from_string, get_column_letter
    from openpyxl.utils.cell import coordinate_from_string

    def col_width(j: int) -> float:
        dim = ws.column_dimensions.get(get_column_letter(j))
        return float(dim.width) if dim is not None and dim.width else 8.43

    right = sum(col_width(j) for j in range(1, ws.max_column + 1))
    for obj in list(getattr(ws, "_images", [])) + list(getattr(ws, "_charts", [])):
        anchor = getattr(obj, "anchor", None)
        px = float(getattr(obj, "width", 0) or 0)
        if hasattr(obj, "series"):  # a chart: width in cm
            px *= 37.8
        if isinstance(anchor, str):  # not yet written: a cell such as "E12"
            start = column_index_from_string(coordinate_from_string(anchor)[0]) - 1
        else:
            start = getattr(getattr(anchor, "_from", None), "col", None)
            if start is None:
                continue
            to = getattr(anchor, "to", None) or getattr(anchor, "_to", None)
            ext = getattr(anchor, "ext", None)
            if to is not None:
                right = max(right, sum(col_width(j) for j in range(1, to.col + 2)))
                continue
            if ext is not None and getattr(ext, "width", None):
                px = float(ext.width) / 9525.0
        left = sum(col_width(j) for j in range(1, start + 1))
        right = max(right, left + px / 7.0)
    return right


def fit_rows(ws, min_row: int = 1, line_pt: float = 13.0, max_row: int | None = None) -> None:
    """Set the height of rows with wrapped text so the lines show and never overprint.

    The number of lines is estimated from each wrapped cell's text length and
    its column width (merged cells: the merged width).
    """
    from openpyxl.styles import Alignment
    from openpyxl.utils import get_column_letter

    merged = {}
    for rng in ws.merged_cells.ranges:
        w = sum((ws.column_dimensions[get_column_letter(j)].width or 8.43)
                for j in range(rng.min_col, rng.max_col + 1))
        merged[(rng.min_row, rng.min_col)] = (w, rng.max_row - rng.min_row + 1)
    for row in ws.iter_rows(min_row=min_row, max_row=max_row):
        lines = 1
        for cell in row:
            if not isinstance(cell.value, str) or not (cell.alignment and cell.alignment.wrap_text):
                continue
            width, span = merged.get((cell.row, cell.column),
                                     (ws.column_dimensions[cell.column_letter].width or 8.43, 1))
            bold = bool(cell.font and cell.font.b)
            # Excel widths count '0' digits; text runs about 15 % narrower, bold about equal
            chars = max(1.0, float(width) * (1.0 if bold else 1.15) - 1)
            n = sum(max(1, math.ceil(len(part) / chars)) for part in cell.value.split("\n"))
            lines = max(lines, math.ceil(n / span))
        if lines > 1:
            ws.row_dimensions[row[0].row].height = lines * line_pt + 3
            for cell in row:  # one baseline for the whole row
                al = cell.alignment
                cell.alignment = Alignment(wrap_text=al.wrap_text, horizontal=al.horizontal,
                                           vertical="top", indent=al.indent)


def _hf(text: str, limit: int = 40) -> str:
    """Make header or footer text: control characters marked, '&' escaped.

    The text is cut to ``limit`` characters, a third of a portrait page.
    """
    text = workbook_text(str(text))[0]
    if len(text) > limit:
        text = text[:limit - 1].rstrip() + "…"
    return text.replace("&", "&&")


def write_turned(ws, columns: Sequence[tuple[str, str]], records: Sequence[dict[str, Any]], *,
                 head_width: int = 40, value_width: int = 18) -> int:
    """Write a table turned for print: figures run down (column A), captures across (row 1).

    ``columns`` are (heading, dotted key); the first is the capture label and
    heads the columns. Returns the last row written.
    """
    from openpyxl.styles import Alignment, Font
    from openpyxl.utils import get_column_letter

    wrap = Alignment(wrap_text=True, vertical="top")
    for i, (head, key) in enumerate(columns, start=1):
        c = put(ws, i, 1, head)
        c.font = Font(bold=True)
        c.alignment = wrap
        for j, rec in enumerate(records, start=2):
            cell = put(ws, i, j, lookup(rec, key))
            if i == 1:
                cell.font = Font(bold=True)
            if isinstance(cell.value, str):
                cell.alignment = wrap
    ws.freeze_panes = ws.cell(row=2, column=2)
    ws.column_dimensions["A"].width = head_width
    for j in range(2, len(records) + 2):
        ws.column_dimensions[get_column_letter(j)].width = value_width
    fit_rows(ws)
    return len(columns)


def print_setup(wb, *, product: str = "", document: str = "flickerkit workbook",
                run_at: str | None = None, title_rows: dict[str, int] | None = None) -> None:
    """Give every sheet a page set-up that reads printed.

    Portrait when the content fits a portrait page, else landscape; a table
    up to :data:`FIT_SLACK` times the page width is fitted to the width,
    a wider one is split across pages with its first column and title row
    repeated (never squeezed to hair-lines); margins; a header (product,
    document, sheet) and footer (run time, page x of y, tool).

    Parameters
    ----------
    title_rows : dict, optional
        Sheet name -> the row repeated on every page (default 1; 0 for none).
    """
    run_at = run_at or _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    for ws in wb.worksheets:
        width = content_width(ws)
        orient = "portrait" if width <= PAGE_CHARS["portrait"] * 1.05 else "landscape"
        ws.page_setup.orientation = orient
        ws.page_setup.paperSize = ws.PAPERSIZE_A4
        fit = width <= PAGE_CHARS[orient] * FIT_SLACK
        ws.sheet_properties.pageSetUpPr.fitToPage = fit
        ws.page_setup.fitToWidth = 1 if fit else 0
        ws.page_setup.fitToHeight = 0
        if not fit:
            ws.page_setup.pageOrder = "overThenDown"
            ws.print_title_cols = "A:A"
        row = (title_rows or {}).get(ws.title, 1)
        if row:
            ws.print_title_rows = f"{row}:{row}"
        m = ws.page_margins
        m.left = m.right = 0.5
        m.top = m.bottom = 0.75
        m.header = m.footer = 0.3
        ws.print_options.gridLines = False
        ws.oddHeader.left.text = _hf(product)
        ws.oddHeader.center.text = _hf(document)
        ws.oddHeader.right.text = "&A"
        ws.oddFooter.left.text = _hf(f"run {run_at}")
        ws.oddFooter.center.text = "page &P of &N"
        ws.oddFooter.right.text = _hf(f"flickerkit {__version__}")
        for part in (ws.oddHeader.left, ws.oddHeader.center, ws.oddHeader.right,
                     ws.oddFooter.left, ws.oddFooter.center, ws.oddFooter.right):
            part.size = 8


def add_pictures(wb, pictures, *, default_sheet: str = "Pictures",
                 anchors: dict[str, str] | None = None, scale: float = 0.82,
                 per_page: int = 2) -> None:
    """Place pictures (:class:`flickerkit.export.figures.Picture`) as images on their sheets.

    Each picture goes on the sheet it explains (created when missing), below
    what the sheet holds, one under another with its caption, so it never
    covers a table; ``anchors`` (picture name -> top-left cell such as ``"E12"``)
    places a picture elsewhere. A page break follows every ``per_page``
    pictures placed one under another, so no picture is cut by a page.
    """
    import io

    from openpyxl.drawing.image import Image
    from openpyxl.styles import Font
    from openpyxl.worksheet.pagebreak import Break

    next_row: dict[str, int] = {}
    placed: dict[str, int] = {}
    for pic in pictures:
        name = pic.sheet or default_sheet
        ws = wb[name] if name in wb.sheetnames else wb.create_sheet(name)
        img = Image(io.BytesIO(pic.png))
        img.width, img.height = int(img.width * scale), int(img.height * scale)
        if anchors and pic.name in anchors:
            ws.add_image(img, anchors[pic.name])
            continue
        if name not in next_row:
            next_row[name] = ws.max_row + 2 if ws.max_row > 1 else 1
            placed[name] = 0
        r = next_row[name]
        put(ws, r, 1, pic.caption).font = Font(bold=True)
        ws.add_image(img, f"A{r + 1}")
        next_row[name] = r + 2 + math.ceil(img.height / 20.0)
        placed[name] += 1
        if placed[name] % per_page == 0:
            ws.row_breaks.append(Break(id=next_row[name] - 1))


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
    """Cell value at a dotted key path (:func:`flickerkit.keypath.figure_or_none`); lists joined."""
    from ..keypath import figure_or_none

    cur = figure_or_none(d, dotted)
    if isinstance(cur, list):
        return "; ".join(str(x) for x in cur)
    return cur


def write_measure_workbook(path: str | Path, records: Sequence[dict[str, Any]],
                           settings: dict[str, Any], *, force: bool = False,
                           columns: Sequence[tuple[str, str]] = MEASURE_COLUMNS,
                           pictures: Sequence[Any] | None = None) -> Path:
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
        Summary rows (the sheet is turned: one column per capture).
    pictures : sequence of flickerkit.export.figures.Picture, optional
        Placed on a "Pictures" sheet.
    """
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    wb = Workbook()
    ws = wb.active
    ws.title = "Captures"
    # turned: one column per capture, so the sheet prints as pages a reader can follow
    last = write_turned(ws, columns, records)
    note = put(ws, last + 2, 1, CAUTION)
    note.font = Font(italic=True)
    note.alignment = Alignment(wrap_text=True, vertical="top")
    ws.merge_cells(start_row=last + 2, start_column=1, end_row=last + 2,
                   end_column=max(4, len(records) + 1))
    fit_rows(ws, last + 2)

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
    for row in ss.iter_rows(min_row=2):
        row[1].alignment = Alignment(wrap_text=True, vertical="top")
    fit_rows(ss)

    set_properties(wb, "flickerkit measurement", "Temporal light modulation of captures")
    if pictures:
        add_pictures(wb, pictures)
    print_setup(wb, document="Temporal light modulation of captures")

    def save(tmp: Path) -> None:
        wb.save(tmp)

    return write_with(path, save, force=force)
