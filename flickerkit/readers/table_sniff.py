"""Text tables, line by line: encoding, cells, separator and decimal mark, header rows, metadata.

:func:`sniff` finds the separator, decimal mark, first data line, numeric
columns and side columns from a table's head (a :class:`Sniffed`);
:func:`header_rows` the names and units rows above the data;
:func:`metadata_items` the ``key = value`` lines before the table.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import NamedTuple

from ..errors import InputError
from .units import UNIT_TOKENS, bare


_COMMENT = ("#", "%", "//", ";", "!", "*")
#: Bytes of a table's head read to find its layout.
_HEAD_BYTES = 256 * 1024


def decode_head(p: Path) -> tuple[str, str]:
    """Decode the head of a text table (whole lines) and name its encoding; refuse UTF-16/binary."""
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


def to_float(field: str, decimal: str) -> float | None:
    """Read a cell as a number (quotes stripped, ``decimal`` the mark), or None."""
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


def split_line(line: str, sep: str) -> list[str]:
    """Split a line into its raw fields (runs of spaces for ``sep == " "``).

    A separator inside double quotes belongs to the field (``"0,25","1,5"`` is two
    fields), as in the CSV rules pandas reads the rows by.
    """
    if sep == " ":
        return line.split()
    if '"' not in line:
        return line.split(sep)
    import csv

    row = next(csv.reader([line.rstrip("\r\n")], delimiter=sep, quotechar='"'), [])
    return row if row else [""]


def cells(line: str, sep: str, lead: int = 0) -> list[str]:
    """Fields of a line after the ``lead`` side columns, unquoted and stripped.

    Trailing empty cells are dropped.
    """
    raw = split_line(line if sep == " " else line.strip(" \r\n"), sep)
    out = [f.strip().strip('"').strip("'").strip() for f in raw[lead:]]
    while out and out[-1] == "":
        out.pop()
    return out


def _numeric_fields(line: str, sep: str, decimal: str, lead: int = 0) -> int:
    """Count the fields if every field is numeric (trailing empty cells aside), else return 0."""
    fields = cells(line, sep, lead)
    if not fields:
        return 0
    for f in fields:
        if to_float(f, decimal) is None:
            return 0
    return len(fields)


def row_fits(line: str, sep: str, decimal: str, k: int, lead: int = 0) -> bool:
    """Return whether ``line`` is a data row: ``k`` numeric fields, then numbers or empty cells."""
    if not line.strip() or line.lstrip().startswith(_COMMENT[:3]):
        return False
    fields = cells(line, sep, lead)
    if len(fields) < k:
        return False
    return all(to_float(f, decimal) is not None for f in fields[:k]) and \
        all(f == "" or to_float(f, decimal) is not None for f in fields[k:])


def _leading_empty(line: str, sep: str) -> int:
    raw = split_line(line.strip(" \r\n"), sep)
    n = 0
    while n < len(raw) and not raw[n].strip():
        n += 1
    return n if n < len(raw) else 0


#: A row that starts with a calendar date (2026-11-20, 20.11.2026, 11/20/2026) or a clock time
#: (10:00:00.000020), as data loggers write; refused with what to do.
_DATE_OR_CLOCK = re.compile(r'^"?(\d{1,4}[-./]\d{1,2}[-./]\d{1,4}|\d{1,2}:\d{2}(:\d{2})?)'
                            r'([ T\t,;]|[.,]\d|"|$)')


class Sniffed(NamedTuple):
    """How a table's rows are written (unpacks in this order)."""

    #: Field separator (``" "`` for runs of spaces).
    separator: str
    #: Decimal mark.
    decimal: str
    #: 0-based line of the first data row.
    first: int
    #: Numeric data columns per row.
    k: int
    #: Side columns before the table (metadata in the first rows, empty below).
    lead: int


