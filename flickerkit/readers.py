"""Reading captures: text tables, WAV and NumPy files into a :class:`Capture`.

Text tables are read as bench instruments and data loggers write them:

* any number of comment or metadata lines before the table (``# ...``,
  ``key: value``, ``key,value``); a metadata line naming a sample rate
  (``sample rate: 20000``) or sample interval (``sample interval, 5e-5``) is
  used when the table has no time column;
* comma, semicolon, tab or space separated; decimal comma where the separator
  is not a comma;
* an optional header row; a time column recognised by its name (``t``,
  ``time``, ``zeit``, ``temps``, ``tiempo``, ``sec``...) or, without a header,
  by strictly increasing values in the first of several columns; the time
  unit from the header (``time (ms)``, ``t[us]``, ``time_ns``, ``µs``), seconds
  when none is given;
* one or more signal columns, chosen by name or 1-based number.

WAV files are read with ``scipy.io.wavfile`` (memory-mapped); ``.npy`` files
with ``numpy.load(mmap_mode="r")``: a 1-D array is a signal (give the sample
rate), a 2-D array holds columns, the first being time in seconds unless a
sample rate is given.
"""

from __future__ import annotations

import io
import os
import re
import stat
import struct
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from .capture import Capture, make_capture, make_lazy_capture
from .errors import InputError
from .fileio import note_input

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
#: A sample this far (in sample intervals) from a uniform grid makes the time non-uniform.
UNIFORM_TOLERANCE = 0.5
#: Captures longer than this are read block by block [samples] (2**25: 256 MiB as float64).
STREAM_ABOVE_SAMPLES = 2**25
#: Text tables larger than this are converted in chunks and read block by block [bytes].
STREAM_ABOVE_TEXT_BYTES = 1 << 30
#: Tables with more columns than this are narrowed to the used columns while reading.
WIDE_TABLE_COLUMNS = 4
#: Rows per chunk when a text table is streamed.
TEXT_CHUNK_ROWS = 1_000_000
#: Raw binary suffixes.
RAW_SUFFIXES = (".raw", ".bin")
_RAW_DTYPES = ("float32", "float64", "int8", "uint8", "int16", "uint16", "int32", "uint32")


class FileSignal:
    """Samples stored in a binary file, read in slices as float64 (never memory-mapped).

    Reading with ``seek`` and ``numpy.fromfile`` keeps the process's resident
    memory at the size of the slices read, whatever the file's length.

    Parameters
    ----------
    path : str
        The file.
    dtype : numpy.dtype
        Stored sample format.
    offset : int
        Byte offset of the first sample.
    n : int
        Samples (frames) in the file.
    channels, channel : int
        Interleaved channels, and the 0-based one to read.
    dark : float
        Subtracted from every sample [input unit].
    zero, scale : float
        Stored value of zero and the unit of one stored step: a sample is
        ``(stored - zero) * scale - dark`` (PCM: 128 and 1/128 for unsigned
        8-bit; default 0 and 1).
    """

    def __init__(self, path: str, dtype, offset: int, n: int, *, channels: int = 1,
                 channel: int = 0, dark: float = 0.0, zero: float = 0.0,
                 scale: float = 1.0) -> None:
        self.path = str(path)
        self.stored = np.dtype(dtype)
        self.offset = int(offset)
        self.channels = int(channels)
        self.channel = int(channel)
        self.dark = float(dark)
        self.zero = float(zero)
        self.scale = float(scale)
        self.shape = (int(n),)
        self.dtype = np.dtype(np.float64)
        self.ndim = 1

    def __len__(self) -> int:
        return self.shape[0]

    def with_dark(self, dark: float) -> "FileSignal":
        out = FileSignal(self.path, self.stored, self.offset, self.shape[0],
                         channels=self.channels, channel=self.channel, dark=self.dark + dark,
                         zero=self.zero, scale=self.scale)
        out._owner = self  # keeps a temporary file alive as long as any view of it
        return out

    def __getitem__(self, key: slice) -> np.ndarray:
        if not isinstance(key, slice):
            raise TypeError("a FileSignal is read in slices")
        a, b, step = key.indices(self.shape[0])
        if step != 1:
            raise TypeError("a FileSignal is read in contiguous slices")
        if b <= a:
            return np.zeros(0)
        frame = self.stored.itemsize * self.channels
        with open(self.path, "rb") as fh:
            fh.seek(self.offset + a * frame)
            raw = np.fromfile(fh, dtype=self.stored, count=(b - a) * self.channels)
        if raw.size < (b - a) * self.channels:
            raise InputError(f"file ends early: expected {(b - a) * self.channels} values at "
                             f"sample {a}, found {raw.size}", source=self.path)
        out = raw.reshape(-1, self.channels)[:, self.channel].astype(np.float64)
        if self.zero:
            out -= self.zero
        if self.scale != 1.0:
            out *= self.scale
        if self.dark:
            out -= self.dark
        return out

    def __array__(self, dtype=None, copy=None):
        a = self[:]
        return a.astype(dtype) if dtype is not None else a


