"""Drive files: a drive description (TOML, or a project's ``[drive]`` table) -> :class:`Drive`.

The edge between a parsed TOML mapping and the drive models: every key is named in
the message when it is unknown or its value impossible. The models
(:mod:`flickerkit.drive`) check the physics; :func:`flickerkit.validate.check_drive`
the upper ends of counts and frequencies.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, fields
from typing import Any, Mapping

from .drive import Drive, Edges
from .errors import SettingsError
from .light import Ripple
from .validate import Spec, check_drive, check_value

_EDGE_KEYS = {f.name for f in fields(Edges)}
_RIPPLE_KEYS = {f.name for f in fields(Ripple)}
_DRIVE_KEYS = {f.name for f in fields(Drive)} - {"edges", "ripple"}


@dataclass(frozen=True)
class DriveFile:
    """A drive file as read: the drive's keys and the dimming levels it lists.

    Attributes
    ----------
    data : dict
        The drive's keys (``[edges]`` and ``[ripple]`` as tables), without ``levels``.
    levels : list or str or None
        ``levels`` as written: a list of percents, a range text (``"100:0.1:200"``),
        or None when the file lists none [percent].
    """

    data: dict[str, Any]
    levels: Any


def drive_table(data: Mapping[str, Any], *, source: str) -> DriveFile:
    """The drive's keys and levels of a drive mapping (a file, before options override it).

    The keys stand at the top, or in a ``[drive]`` table (as in a project file) with
    ``levels`` inside it or beside it; other keys beside a ``[drive]`` table are refused,
    never dropped. The values are checked by :func:`drive_from_mapping`.

    Raises
    ------
    SettingsError
        Keys beside ``[drive]``; ``levels`` given both beside and inside it, or more of
        them than :data:`flickerkit.validate.MAX_LEVELS`; ``edges`` or ``ripple`` not a
        table.
    """
    d = dict(data)
    if isinstance(d.get("drive"), Mapping):
        beside = sorted(set(d) - {"drive", "levels"})
        if beside:
            raise SettingsError(f"{source}: {', '.join(beside)} beside the [drive] table; "
                                f"put every drive key in [drive], or none")
        inner = dict(d["drive"])
        if "levels" in d and "levels" in inner:
            raise SettingsError(f"{source}: levels are given twice, beside [drive] and in "
                                f"it; keep one")
        if "levels" in d:
            inner["levels"] = d["levels"]
        d = inner
    check_drive({"levels": d["levels"]} if "levels" in d else {}, source=source)
    for name in ("edges", "ripple"):
        if d.get(name) is not None and not isinstance(d[name], Mapping):
            raise SettingsError(f"{source}: [{name}] must be a table")
    return DriveFile(d, d.pop("levels", None))


def read_drive_file(path: str | os.PathLike[str]) -> DriveFile:
    """Read a drive file (TOML): its drive keys and levels (see :func:`drive_table`).

    Raises
    ------
    SettingsError
        An unreadable or invalid file, or the refusals of :func:`drive_table`, naming
        the file.
    """
    from .readers.sidefile import load_toml

    return drive_table(load_toml(path, "drive file"), source=str(path))


def drive_from_mapping(data: Mapping[str, Any], *, source: str = "drive description") -> Drive:
    """Build a :class:`Drive` from a mapping (a parsed TOML drive file).

    Top-level keys are :class:`Drive`'s fields (``method``, ``frequency_hz``,
    ``off_level``, ...); optional tables ``[edges]`` (``kind``, ``rise_s``,
    ``fall_s``) and ``[ripple]`` (``percent``, ``line_frequency_hz``,
    ``shape``, ``phase_deg``). A ``[drive]`` table holding all of this is
    accepted too; ``levels`` are left to the caller (:func:`drive_table`).

    Raises
    ------
    SettingsError
        On an unknown key or an impossible value, naming it and ``source``.
    """
    d = drive_table(data, source=source).data
    check_drive(d, source=source)

    def table(name: str, keys: set[str]) -> dict[str, Any] | None:
        t = d.pop(name, None)
        if t is None:
            return None
        unknown = sorted(set(t) - keys)
        if unknown:
            raise SettingsError(f"{source}: unknown key(s) {', '.join(unknown)} in [{name}]; "
                                f"known: {', '.join(sorted(keys))}")
        return dict(t)

    edges = table("edges", _EDGE_KEYS)
    ripple = table("ripple", _RIPPLE_KEYS)
    unknown = sorted(set(d) - _DRIVE_KEYS)
    if unknown:
        raise SettingsError(f"{source}: unknown key(s) {', '.join(unknown)}; known: "
                            f"{', '.join(sorted(_DRIVE_KEYS | {'edges', 'ripple'}))}")
    if "phase_offsets_deg" in d:
        phases = d["phase_offsets_deg"]
        phases = list(phases) if isinstance(phases, tuple) else phases
        phases = check_value(phases, Spec("numbers"), source=source, table=None,
                             key="phase_offsets_deg")
        d["phase_offsets_deg"] = tuple(float(p) for p in phases)
    try:
        if edges is not None:
            d["edges"] = Edges(**edges)
        if ripple is not None:
            d["ripple"] = Ripple(**ripple)
        return Drive(**d)
    except SettingsError as exc:
        raise SettingsError(f"{source}: {exc}") from None
    except TypeError as exc:
        raise SettingsError(f"{source}: {exc}") from None


__all__ = ["DriveFile", "drive_from_mapping", "drive_table", "read_drive_file"]
