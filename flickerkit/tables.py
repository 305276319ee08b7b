"""Text tables (CSV and kin) as bench instruments and data loggers write them.

Sniffing (separator, decimal mark, where the table starts), header and
metadata, the time base and the channel to measure. :func:`read_table` reads a
table into memory; :func:`stream_table` converts a large one in chunks to
temporary binary columns read block by block.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from .errors import InputError
from .timebase import uniform, uniform_blocks

if TYPE_CHECKING:
    from .readers import ReadOptions

#: Time units recognised in headers and options [s].
TIME_UNITS = {"s": 1.0, "sec": 1.0, "second": 1.0, "seconds": 1.0, "ms": 1e-3,
              "us": 1e-6, "µs": 1e-6, "μs": 1e-6, "ns": 1e-9}

_TIME_NAMES = re.compile(r"^\s*(t|time|zeit|temps|tiempo|tempo|sec|second|seconds|x)(?![a-z])",
                         re.I)
_UNIT_IN_NAME = re.compile(r"[\(\[\{/_ ]\s*(ns|us|µs|μs|ms|s|sec)\s*[\)\]\}]?\s*$", re.I)
_RATE_KEY = re.compile(r"sampl\w*[ _-]*(rate|frequency|freq)", re.I)
_INTERVAL_KEY = re.compile(r"(sampl\w*[ _-]*(interval|period|time))|time[ _-]*step|^\s*dt\b", re.I)
_COMMENT = ("#", "%", "//", ";", "!", "*")
_HEAD_BYTES = 256 * 1024
#: Tables with more columns than this are narrowed to the used columns while reading.
WIDE_TABLE_COLUMNS = 4
#: Rows per chunk when a text table is streamed.
TEXT_CHUNK_ROWS = 1_000_000



def _decode_head(p: Path) -> tuple[str, str]:
    with p.open("rb") as fh:
        raw = fh.read(_HEAD_BYTES)
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
    f = field.strip().strip('"').strip("'")
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


def _numeric_fields(line: str, sep: str, decimal: str) -> int:
    """Number of fields if every field is numeric, else 0."""
    fields = _split(line.strip(), sep)
    if sep != " " and fields and fields[-1].strip() == "":
        fields = fields[:-1]  # a trailing separator
    if not fields:
        return 0
    for f in fields:
        if _to_float(f, decimal) is None:
            return 0
    return len(fields)


def _sniff(lines: list[str], name: str) -> tuple[str, str, int, int]:
    """Separator, decimal mark, index of the first data line, fields per row.

    Each candidate (separator, decimal mark) is scored on the last 20
    non-empty lines of the head: the number of lines that split into the same
    count of numeric fields. The best score wins, then the larger field count.
    The table starts at the first line that is such a row.
    """
    body = [ln for ln in lines if ln.strip()]
    if not body:
        raise InputError("file holds no table", source=name)
    tail = body[-min(len(body), 20):]
    best: tuple[int, int, str, str] | None = None
    for sep, dec in (("\t", "."), ("\t", ","), (";", "."), (";", ","), (",", "."),
                     (" ", "."), (" ", ",")):
        counts = [_numeric_fields(ln, sep, dec) for ln in tail]
        nonzero = [c for c in counts if c > 0]
        if not nonzero:
            continue
        k = max(set(nonzero), key=lambda c: (nonzero.count(c), c))
        score = (nonzero.count(k), k)
        if best is None or score > best[:2]:
            best = (score[0], k, sep, dec)
    if best is None or best[0] < max(1, len(tail) // 2):
        raise InputError("no numeric table found: the last lines are not rows of numbers "
                         "with a common separator (comma, semicolon, tab or space)",
                         source=name)
    _, k, sep, dec = best
    for i, ln in enumerate(lines):
        if ln.strip() and not ln.lstrip().startswith(_COMMENT[:3]) and \
                _numeric_fields(ln, sep, dec) == k:
            return sep, dec, i, k
    raise InputError("no numeric table found", source=name)


def _header_and_meta(lines: list[str], first: int, sep: str,
                     k: int) -> tuple[list[str] | None, dict[str, str]]:
    header = None
    meta_lines = lines[:first]
    for j in range(first - 1, -1, -1):
        ln = lines[j]
        if not ln.strip():
            continue
        if ln.lstrip().startswith(_COMMENT):
            break
        fields = [f.strip().strip('"').strip("'") for f in _split(ln.strip(), sep)]
        if sep != " " and fields and fields[-1] == "":
            fields = fields[:-1]
        if len(fields) == k and not (k == 1 and re.match(r"^[^:=]+[:=]\s*\S", ln.strip())):
            header = fields
            meta_lines = lines[:j]
        break
    meta: dict[str, str] = {}
    for ln in meta_lines:
        s = ln.strip().lstrip("#%/;!* ").strip()
        m = re.match(r"^([^:=,;\t]+?)\s*[:=,;\t]\s*(.+)$", s)
        if m:
            meta[m.group(1).strip()] = m.group(2).strip().strip('"')
    return header, meta


def _unit_of(name: str) -> float | None:
    m = _UNIT_IN_NAME.search(name)
    if m:
        return TIME_UNITS[m.group(1).lower() if m.group(1) not in ("µs", "μs") else m.group(1)]
    low = name.strip().lower()
    for unit in ("ns", "us", "µs", "μs", "ms"):
        if low.endswith(unit):
            return TIME_UNITS[unit]
    return None


def _rate_from_meta(meta: dict[str, str]) -> tuple[float | None, str | None]:
    for key, value in meta.items():
        num = re.match(r"^\s*([-+0-9.eE]+)\s*([a-zA-Zµμ]*)", value.replace(",", "."))
        if not num:
            continue
        try:
            v = float(num.group(1))
        except ValueError:
            continue
        unit = num.group(2).lower()
        if _RATE_KEY.search(key) and v > 0:
            scale = {"khz": 1e3, "mhz": 1e6, "ks/s": 1e3, "ms/s": 1e6}.get(unit, 1.0)
            if unit.startswith("k"):
                scale = 1e3
            elif unit.startswith("m") and unit not in ("ms",):
                scale = 1e6
            return v * scale, key
        if _INTERVAL_KEY.search(key) and v > 0:
            scale = TIME_UNITS.get(unit, 1.0)
            return 1.0 / (v * scale), key
    return None, None


def _pick_columns(header: list[str] | None, k: int, head_rows: np.ndarray,
                  options: ReadOptions, name: str) -> tuple[int | None, int, list[str]]:
    names = header if header else [f"column {i + 1}" for i in range(k)]
    time_col: int | None = None
    if header:
        time_col = next((i for i, h in enumerate(header) if _TIME_NAMES.match(h)), None)
    elif k >= 2 and head_rows.shape[0] >= 3 and np.all(np.diff(head_rows[:, 0]) > 0):
        time_col = 0
    if options.column is not None:
        col = options.column
        if isinstance(col, str) and col.strip().isdigit():
            col = int(col)
        if isinstance(col, int):
            if not 1 <= col <= k:
                raise InputError(f"column {col} does not exist: the table has {k} column(s) "
                                 f"({', '.join(names)})", source=name)
            sig = col - 1
        else:
            want = str(col).strip().lower()
            matches = [i for i, h in enumerate(names) if h.strip().lower() == want]
            if not matches:
                raise InputError(f"unknown column {col!r}; the columns are: {', '.join(names)}",
                                 source=name)
            sig = matches[0]
        if sig == time_col:
            time_col = None if options.sample_rate_hz else time_col
            if time_col is not None:
                raise InputError(f"column {names[sig]!r} is the time column; choose a signal "
                                 f"column", source=name)
    else:
        candidates = [i for i in range(k) if i != time_col]
        if not candidates:
            raise InputError("the table has a time column but no signal column", source=name)
        sig = candidates[0]
    return time_col, sig, names


def _table_layout(p: Path, options: ReadOptions):
    """Everything about a text table's layout that reading it needs, from its head."""
    name = str(p)
    text, enc = _decode_head(p)
    lines = text.splitlines()
    sep, dec, first, k = _sniff(lines, name)
    header, meta = _header_and_meta(lines, first, sep, k)
    head_rows = np.array([[_to_float(f, dec) for f in _split(ln.strip(), sep)[:k]]
                          for ln in lines[first : first + 50] if ln.strip()
                          and _numeric_fields(ln, sep, dec) == k], dtype=float)
    time_col, sig, names = _pick_columns(header, k, head_rows, options, name)
    use_time = time_col is not None and options.sample_rate_hz is None
    return (text, enc, lines, sep, dec, first, k, header, meta, time_col, sig, names, use_time)


