"""Drive files: a drive description (TOML, or a project's ``[drive]`` table) -> :class:`Drive`.

The edge between a parsed TOML mapping and the drive models: every key is named in
the message when it is unknown or its value impossible. The models
(:mod:`flickerkit.drive`) check the physics; :func:`flickerkit.validate.check_drive`
the upper ends of counts and frequencies.
"""

from __future__ import annotations

from dataclasses import fields
from typing import Any, Mapping

from .drive import Drive, Edges
from .errors import SettingsError
from .light import Ripple

_EDGE_KEYS = {f.name for f in fields(Edges)}
_RIPPLE_KEYS = {f.name for f in fields(Ripple)}
_DRIVE_KEYS = {f.name for f in fields(Drive)} - {"edges", "ripple"}


def drive_from_mapping(data: Mapping[str, Any], *, source: str = "drive description") -> Drive:
    """Build a :class:`Drive` from a mapping (a parsed TOML drive file).

    Top-level keys are :class:`Drive`'s fields (``method``, ``frequency_hz``,
    ``off_level``, ...); optional tables ``[edges]`` (``kind``, ``rise_s``,
    ``fall_s``) and ``[ripple]`` (``percent``, ``line_frequency_hz``,
    ``shape``, ``phase_deg``). A ``[drive]`` table holding all of this is
    accepted too.

    Raises
    ------
    SettingsError
        On an unknown key or an impossible value, naming it and ``source``.
    """
    d = dict(data)
    if set(d) <= {"drive", "levels"} and isinstance(d.get("drive"), Mapping):
        d = dict(d["drive"])
    d.pop("levels", None)

    def table(name: str, keys: set[str]) -> dict[str, Any] | None:
        t = d.pop(name, None)
        if t is None:
            return None
        if not isinstance(t, Mapping):
            raise SettingsError(f"{source}: [{name}] must be a table")
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
        d["phase_offsets_deg"] = tuple(float(p) for p in d["phase_offsets_deg"])
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



__all__ = ["drive_from_mapping"]
