"""The channel (column) of a binary capture: numbered and checked.

Several that could be the light and none named: a warning, or a refusal
when the choice is required.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError
from .options import ReadOptions


def channel_of(data: np.ndarray, options: ReadOptions, name: str,
               what: str) -> tuple[np.ndarray, int]:
    """Pick the column that ``options.column`` names from a 1-D or 2-D array.

    Returns the column and its 1-based number.
    """
    if data.ndim == 1:
        if options.column not in (None, 1, "1"):
            raise InputError(f"{what} has one {what == 'WAV file' and 'channel' or 'column'}; "
                             f"column {options.column!r} does not exist", source=name)
        return data, 1
    col = column_number(options.column, data.shape[1], what, name)
    return data[:, col - 1], col


def unnamed_choice(count: int, options: ReadOptions, name: str, what: str) -> list[str]:
    """Return the warnings when the first of several channels of a binary file is taken unnamed.

    It may be the gate drive, not the light; when the choice is required
    (``require_column``) it is refused instead.
    """
    if count < 2 or options.column is not None:
        return []
    if options.require_column:
        raise InputError(f"the {what} holds {count} channels that could be the light and none "
                         f"is named: choose one with column = N in the project file",
                         source=name)
    return [f"the {what} holds {count} channels that could be the light; measured the first: "
            f"name it with --column N to be sure"]


def column_number(column, k: int, what: str, name: str) -> int:
    """Check a 1-based column (channel) number of a binary file against its ``k`` columns."""
    col = column if column is not None else 1
    try:
        col = int(col)
    except (TypeError, ValueError):
        raise InputError(f"{what} columns are numbered 1 to {k}; got {column!r}",
                         source=name) from None
    if not 1 <= col <= k:
        raise InputError(f"column {col} does not exist: the {what} has {k}", source=name)
    return col

