"""Kinds of capture file, told by suffix (standard library only)."""

from __future__ import annotations

#: Raw binary suffixes (the sample format and rate are given, never read from the file).
RAW_SUFFIXES = (".raw", ".bin")
#: Captures a folder or a project's glob picks up: text tables, WAV and NumPy files. Raw
#: binaries need their sample format given, so they are named one by one; any other suffix
#: named on its own is read as a text table.
CAPTURE_SUFFIXES = (".csv", ".txt", ".tsv", ".dat", ".wav", ".npy")
