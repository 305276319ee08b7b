"""Reading side files (project, drive, criteria, calibration, curve and transfer files).

They get the care captures get: regular files only, a size bound before
reading, the encoding detected.

A device (``/dev/zero``), a FIFO or a socket is refused at once without blocking: the file is
opened with ``O_NONBLOCK`` and checked with ``fstat`` before a byte is read. Text is UTF-8 (with
or without a byte-order mark) or UTF-16/UTF-32 with a byte-order mark; anything else is refused
with one line naming the file and the first byte that is not text.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path
from typing import Any

from ..errors import SettingsError
from ..fileio import note_input
from ..validate import MAX_SIDE_FILE_BYTES

_BOMS = (
    (b"\xef\xbb\xbf", "utf-8-sig"),
    (b"\xff\xfe\x00\x00", "utf-32"),
    (b"\x00\x00\xfe\xff", "utf-32"),
    (b"\xff\xfe", "utf-16"),
    (b"\xfe\xff", "utf-16"),
)


def read_bytes(path: str | os.PathLike[str], what: str, *,
               limit: int = MAX_SIDE_FILE_BYTES) -> bytes:
    """The bytes of a small regular file, refused at once if it is anything else.

    Parameters
    ----------
    path : str or path-like
    what : str
        What the file is (``"criteria file"``), for messages.
    limit : int
        Largest size read [bytes].

    Raises
    ------
    SettingsError
        ``"<file>: cannot read the <what> (...)"`` for a missing or unreadable
        file, a folder, a device or FIFO, or a file above ``limit``.
    """
    name = os.fspath(path)
    note_input(name)
    try:
        st = os.stat(name)
    except FileNotFoundError:
        raise SettingsError(f"{name}: cannot read {what}: no such file") from None
    except OSError as exc:
        raise SettingsError(f"{name}: cannot read {what} ({exc.strerror or exc})") from None
    _regular(st.st_mode, name, what)
    try:
        fd = os.open(name, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
    except OSError as exc:
        raise SettingsError(f"{name}: cannot read {what} ({exc.strerror or exc})") from None
    try:
        st = os.fstat(fd)  # the file opened may not be the one stat() saw
        _regular(st.st_mode, name, what)
        if st.st_size > limit:
            raise SettingsError(f"{name}: the {what} is {st.st_size} bytes, above the limit of "
                                f"{limit} bytes ({limit >> 20} MiB); is it the right file?")
        with os.fdopen(fd, "rb", closefd=True) as fh:
            fd = -1
            data = fh.read(limit + 1)
    except OSError as exc:
        raise SettingsError(f"{name}: cannot read {what} ({exc.strerror or exc})") from None
    finally:
        if fd >= 0:
            os.close(fd)
    if len(data) > limit:  # grew while reading
        raise SettingsError(f"{name}: the {what} is above the limit of {limit} bytes")
    return data


def _regular(mode: int, name: str, what: str) -> None:
    if stat.S_ISREG(mode):
        return
    kind = ("a folder" if stat.S_ISDIR(mode) else "a FIFO (named pipe)" if stat.S_ISFIFO(mode)
            else "a device" if stat.S_ISCHR(mode) or stat.S_ISBLK(mode)
            else "a socket" if stat.S_ISSOCK(mode) else "not a regular file")
    raise SettingsError(f"{name}: cannot read {what}: it is {kind}, not a regular file")


def decode(data: bytes, name: str, what: str) -> str:
    """Text of a side file: UTF-8 (BOM optional) or UTF-16/32 with a BOM; else one line."""
    for bom, codec in _BOMS:
        if data.startswith(bom):
            try:
                return data.decode(codec)
            except UnicodeDecodeError as exc:
                raise SettingsError(f"{name}: the {what} starts with a {codec.upper()} "
                                    f"byte-order mark but byte {exc.start} is not "
                                    f"{codec.upper()}") from None
    if b"\x00" in data[:4096]:
        raise SettingsError(f"{name}: the {what} holds NUL bytes: not a text file (UTF-16 "
                            f"needs a byte-order mark)")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise SettingsError(f"{name}: the {what} is not UTF-8 text (byte {exc.start} is "
                            f"0x{data[exc.start]:02x}); save it as UTF-8") from None


def read_text(path: str | os.PathLike[str], what: str, *,
              limit: int = MAX_SIDE_FILE_BYTES) -> str:
    """Checked text of a side file (see :func:`read_bytes` and :func:`decode`)."""
    return decode(read_bytes(path, what, limit=limit), os.fspath(path), what)


def load_toml(path: str | os.PathLike[str], what: str) -> dict[str, Any]:
    """A side file parsed as TOML, with one-line errors naming the file."""
    import tomllib

    text = read_text(path, what)
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SettingsError(f"{Path(path)}: the {what} is not valid TOML ({exc})") from None


__all__ = ["read_bytes", "read_text", "decode", "load_toml"]
