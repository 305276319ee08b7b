"""Writing output files safely: a temporary file in the same folder, then a rename.

An interrupted or failed run never leaves a half-written file, and never
replaces an existing file unless asked to.
"""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path
from typing import Callable, Iterable, Iterator

from .errors import OutputError

#: Files this run reads, keyed by (device, inode) and by resolved path: an output may never
#: be one of them (see :func:`note_input`).
_INPUTS: dict[object, str] = {}


def note_input(path: str | os.PathLike[str]) -> None:
    """Record ``path`` as an input of this run; no output may then replace it.

    Readers call this for every file they open (captures, dark captures,
    project, drive, criteria, calibration and curve files), and the command
    line for every input it is given, before anything is written. The file is
    known by its resolved path and, when it exists, by its device and inode, so
    a relative spelling, ``./``, a symbolic link or a hard link is the same
    file.
    """
    text = os.fspath(path)
    if not text:
        return
    p = Path(text)
    try:
        _INPUTS.setdefault(("path", str(p.resolve())), text)
    except (OSError, RuntimeError):
        pass
    try:
        st = os.stat(p)
    except (OSError, ValueError):
        return
    _INPUTS.setdefault(("inode", st.st_dev, st.st_ino), text)


def forget_inputs() -> None:
    """Start a new run: forget the inputs recorded so far."""
    _INPUTS.clear()


def input_named_by(path: str | os.PathLike[str],
                   inputs: "Iterable[str | os.PathLike[str]]" = ()) -> str | None:
    """Return the input (as it was given) that ``path`` names, or None.

    Compares resolved paths, and device and inode numbers when the output
    already exists, with every recorded input and with ``inputs``.
    """
    for extra in inputs:
        note_input(extra)
    p = Path(os.fspath(path))
    try:
        hit = _INPUTS.get(("path", str(p.resolve())))
    except (OSError, RuntimeError):
        hit = None
    if hit is not None:
        return hit
    try:
        st = os.stat(p)
    except (OSError, ValueError):
        return None
    return _INPUTS.get(("inode", st.st_dev, st.st_ino))


def _refuse_input(p: Path, inputs=()) -> None:
    hit = input_named_by(p, inputs)
    if hit is not None:
        same = "" if os.fspath(hit) == str(p) else f" ({hit})"
        raise OutputError(f"{p}: is an input of this run{same}; an input is never replaced, "
                          f"even with --force; choose another output name")


def check_writable(path: str | os.PathLike[str], *, force: bool = False,
                   inputs: Iterable[str | os.PathLike[str]] = ()) -> Path:
    """Check, before any work is done, that ``path`` can be created.

    Parameters
    ----------
    path : str or path-like
        Output file.
    force : bool
        Allow replacing an existing file (never an input: see :func:`note_input`).
    inputs : iterable of paths
        Further inputs of the run, recorded before the check.

    Returns
    -------
    pathlib.Path

    Raises
    ------
    OutputError
        If the folder does not exist or is not writable, the path is a folder,
        the file exists and ``force`` is false, or the file is an input of
        the run (whatever the spelling, with or without ``force``).
    """
    p = Path(path)
    _refuse_input(p, inputs)
    folder = p.parent if str(p.parent) else Path(".")
    if p.is_dir():
        raise OutputError(f"{p}: is a folder; give a file name")
    if p.exists() and not p.is_file():
        raise OutputError(f"{p}: is not a regular file; give a file name to write")
    if p.exists() and not force:
        raise OutputError(f"{p}: exists; use --force to replace it")
    if not folder.is_dir():
        raise OutputError(f"{p}: folder {folder} does not exist")
    if not os.access(folder, os.W_OK):
        raise OutputError(f"{p}: folder {folder} is not writable")
    return p


@contextlib.contextmanager
def atomic_path(path: str | os.PathLike[str], *, force: bool = False) -> Iterator[Path]:
    """Yield a temporary path beside ``path``; rename it onto ``path`` on success.

    On any exception (including KeyboardInterrupt) the temporary file is
    removed and ``path`` is left as it was.
    """
    p = Path(path)
    check_writable(p, force=force)
    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".part", dir=p.parent or ".")
    os.close(fd)
    tmp_path = Path(tmp)
    try:
        yield tmp_path
        if p.exists() and not force:
            raise OutputError(f"{p}: appeared while writing; use --force to replace it")
        _refuse_input(p)
        # mkstemp makes the file private (0600); give it the mode of the file it replaces,
        # or what a plain open() would have given under the user's umask
        os.chmod(tmp_path, _replaced_mode(p))
        os.replace(tmp_path, p)
    except OSError as exc:
        tmp_path.unlink(missing_ok=True)
        if isinstance(exc, OutputError):
            raise
        raise OutputError(f"{p}: cannot be written ({exc.strerror or exc})") from None
    except BaseException:
        tmp_path.unlink(missing_ok=True)
        raise


def _replaced_mode(p: Path) -> int:
    """Return a new output's permission bits: the existing file's, else 0666 less the umask."""
    try:
        return p.stat().st_mode & 0o7777
    except OSError:
        mask = os.umask(0)
        os.umask(mask)
        return 0o666 & ~mask


def write_text(path: str | os.PathLike[str], text: str, *, force: bool = False) -> Path:
    """Write text atomically (UTF-8, LF line ends)."""
    with atomic_path(path, force=force) as tmp:
        with open(tmp, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
    return Path(path)


def write_with(path: str | os.PathLike[str], writer: Callable[[Path], None], *,
               force: bool = False) -> Path:
    """Call ``writer(tmp_path)`` and move the result onto ``path`` atomically."""
    with atomic_path(path, force=force) as tmp:
        writer(tmp)
    return Path(path)