@dataclass(frozen=True)
class ReadOptions:
    """How to read a capture.

    Attributes
    ----------
    column : str or int or None
        Signal column: a header name or a 1-based column number (for WAV
        files the channel number, for 2-D ``.npy`` the column number).
        Default: the first column that is not time.
    sample_rate_hz : float or None
        Sample rate [Hz]; needed when the file has no time column and no
        sample rate of its own. Given together with a time column, it wins.
    time_unit : str or None
        Unit of the time column (s, ms, us, µs, ns), overriding the header.
    dark : float or str or None
        Dark level to subtract: a number in the signal's unit, or the path
        of a dark capture whose mean is used.
    resample : bool
        Resample non-uniform or unordered time onto a uniform grid instead of
        refusing the file.
    fill_gaps : bool
        Fill blank or NaN cells by linear interpolation instead of refusing.
    quantity : str
        ``"light"`` or ``"voltage"``.
    raw_dtype : str or None
        Sample format of a raw binary file (``.raw``, ``.bin``): ``float32``,
        ``float64``, ``int16``, ``int32``, ``uint16``..., little-endian.
    channels : int
        Interleaved channels in a raw binary file.
    stream : bool or None
        Read the capture block by block instead of into memory. ``None``
        (default) streams when the capture holds more than
        :data:`STREAM_ABOVE_SAMPLES` samples (text: more than
        :data:`STREAM_ABOVE_TEXT_BYTES` bytes).
    """

    column: str | int | None = None
    sample_rate_hz: float | None = None
    time_unit: str | None = None
    dark: float | str | None = None
    resample: bool = False
    fill_gaps: bool = False
    quantity: str = "light"
    raw_dtype: str | None = None
    channels: int = 1
    stream: bool | None = None


