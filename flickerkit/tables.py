"""Text tables (CSV and kin) as bench instruments and data loggers write them.

:func:`table_layout` reads the head of a file and finds, without guessing a
time base, everything reading it needs (a :class:`TableLayout`):

* separator (comma, semicolon, tab, spaces) and decimal mark; quoted cells;
  trailing separators and empty trailing cells;
* metadata lines before the table (``key = value``, ``key: value``,
  ``key,value``, quoted or not, a unit after the number or in the key);
* a names row, optionally followed by a units row (``Second,Volt``); the
  units become the columns' units, the names stay selectable; repeated names
  are selectable by number;
* the time base, from (in this order) ``--sample-rate``; a time column with
  its unit (option, header ``time (ms)``, units row); a sample-index column
  with a start and increment (extra columns, on the units row or in the first
  data row) or with a stated sample rate, interval or time per division and
  point count (metadata); a stated rate alone. A column of consecutive whole
  numbers without a time unit is a sample index, never seconds; a time column
  without a unit whose rate (read as seconds) is implausibly slow for light is
  refused with the hint of the unit that would fit;
* the column to measure: named, numbered, the only one, or the one whose
  name or unit says light (photodiode, lux ...); when several could be the
  light and none was named, the first is measured with a warning that says
  so (or refused when :attr:`ReadOptions.require_column` is set).

:func:`read_table` reads a table into memory; :func:`stream_table` converts a
large one in chunks to temporary binary columns read block by block.
"""

from __future__ import annotations

import io
import os
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import InputError
from .timebase import uniform, uniform_blocks

if TYPE_CHECKING:
    from .readers import ReadOptions

#: Time units recognised in headers and options [s].
TIME_UNITS = {"s": 1.0, "sec": 1.0, "second": 1.0, "seconds": 1.0, "ms": 1e-3,
              "us": 1e-6, "µs": 1e-6, "μs": 1e-6, "ns": 1e-9, "ps": 1e-12,
              "msec": 1e-3, "millisecond": 1e-3, "milliseconds": 1e-3,
              "usec": 1e-6, "microsecond": 1e-6, "microseconds": 1e-6,
              "nsec": 1e-9, "nanosecond": 1e-9, "nanoseconds": 1e-9}
_TIME_NAMES = re.compile(r"^\s*(t|time|zeit|temps|tiempo|tempo|sec|second|seconds|x|s|ms|us|µs"
                         r"|μs|ns)(?![a-z])", re.I)
_UNIT_IN_NAME = re.compile(r"[\(\[\{/_ ]\s*(ns|us|µs|μs|ms|s|sec)\s*[\)\]\}]?\s*$", re.I)
_INDEX_NAMES = re.compile(r"^\s*(index|idx|no\.?|nr\.?|#|n|num|number|samples?|sample[ _-]*"
                          r"(no\.?|nr\.?|number|index|#)|points?|pt|pts|seq|sequence|count"
                          r"|record|x)\s*$", re.I)
#: Units-row tokens that mark a sample index rather than time.
_INDEX_UNITS = {"sequence", "seq", "samples", "sample", "points", "point", "pts", "pt", "#",
                "index", "idx", "n", "count", "counts", "no", "no."}
#: Tokens a units row holds (lower case, brackets removed).
_UNIT_TOKENS = set(TIME_UNITS) | _INDEX_UNITS | {
    "v", "mv", "uv", "µv", "kv", "volt", "volts", "a", "ma", "ua", "µa", "amp", "amps",
    "ampere", "w", "mw", "lx", "lux", "klx", "cd", "cd/m2", "cd/m²", "w/m2", "w/m²", "%",
    "a.u.", "au", "arb", "arb.", "(a.u.)", "db", "dbm", "hz", "div", "units", "unit",
    "v/v", "1", "-", "vrms", "lm", "nits"}
#: Names and units that say a column holds light (common practice, no source).
_LIGHT = re.compile(r"light|lux|\blx\b|photo|\bpd\d*\b|diode|lumin|illum|irrad|optic|licht"
                    r"|lumi[eè]re|\bluz\b|bright|\bcd\b|w/m|\blm\b|nits|detector|sensor",
                    re.I)
#: Names and units that say a column is not the light (drive, current, mains, trigger...).
_NOT_LIGHT = re.compile(r"gate|drive|driver|pwm|current|\bamps?\b|mains|supply|\bline\b|trig"
                        r"|sync|\bref|control|ctrl|\bvin\b|\bvcc\b|\bvdd\b|\bdim\b|enable",
                        re.I)
_NOT_LIGHT_UNITS = {"a", "ma", "ua", "µa", "amp", "amps", "ampere"}
_COMMENT = ("#", "%", "//", ";", "!", "*")
_HEAD_BYTES = 256 * 1024
#: Tables with more columns than this are narrowed to the used columns while reading.
WIDE_TABLE_COLUMNS = 4
#: Rows per chunk when a text table is streamed.
TEXT_CHUNK_ROWS = 1_000_000
#: A time column without a unit is read as seconds only if that gives at least this rate
#: [Hz] (common practice, no source: light-flicker captures are sampled at kHz rates or
#: faster, since mains ripple at 100/120 Hz and its harmonics must be resolved).
MIN_UNITLESS_RATE_HZ = 1000.0
#: Rates that make sense for a light capture, used to suggest a time unit [Hz].
PLAUSIBLE_RATE_HZ = (1000.0, 1e10)
#: Below this rate [Hz] a time column without a unit that passes as seconds is warned about:
#: as ms it would be 1-10 MHz, a common scope rate (common practice, no source).
SLOW_UNITLESS_RATE_HZ = 10000.0
#: Two statements of one sample rate agree within this fraction.
RATE_AGREEMENT = 0.01
#: Horizontal divisions assumed when a file gives time per division but no count
#: (common practice, no source: most bench scopes show 10).
DEFAULT_DIVISIONS = 10

# metadata and time-base column keys (matched on the key with spaces/underscores as one)
_KEY_RATE = re.compile(r"(sampl\w*|acq\w*|scan|record\w*|digiti\w*)[ _-]*(rate|freq\w*|speed)"
                       r"|^fs$|^rate$|^sa/s$|^s/s$", re.I)
_KEY_INTERVAL = re.compile(r"sampl\w*[ _-]*(interval|period|time|step|spacing)|x[ _-]*incr\w*"
                           r"|^incr\w*$|^increment|^(delta|d)[ _-]?t$|^dt\b|time[ _-]*(step"
                           r"|interval|incr\w*|resolution|per[ _-]*(point|sample))|^interval$"
                           r"|horiz\w*[ _-]*(interval|incr\w*)|^xinc", re.I)
_KEY_START = re.compile(r"^(start|origin|t0|x0|xorg|xorigin)$|x[ _-]*(origin|start|zero|offset)"
                        r"|time[ _-]*(origin|offset|start|zero|of[ _-]*first)|start[ _-]*time"
                        r"|horiz\w*[ _-]*(offset|origin|position)|trigger[ _-]*(time|offset)",
                        re.I)
