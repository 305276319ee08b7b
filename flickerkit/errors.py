"""The project's error and warning classes.

Every problem a user can cause (a bad file, an impossible setting) raises a
subclass of :class:`FlickerkitError`; the command line turns it into one line on
stderr and a non-zero exit. A result that is usable but doubtful (too few
periods, clipping suspected, a low sample rate) is signalled with a
:class:`FlickerkitWarning` subclass, which :func:`flickerkit.assess.assess`
collects into the result so that it reaches every report.
"""

from __future__ import annotations


class FlickerkitError(Exception):
    """Base class of every error the project raises on purpose."""


class InputError(FlickerkitError, ValueError):
    """An input file or value is unusable.

    Parameters
    ----------
    message : str
        What is wrong and, where possible, how to fix it.
    source : str, optional
        File name (or option name) the problem is in.
    line : int, optional
        1-based line number in a text file.
    column : str, optional
        Column name or number.
    """

    def __init__(
        self,
        message: str,
        *,
        source: str | None = None,
        line: int | None = None,
        column: str | None = None,
    ) -> None:
        self.message = message
        self.source = source
        self.line = line
        self.column = column
        super().__init__(self.__str__())

    def __str__(self) -> str:
        where = []
        if self.source:
            where.append(str(self.source))
        if self.line is not None:
            where.append(f"line {self.line}")
        if self.column is not None:
            col = str(self.column)
            # a column without a name is labelled "column N" already
            where.append(col if col.startswith("column ") else f"column {col}")
        return (": ".join([", ".join(where), self.message]) if where else self.message)


class SettingsError(FlickerkitError, ValueError):
    """A setting (command-line option, drive description, project file entry) is impossible."""


class OutputError(FlickerkitError, OSError):
    """An output file cannot be written (missing folder, no permission, disk full, exists)."""


class FlickerkitWarning(UserWarning):
    """A result is usable but should not be taken at face value."""


class CaptureWarning(FlickerkitWarning):
    """Something about a capture limits its figures (short, clipped, noisy, undersampled)."""