def read_capture(path: str | os.PathLike[str], options: ReadOptions | None = None) -> Capture:
    """Read a capture file and apply the dark level.

    Parameters
    ----------
    path : str or path-like
        ``.csv``/``.txt``/``.tsv``/``.dat`` (text table), ``.wav`` or ``.npy``.
    options : ReadOptions, optional

    Returns
    -------
    Capture

    Raises
    ------
    InputError
        With the file, and the line or column where it applies.
    """
    options = options or ReadOptions()
    p = Path(path)
    name = str(path)
    note_input(p)
    try:
        st = os.stat(p)
    except FileNotFoundError:
        raise InputError("no such file", source=name) from None
    except OSError as exc:
        raise InputError(f"cannot read the capture ({exc.strerror or exc})", source=name) \
            from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError("is a folder, not a capture file", source=name)
    if not stat.S_ISREG(st.st_mode):
        kind = "a FIFO (named pipe)" if stat.S_ISFIFO(st.st_mode) else "a device or socket"
        raise InputError(f"cannot read the capture: it is {kind}, not a regular file",
                         source=name)
    if not os.access(p, os.R_OK):
        raise InputError("cannot read the capture (permission denied)", source=name)
    size = st.st_size
    if size == 0:
        raise InputError("file is empty", source=name)
    suffix = p.suffix.lower()
    if suffix in RAW_SUFFIXES:
        samples, fs, notes, warns, meta = _read_raw(p, options)
    elif suffix == ".wav":
        samples, fs, notes, warns, meta = _read_wav(p, options)
    elif suffix == ".npy":
        samples, fs, notes, warns, meta = _read_npy(p, options)
    elif options.stream or (options.stream is None and size > STREAM_ABOVE_TEXT_BYTES):
        _first_line_bounded(p, size)
        samples, fs, notes, warns, meta = _stream_table(p, options)
    else:
        _first_line_bounded(p, size)
        _lines_bounded(p, size)
        samples, fs, notes, warns, meta = _read_table(p, options)
    meta = {"file": name, "file_size_bytes": size, **meta}
    if options.dark is not None:
        dark, dark_note = _dark_level(options.dark, options)
        if isinstance(samples, FileSignal):
            samples = samples.with_dark(dark)
        else:
            samples = np.asarray(samples, dtype=np.float64) - dark
        notes = [*notes, dark_note]
        meta["dark_level"] = dark
    if isinstance(samples, FileSignal):
        meta["streamed"] = True
        return make_lazy_capture(samples, fs, label=p.name, source=name,
                                 quantity=options.quantity, notes=notes, warnings=warns,
                                 meta=meta)
    return make_capture(samples, fs, label=p.name, source=name, quantity=options.quantity,
                        notes=notes, warnings=warns, meta=meta)


def _streams(n: int, options: ReadOptions) -> bool:
    return bool(options.stream) or (options.stream is None and n > STREAM_ABOVE_SAMPLES)


def _file_signal(arr: np.ndarray, path: Path, column: int) -> FileSignal:
    """A FileSignal over one column of a memory-mapped 1-D or 2-D C-ordered array."""
    if not isinstance(arr, np.memmap) or (arr.ndim == 2 and not arr.flags.c_contiguous):
        raise InputError("cannot stream this file's layout (Fortran-ordered); save it C-ordered",
                         source=str(path))
    channels = 1 if arr.ndim == 1 else arr.shape[1]
    return FileSignal(str(path), arr.dtype, arr.offset, arr.shape[0], channels=channels,
                      channel=column)


def _read_raw(p: Path, options: ReadOptions):
    name = str(p)
    if not options.raw_dtype:
        raise InputError(f"a raw binary file needs its sample format: give --raw-dtype "
                         f"({', '.join(_RAW_DTYPES)})", source=name)
    if options.raw_dtype not in _RAW_DTYPES:
        raise InputError(f"unknown raw sample format {options.raw_dtype!r}; use one of "
                         f"{', '.join(_RAW_DTYPES)}", source="--raw-dtype")
    if not options.sample_rate_hz:
        raise InputError("a raw binary file holds no time: give --sample-rate HZ", source=name)
    ch = int(options.channels)
    if ch < 1:
        raise InputError(f"must be at least 1, got {ch}", source="--raw-channels")
    dtype = np.dtype(options.raw_dtype).newbyteorder("<")
    frame = dtype.itemsize * ch
    size = p.stat().st_size
    n = size // frame
    if n < 2:
        raise InputError(f"raw file holds {n} sample(s) of {options.raw_dtype} x {ch}",
                         source=name)
    col = _column_number(options.column, ch, "raw file", name)
    notes = [f"raw {options.raw_dtype} little-endian, {ch} channel(s), sample rate "
             f"{float(options.sample_rate_hz):g} Hz given"]
    warns = []
    if size % frame:
        # a whole file of samples divides evenly; a remainder suggests a header, a wrong
        # --raw-dtype or a wrong --raw-channels, any of which garbles every sample
        warns.append(f"{size % frame} trailing byte(s) ignored: the file is not a whole number "
                     f"of {options.raw_dtype} x {ch} samples; check --raw-dtype and "
                     f"--raw-channels")
    sig = FileSignal(name, dtype, 0, n, channels=ch, channel=col - 1)
    meta = {"format": f"raw {options.raw_dtype}", "column": f"channel {col}"}
    if not _streams(n, options):
        return sig[:], float(options.sample_rate_hz), notes, warns, meta
    return sig, float(options.sample_rate_hz), notes, warns, meta