_KEY_PER_DIV = re.compile(r"time[ _-]*/[ _-]*div|time[ _-]*per[ _-]*div\w*|horiz\w*[ _-]*scale"
                          r"|^time[ _-]*base$|^timebase$|sec\w*[ _-]*/[ _-]*div|^s/div$", re.I)
_KEY_POINTS = re.compile(r"record[ _-]*length|^points$|point[ _-]*count|number[ _-]*of[ _-]*"
                         r"(points|samples)|memory[ _-]*(depth|length)|^samples$|^length$"
                         r"|data[ _-]*points|^n[ _-]*points$|^npts$", re.I)
_KEY_DIVISIONS = re.compile(r"^(horizontal[ _-]*)?divisions$|div\w*[ _-]*(count|number)"
                            r"|number[ _-]*of[ _-]*(horizontal[ _-]*)?div", re.I)
_RATE_UNITS = {"hz": 1.0, "s/s": 1.0, "sa/s": 1.0, "sps": 1.0, "samples/s": 1.0}
_PREFIX = {"k": 1e3, "m": 1e6, "g": 1e9}
_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*)$")


@dataclass(frozen=True)
class TimeBase:
    """Where a table's time comes from.

    Attributes
    ----------
    column : int or None
        0-based column whose values, times ``scale``, are time in seconds
        (a time column or a sample-index column); None when the rate is fixed.
    scale : float
        Seconds per unit of that column [s].
    sample_rate_hz : float or None
        Fixed sample rate when no column carries time [Hz].
    per_div_s : float or None
        Time per division when only that and the rows give the rate [s].
    divisions : int
        Horizontal divisions for ``per_div_s``.
    points : int or None
        Stated point count for ``per_div_s`` (else the rows read).
    source : str
        What the echo says about it.
    unitless : bool
        A time column without a unit, read as seconds: checked for plausibility.
    """

    column: int | None
    scale: float = 1.0
    sample_rate_hz: float | None = None
    per_div_s: float | None = None
    divisions: int = DEFAULT_DIVISIONS
    points: int | None = None
    source: str = ""
    unitless: bool = False


@dataclass(frozen=True)
class TableLayout:
    """Everything about a text table that reading it needs, found from its head.

    Attributes
    ----------
    encoding, separator, decimal : str
        Text encoding, field separator (``" "`` for runs of spaces), decimal mark.
    first : int
        0-based line of the first data row (= lines skipped before the data).
    width : int
        Fields per row to read (data columns, extra time-base columns, trailing
        empty cells).
    k : int
        Numeric data columns.
    names, units : list
        Column names (``column N`` without a names row) and units (None where
        not given), one per data column.
    header : str
        ``"names + units rows"``, ``"names row"`` or ``"none"``.
    metadata : dict
        Metadata lines before the table, ``key -> value``.
    signal : int
        0-based column to measure.
    choice : str
        Why that column.
    channels : list of str
        Columns that hold signals (not time, index or time-base values).
    time : TimeBase or None
        Where time comes from; None when ``--sample-rate`` is given.
    index_column : int or None
        A sample-index column (also when it is not used for time).
    lead : int
        Side columns before the table (empty in most rows, metadata in the first);
        column numbers above count from the first table column.
    notes, warnings : list of str
        Provenance and doubts found while reading the head.
    """

    encoding: str
    separator: str
    decimal: str
    first: int
    width: int
    k: int
    names: list[str]
    units: list[str | None]
    header: str
    metadata: dict[str, str]
    signal: int
    choice: str
    channels: list[str]
    time: TimeBase | None
    index_column: int | None = None
    lead: int = 0
    notes: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)

    def label(self, c: int) -> str:
        """Name of column ``c`` for messages (with its number when the name repeats)."""
        n = self.names[c]
        if self.names.count(n) > 1:
            return f"{n} (column {c + 1})"
        return n

    def describe(self) -> str:
        """The layout in a few words, for the read echo."""
        sep = {"\t": "tab", " ": "space", ",": "comma", ";": "semicolon"}.get(
            self.separator, repr(self.separator))
        mark = "comma" if self.decimal == "," else "point"
        parts = [f"{sep}-separated text table", f"decimal {mark}",
                 {"none": "no header"}.get(self.header, self.header)]
        if self.lead:
            parts.append(f"{self.lead} side column(s) of metadata before the table")
        if self.metadata:
            parts.append(f"{len(self.metadata)} metadata item(s)")
        if self.index_column is not None:
            parts.append(f"sample-index column {self.label(self.index_column)!r}")
        parts.append(f"{self.k} data column(s)")
        return ", ".join(parts)

    def used_columns(self) -> list[int]:
        """Columns read from every row: the time (or index) column, then the signal."""
        if self.time is not None and self.time.column is not None:
            return [self.time.column, self.signal]
        return [self.signal]


def _decode_head(p: Path) -> tuple[str, str]:
    with p.open("rb") as fh:
        raw = fh.read(_HEAD_BYTES)
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")) or (
            len(raw) >= 64 and raw[1:64:2].count(0) > 24 and raw[0:64:2].count(0) == 0):
        # UTF-16 (spreadsheet "Unicode text" exports); UTF-32 starts with FF FE too
        raise InputError("is UTF-16/32 text (a spreadsheet's 'Unicode text' export?), not read: "
                         "save it as UTF-8 or plain text (CSV)", source=str(p))
    if b"\x00" in raw[:4096]:
        raise InputError("looks like a binary file, not a text table (use .wav or .npy "
                         "for binary captures)", source=str(p))
    for enc in ("utf-8-sig", "latin-1"):
        try:
            text = raw.decode(enc)
            break
        except UnicodeDecodeError:
            continue
    if len(raw) == _HEAD_BYTES:  # the last line may be cut
        text = text[: text.rfind("\n") + 1] if "\n" in text else text
    return text, enc


def _to_float(field: str, decimal: str) -> float | None:
    f = field.strip().strip('"').strip("'").strip()
    if decimal == ",":
        if "." in f:
            return None
        f = f.replace(",", ".")
    if not f:
        return None
    try:
        return float(f)
    except ValueError:
        return None


def _split(line: str, sep: str) -> list[str]:
    return line.split() if sep == " " else line.split(sep)


def _fields(line: str, sep: str, lead: int = 0) -> list[str]:
    """Fields of a line after the ``lead`` side columns, unquoted and stripped, without
    trailing empty cells."""
    raw = line.split() if sep == " " else line.strip(" \r\n").split(sep)
    out = [f.strip().strip('"').strip("'").strip() for f in raw[lead:]]
    while out and out[-1] == "":
        out.pop()
    return out


def _numeric_fields(line: str, sep: str, decimal: str, lead: int = 0) -> int:
    """Number of fields if every field is numeric (trailing empty cells aside), else 0."""
    fields = _fields(line, sep, lead)
    if not fields:
        return 0
    for f in fields:
        if _to_float(f, decimal) is None:
            return 0
    return len(fields)


