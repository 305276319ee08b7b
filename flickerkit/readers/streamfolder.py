"""Temporary folders of streamed text captures, named for the run and the capture.

Folders left by a killed run are removed by the next streamed read.
"""

from __future__ import annotations

import os
import re
from pathlib import Path


#: Temporary folders of streamed text captures: ``flickerkit-stream-<pid>-<capture>-*`` in
#: the system's temporary folder (which the system cleans); one left by a killed run is
#: removed by the next streamed read once its process is gone.
STREAM_FOLDER_PREFIX = "flickerkit-stream-"


def stream_folder(p: Path) -> Path:
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
