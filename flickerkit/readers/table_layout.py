"""Text tables (CSV and kin) as bench instruments and data loggers write them.

:func:`table_layout` reads the head of a file and finds, without guessing a
time base, everything reading it needs (a :class:`TableLayout`):

* separator (comma, semicolon, tab, spaces) and decimal mark; quoted cells;
  trailing separators and empty trailing cells (:mod:`.table_sniff`);
* metadata lines before the table (``key = value``, ``key: value``,
  ``key,value``, quoted or not, a unit after the number or in the key);
* a names row, optionally followed by a units row (``Second,Volt``); the
  units become the columns' units, the names stay selectable; repeated names
  are selectable by number;
* the time base (:mod:`.table_time`): ``--sample-rate``; a time column with
  its unit (option, header ``time (ms)``, units row); a sample-index column
  with a start and increment (extra columns, on the units row or in the first
  data row) or with a stated sample rate, interval or time per division and
  point count (metadata); a stated rate alone. A column of consecutive whole
  numbers without a time unit is a sample index, never seconds; a time column
  without a unit whose rate (read as seconds) is implausibly slow for light is
  refused with the hint of the unit that would fit;
* the column to measure (:mod:`.table_channel`): named, numbered, the only
  one, or the one whose name or unit says light (photodiode, lux ...); when
  several could be the light and none was named, the first is measured with a
  warning that says so (or refused when :attr:`ReadOptions.require_column` is
  set).

:mod:`.table_read` reads a table into memory or streams a large one.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from .table_channel import choose_signal
from .table_sniff import (bracket_unit, cells, decode_head, header_rows, metadata_items,
                          row_fits, sniff, split_line, to_float)
from .table_time import (DEFAULT_DIVISIONS, TimeBase, extra_items, find_time, int_sequence,
                         option_unit, stated_base, stated_facts, steps_of, time_column_base)
from .units import INDEX_NAMES

if TYPE_CHECKING:
    from .options import ReadOptions


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
        """Describe the layout in a few words, for the read echo."""
        sep = {"\t": "tab", " ": "space", ",": "comma", ";": "semicolon"}.get(
            self.separator, repr(self.separator))
        mark = "comma" if self.decimal == "," else "point"
        # one column has no separator to name (the sniffer's tab is a placeholder)
        table = (f"{sep}-separated text table" if self.width > 1 or self.lead
                 else "one-column text table")
        parts = [table, f"decimal {mark}",
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


def table_layout(p: Path, options: ReadOptions) -> TableLayout:
    """Find the layout of a text table from its head.

    Parameters
    ----------
    p : pathlib.Path
        The table.
    options : ReadOptions
        The column, sample rate, time unit and quantity asked for.

    Returns
    -------
    TableLayout

    Raises
    ------
    InputError
        When no table is found, a named column does not exist or is ambiguous,
        or no time base can be found without guessing.
    """
    name = str(p)
    text, enc = decode_head(p)
    lines = text.splitlines()
    sep, dec, first, k, lead = sniff(lines, name)
    names_f, units_f, top = header_rows(lines, first, sep, dec, k, lead)
    head_lines = [ln for ln in lines[first : first + 50] if row_fits(ln, sep, dec, k, lead)]
    head = np.array([[to_float(f, dec) for f in cells(ln, sep, lead)[:k]]
                     for ln in head_lines], dtype=float)
    first_row = cells(lines[first], sep, lead)
    width = max([len(split_line(ln.strip(" \r\n") if sep != " " else ln, sep))
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
        units.append(u.strip("()[]{} ") if u else bracket_unit(names[c]) if names_f else None)
    meta_items = metadata_items(lines[:top])
    if lead:  # metadata in the side columns of the first rows: key, value[, unit]
        for ln in lines[top : first + 50]:
            side = [f.strip().strip('"') for f in split_line(ln.strip(" \r\n"), sep)[:lead]]
            if side and side[0] and len(side) > 1 and side[1]:
                meta_items.append((side[0], " ".join(x for x in side[1:] if x)))
    metadata = {key: value for key, value in meta_items}
    stated = stated_facts([*((a, b, "metadata") for a, b in meta_items),
                           *extra_items(names_f, units_f, first_row, k)], dec)
    notes: list[str] = []
    warns: list[str] = []
    tcol, kind = find_time(names, units, bool(names_f), head, k)
    opt_unit = option_unit(options)

    def label(c: int) -> str:
        return f"{names[c]} (column {c + 1})" if names.count(names[c]) > 1 else names[c]

    index_col = tcol if kind == "index" else None
    tb: TimeBase | None = None
    if options.sample_rate_hz is not None:
        if tcol is not None:
            notes.append(f"{kind} column {label(tcol)!r} ignored: sample rate given")
    elif tcol is not None and (kind == "time" or opt_unit is not None):
        tb = time_column_base(tcol, label(tcol), units[tcol], names[tcol], bool(names_f),
                              opt_unit, stated, steps_of(head, tcol), notes, warns)
        index_col = None
    else:
        tb = stated_base(index_col, label(index_col) if index_col is not None else None,
                         head, stated, name)
    if tb is not None and tb.per_div_s is not None and "divisions" not in stated:
        warns.append(f"the file gives time per division but not the number of divisions: "
                     f"{DEFAULT_DIVISIONS} assumed; frequencies scale with it (give "
                     f"--sample-rate HZ to be sure)")
    # A sample-index column beside a time column is no channel (it measured as the light).
    extra_index = [c for c in range(k) if c != tcol and kind == "time" and names_f
                   and INDEX_NAMES.match(names[c])
                   and int_sequence(head[:, c], consecutive=True)]
    for c in extra_index:
        notes.append(f"column {label(c)!r} is a sample index beside the time column; not "
                     f"taken as a channel")
    channels = [c for c in range(k) if c != tcol and c not in extra_index]
    sig, choice = choose_signal(names, units, channels, tcol, tb, options, label, warns, name)
    if sig == tcol:  # a time-like column asked for as the signal, with a rate given
        index_col = None
    layout = TableLayout(
        encoding=enc, separator=sep, decimal=dec, first=first, width=width, k=k, names=names,
        units=units, header=header, metadata=metadata, signal=sig, choice=choice,
        channels=[label(c) for c in channels], time=tb, index_column=index_col, lead=lead,
        notes=notes, warnings=warns)
    return layout


