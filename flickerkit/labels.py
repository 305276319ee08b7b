"""Labels that tell captures apart: no two captures of a run share a name in a record.

Two files of the same name in different folders, or one file listed twice, would otherwise
collapse into one column of a summary while two were measured.
"""

from __future__ import annotations

import os
from collections import defaultdict
from pathlib import PurePath
from typing import Sequence


def unique_labels(labels: Sequence[str], paths: Sequence[str]
                  ) -> tuple[list[str], list[str | None]]:
    """Make every label distinct, using the folders of the files behind them.

    Parameters
    ----------
    labels : sequence of str
        Label of each capture (often its file name).
    paths : sequence of str
        The capture files, in the same order.

    Returns
    -------
    labels : list of str
        Unchanged where unique. A colliding file-name label becomes the
        shortest tail of its path that tells the files apart (``a/cap.csv``,
        ``b/cap.csv``); another colliding label gets that tail in brackets.
        The same file listed again gets ``#2``, ``#3``...
    notes : list of str or None
        For each changed label, the sentence that says why (for the record).
    """
    out = list(labels)
    notes: list[str | None] = [None] * len(out)
    groups: dict[str, list[int]] = defaultdict(list)
    for i, lab in enumerate(out):
        groups[lab].append(i)
    for lab, idx in groups.items():
        if len(idx) < 2:
            continue
        parts = [PurePath(os.path.abspath(paths[i])).parts for i in idx]
        depth = 1
        longest = max(len(p) for p in parts)
        while depth < longest and len({p[-depth:] for p in parts}) < len(
                {p for p in parts}):
            depth += 1
        for i, p in zip(idx, parts):
            tail = "/".join(p[-depth:]) if depth > 1 or lab != p[-1] else p[-1]
            if lab == p[-1]:
                out[i] = tail if depth > 1 else lab
            else:
                out[i] = f"{lab} ({tail})"
        seen: dict[str, int] = defaultdict(int)
        for i in idx:
            seen[out[i]] += 1
            if seen[out[i]] > 1:
                out[i] = f"{out[i]} #{seen[out[i]]}"
        for i in idx:
            notes[i] = (f"label {lab!r} is shared by {len(idx)} captures; this one "
                        f"({paths[i]}) is shown as {out[i]!r}")
    # a renamed label may now equal another original one: resolve by numbering
    final: dict[str, int] = defaultdict(int)
    for i, lab in enumerate(out):
        final[lab] += 1
        if final[lab] > 1:
            out[i] = f"{lab} #{final[lab]}"
            notes[i] = notes[i] or (f"label {labels[i]!r} is shared by other captures; this "
                                    f"one ({paths[i]}) is shown as {out[i]!r}")
    return out, notes