def _dark_level(dark: float | str, options: ReadOptions) -> tuple[float, str]:
    if isinstance(dark, (int, float)):
        if not np.isfinite(dark):
            raise InputError(f"dark level {dark!r} is not a finite number", source="--dark")
        return float(dark), f"dark level {float(dark):.6g} subtracted"
    try:
        return float(dark), f"dark level {float(dark):.6g} subtracted"
    except ValueError:
        pass
    sub = ReadOptions(column=options.column, sample_rate_hz=options.sample_rate_hz or 1.0,
                      time_unit=options.time_unit, fill_gaps=options.fill_gaps,
                      resample=options.resample)
    try:
        cap = read_capture(dark, sub)
    except InputError as exc:
        if options.column is None or "column" not in str(exc):
            raise
        # the dark capture need not have the signal's column layout
        cap = read_capture(dark, ReadOptions(sample_rate_hz=sub.sample_rate_hz,
                                             fill_gaps=options.fill_gaps,
                                             resample=options.resample))
    level = float(np.mean(cap.samples))
    return level, f"dark level {level:.6g} subtracted (mean of {dark})"


# --------------------------------------------------------------------------- text


#: Longest line of a text table [bytes]; a capture holds one sample (a few fields) per line.
MAX_LINE_BYTES = 1 << 20
#: Text tables read into memory are scanned for long lines above this size [bytes].
SCAN_LINES_ABOVE_BYTES = 64 << 20


def _first_line_bounded(p: Path, size: int) -> None:
    """Refuse at once a text table whose first line is longer than :data:`MAX_LINE_BYTES`
    (a file of one long line would be parsed into memory as one row of millions of fields)."""
    if size <= MAX_LINE_BYTES:
        return
    with p.open("rb") as fh:
        head = fh.read(MAX_LINE_BYTES + 1)
    if b"\n" not in head and b"\r" not in head:
        raise InputError(f"line 1 is longer than {MAX_LINE_BYTES >> 20} MiB; a text capture "
                         f"holds one sample per line", source=str(p), line=1)


def _lines_bounded(p: Path, size: int) -> None:
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


def _read_table(p: Path, options: ReadOptions):
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
        signal, fs, tnotes = _uniform(t, signal, options.resample, name, skip)
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


