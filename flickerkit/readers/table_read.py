"""Reading a text table whose layout is known: into memory, or streamed in chunks.

:func:`read_table` reads a table into memory (pandas' C parser);
:func:`stream_table` converts a large one in chunks to temporary binary
columns read block by block as :class:`FileSignal`. pandas is imported inside
them, so binary captures never load it.
"""

from __future__ import annotations

import io
import re
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from .filesignal import FileSignal
from .linebounds import LineBounded
from .result import RATE_GIVEN, FormatRead
from .streamfolder import stream_folder
from .table_layout import TableLayout, table_layout
from .table_sniff import to_float
from .table_time import MIN_UNITLESS_RATE_HZ, PLAUSIBLE_RATE_HZ, SLOW_UNITLESS_RATE_HZ
from .timebase import uniform, uniform_blocks

if TYPE_CHECKING:
    from .options import ReadOptions


#: Tables with more columns than this are narrowed to the used columns while reading.
WIDE_TABLE_COLUMNS = 4
#: Rows per chunk when a text table is streamed.
TEXT_CHUNK_ROWS = 1_000_000


def _rate_of(lay: TableLayout, n: int) -> float | None:
    """Seconds per unit of the time column once the rows are counted (time per division)."""
    tb = lay.time
    if tb is None or tb.per_div_s is None:
        return None
    points = tb.points or n
    return tb.per_div_s * tb.divisions / points


def _fixed_rate(lay: TableLayout, n: int) -> float:
    """Sample rate of a table whose time base has no column [Hz].

    Stated, or from the time per division and the ``n`` rows.
    """
    tb = lay.time
    assert tb is not None  # table_layout finds a time base unless a sample rate is given
    if tb.sample_rate_hz:
        return tb.sample_rate_hz
    seconds = _rate_of(lay, n)
    assert seconds is not None  # stated_base: without a column or a rate, time per division
    return 1.0 / seconds


def _plausible(fs: float, lay: TableLayout, name: str) -> list[str]:
    """Warn of a slow sample rate ``fs`` [Hz]; refuse one that cannot be light.

    A rate from a time base without a unit that is too slow for light is
    refused; a slow one with a unit, or a unitless one below 10 kHz, is warned about.
    """
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


def _parser_args(lay: TableLayout) -> dict[str, Any]:
    """Return what every parse of the table tells pandas' C reader: separator, columns, encoding."""
    return {"sep": r"\s+" if lay.separator == " " else lay.separator, "header": None,
            "names": list(range(lay.width)), "engine": "c", "index_col": False,
            "encoding": "utf-8-sig" if lay.encoding == "utf-8-sig" else "latin-1"}


def _table_read(lay: TableLayout, streamed: bool, samples: np.ndarray | FileSignal, fs: float,
                notes: list[str], warnings: list[str]) -> FormatRead:
    """Make the reader's account of a text table: its layout, column and time base."""
    meta: dict[str, Any] = {
        "column": lay.label(lay.signal),
        "format": "text table (streamed)" if streamed else "text table",
        "separator": {"\t": "tab", " ": "space"}.get(lay.separator, lay.separator),
        "decimal": lay.decimal,
    }
    if lay.time is not None and lay.time.column is not None:
        meta["time_column"] = lay.label(lay.time.column)
    if lay.metadata:
        meta["header_metadata"] = dict(lay.metadata)
    return FormatRead(samples, fs, notes, warnings, layout=lay.describe(),
                      column=lay.label(lay.signal),
                      time_base=lay.time.source if lay.time else RATE_GIVEN, meta=meta,
                      unit=lay.units[lay.signal], rows_skipped=lay.first,
                      channel_choice=lay.choice, channels=tuple(lay.channels))


def read_table(p: Path, options: ReadOptions) -> FormatRead:
    """Read a text table into memory."""
    import pandas as pd

    name = str(p)
    lay = table_layout(p, options)
    cols = lay.used_columns()
    skip = lay.first
    try:
        # usecols makes pandas' C reader 2.5x slower; only narrow a wide table with it, or
        # one with cells after the data (time-base values, trailing separators, blanks)
        frame = pd.read_csv(
            p, **_parser_args(lay), decimal=lay.decimal, skiprows=skip,
            usecols=([c + lay.lead for c in cols]
                     if lay.width > WIDE_TABLE_COLUMNS or lay.width > lay.k else None),
            dtype=np.float64, skip_blank_lines=False, na_filter=True, keep_default_na=True,
            on_bad_lines="error",
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
    tb = lay.time
    if options.sample_rate_hz is not None:
        fs = float(options.sample_rate_hz)
    elif tb is not None and tb.column is not None:
        scale = _rate_of(lay, signal.size) or tb.scale
        signal, fs, tnotes = uniform(data[tb.column] * scale, signal, options.resample, name,
                                     skip)
        notes += tnotes
    else:
        fs = _fixed_rate(lay, signal.size)
    warns += _plausible(fs, lay, name)
    return _table_read(lay, False, signal, fs, notes, warns)


def stream_table(p: Path, options: ReadOptions) -> FormatRead:
    """Convert a large text table in chunks to temporary binary columns, read as FileSignals."""
    import shutil
    import weakref

    import pandas as pd

    name = str(p)
    lay = table_layout(p, options)
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
    tmp = stream_folder(p)
    rows = 0
    source = io.BufferedReader(LineBounded(p), buffer_size=1 << 16)
    try:
        reader = pd.read_csv(source, **_parser_args(lay), decimal=lay.decimal,
                             skiprows=lay.first, usecols=[c + lay.lead for c in cols],
                             dtype=np.float64, skip_blank_lines=True, chunksize=TEXT_CHUNK_ROWS)
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
    if options.sample_rate_hz is not None:
        fs = float(options.sample_rate_hz)
    elif use_time:
        # time in seconds, as in memory; an index under time per division is scaled after
        tsig = FileSignal(str(tmp / "time.f64"), np.float64, 0, rows)
        fs = uniform_blocks(tsig, name, lay.first) / (_rate_of(lay, rows) or 1.0)
    else:
        fs = _fixed_rate(lay, rows)
    return _table_read(lay, True, signal, fs, notes, [*lay.warnings, *_plausible(fs, lay, name)])


def _locate_bad_cell(p: Path, lay: TableLayout, cols: list[int], exc: Exception) -> InputError:
    """Find the first non-numeric cell after pandas refused the table."""
    import pandas as pd

    name = str(p)
    skip = lay.first
    try:
        frame = pd.read_csv(p, **_parser_args(lay), skiprows=skip,
                            usecols=[c + lay.lead for c in cols], dtype=str,
                            keep_default_na=False, skip_blank_lines=False)
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
            if to_float(v, lay.decimal) is None:
                return InputError(f"cell {v.strip()!r} is not a number", source=name,
                                  line=skip + i + 1, column=lay.label(c))
    return InputError(f"cannot read the table ({str(exc).splitlines()[0]})", source=name)