def read_table(p: Path, options: ReadOptions):
    import pandas as pd

    name = str(p)
    (text, enc, lines, sep, dec, first, k, header, meta, time_col, sig, names,
     use_time) = _table_layout(p, options)
    cols = [time_col, sig] if use_time else [sig]
    # physical line numbers: splitlines() counts like the file
    skip = first
    try:
        # usecols makes pandas' C reader 2.5x slower; only narrow a wide table with it
        frame = pd.read_csv(
            p, sep=r"\s+" if sep == " " else sep, decimal=dec, header=None,
            skiprows=skip, usecols=cols if k > WIDE_TABLE_COLUMNS else None,
            dtype=np.float64, engine="c",
            encoding="utf-8-sig" if enc == "utf-8-sig" else "latin-1",
            skip_blank_lines=False, na_filter=True, keep_default_na=True,
            on_bad_lines="error", index_col=False,
        )
    except (ValueError, pd.errors.ParserError) as exc:
        raise _locate_bad_cell(p, sep, dec, skip, cols, names, enc, exc) from None
    data = {c: frame[c].to_numpy() for c in cols}
    notes: list[str] = []
    warns: list[str] = []
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
                notes.append(f"{count} blank or NaN cell(s) in column {names[c]!r} filled by "
                             f"linear interpolation")
            else:
                hint = " (use --fill-gaps to interpolate them)" if what != "infinite" else ""
                raise InputError(f"{count} {what} cell(s), the first here{hint}", source=name,
                                 line=skip + i + 1, column=names[c])
    signal = data[sig]
    meta_out: dict[str, Any] = {"column": names[sig], "format": "text table",
                                "separator": {"\t": "tab", " ": "space"}.get(sep, sep),
                                "decimal": dec}
    if meta:
        meta_out["header_metadata"] = meta
    if options.sample_rate_hz is not None:
        fs = float(options.sample_rate_hz)
        if time_col is not None:
            notes.append(f"time column {names[time_col]!r} ignored: sample rate given")
    elif use_time:
        unit = _time_unit(options, header, names[time_col], notes)
        t = data[time_col] * unit
        signal, fs, tnotes = uniform(t, signal, options.resample, name, skip)
        notes += tnotes
        meta_out["time_column"] = names[time_col]
    else:
        fs, key = _rate_from_meta(meta)
        if fs is None:
            raise InputError("no time column and no sample rate: give --sample-rate HZ",
                             source=name)
        notes.append(f"sample rate {fs:g} Hz from the file's metadata ({key!r})")
    if signal.size < 2:
        raise InputError(f"the table holds {signal.size} row(s); at least 2 are needed",
                         source=name)
    return signal, fs, notes, warns, meta_out