def _stream_table(p: Path, options: ReadOptions):
    """Convert a large text table in chunks to temporary binary columns, read as FileSignals."""
    import shutil
    import weakref

    import pandas as pd

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
    tmp = _stream_folder(p)
    rows = 0
    source = io.BufferedReader(_LineBounded(p), buffer_size=1 << 16)
    try:
        reader = pd.read_csv(source, sep=r"\s+" if sep == " " else sep, decimal=dec, header=None,
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
    finally:
        source.close()
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
        fs = _uniform_blocks(tsig, name, first)
        meta_out["time_column"] = names[time_col]
    else:
        fs, key = _rate_from_meta(meta)
        if fs is None:
            raise InputError("no time column and no sample rate: give --sample-rate HZ",
                             source=name)
        notes.append(f"sample rate {fs:g} Hz from the file's metadata ({key!r})")
    return signal, fs, notes, [], meta_out


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


#: Sample rates outside this range come from a wrong time unit or a broken file [Hz].
SAMPLE_RATE_RANGE_HZ = (1e-6, 1e12)


def _check_rate(fs: float, name: str) -> float:
    lo, hi = SAMPLE_RATE_RANGE_HZ
    if not np.isfinite(fs) or not lo <= fs <= hi:
        raise InputError(f"the time column gives a sample rate of {fs:.3g} Hz, outside "
                         f"{lo:g} to {hi:g} Hz: check the time unit (--time-unit)", source=name)
    return float(fs)


def _uniform(t: np.ndarray, x: np.ndarray, resample: bool, name: str,
             skip: int) -> tuple[np.ndarray, float, list[str]]:
    """Check that time is increasing and uniform; resample on request."""
    with np.errstate(all="ignore"):
        return _uniform_checked(t, x, resample, name, skip)


def _worst_deviation(t: np.ndarray, fs: float, block: int = 1 << 20) -> tuple[int, float]:
    """Index and size of the largest departure of ``t`` from a uniform grid [sample intervals].

    Worked in blocks so a long time column needs no full-length temporaries.
    """
    t0 = t[0]
    worst, worst_dev = 0, -1.0
    for a in range(0, t.size, block):
        seg = t[a : a + block]
        dev = np.abs(seg - (t0 + np.arange(a, a + seg.size) / fs)) * fs
        i = int(np.argmax(dev))
        if dev[i] > worst_dev:
            worst, worst_dev = a + i, float(dev[i])
    return worst, worst_dev


def _uniform_checked(t, x, resample, name, skip):
    notes: list[str] = []
    dt = np.diff(t)
    if dt.size == 0:
        raise InputError("a capture needs at least 2 rows", source=name)
    bad = np.flatnonzero(dt <= 0)
    span = t[-1] - t[0]
    if bad.size == 0 and span > 0:
        fs = _check_rate((t.size - 1) / span, name)
        worst, worst_dev = _worst_deviation(t, fs)
        if worst_dev <= UNIFORM_TOLERANCE:
            return x, float(fs), notes
        if not resample:
            raise InputError(
                f"time steps are not uniform: the sample here is {worst_dev:.3g} sample "
                f"intervals off a uniform grid at {fs:.6g} Hz (gaps or jitter); use "
                f"--resample to interpolate onto a uniform grid", source=name,
                line=skip + worst + 1)
    elif not resample:
        i = int(bad[0]) + 1
        what = "repeats" if dt[bad[0]] == 0 else "goes backwards"
        raise InputError(f"time {what} here ({t[i - 1]:.9g} then {t[i]:.9g} s); use --resample "
                         f"to sort and interpolate onto a uniform grid", source=name,
                         line=skip + i + 1)
    order = np.argsort(t, kind="stable")
    ts, xs = t[order], x[order]
    uniq, inv = np.unique(ts, return_inverse=True)
    if uniq.size < 2:
        raise InputError("all time stamps are equal", source=name)
    xm = np.bincount(inv, weights=xs) / np.bincount(inv)
    fs = _check_rate((uniq.size - 1) / (uniq[-1] - uniq[0]), name)
    grid = uniq[0] + np.arange(uniq.size) / fs
    out = np.interp(grid, uniq, xm)
    notes.append(f"time was not uniform or not increasing: {t.size} rows sorted, "
                 f"{t.size - uniq.size} duplicate time(s) averaged, resampled linearly to "
                 f"{fs:.6g} Hz")
    return out, float(fs), notes


# --------------------------------------------------------------------------- binary


def _channel(data: np.ndarray, options: ReadOptions, name: str,
             what: str) -> tuple[np.ndarray, int]:
    if data.ndim == 1:
        if options.column not in (None, 1, "1"):
            raise InputError(f"{what} has one {what == 'WAV file' and 'channel' or 'column'}; "
                             f"column {options.column!r} does not exist", source=name)
        return data, 1
    col = _column_number(options.column, data.shape[1], what, name)
    return data[:, col - 1], col


def _column_number(column, k: int, what: str, name: str) -> int:
    """A 1-based column (channel) number of a binary file, checked against its ``k``."""
    col = column if column is not None else 1
    try:
        col = int(col)
    except (TypeError, ValueError):
        raise InputError(f"{what} columns are numbered 1 to {k}; got {column!r}",
                         source=name) from None
    if not 1 <= col <= k:
        raise InputError(f"column {col} does not exist: the {what} has {k}", source=name)
    return col


#: 24-bit WAV samples cannot be memory-mapped; up to this size they are read into memory.
_WAV24_IN_MEMORY_BYTES = 1 << 30


def _read_wav(p: Path, options: ReadOptions):
    from scipy.io import wavfile

    name = str(p)
    import warnings as _warnings

    with _warnings.catch_warnings(record=True) as caught:
        _warnings.simplefilter("always")
        try:
            mmap = p.stat().st_size >= 64 << 20 or bool(options.stream)
            try:
                rate, data = wavfile.read(name, mmap=mmap)
            except ValueError as exc:  # 24-bit samples cannot be memory-mapped
                if not (mmap and "container size" in str(exc)):
                    raise
                if p.stat().st_size > _WAV24_IN_MEMORY_BYTES:
                    raise InputError(f"a 24-bit WAV file above {_WAV24_IN_MEMORY_BYTES >> 20} "
                                     f"MiB cannot be read block by block; convert it to 16- "
                                     f"or 32-bit PCM", source=name) from None
                rate, data = wavfile.read(name, mmap=False)
        except ZeroDivisionError:  # a header declaring 0 channels
            raise InputError("not a readable WAV file (the header declares 0 channels or a "
                             "block align of 0)", source=name) from None
        except (ValueError, EOFError, OSError, IndexError, TypeError, struct.error) as exc:
            raise InputError(f"not a readable WAV file ({exc})", source=name) from None
    header_doubts = [f"WAV file: {w.message}" for w in caught]
    if data.size == 0:
        raise InputError("WAV file holds no samples", source=name)
    zero, scale, pcm_note = _pcm_level(data.dtype)
    sig, ch = _channel(data, options, name, "WAV file")
    warns: list[str] = header_doubts
    lazy = _streams(int(data.shape[0]), options) and isinstance(data, np.memmap)
    if np.issubdtype(sig.dtype, np.integer):
        info = np.iinfo(sig.dtype)
        at_rail = 0
        for a in range(0, sig.shape[0], 1 << 22):
            b = np.asarray(sig[a : a + (1 << 22)])
            at_rail += int(np.count_nonzero((b == info.max) | (b == info.min)))
        if at_rail > max(1, sig.size // 1000):
            warns.append(f"clipping: {at_rail} sample(s) sit at the recorder's full scale "
                         f"({info.min}/{info.max}); percent flicker is underestimated")
    fs = float(options.sample_rate_hz) if options.sample_rate_hz else float(rate)
    notes = [f"sample rate {fs:g} Hz from the WAV header" if not options.sample_rate_hz
             else f"sample rate {fs:g} Hz given (WAV header says {rate} Hz)"]
    if pcm_note:
        notes.append(pcm_note)
    meta = {"format": "WAV", "column": f"channel {ch}"}
    if lazy:
        f = _file_signal(data, p, ch - 1)
        return (FileSignal(f.path, f.stored, f.offset, f.shape[0], channels=f.channels,
                           channel=f.channel, zero=zero, scale=scale), fs, notes, warns, meta)
    x = np.asarray(sig, dtype=np.float64)
    if zero or scale != 1.0:
        x = (x - zero) * scale
    return x, fs, notes, warns, meta


def _pcm_level(dtype: np.dtype) -> tuple[float, float, str]:
    """Zero and step of integer PCM samples as scipy returns them, to full scale (±1).

    Unsigned 8-bit PCM stores zero as 128 (WAVE format: 8-bit samples are
    unsigned, wider ones two's complement); scipy returns 24-bit samples
    left-justified in int32, so every signed width divides by 2**(bits - 1).
    Float samples are kept as stored.
    """
    if not np.issubdtype(dtype, np.integer):
        return 0.0, 1.0, ""
    bits = 8 * np.dtype(dtype).itemsize
    if np.issubdtype(dtype, np.unsignedinteger):
        zero = float(2 ** (bits - 1))
        how = f"unsigned {bits}-bit PCM: {zero:g} is zero"
    else:
        zero = 0.0
        how = f"{bits}-bit PCM"
    return zero, 2.0 ** -(bits - 1), (f"{how}; samples scaled to full scale = 1 (a --dark "
                                      f"level is in that unit)")


def _read_npy(p: Path, options: ReadOptions):
    name = str(p)
    try:
        data = np.load(p, mmap_mode="r", allow_pickle=False)
    except (ValueError, EOFError, OSError) as exc:
        raise InputError(f"not a readable .npy file ({exc})", source=name) from None
    if data.dtype.names:
        raise InputError("structured .npy arrays are not supported; save plain columns",
                         source=name)
    if not (np.issubdtype(data.dtype, np.number) and not np.iscomplexobj(data)):
        raise InputError(f".npy holds {data.dtype}, not real numbers", source=name)
    if data.ndim not in (1, 2) or data.size == 0:
        raise InputError(f".npy array must be 1-D or 2-D and non-empty, got shape {data.shape}",
                         source=name)
    notes: list[str] = []
    lazy = _streams(int(data.shape[0]), options)
    if data.ndim == 1 or options.sample_rate_hz:
        if not options.sample_rate_hz:
            raise InputError("a 1-D .npy holds no time: give --sample-rate HZ", source=name)
        sig, col = _channel(data, options, name, ".npy array")
        fs = float(options.sample_rate_hz)
        if lazy:
            return (_file_signal(data, p, col - 1), fs, notes, [],
                    {"format": "NumPy .npy", "column": f"column {col}"})
        x = np.asarray(sig)
    else:
        if data.shape[1] < 2:
            raise InputError("a 2-D .npy needs a time column and a signal column, or "
                             "--sample-rate", source=name)
        opts = options if options.column is not None else ReadOptions(column=2)
        sig, col = _channel(data, opts, name, ".npy array")
        if col == 1:
            raise InputError("column 1 of a 2-D .npy is time; choose a signal column",
                             source=name)
        if lazy:
            if options.resample:
                raise InputError("--resample needs the capture in memory; it is too long to "
                                 "stream with resampling", source=name)
            fs = _uniform_blocks(_file_signal(data, p, 0), name, 0)
            return (_file_signal(data, p, col - 1), fs, notes, [],
                    {"format": "NumPy .npy", "column": f"column {col}"})
        t = np.asarray(data[:, 0], dtype=np.float64)
        x, fs, notes = _uniform(t, np.asarray(sig, dtype=np.float64), options.resample, name, 0)
    if x.dtype != np.float64:
        x = x.astype(np.float64)
    if not np.all(np.isfinite(x)):
        i = int(np.flatnonzero(~np.isfinite(x))[0])
        raise InputError(f"sample {i} is not a finite number", source=name)
    return x, fs, notes, [], {"format": "NumPy .npy", "column": f"column {col}"}


def _uniform_blocks(t, name: str, skip: int, block: int = 1 << 22) -> float:
    """Check, block by block, that a long time column is increasing and uniform."""
    n = t.shape[0]
    t0 = float(t[0:1][0])
    t1 = float(t[n - 1 : n][0])
    with np.errstate(all="ignore"):
        fs = _check_rate((n - 1) / (t1 - t0), name) if t1 > t0 else None
    if fs is None:
        raise InputError("time does not increase from the first row to the last", source=name)
    prev = None
    for a in range(0, n, block):
        b = np.asarray(t[a : a + block], dtype=np.float64)
        seq = b if prev is None else np.concatenate([[prev], b])
        dt = np.diff(seq)
        bad = np.flatnonzero(~(dt > 0))
        if bad.size:
            i = a + int(bad[0]) + (0 if prev is None else -1) + 1
            raise InputError("time repeats or goes backwards here; --resample needs the "
                             "capture in memory", source=name, line=skip + i + 1)
        dev = np.abs(b - (t0 + np.arange(a, a + b.size) / fs)) * fs
        worst = int(np.argmax(dev))
        if dev[worst] > UNIFORM_TOLERANCE:
            raise InputError(f"time steps are not uniform: the sample here is {dev[worst]:.3g} "
                             f"sample intervals off a uniform grid at {fs:.6g} Hz",
                             source=name, line=skip + a + worst + 1)
        prev = float(b[-1])
    return float(fs)
