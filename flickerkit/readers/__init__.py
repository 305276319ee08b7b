"""Reading captures: text tables, WAV, NumPy and raw binary files into a :class:`Capture`.

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
sample rate is given. Raw binary files (``.raw``, ``.bin``) need their sample
format and rate. pandas is imported only to parse a text table.

Modules, one concept each: :mod:`.options` (:class:`ReadOptions` and its one
builder), :mod:`.dispatch` (file kind to reader), :mod:`.result` (the
:class:`FormatRead` every reader returns), :mod:`.wav`, :mod:`.npy`,
:mod:`.raw`, :mod:`.channels` (a binary file's channel), :mod:`.filesignal`
(long captures read in slices), :mod:`.dark`; text tables in
:mod:`.table_layout` (the :class:`TableLayout`), :mod:`.table_sniff`,
:mod:`.table_time`, :mod:`.table_channel`, :mod:`.table_read`, :mod:`.units`,
:mod:`.linebounds`, :mod:`.streamfolder`; :mod:`.timebase` (uniform time) and
:mod:`.sidefile` (project, drive, criteria and other small side files).
"""

from __future__ import annotations

from .dispatch import RAW_SUFFIXES, read_capture
from .filesignal import FileSignal
from .linebounds import MAX_LINE_BYTES
from .options import (STREAM_ABOVE_SAMPLES, STREAM_ABOVE_TEXT_BYTES, ReadOptions,
                      build_read_options, dark_option)
from .result import FormatRead
from .streamfolder import STREAM_FOLDER_PREFIX
from .table_layout import TableLayout, table_layout
from .table_time import TimeBase
from .units import TIME_UNITS

__all__ = ["FileSignal", "FormatRead", "MAX_LINE_BYTES", "RAW_SUFFIXES", "ReadOptions",
           "STREAM_ABOVE_SAMPLES", "STREAM_ABOVE_TEXT_BYTES", "STREAM_FOLDER_PREFIX",
           "TIME_UNITS", "TableLayout", "TimeBase", "build_read_options", "dark_option",
           "read_capture", "table_layout"]
