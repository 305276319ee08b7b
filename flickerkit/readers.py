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

import os
import stat
import struct
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from .capture import Capture, ReadRecord, make_capture, make_lazy_capture
from .errors import InputError
from .metrics import clipped_at_rail
from .fileio import note_input
from .tables import (MAX_LINE_BYTES, STREAM_FOLDER_PREFIX, TEXT_CHUNK_ROWS,  # noqa: F401
                     TIME_UNITS, WIDE_TABLE_COLUMNS, first_line_bounded, lines_bounded,
                     read_table, stream_table)
from .timebase import (SAMPLE_RATE_RANGE_HZ, UNIFORM_TOLERANCE,  # noqa: F401
                       uniform as _uniform, uniform_blocks as _uniform_blocks)

#: Captures longer than this are read block by block [samples] (2**25: 256 MiB as float64).
STREAM_ABOVE_SAMPLES = 2**25
#: Text tables larger than this are converted in chunks and read block by block [bytes].
STREAM_ABOVE_TEXT_BYTES = 1 << 30
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
        # a view made by with_dark keeps the signal whose temporary file it reads alive
        self._owner: FileSignal | None = None

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
    require_column : bool
        Refuse a text table in which several columns could be the light and
        none is named (``report`` sets it), instead of measuring the first
        with a warning.
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
    require_column: bool = False


def dark_option(dark: float | str | None, base: Path | None = None) -> float | str | None:
    """A dark-level setting as the reader takes it: a number, or the path of a dark capture.

    Parameters
    ----------
    dark : float or str or None
        A number [signal unit], a text that reads as one, or a path.
    base : pathlib.Path, optional
        Folder a relative path is taken from (a project file's folder);
        default: as given (the working folder).

    Returns
    -------
    float or str or None
    """
    if not isinstance(dark, str):
        return dark
    try:
        return float(dark)
    except ValueError:
        return str(base / dark) if base is not None else dark


def build_read_options(*, column: str | int | None = None, sample_rate_hz: float | None = None,
                       time_unit: str | None = None, dark: float | str | None = None,
                       resample: bool = False, fill_gaps: bool = False,
                       base: Path | None = None, **more: Any) -> ReadOptions:
    """ReadOptions from the settings the CLI and a project file share (one builder for both).

    Parameters
    ----------
    column, sample_rate_hz, time_unit, resample, fill_gaps
        As in :class:`ReadOptions` (sample rate in [Hz]).
    dark : float or str or None
        See :func:`dark_option`.
    base : pathlib.Path, optional
        Folder a relative dark-capture path is taken from.
    **more
        Other :class:`ReadOptions` fields (``quantity``, ``raw_dtype``,
        ``channels``, ``stream``, ``require_column``).

    Returns
    -------
    ReadOptions
    """
    return ReadOptions(column=column, sample_rate_hz=sample_rate_hz, time_unit=time_unit,
                       dark=dark_option(dark, base), resample=bool(resample),
                       fill_gaps=bool(fill_gaps), **more)


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
        first_line_bounded(p, size)
        samples, fs, notes, warns, meta = stream_table(p, options)
    else:
        first_line_bounded(p, size)
        lines_bounded(p, size)
        samples, fs, notes, warns, meta = read_table(p, options)
    meta = {"file": name, "file_size_bytes": size, **meta}
    read = _read_record(meta, samples, fs, options, suffix)
    meta["read"] = read.to_dict()
    if options.dark is not None:
        dark, dark_note = _dark_level(options.dark, options, name)
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
                                 meta=meta, read=read)
    return make_capture(samples, fs, label=p.name, source=name, quantity=options.quantity,
                        notes=notes, warnings=warns, meta=meta, read=read)


def _read_record(meta: dict[str, Any], samples: Any, fs: float, options: ReadOptions,
                 suffix: str) -> ReadRecord:
    """What was read: the text reader's account, or one made for a binary format."""
    given = options.sample_rate_hz is not None
    part = dict(meta.pop("read", None) or {})
    if not part:
        fmt = str(meta.get("format", suffix))
        header = {".wav": "the WAV header", ".npy": "column 1 (seconds)"}.get(suffix)
        part = {"layout": fmt, "column": str(meta.get("column", "")),
                "time_base": ("given (sample rate option)" if given or header is None
                              else header),
                "rows_skipped": None, "unit": None}
    return ReadRecord(layout=part["layout"], column=part["column"], unit=part.get("unit"),
                      time_base=part["time_base"], sample_rate_hz=float(fs),
                      samples=int(getattr(samples, "shape", (len(samples),))[0]),
                      rows_skipped=part.get("rows_skipped"),
                      channel_choice=part.get("channel_choice"),
                      channels=tuple(part.get("channels") or ()))


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
    warns = _unnamed_choice(ch, options, name, "raw file")
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


