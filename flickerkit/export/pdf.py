"""A PDF of a workbook through LibreOffice, when it is installed.

``soffice --headless --convert-to pdf`` prints each sheet with the page set-up
the workbook carries. The conversion runs in a private profile folder (so a
running LibreOffice is not disturbed) and the PDF is moved into place only
when complete.
"""

from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

from ..errors import OutputError

#: Longest a conversion may take [s].
TIMEOUT_S = 180.0


def soffice() -> str | None:
    """Path of the LibreOffice command, or None when it is not installed."""
    return shutil.which("soffice") or shutil.which("libreoffice")


def workbook_to_pdf(workbook: str | Path, pdf: str | Path, *, force: bool = False) -> Path:
    """Convert ``workbook`` to ``pdf``.

    Raises
    ------
    OutputError
        When LibreOffice is missing, fails or times out, or ``pdf`` exists
        without ``force``; no partial PDF is left.
    """
    exe = soffice()
    target = Path(pdf)
    if exe is None:
        raise OutputError(f"{target}: no PDF written: LibreOffice ('soffice') is not installed; "
                          f"the workbook prints as it is, or install LibreOffice and run again")
    if target.exists() and not force:
        raise OutputError(f"{target}: exists; use --force to replace it")
    with tempfile.TemporaryDirectory(prefix="flickerkit-pdf-") as tmp:
        profile = Path(tmp) / "profile"
        try:
            subprocess.run([exe, f"-env:UserInstallation={profile.as_uri()}", "--headless",
                            "--convert-to", "pdf", "--outdir", tmp, str(workbook)],
                           check=True, capture_output=True, timeout=TIMEOUT_S)
        except subprocess.TimeoutExpired:
            raise OutputError(f"{target}: LibreOffice took longer than {TIMEOUT_S:g} s; "
                              f"no PDF written") from None
        except (subprocess.CalledProcessError, OSError) as exc:
            raise OutputError(f"{target}: LibreOffice could not convert the workbook "
                              f"({exc}); no PDF written") from None
        made = Path(tmp) / (Path(workbook).stem + ".pdf")
        if not made.is_file():
            raise OutputError(f"{target}: LibreOffice wrote no PDF; no PDF written")
        try:
            shutil.move(str(made), str(target))
        except OSError as exc:
            raise OutputError(f"{target}: cannot be written ({exc.strerror})") from None
    return target