def _row_fits(line: str, sep: str, decimal: str, k: int, lead: int = 0) -> bool:
    """A data row: ``k`` numeric fields, then only numbers or empty cells."""
    if not line.strip() or line.lstrip().startswith(_COMMENT[:3]):
        return False
    fields = _fields(line, sep, lead)
    if len(fields) < k:
        return False
    return all(_to_float(f, decimal) is not None for f in fields[:k]) and \
        all(f == "" or _to_float(f, decimal) is not None for f in fields[k:])


def _leading_empty(line: str, sep: str) -> int:
    raw = line.strip(" \r\n").split(sep)
    n = 0
    while n < len(raw) and not raw[n].strip():
        n += 1
    return n if n < len(raw) else 0


#: A row that starts with a calendar date (2026-11-20, 20.11.2026, 11/20/2026) or a clock time
#: (10:00:00.000020), as data loggers write; refused with what to do.
_DATE_OR_CLOCK = re.compile(r'^"?(\d{1,4}[-./]\d{1,2}[-./]\d{1,4}|\d{1,2}:\d{2}(:\d{2})?)'
                            r'([ T\t,;]|[.,]\d|"|$)')


def _sniff(lines: list[str], name: str) -> tuple[str, str, int, int, int]:
    """Separator, decimal mark, first data line, numeric columns per row, side columns.

    Each candidate (separator, decimal mark) is scored on the last 20
    non-empty lines of the head: the number of lines that split into the same
    count of numeric fields. The best score wins, then the larger field count.
    The table starts at the first line that is such a row (extra numeric
    cells, e.g. a start and increment in the first row, allowed). When most
    rows start with the same number of empty cells, the table is taken to the
    right of them (side columns that hold metadata in the first rows).
    """
    body = [ln for ln in lines if ln.strip()]
    if not body:
        raise InputError("file holds no table", source=name)
    tail = body[-min(len(body), 20):]
    best: tuple[int, int, str, str, int] | None = None
    for sep, dec in (("\t", "."), ("\t", ","), (";", "."), (";", ","), (",", "."),
                     (" ", "."), (" ", ",")):
        leads = [0]
        if sep != " ":
            empties = [_leading_empty(ln, sep) for ln in tail]
            common = max(set(empties), key=empties.count)
            if common > 0 and empties.count(common) >= max(1, len(tail) // 2):
                leads.append(common)
        for lead in leads:
            counts = [_numeric_fields(ln, sep, dec, lead) for ln in tail]
            nonzero = [c for c in counts if c > 0]
            if not nonzero:
                continue
            k = max(set(nonzero), key=lambda c: (nonzero.count(c), c))
            score = (nonzero.count(k), k)
            if best is None or score > best[:2]:
                best = (score[0], k, sep, dec, lead)
    if best is None or best[0] < max(1, len(tail) // 2):
        if tail and sum(bool(_DATE_OR_CLOCK.match(ln.strip())) for ln in tail) >= len(tail) // 2:
            raise InputError("the rows start with a date or clock time, which is not read as a "
                             "time base; export the time as seconds (or ms, us) from the start, "
                             "or delete the date/time column(s) and give --sample-rate HZ",
                             source=name)
        raise InputError("no numeric table found: the last lines are not rows of numbers "
                         "with a common separator (comma, semicolon, tab or space)",
                         source=name)
    _, k, sep, dec, lead = best
    if (sep, dec, k, lead) == (",", ".", 2, 0) and _one_decimal_comma_column(lines, tail):
        sep, dec, k = "\t", ",", 1
    for i, ln in enumerate(lines):
        if _row_fits(ln, sep, dec, k, lead) and (_numeric_fields(ln, sep, dec, lead) == k or any(
                _numeric_fields(x, sep, dec, lead) == k for x in lines[i + 1 : i + 3])):
            return sep, dec, i, k, lead
    raise InputError("no numeric table found", source=name)


def _one_decimal_comma_column(lines: list[str], tail: list[str]) -> bool:
    """Rows like ``0,25`` under a one-name header: one column with a decimal comma, not two.

    Without a header the two readings cannot be told apart and the comma separates.
    """
    if not all(_numeric_fields(ln, "\t", ",") == 1 for ln in tail):
        return False
    first = next((i for i, ln in enumerate(lines) if _numeric_fields(ln, "\t", ",") == 1), 0)
    above = [ln for ln in lines[:first] if ln.strip()]
    if not above or above[-1].lstrip().startswith(_COMMENT) or _is_keyvalue(above[-1]):
        return False
    f = _fields(above[-1], ",")
    return len(f) == 1 and _to_float(f[0], ".") is None and "\t" not in above[-1] \
        and ";" not in above[-1]


def _bare(token: str) -> str:
    return token.strip().strip("()[]{}").strip().lower()


def _bracket_unit(name: str) -> str | None:
    m = re.search(r"[\(\[\{]\s*([^\)\]\}]+?)\s*[\)\]\}]\s*$", name)
    return m.group(1).strip() if m else None


def _is_keyvalue(line: str) -> bool:
    return bool(re.match(r"^[^:=]+[:=]\s*\S", line.strip()))


def _names_row(f: list[str], k: int, dec: str, line: str) -> bool:
    if len(f) < k or (k == 1 and _is_keyvalue(line)):
        return False
    head = [x for x in f[:k] if x]
    return bool(head) and all(_to_float(x, dec) is None for x in head)


def _units_row(f: list[str], k: int) -> bool:
    if not f:
        return False
    head = [x for x in f[:k] if x]
    return bool(head) and all(_bare(x) in _UNIT_TOKENS for x in head)


def _header_rows(lines: list[str], first: int, sep: str, dec: str, k: int, lead: int = 0):
    """(names fields, units fields, line index of the top header row) above the data."""
    above: list[tuple[int, list[str]]] = []
    j = first - 1
    while j >= 0 and len(above) < 2:
        ln = lines[j]
        if not ln.strip():
            if above:  # a blank line ends the header block
                break
            j -= 1
            continue
        if ln.lstrip().startswith(_COMMENT):
            break
        above.append((j, _fields(ln, sep, lead)))
        j -= 1
    if not above:
        return None, None, first
    j0, a = above[0]
    if len(above) == 2:
        j1, b = above[1]
        if _units_row(a, k) and _names_row(b, k, dec, lines[j1]):
            return b, a, j1
    if _names_row(a, k, dec, lines[j0]):
        return a, None, j0
    return None, None, first


def _meta_items(lines: list[str]) -> list[tuple[str, str]]:
    """``(key, value)`` of metadata lines: ``key = value``, ``key: value``, ``key,value``."""
    items = []
    for ln in lines:
        s = ln.strip().lstrip("#%/;!* ").strip()
        m = re.match(r'^"?\s*([^"=:,;\t]+?)\s*"?\s*(?:=|:|,|;|\t)\s*(.+)$', s)
        if m:
            value = m.group(2).replace('"', "").strip().rstrip(",;\t ").strip()
            if value:
                items.append((m.group(1).strip(), value))
    return items


def _quantity(value: str, dec: str) -> tuple[float, str] | None:
    """A number and the unit written after it (lower case, '' when none)."""
    v = value.strip()
    if dec == ",":
        v = re.sub(r"(?<=\d),(?=\d)", ".", v, count=1)
    m = _NUMBER.match(v)
    if not m:
        return None
    try:
        x = float(m.group(1))
    except ValueError:
        return None
    rest = m.group(2).strip(" ,;\t")
    unit = rest.split()[0].lower() if rest else ""
    return x, unit


def _time_scale(unit: str) -> float | None:
    if unit == "":
        return 1.0
    return TIME_UNITS.get(unit.replace("sec", "s") if unit.endswith("sec") and unit != "sec"
                          else unit)


def _rate_scale(unit: str) -> float | None:
    if unit in _RATE_UNITS:
        return _RATE_UNITS[unit]
    if unit and unit[0] in _PREFIX and unit[1:] in _RATE_UNITS:
        return _PREFIX[unit[0]]
    return None


@dataclass(frozen=True)
class _Stated:
    value: float
    key: str
    where: str
    unitless: bool


def _stated(items: list[tuple[str, str, str]], dec: str) -> dict[str, _Stated]:
    """Time-base facts the file states: rate [Hz], interval, start, per_div [s], points, divisions.

    ``items`` are ``(key, value, where)``; the first statement of each fact wins.
    """
    out: dict[str, _Stated] = {}
    for key, value, where in items:
        q = _quantity(value, dec)
        if q is None:
            continue
        v, unit = q
        unit = unit or _bare(_bracket_unit(key) or "")
        kk = re.sub(r"[\(\[\{].*$", "", key).strip()
        kk = re.sub(r"\s+", " ", kk.replace("_", " "))
        fact, x = None, None
        if _KEY_PER_DIV.search(kk):
            s = _time_scale(unit)
            fact, x = ("per_div", v * s) if s else (None, None)
        elif _KEY_DIVISIONS.search(kk):
            fact, x = "divisions", v
        elif _KEY_RATE.search(kk):
            r, s = _rate_scale(unit), _time_scale(unit)
            if unit and r:
                fact, x = "rate", v * r
            elif unit and s:
                fact, x = "interval", v * s
            elif not unit:
                fact, x = "rate", v
        elif _KEY_INTERVAL.search(kk):
            r, s = _rate_scale(unit), _time_scale(unit)
            if s:
                fact, x = "interval", v * s
            elif r:
                fact, x = "rate", v * r
        elif _KEY_START.search(kk):
            s = _time_scale(unit)
            fact, x = ("start", v * s) if s else (None, None)
        elif _KEY_POINTS.search(kk):
            fact, x = "points", v
        if fact is None or x is None or fact in out or not np.isfinite(x):
            continue
        if fact in ("rate", "interval", "per_div", "points", "divisions") and x <= 0:
            continue
        out[fact] = _Stated(float(x), key, where, unitless=not unit)
    return out


def _extra_items(names: list[str] | None, units: list[str] | None, first_row: list[str],
                 k: int) -> list[tuple[str, str, str]]:
    """Time-base values in the columns after the data: a name with its value on the units
    row or in the first data row, or key/value pairs on the names or units row."""
    items: list[tuple[str, str, str]] = []
    if names:
        for j in range(k, len(names)):
            key = names[j]
            if not key or _to_float(key, ".") is not None:
                continue
            if units and j < len(units) and units[j]:
                items.append((key, units[j], "units row"))
            elif j < len(first_row) and first_row[j]:
                items.append((key, first_row[j], "first data row"))
            elif j + 1 < len(names) and names[j + 1]:
                items.append((key, names[j + 1], "names row"))
    if units:
        for j in range(k, len(units) - 1):
            if units[j] and _to_float(units[j], ".") is None and units[j + 1]:
                items.append((units[j], units[j + 1], "units row"))
    return items


def _int_sequence(v: np.ndarray, consecutive: bool = False) -> bool:
    """Strictly increasing whole numbers (a sample count); ``consecutive``: in steps of 1."""
    v = v[np.isfinite(v)]
    if v.size < 2 or not np.all(v == np.round(v)):
        return False
    d = np.diff(v)
    return bool(np.all(d == 1)) if consecutive else bool(np.all(d > 0))


def _option_unit(options: ReadOptions) -> float | None:
    if not options.time_unit:
        return None
    unit = TIME_UNITS.get(options.time_unit.strip().lower())
    if unit is None:
        raise InputError(f"unknown time unit {options.time_unit!r}; use one of "
                         f"{', '.join(sorted(set(TIME_UNITS)))}", source="--time-unit")
    return unit


def _unit_name(scale: float) -> str:
    return {1.0: "s", 1e-3: "ms", 1e-6: "us", 1e-9: "ns", 1e-12: "ps"}.get(scale, f"{scale:g} s")


def _find_time(names: list[str], units: list[str | None], header: bool, head: np.ndarray,
               k: int) -> tuple[int | None, str | None]:
    """The time-like column and what it is: ``"time"`` or ``"index"`` (by name, unit, values)."""
    if k < 2:
        return None, None
    if not header:
        col = head[:, 0]
        if head.shape[0] >= 3 and np.all(np.diff(col) > 0):
            return 0, "index" if _int_sequence(col, consecutive=True) else "time"
        return None, None
    for c in range(k):
        u = _bare(units[c] or "")
        if _TIME_NAMES.match(names[c]) or u in TIME_UNITS:
            if u in TIME_UNITS or _unit_of(names[c]) is not None:
                return c, "time"
            if u in _INDEX_UNITS:
                return (c, "index") if _int_sequence(head[:, c]) else (None, None)
            return c, "index" if _int_sequence(head[:, c], consecutive=True) else "time"
    for c in range(k):
        u = _bare(units[c] or "")
        if (_INDEX_NAMES.match(names[c]) or u in _INDEX_UNITS) and _int_sequence(head[:, c]):
            return c, "index"
    return None, None


def _steps_of(head: np.ndarray, c: int) -> float | None:
    d = np.diff(head[:, c])
    d = d[np.isfinite(d) & (d > 0)]
    return float(np.median(d)) if d.size else None


def table_layout(p: Path, options: ReadOptions) -> tuple[TableLayout, list[str]]:
    """The layout of a text table from its head (and the head's lines).

    Raises
    ------
    InputError
        When no table is found, a named column does not exist or is ambiguous,
        or no time base can be found without guessing.
    """
    name = str(p)
    text, enc = _decode_head(p)
    lines = text.splitlines()
    sep, dec, first, k, lead = _sniff(lines, name)
    names_f, units_f, top = _header_rows(lines, first, sep, dec, k, lead)
    head_lines = [ln for ln in lines[first : first + 50] if _row_fits(ln, sep, dec, k, lead)]
    head = np.array([[_to_float(f, dec) for f in _fields(ln, sep, lead)[:k]]
                     for ln in head_lines], dtype=float)
    first_row = _fields(lines[first], sep, lead)
    width = max([len(_split(ln.strip(" \r\n") if sep != " " else ln, sep))
                 for ln in head_lines] + [k + lead])
    if names_f:
        names = [names_f[c] if c < len(names_f) and names_f[c] else f"column {c + 1}"
                 for c in range(k)]
        header = "names + units rows" if units_f else "names row"
    else:
        names = [f"column {c + 1}" for c in range(k)]
        header = "none"
    units: list[str | None] = []
    for c in range(k):
        u = units_f[c] if units_f and c < len(units_f) and units_f[c] else None
        units.append(u.strip("()[]{} ") if u else _bracket_unit(names[c]) if names_f else None)
    meta_items = _meta_items(lines[:top])
    if lead:  # metadata in the side columns of the first rows: key, value[, unit]
        for ln in lines[top : first + 50]:
            side = [f.strip().strip('"') for f in ln.strip(" \r\n").split(sep)[:lead]]
            if side and side[0] and len(side) > 1 and side[1]:
                meta_items.append((side[0], " ".join(x for x in side[1:] if x)))
    metadata = {key: value for key, value in meta_items}
    stated = _stated([*((a, b, "metadata") for a, b in meta_items),
                      *_extra_items(names_f, units_f, first_row, k)], dec)
    notes: list[str] = []
    warns: list[str] = []
    tcol, kind = _find_time(names, units, bool(names_f), head, k)
    opt_unit = _option_unit(options)

    def label(c: int) -> str:
        return f"{names[c]} (column {c + 1})" if names.count(names[c]) > 1 else names[c]

    index_col = tcol if kind == "index" else None
    tb: TimeBase | None = None
    if options.sample_rate_hz is not None:
        if tcol is not None:
            notes.append(f"{kind} column {label(tcol)!r} ignored: sample rate given")
    elif tcol is not None and (kind == "time" or opt_unit is not None):
        tb = _time_column_base(tcol, label(tcol), units[tcol], names[tcol], bool(names_f),
                               opt_unit, stated, _steps_of(head, tcol), notes, warns)
        index_col = None
    else:
        tb = _stated_base(index_col, label(index_col) if index_col is not None else None,
                          head, stated, name)
    if tb is not None and tb.per_div_s is not None and "divisions" not in stated:
        warns.append(f"the file gives time per division but not the number of divisions: "
                     f"{DEFAULT_DIVISIONS} assumed; frequencies scale with it (give "
                     f"--sample-rate HZ to be sure)")
    # A sample-index column beside a time column is no channel (it measured as the light).
    extra_index = [c for c in range(k) if c != tcol and kind == "time" and names_f
                   and _INDEX_NAMES.match(names[c])
                   and _int_sequence(head[:, c], consecutive=True)]
    for c in extra_index:
        notes.append(f"column {label(c)!r} is a sample index beside the time column; not "
                     f"taken as a channel")
    channels = [c for c in range(k) if c != tcol and c not in extra_index]
    sig, choice = _choose_signal(names, units, channels, tcol, tb, options, label, warns, name)
    if sig == tcol:  # a time-like column asked for as the signal, with a rate given
        index_col = None
    layout = TableLayout(
        encoding=enc, separator=sep, decimal=dec, first=first, width=width, k=k, names=names,
        units=units, header=header, metadata=metadata, signal=sig, choice=choice,
        channels=[label(c) for c in channels], time=tb, index_column=index_col, lead=lead,
        notes=notes,
        warnings=warns)
    return layout, lines


def _time_column_base(c: int, label: str, unit_text: str | None, name: str, header: bool,
                      opt_unit: float | None, stated: dict[str, _Stated], step: float | None,
                      notes: list[str], warns: list[str]) -> TimeBase:
    """A time column's scale, from the option, the header or units row, or the stated rate."""
    if opt_unit is not None:
        own_text = _bare(unit_text or "")
        own = TIME_UNITS.get(own_text) if own_text else None
        if own is None and header:
            own = _unit_of(name)
        if own is not None and own != opt_unit:
            warns.append(f"time column {label!r} states {_unit_name(own)} "
                         f"({(unit_text or name).strip()!r}) but --time-unit (or time_unit) "
                         f"says {_unit_name(opt_unit)}, which was used: every frequency is "
                         f"{own / opt_unit:g} times what the file's unit gives; drop the "
                         f"option if the file is right")
        return TimeBase(c, opt_unit, source=f"column {label!r} in {_unit_name(opt_unit)} "
                                            f"(--time-unit)")
    u = _bare(unit_text or "")
    scale = TIME_UNITS.get(u) if u else None
    if scale is None and header:
        scale = _unit_of(name)
    rate = _stated_rate(stated)
    if scale is not None:
        where = "units row" if unit_text and unit_text.strip() not in name else "header"
        if rate and step and abs(1 / (step * scale) - rate[0]) > RATE_AGREEMENT * rate[0]:
            warns.append(f"the file states a sample rate of {rate[0]:.6g} Hz ({rate[1]!r}) "
                         f"but time column {label!r} gives {1 / (step * scale):.6g} Hz; the "
                         f"time column was used")
        return TimeBase(c, scale, source=f"column {label!r} in {_unit_name(scale)} ({where})")
    if rate and step:
        for s in (1.0, 1e-3, 1e-6, 1e-9):
            if abs(1 / (step * s) - rate[0]) <= RATE_AGREEMENT * rate[0]:
                notes.append(f"time column {label!r} has no unit; {_unit_name(s)} fits the "
                             f"stated sample rate {rate[0]:.6g} Hz ({rate[1]!r})")
                return TimeBase(c, s, source=f"column {label!r} in {_unit_name(s)} (no unit; "
                                             f"inferred from {rate[1]!r})")
        warns.append(f"time column {label!r} has no unit and no unit fits the stated sample "
                     f"rate {rate[0]:.6g} Hz ({rate[1]!r}); read as seconds")
    notes.append(f"time column {label!r} has no unit; read as seconds")
    return TimeBase(c, 1.0, source=f"column {label!r} without a unit, read as seconds",
                    unitless=True)


def _stated_rate(stated: dict[str, _Stated]) -> tuple[float, str] | None:
    if "interval" in stated:
        return 1.0 / stated["interval"].value, stated["interval"].key
    if "rate" in stated:
        return stated["rate"].value, stated["rate"].key
    return None


def _stated_base(index_col: int | None, label: str | None, head: np.ndarray,
                 stated: dict[str, _Stated], name: str) -> TimeBase:
    """The time base a table without a time column states (interval, rate, time per division)."""
    iv, rt = stated.get("interval"), stated.get("rate")
    if iv and rt and abs(1 / iv.value - rt.value) > RATE_AGREEMENT * rt.value:
        raise InputError(f"the file states a sample interval of {iv.value:.6g} s ({iv.key!r}) "
                         f"and a sample rate of {rt.value:.6g} Hz ({rt.key!r}), which disagree: "
                         f"give --sample-rate HZ", source=name)
    what = f"sample index {label!r} × " if label is not None else ""
    if iv:
        return TimeBase(index_col, iv.value, sample_rate_hz=None if label else 1 / iv.value,
                        source=f"{what}interval {iv.value:.6g} s ({iv.where}: {iv.key!r})",
                        unitless=iv.unitless)
    if rt:
        return TimeBase(index_col, 1 / rt.value, sample_rate_hz=None if label else rt.value,
                        source=f"{what}rate {rt.value:.6g} Hz ({rt.where}: {rt.key!r})",
                        unitless=rt.unitless)
    pd_ = stated.get("per_div")
    if pd_:
        div = int(stated["divisions"].value) if "divisions" in stated else DEFAULT_DIVISIONS
        pts = int(stated["points"].value) if "points" in stated else None
        src = (f"{what}{pd_.value:.6g} s/div ({pd_.where}: {pd_.key!r}) × {div} divisions"
               + (f" / {pts} points ({stated['points'].key!r})" if pts else " / rows read"))
        return TimeBase(index_col, 1.0, per_div_s=pd_.value, divisions=div, points=pts,
                        source=src, unitless=pd_.unitless)
    if index_col is not None:
        v = head[:3, index_col]
        shown = ", ".join(f"{x:g}" for x in v)
        raise InputError(f"column {label!r} counts samples ({shown}, ...), it is not time, and "
                         f"the file states no sample interval or rate: give --sample-rate HZ "
                         f"(or --time-unit UNIT if the column is time)", source=name)
    raise InputError("no time column and no sample rate: give --sample-rate HZ", source=name)


def _choose_signal(names, units, channels, tcol, tb, options, label, warns, name):
    """The column to measure and why."""
    k = len(names)
    if options.column is not None:
        col = options.column
        if isinstance(col, str) and col.strip().isdigit():
            col = int(col)
        if isinstance(col, int) and not isinstance(col, bool):
            if not 1 <= col <= k:
                raise InputError(f"column {col} does not exist: the table has {k} column(s) "
                                 f"({', '.join(label(c) for c in range(k))})", source=name)
            sig = col - 1
        else:
            want = str(col).strip().lower()
            matches = [i for i, h in enumerate(names) if h.strip().lower() == want]
            if not matches:
                matches = [i for i, h in enumerate(names)
                           if re.sub(r"\s*[\(\[\{][^\)\]\}]*[\)\]\}]\s*$", "", h).strip().lower()
                           == want]
            if not matches:
                raise InputError(f"unknown column {col!r}; the columns are: "
                                 f"{', '.join(label(c) for c in range(k))}", source=name)
            if len(matches) > 1:
                nums = ", ".join(str(i + 1) for i in matches)
                raise InputError(f"column name {col!r} is repeated (columns {nums}): choose "
                                 f"one by number, e.g. --column {matches[-1] + 1}", source=name)
            sig = matches[0]
        if sig == tcol and tb is not None:
            raise InputError(f"column {label(sig)!r} is the time column; choose a signal "
                             f"column", source=name)
        return sig, f"named ({options.column!r})"
    if not channels:
        raise InputError("the table has a time column but no signal column", source=name)
    if len(channels) == 1:
        return channels[0], "the only signal column"
    what = "the light" if options.quantity == "light" else f"the {options.quantity}"
    pool = channels
    if options.quantity == "light":  # names and units that say light, or say not light
        text = {c: f"{names[c]} {units[c] or ''}" for c in channels}
        not_light = {c for c in channels if _NOT_LIGHT.search(text[c])
                     or _bare(units[c] or "") in _NOT_LIGHT_UNITS}
        light = [c for c in channels if _LIGHT.search(text[c]) and c not in not_light]
        if len(light) == 1:
            return light[0], "its name or unit says light"
        pool = light or [c for c in channels if c not in not_light]
        if len(pool) == 1:
            others = ", ".join(label(c) for c in channels if c != pool[0])
            return pool[0], f"the other columns ({others}) are named as drive, current or mains"
        pool = pool or channels
    shown = ", ".join(repr(label(c)) for c in pool)
    if options.require_column:
        raise InputError(f"{len(pool)} columns could be {what} ({shown}) and none is named: "
                         f"choose one with column = \"NAME\" or a number in the project file",
                         source=name)
    warns.append(f"{len(pool)} columns could be {what} ({shown}); measured "
                 f"{label(pool[0])!r}, the first: name it with --column to be sure")
    return pool[0], f"the first of {len(pool)} that could be {what}"


def _unit_of(name: str) -> float | None:
    m = _UNIT_IN_NAME.search(name)
    if m:
        return TIME_UNITS[m.group(1).lower() if m.group(1) not in ("µs", "μs") else m.group(1)]
    low = name.strip().lower()
    for unit in ("ns", "us", "µs", "μs", "ms"):
        if low.endswith(unit):
            return TIME_UNITS[unit]
    if low in TIME_UNITS:
        return TIME_UNITS[low]
    return None


def _rate_of(lay: TableLayout, n: int, name: str) -> float | None:
    """Seconds per unit of the time column once the rows are counted (time per division)."""
    tb = lay.time
    if tb is None or tb.per_div_s is None:
        return None
    points = tb.points or n
    return tb.per_div_s * tb.divisions / points


def _fixed_rate(lay: TableLayout, n: int) -> float:
    """Sample rate of a table whose time base has no column: stated, or from the time per
    division and the ``n`` rows [Hz]."""
    tb = lay.time
    assert tb is not None  # table_layout finds a time base unless a sample rate is given
    if tb.sample_rate_hz:
        return tb.sample_rate_hz
    seconds = _rate_of(lay, n, "")
    assert seconds is not None  # _stated_base: without a column or a rate, time per division
    return 1.0 / seconds


def _plausible(fs: float, lay: TableLayout, name: str) -> list[str]:
    """Refuse a rate from a time base without a unit that is too slow for light; warn of a
    slow one with a unit."""
    tb = lay.time
    if (tb is not None and tb.unitless and tb.column is not None and "column" in tb.source
            and MIN_UNITLESS_RATE_HZ <= fs < SLOW_UNITLESS_RATE_HZ):
        # Passes as seconds, but a scope's ms column (fast sampling) looks the same: say so.
        return [f"time column {lay.label(tb.column)!r} has no unit and was read as seconds "
                f"({fs:.6g} Hz); if it is in ms the rate is {fs * 1e3:.6g} Hz and every "
                f"frequency 1000 times higher: give --time-unit ms, or --time-unit s to "
                f"confirm seconds"]
    if tb is None or fs >= MIN_UNITLESS_RATE_HZ:
        return []
    if not tb.unitless:
        return [f"the file's time base ({tb.source}) gives {fs:.6g} Hz, slower than light "
                f"flicker is usually sampled (at least {MIN_UNITLESS_RATE_HZ:g} Hz): check "
                f"the time unit"]
    lo, hi = PLAUSIBLE_RATE_HZ
    fits = [(u, fs / s) for u, s in (("ms", 1e-3), ("us", 1e-6), ("ns", 1e-9))
            if lo <= fs / s <= hi]
    what = (f"time column {lay.label(tb.column)!r}" if tb.column is not None
            and "column" in tb.source else "the stated time base")
    hint = (f"; if it is in {fits[0][0]} the rate is {fits[0][1]:.6g} Hz: give --time-unit "
            f"{fits[0][0]}" if fits and "column" in tb.source else "")
    raise InputError(f"{what} has no unit, and read as seconds it gives a sample rate of "
                     f"{fs:.6g} Hz, too slow for light flicker (at least "
                     f"{MIN_UNITLESS_RATE_HZ:g} Hz expected){hint}; or give the rate with "
                     f"--sample-rate HZ (time_unit or sample_rate_hz in a project file)",
                     source=name)


def _read_meta(lay: TableLayout, streamed: bool) -> dict[str, Any]:
    meta: dict[str, Any] = {
        "column": lay.label(lay.signal),
        "format": "text table (streamed)" if streamed else "text table",
        "separator": {"\t": "tab", " ": "space"}.get(lay.separator, lay.separator),
        "decimal": lay.decimal,
        "read": {"layout": lay.describe(), "column": lay.label(lay.signal),
                 "column_number": lay.signal + 1, "unit": lay.units[lay.signal],
                 "channel_choice": lay.choice, "channels": list(lay.channels),
                 "time_base": lay.time.source if lay.time else "given (sample rate option)",
                 "rows_skipped": lay.first},
    }
    if lay.time is not None and lay.time.column is not None:
        meta["time_column"] = lay.label(lay.time.column)
    if lay.metadata:
        meta["header_metadata"] = dict(lay.metadata)
    return meta


def read_table(p: Path, options: ReadOptions):
    """Read a text table into memory.

    Returns
    -------
    tuple
        ``(samples, sample_rate_hz, notes, warnings, meta)`` as every reader.
    """
    import pandas as pd

    name = str(p)
    lay, _ = table_layout(p, options)
    cols = lay.used_columns()
    skip = lay.first
    try:
        # usecols makes pandas' C reader 2.5x slower; only narrow a wide table with it, or
        # one with cells after the data (time-base values, trailing separators, blanks)
        frame = pd.read_csv(
            p, sep=r"\s+" if lay.separator == " " else lay.separator, decimal=lay.decimal,
            header=None, names=list(range(lay.width)), skiprows=skip,
            usecols=([c + lay.lead for c in cols]
                     if lay.width > WIDE_TABLE_COLUMNS or lay.width > lay.k else None),
            dtype=np.float64, engine="c",
            encoding="utf-8-sig" if lay.encoding == "utf-8-sig" else "latin-1",
            skip_blank_lines=False, na_filter=True, keep_default_na=True,
            on_bad_lines="error", index_col=False,
        )
    except (ValueError, pd.errors.ParserError) as exc:
        raise _locate_bad_cell(p, lay, cols, exc) from None
    data = {c: frame[c + lay.lead].to_numpy() for c in cols}
    notes: list[str] = list(lay.notes)
    warns: list[str] = list(lay.warnings)
    # trailing blank lines are not gaps
    n = len(frame)
    allnan = np.ones(n, dtype=bool)
    for c in cols:
        allnan &= np.isnan(data[c])
    last = n
    while last > 0 and allnan[last - 1]:
        last -= 1
    for c in cols:
        data[c] = data[c][:last]
    for c in cols:
        bad = ~np.isfinite(data[c])
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            count = int(bad.sum())
            what = "blank or NaN" if np.isnan(data[c][i]) else "infinite"
            if options.fill_gaps and what != "infinite" and count < data[c].size - 1:
                idx = np.arange(data[c].size)
                good = ~bad
                data[c] = np.interp(idx, idx[good], data[c][good])
                notes.append(f"{count} blank or NaN cell(s) in column {lay.label(c)!r} filled "
                             f"by linear interpolation")
            else:
                hint = " (use --fill-gaps to interpolate them)" if what != "infinite" else ""
                raise InputError(f"{count} {what} cell(s), the first here{hint}", source=name,
                                 line=skip + i + 1, column=lay.label(c))
    signal = data[lay.signal]
    if signal.size < 2:
        raise InputError(f"the table holds {signal.size} row(s); at least 2 are needed",
                         source=name)
    meta = _read_meta(lay, streamed=False)
    tb = lay.time
    if options.sample_rate_hz is not None:
        fs = float(options.sample_rate_hz)
    elif tb is not None and tb.column is not None:
        scale = _rate_of(lay, signal.size, name) or tb.scale
        signal, fs, tnotes = uniform(data[tb.column] * scale, signal, options.resample, name,
                                     skip)
        notes += tnotes
    else:
        fs = _fixed_rate(lay, signal.size)
    warns += _plausible(fs, lay, name)
    return signal, fs, notes, warns, meta


def stream_table(p: Path, options: ReadOptions):
    """Convert a large text table in chunks to temporary binary columns, read as FileSignals."""
    import shutil
    import weakref

    import pandas as pd

    from .readers import FileSignal  # readers imports this module

    name = str(p)
    lay, _ = table_layout(p, options)
    tb = lay.time
    time_col = tb.column if tb is not None else None
    use_time = time_col is not None
    # seconds per unit of the time column; None: written as read (time per division, the
    # rate is scaled once the rows are counted)
    time_scale = None if tb is None or tb.per_div_s is not None else tb.scale
    if use_time and options.resample:
        raise InputError("--resample needs the capture in memory; it is too long to stream "
                         "with resampling", source=name)
    if options.fill_gaps:
        raise InputError("--fill-gaps needs the capture in memory; it is too long to stream "
                         "with gap filling", source=name)
    notes: list[str] = [*lay.notes,
                        f"streamed in chunks of {TEXT_CHUNK_ROWS} rows (blank lines skipped)"]
    cols = lay.used_columns()
    sig = lay.signal
    tmp = _stream_folder(p)
    rows = 0
    source = io.BufferedReader(_LineBounded(p), buffer_size=1 << 16)
    try:
        reader = pd.read_csv(source, sep=r"\s+" if lay.separator == " " else lay.separator,
                             decimal=lay.decimal, header=None, names=list(range(lay.width)),
                             skiprows=lay.first, usecols=[c + lay.lead for c in cols],
                             dtype=np.float64, engine="c",
                             encoding="utf-8-sig" if lay.encoding == "utf-8-sig"
                             else "latin-1", skip_blank_lines=True, index_col=False,
                             chunksize=TEXT_CHUNK_ROWS)
        with open(tmp / "signal.f64", "wb") as fsig, open(tmp / "time.f64", "wb") as ftime:
            try:
                for chunk in reader:
                    for c in cols:
                        v = chunk[c + lay.lead].to_numpy()
                        bad = ~np.isfinite(v)
                        if bad.any():
                            i = int(np.flatnonzero(bad)[0])
                            raise InputError(f"blank, NaN or infinite cell in data row "
                                             f"{rows + i + 1}", source=name,
                                             column=lay.label(c))
                    chunk[sig + lay.lead].to_numpy().tofile(fsig)
                    if time_col is not None:
                        v = chunk[time_col + lay.lead].to_numpy()
                        (v if time_scale is None else v * time_scale).tofile(ftime)
                    rows += len(chunk)
            except (ValueError, pd.errors.ParserError) as exc:
                if isinstance(exc, InputError):
                    raise
                raise InputError(f"cannot read the table after data row {rows} "
                                 f"({str(exc).splitlines()[0]})", source=name) from None
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    finally:
        source.close()
    if rows < 2:
        shutil.rmtree(tmp, ignore_errors=True)
        raise InputError(f"the table holds {rows} row(s); at least 2 are needed", source=name)
    signal = FileSignal(str(tmp / "signal.f64"), np.float64, 0, rows)
    weakref.finalize(signal, shutil.rmtree, str(tmp), True)
    meta = _read_meta(lay, streamed=True)
    if options.sample_rate_hz is not None:
        fs = float(options.sample_rate_hz)
    elif use_time:
        # time in seconds, as in memory; an index under time per division is scaled after
        tsig = FileSignal(str(tmp / "time.f64"), np.float64, 0, rows)
        fs = uniform_blocks(tsig, name, lay.first) / (_rate_of(lay, rows, name) or 1.0)
    else:
        fs = _fixed_rate(lay, rows)
    return signal, fs, notes, [*lay.warnings, *_plausible(fs, lay, name)], meta


def _locate_bad_cell(p: Path, lay: TableLayout, cols: list[int], exc: Exception) -> InputError:
    """Find the first non-numeric cell after pandas refused the table."""
    import pandas as pd

    name = str(p)
    skip = lay.first
    try:
        frame = pd.read_csv(p, sep=r"\s+" if lay.separator == " " else lay.separator,
                            header=None, names=list(range(lay.width)), skiprows=skip,
                            usecols=[c + lay.lead for c in cols], dtype=str, engine="c",
                            keep_default_na=False,
                            skip_blank_lines=False, encoding="utf-8-sig"
                            if lay.encoding == "utf-8-sig" else "latin-1", index_col=False)
    except (ValueError, pd.errors.ParserError) as exc2:
        msg = str(exc2).splitlines()[0]
        m = re.search(r"line (\d+)", msg)
        line = skip + int(m.group(1)) if m else None
        return InputError(f"rows do not all have the same number of fields ({msg})",
                          source=name, line=line)
    for c in cols:
        col = frame[c + lay.lead].to_numpy()
        for i, v in enumerate(col):
            v = str(v)
            if v.strip() == "" or v.strip().lower() in ("nan", "na", "n/a", "null"):
                continue
            if _to_float(v, lay.decimal) is None:
                return InputError(f"cell {v.strip()!r} is not a number", source=name,
                                  line=skip + i + 1, column=lay.label(c))
    return InputError(f"cannot read the table ({str(exc).splitlines()[0]})", source=name)


# --------------------------------------------------------------------------- bounds


#: Longest line of a text table [bytes]; a capture holds one sample (a few fields) per line.
MAX_LINE_BYTES = 1 << 20
#: Text tables read into memory are scanned for long lines above this size [bytes].
SCAN_LINES_ABOVE_BYTES = 64 << 20


def first_line_bounded(p: Path, size: int) -> None:
    """Refuse at once a text table whose first line is longer than :data:`MAX_LINE_BYTES`
    (a file of one long line would be parsed into memory as one row of millions of fields)."""
    if size <= MAX_LINE_BYTES:
        return
    with p.open("rb") as fh:
        head = fh.read(MAX_LINE_BYTES + 1)
    if b"\n" not in head and b"\r" not in head:
        raise InputError(f"line 1 is longer than {MAX_LINE_BYTES >> 20} MiB; a text capture "
                         f"holds one sample per line", source=str(p), line=1)


def lines_bounded(p: Path, size: int) -> None:
    """Refuse a text table read into memory if any line is longer than :data:`MAX_LINE_BYTES`.

    One pass of ``find``/``rfind`` per 1 MiB block (no parsing), so that a long line in the
    middle of a file is refused before the parser holds it in memory several times over.
    Files up to :data:`SCAN_LINES_ABOVE_BYTES` are not scanned: the parser's peak for them
    stays a few times their size whatever their lines.
    """
    if size <= max(MAX_LINE_BYTES, SCAN_LINES_ABOVE_BYTES):
        return
    raw = _LineBounded(p)
    buf = bytearray(MAX_LINE_BYTES)
    try:
        while raw.readinto(buf):
            pass
    finally:
        raw.close()


class _LineBounded(io.RawIOBase):
    """A binary file that refuses a line longer than :data:`MAX_LINE_BYTES` as it is read.

    Handed to the table parser in place of the path: blocks are at most ``MAX_LINE_BYTES``
    long, so only the run of bytes since the last newline needs counting (two ``find`` calls
    per block), and a long line is refused before the parser holds it in memory.
    """

    def __init__(self, path: Path) -> None:
        super().__init__()
        self.path = path
        self._fh = open(path, "rb", buffering=0)
        self._run = 0  # bytes since the last line end
        self._offset = 0  # bytes read

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:
        view = memoryview(buffer)[:MAX_LINE_BYTES]
        n = self._fh.readinto(view)
        if not n:
            return 0
        block = view[:n].tobytes() if not isinstance(buffer, bytearray) else buffer
        first = block.find(b"\n", 0, n)
        if first < 0:
            self._run += n
        else:
            if self._run + first > MAX_LINE_BYTES:
                self._refuse()
            self._run = n - block.rfind(b"\n", 0, n) - 1
        self._offset += n
        if self._run > MAX_LINE_BYTES:
            self._refuse()
        return n

    def _refuse(self) -> None:
        at = max(0, self._offset - self._run)
        raise InputError(f"a line is longer than {MAX_LINE_BYTES >> 20} MiB (from byte {at}); "
                         f"a text capture holds one sample per line", source=str(self.path))

    def close(self) -> None:
        self._fh.close()
        super().close()


#: Temporary folders of streamed text captures: ``flickerkit-stream-<pid>-<capture>-*`` in
#: the system's temporary folder (which the system cleans); one left by a killed run is
#: removed by the next streamed read once its process is gone.
STREAM_FOLDER_PREFIX = "flickerkit-stream-"


def _stream_folder(p: Path) -> Path:
    """A new temporary folder for a streamed capture, named for the run and the capture."""
    import tempfile

    _remove_stale_stream_folders()
    stem = re.sub(r"[^A-Za-z0-9._-]+", "_", p.stem)[:40] or "capture"
    return Path(tempfile.mkdtemp(prefix=f"{STREAM_FOLDER_PREFIX}{os.getpid()}-{stem}-"))


def _remove_stale_stream_folders() -> None:
    """Remove stream folders whose process no longer runs (left by a killed run)."""
    import shutil
    import tempfile

    root = Path(tempfile.gettempdir())
    try:
        entries = list(root.glob(f"{STREAM_FOLDER_PREFIX}*"))
    except OSError:
        return
    for d in entries:
        m = re.match(rf"{STREAM_FOLDER_PREFIX}(\d+)-", d.name)
        if not m or not d.is_dir() or int(m.group(1)) == os.getpid():
            continue
        try:
            os.kill(int(m.group(1)), 0)
            continue  # still running
        except ProcessLookupError:
            pass
        except (PermissionError, OSError):
            continue  # someone else's live process
        shutil.rmtree(d, ignore_errors=True)