def _dark_number(value: float) -> tuple[float, str]:
    from .assess import MAX_MAGNITUDE

    if not np.isfinite(value):
        raise InputError(f"dark level {value!r} is not a finite number", source="--dark")
    if abs(value) > MAX_MAGNITUDE:
        raise InputError(f"dark level {value:.6g} is beyond any plausible signal "
                         f"(|x| <= {MAX_MAGNITUDE:g})", source="--dark")
    return float(value), f"dark level {float(value):.6g} subtracted"


def _dark_level(dark: float | str, options: ReadOptions,
                capture: str | None = None) -> tuple[float, str]:
    if isinstance(dark, (int, float)):
        return _dark_number(float(dark))
    try:
        value = float(dark)
    except ValueError:
        pass
    else:
        return _dark_number(value)
    if capture is not None:
        try:
            if os.path.samefile(dark, capture):
                raise InputError(f"the dark capture {dark} is the capture itself: give the "
                                 f"capture taken with the light off", source="--dark")
        except OSError:
            pass  # a missing dark file is reported when it is read
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


def _unnamed_choice(count: int, options: ReadOptions, name: str, what: str) -> list[str]:
    """Warn (or, when the choice is required, refuse) when the first of several channels of
    a binary file is taken without being named: it may be the gate drive, not the light."""
    if count < 2 or options.column is not None:
        return []
    if options.require_column:
        raise InputError(f"the {what} holds {count} channels that could be the light and none "
                         f"is named: choose one with column = N in the project file",
                         source=name)
    return [f"the {what} holds {count} channels that could be the light; measured the first: "
            f"name it with --column N to be sure"]


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
    warns: list[str] = header_doubts + _unnamed_choice(
        data.shape[1] if data.ndim == 2 else 1, options, name, "WAV file")
    lazy = _streams(int(data.shape[0]), options) and isinstance(data, np.memmap)
    if np.issubdtype(sig.dtype, np.integer):
        info = np.iinfo(sig.dtype)
        at_rail = 0
        for a in range(0, sig.shape[0], 1 << 22):
            b = np.asarray(sig[a : a + (1 << 22)])
            at_rail += int(np.count_nonzero((b == info.max) | (b == info.min)))
        if clipped_at_rail(int(sig.size), at_rail):
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


def _npy_time_checked(data, fs: float, name: str) -> float:
    """Column 1 of a 2-D ``.npy`` is seconds by convention, with no unit stated: refuse a
    sample count (0, 1, 2, ...) or a rate too slow for light, as for a text table."""
    from .tables import MIN_UNITLESS_RATE_HZ

    head = np.asarray(data[:50, 0], dtype=np.float64)
    if head.size >= 2 and np.all(np.diff(head) == 1) and np.all(head == np.round(head)):
        raise InputError("column 1 counts samples (0, 1, 2, ...), it is not time in seconds: "
                         "give --sample-rate HZ", source=name)
    if fs < MIN_UNITLESS_RATE_HZ:
        raise InputError(f"column 1, read as seconds, gives a sample rate of {fs:.6g} Hz, too "
                         f"slow for light flicker (at least {MIN_UNITLESS_RATE_HZ:g} Hz "
                         f"expected): save time in seconds or give --sample-rate HZ",
                         source=name)
    return fs


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
        choice = _unnamed_choice(data.shape[1] if data.ndim == 2 else 1, options, name,
                                 ".npy array")
        fs = float(options.sample_rate_hz)
        if lazy:
            return (_file_signal(data, p, col - 1), fs, notes, choice,
                    {"format": "NumPy .npy", "column": f"column {col}"})
        x = np.asarray(sig)
    else:
        if data.shape[1] < 2:
            raise InputError("a 2-D .npy needs a time column and a signal column, or "
                             "--sample-rate", source=name)
        opts = options if options.column is not None else ReadOptions(column=2)
        sig, col = _channel(data, opts, name, ".npy array")
        choice = _unnamed_choice(data.shape[1] - 1, options, name, ".npy array")
        if col == 1:
            raise InputError("column 1 of a 2-D .npy is time; choose a signal column",
                             source=name)
        if lazy:
            if options.resample:
                raise InputError("--resample needs the capture in memory; it is too long to "
                                 "stream with resampling", source=name)
            fs = _npy_time_checked(data, _uniform_blocks(_file_signal(data, p, 0), name, 0),
                                   name)
            return (_file_signal(data, p, col - 1), fs, notes, choice,
                    {"format": "NumPy .npy", "column": f"column {col}"})
        t = np.asarray(data[:, 0], dtype=np.float64)
        x, fs, notes = _uniform(t, np.asarray(sig, dtype=np.float64), options.resample, name, 0)
        fs = _npy_time_checked(data, fs, name)
    if x.dtype != np.float64:
        x = x.astype(np.float64)
    if not np.all(np.isfinite(x)):
        i = int(np.flatnonzero(~np.isfinite(x))[0])
        raise InputError(f"sample {i} is not a finite number", source=name)
    return x, fs, notes, choice, {"format": "NumPy .npy", "column": f"column {col}"}