def _time_unit(options: ReadOptions, header, time_name: str, notes: list[str]) -> float:
    """Seconds per unit of the time column (option, else header, else seconds with a note)."""
    unit = None
    if options.time_unit:
        unit = TIME_UNITS.get(options.time_unit.strip().lower())
        if unit is None:
            raise InputError(f"unknown time unit {options.time_unit!r}; use one of "
                             f"{', '.join(sorted(set(TIME_UNITS)))}", source="--time-unit")
    elif header:
        unit = _unit_of(time_name)
    if unit is None:
        unit = 1.0
        notes.append(f"time column {time_name!r} has no unit; read as seconds")
    return unit


def stream_table(p: Path, options: ReadOptions):
    """Convert a large text table in chunks to temporary binary columns, read as FileSignals."""
    import shutil
    import tempfile
    import weakref

    import pandas as pd

    from .readers import FileSignal  # readers imports this module

    name = str(p)
    (text, enc, lines, sep, dec, first, k, header, meta, time_col, sig, names,
     use_time) = _table_layout(p, options)
    if use_time and options.resample:
        raise InputError("--resample needs the capture in memory; it is too long to stream "
                         "with resampling", source=name)
    if options.fill_gaps:
        raise InputError("--fill-gaps needs the capture in memory; it is too long to stream "
                         "with gap filling", source=name)
    notes: list[str] = [f"streamed in chunks of {TEXT_CHUNK_ROWS} rows (blank lines skipped)"]
    unit = _time_unit(options, header, names[time_col], notes) if use_time else 1.0
    cols = [time_col, sig] if use_time else [sig]
    tmp = Path(tempfile.mkdtemp(prefix="flickerkit-stream-"))
    rows = 0
    try:
        reader = pd.read_csv(p, sep=r"\s+" if sep == " " else sep, decimal=dec, header=None,
                             skiprows=first, usecols=cols, dtype=np.float64, engine="c",
                             encoding="utf-8-sig" if enc == "utf-8-sig" else "latin-1",
                             skip_blank_lines=True, index_col=False,
                             chunksize=TEXT_CHUNK_ROWS)
        with open(tmp / "signal.f64", "wb") as fsig, open(tmp / "time.f64", "wb") as ftime:
            try:
                for chunk in reader:
                    for c in cols:
                        v = chunk[c].to_numpy()
                        bad = ~np.isfinite(v)
                        if bad.any():
                            i = int(np.flatnonzero(bad)[0])
                            raise InputError(f"blank, NaN or infinite cell in data row "
                                             f"{rows + i + 1}", source=name, column=names[c])
                    chunk[sig].to_numpy().tofile(fsig)
                    if use_time:
                        (chunk[time_col].to_numpy() * unit).tofile(ftime)
                    rows += len(chunk)
            except (ValueError, pd.errors.ParserError) as exc:
                if isinstance(exc, InputError):
                    raise
                raise InputError(f"cannot read the table after data row {rows} "
                                 f"({str(exc).splitlines()[0]})", source=name) from None
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    if rows < 2:
        shutil.rmtree(tmp, ignore_errors=True)
        raise InputError(f"the table holds {rows} row(s); at least 2 are needed", source=name)
    signal = FileSignal(str(tmp / "signal.f64"), np.float64, 0, rows)
    weakref.finalize(signal, shutil.rmtree, str(tmp), True)
    meta_out: dict[str, Any] = {"column": names[sig], "format": "text table (streamed)",
                                "separator": {"\t": "tab", " ": "space"}.get(sep, sep),
                                "decimal": dec}
    if meta:
        meta_out["header_metadata"] = meta
    if options.sample_rate_hz is not None:
        fs = float(options.sample_rate_hz)
    elif use_time:
        tsig = FileSignal(str(tmp / "time.f64"), np.float64, 0, rows)
        fs = uniform_blocks(tsig, name, first)
        meta_out["time_column"] = names[time_col]
    else:
        fs, key = _rate_from_meta(meta)
        if fs is None:
            raise InputError("no time column and no sample rate: give --sample-rate HZ",
                             source=name)
        notes.append(f"sample rate {fs:g} Hz from the file's metadata ({key!r})")
    return signal, fs, notes, [], meta_out