def sniff(lines: list[str], name: str) -> Sniffed:
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
    quoted = any('"' in ln for ln in tail)
    for sep, dec in (("\t", "."), ("\t", ","), (";", "."), (";", ","), (",", "."),
                     *((( ",", ","),) if quoted else ()), (" ", "."), (" ", ",")):
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
        grouped = first_grouped(lines)
        if grouped is not None:
            raise InputError(f"cell {grouped[1]!r} is not a number: it has a thousands "
                             f"separator (digit grouping); export the numbers without it",
                             source=name, line=grouped[0] + 1)
        raise InputError("no numeric table found: the last lines are not rows of numbers "
                         "with a common separator (comma, semicolon, tab or space)",
                         source=name)
    _, k, sep, dec, lead = best
    if (sep, dec, k, lead) == (",", ".", 2, 0) and _one_decimal_comma_column(lines, tail):
        sep, dec, k = "\t", ",", 1
    for i, ln in enumerate(lines):
        if row_fits(ln, sep, dec, k, lead) and (_numeric_fields(ln, sep, dec, lead) == k or any(
                _numeric_fields(x, sep, dec, lead) == k for x in lines[i + 1 : i + 3])):
            _refuse_grouped_rows(lines, sep, dec, k, lead, name)
            return Sniffed(sep, dec, i, k, lead)
    raise InputError("no numeric table found", source=name)


#: A number written with digit grouping: 1,020.02 / 1.020,02 / 12'345.6 / 1 020,5 (quoted).
GROUPED_NUMBER = re.compile(r"[-+]?\d{1,3}(?:([,.'\u00a0\u202f])\d{3})(?:\1\d{3})*"
                            r"(?:[.,]\d*)?")


def grouped_cell(field: str) -> bool:
    """Return whether a cell is a number with a thousands separator (``"1,020.02"``).

    A cell such as ``1,020`` with no second mark reads as a decimal comma, not as
    grouping, and is not matched unless it is one of a grouping run (``1,020,300``)
    or carries the other mark as its decimal (``1,020.5``).
    """
    f = field.strip().strip('"').strip("'").strip()
    m = GROUPED_NUMBER.fullmatch(f)
    if m is None:
        return False
    mark = m.group(1)
    rest = f[f.rfind(mark) + 4:] if mark else ""
    return f.count(mark) > 1 or (bool(rest) and rest[0] in ".," and rest[0] != mark)


def _refuse_grouped_rows(lines: list[str], sep: str, dec: str, k: int, lead: int,
                        name: str) -> None:
    """Refuse a data row with a quoted number in digit grouping, at its line.

    Such a row does not read as numbers, so above the first row that does it would
    pass for a header line and its samples would be lost without a word.
    """
    for i, ln in enumerate(lines):
        if '"' not in ln:
            continue
        fields = cells(ln, sep, lead)
        bad = [f for f in fields if grouped_cell(f)]
        if bad and row_fits(sep.join("0" if grouped_cell(f) else f for f in fields),
                            sep, dec, k):
            raise InputError(f"cell {bad[0]!r} is not a number: it has a thousands separator "
                             f"(digit grouping); export the numbers without it",
                             source=name, line=i + 1)


def first_grouped(lines: list[str]) -> tuple[int, str] | None:
    """(0-based line, cell) of the first quoted cell written with digit grouping, or None."""
    for i, ln in enumerate(lines):
        if '"' not in ln:
            continue
        for m in re.finditer(r'"([^"]*)"', ln):
            if grouped_cell(m.group(1)):
                return i, m.group(1)
    return None


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
    f = cells(above[-1], ",")
    return len(f) == 1 and to_float(f[0], ".") is None and "\t" not in above[-1] \
        and ";" not in above[-1]


def bracket_unit(name: str) -> str | None:
    """Return the unit in brackets at the end of a name (``time (ms)`` -> ``ms``), or None."""
    m = re.search(r"[\(\[\{]\s*([^\)\]\}]+?)\s*[\)\]\}]\s*$", name)
    return m.group(1).strip() if m else None


def _is_keyvalue(line: str) -> bool:
    return bool(re.match(r"^[^:=]+[:=]\s*\S", line.strip()))


def _names_row(f: list[str], k: int, dec: str, line: str) -> bool:
    if len(f) < k or (k == 1 and _is_keyvalue(line)):
        return False
    head = [x for x in f[:k] if x]
    return bool(head) and all(to_float(x, dec) is None for x in head)


def _units_row(f: list[str], k: int) -> bool:
    if not f:
        return False
    head = [x for x in f[:k] if x]
    return bool(head) and all(bare(x) in UNIT_TOKENS for x in head)


def header_rows(lines: list[str], first: int, sep: str, dec: str, k: int, lead: int = 0):
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
        above.append((j, cells(ln, sep, lead)))
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


def metadata_items(lines: list[str]) -> list[tuple[str, str]]:
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


