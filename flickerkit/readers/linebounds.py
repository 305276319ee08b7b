"""Bounds on the lines of a text capture.

A file of one endless line is refused before the parser holds it in memory.
"""

from __future__ import annotations

import io
from pathlib import Path

from ..errors import InputError


#: Longest line of a text table [bytes]; a capture holds one sample (a few fields) per line.
MAX_LINE_BYTES = 1 << 20
#: Text tables read into memory are scanned for long lines above this size [bytes].
SCAN_LINES_ABOVE_BYTES = 64 << 20


def first_line_bounded(p: Path, size: int) -> None:
    """Refuse at once a text table whose first line is longer than :data:`MAX_LINE_BYTES`.

    A file of one long line would be parsed into memory as one row of millions of fields.
    """
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
    raw = LineBounded(p)
    buf = bytearray(MAX_LINE_BYTES)
    try:
        while raw.readinto(buf):
            pass
    finally:
        raw.close()


class LineBounded(io.RawIOBase):
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