def _locate_bad_cell(p: Path, sep: str, dec: str, skip: int, cols: list[int], names: list[str],
                     enc: str, exc: Exception) -> InputError:
    """Find the first non-numeric cell after pandas refused the table."""
    import pandas as pd

    name = str(p)
    try:
        frame = pd.read_csv(p, sep=r"\s+" if sep == " " else sep, header=None, skiprows=skip,
                            usecols=cols, dtype=str, engine="c", keep_default_na=False,
                            skip_blank_lines=False, encoding="utf-8-sig" if enc == "utf-8-sig"
                            else "latin-1", index_col=False)
    except (ValueError, pd.errors.ParserError) as exc2:
        msg = str(exc2).splitlines()[0]
        m = re.search(r"line (\d+)", msg)
        line = skip + int(m.group(1)) if m else None
        return InputError(f"rows do not all have the same number of fields ({msg})",
                          source=name, line=line)
    for c in cols:
        col = frame[c].to_numpy()
        for i, v in enumerate(col):
            if v.strip() == "" or v.strip().lower() in ("nan", "na", "n/a", "null"):
                continue
            if _to_float(v, dec) is None:
                return InputError(f"cell {v.strip()!r} is not a number", source=name,
                                  line=skip + i + 1, column=names[c])
    return InputError(f"cannot read the table ({str(exc).splitlines()[0]})", source=name)
