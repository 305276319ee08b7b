"""The project file: one TOML file describing a product's flicker record.

Layout (every table but ``[product]`` and one of ``[[capture]]``/``[captures]``/
``[drive]`` is optional; paths are relative to the project file)::

    [product]
    name = "Ardent 12 downlight"
    model = "AR12-830-H"
    maker = "Fenlight Works"
    description = "12 W LED downlight, hybrid driver"

    [setup]                      # the measurement set-up, recorded as given
    detector = "Si photodiode, transimpedance amplifier"
    bandwidth_hz = 100000
    distance_m = 0.5
    ambient = "dark room, 23 C"
    operator = "J. Doe"
    judged_on = 2026-11-20       # date the criteria are judged at (default: today)

    [read]                       # how to read every capture (per-capture keys win)
    dark = "dark.csv"            # a level, or a dark capture file
    column = "photodiode (V)"    # name (with or without its bracketed unit) or number
    sample_rate_hz = 50000       # for files without time

    [[capture]]
    level = 100                  # dimming level [% of full output]
    file = "level100.csv"
    column = "CH1"               # the light's column: a name or a 1-based number; needed
                                 # when several columns could be the light
    label = "full output"        # optional

    [captures]                   # or: every matching file, level from the name
    glob = "caps/*.csv"          # (..._level050.csv, ..._50pct.csv)

    [drive]                      # or: a modelled drive instead of captures
    method = "hybrid"            # see `flickerkit drive --help` for the keys
    frequency_hz = 1200
    levels = [100, 50, 20, 5, 1] # dimming levels [%]

    [criteria]
    apply = ["ieee1789-low-risk", "eu-2019-2020-svm"]   # default: the standard set
    file = "house-rules.toml"    # user criteria ([[criterion]] tables)

    [analysis]
    ieee1789_mode = "fundamental"

    [steps]                      # optional brightness table request
    steps = 64
    curve = "cie1976"
    bits = 12
    min = 0.1                    # lowest lit level [%]
    pwm_frequency_hz = 1200
    visible_step = 1.0           # step in L* counted as visible (default 2.3)
"""

from __future__ import annotations

import datetime as _dt
import os
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Mapping

from .errors import SettingsError
from .readers.kinds import CAPTURE_SUFFIXES
from .readers.options import SHARED_SETTINGS
from .validate import Spec, check_table, check_value, require_number

_TOP_KEYS = {"product", "setup", "read", "capture", "captures", "drive", "criteria", "analysis",
             "steps"}
_PRODUCT_KEYS = {"name", "model", "maker", "description"}
_READ_KEYS = set(SHARED_SETTINGS)
_CAPTURE_KEYS = _READ_KEYS | {"level", "file", "label"}
_CRITERIA_KEYS = {"apply", "file"}
_ANALYSIS_KEYS = {"ieee1789_mode", "harmonics"}
_STEPS_KEYS = {"steps", "curve", "bits", "top", "min", "max", "off", "gamma", "min_count",
               "pwm_frequency_hz", "rounding", "visible_step", "target_region"}


def _specs():
    from .readers.units import OPTION_TIME_UNITS
    from .validate import MAX_SAMPLE_RATE_HZ, MAX_STEPS, MAX_FREQUENCY_HZ, Spec

    text = Spec("string")
    read = {"dark": Spec("number|string"), "column": Spec("integer|string", 1, 10_000),
            "sample_rate_hz": Spec("number", 0, MAX_SAMPLE_RATE_HZ, open_low=True),
            "time_unit": Spec("string", choices=OPTION_TIME_UNITS),
            "resample": Spec("bool"), "fill_gaps": Spec("bool")}
    return {
        "product": {k: text for k in _PRODUCT_KEYS},
        "read": read,
        "capture": {**read, "level": Spec("number"), "file": text,  # range: _level
                    "label": text},
        "captures": {"glob": text},
        "criteria": {"apply": Spec("strings"), "file": text},
        "analysis": {"ieee1789_mode": Spec("string", choices=("fundamental", "per-harmonic")),
                     "harmonics": Spec("integer", 1, 1000)},
        "steps": {"steps": Spec("integer", 2, MAX_STEPS), "curve": text,
                  "bits": Spec("integer", 1, 32), "top": Spec("integer", 1, 2 ** 32 - 1),
                  "min": Spec("number", 0, 100), "max": Spec("number", 0, 100, open_low=True),
                  "off": Spec("bool"), "gamma": Spec("number", 0, 10, open_low=True),
                  "min_count": Spec("integer", 0, 2 ** 32 - 1),
                  "pwm_frequency_hz": Spec("number", 0, MAX_FREQUENCY_HZ, open_low=True),
                  "rounding": Spec("string", choices=("distinct", "nearest")),
                  "visible_step": Spec("number", 0, 100, open_low=True),
                  "target_region": Spec("string", choices=("low-risk",
                                                           "no-observable-effect"))},
    }


#: What each project table's keys may hold (types and documented ranges).
SPECS = _specs()
_LEVEL_IN_NAME = (re.compile(r"(?:level|lvl|dim)[ _-]?(\d+(?:[.p]\d+)?)", re.I),
                  re.compile(r"(\d+(?:[.p]\d+)?)\s*(?:%|pct|percent)", re.I))


@dataclass(frozen=True)
class CaptureEntry:
    """One capture listed by a project."""

    file: Path
    level: float | None
    label: str
    read: dict[str, Any]
    #: why the label differs from the one given (two captures shared it), if it does
    label_note: str | None = None


@dataclass(frozen=True)
class Project:
    """A parsed, validated project file."""

    path: Path
    product: dict[str, str]
    setup: dict[str, Any]
    captures: tuple[CaptureEntry, ...]
    drive: dict[str, Any] | None
    drive_levels: tuple[float, ...]
    criteria_ids: tuple[str, ...] | None
    criteria_file: Path | None
    analysis: dict[str, Any]
    steps: dict[str, Any] | None
    judged_on: _dt.date
    raw: dict[str, Any] = field(repr=False, default_factory=dict)


def _unknown(table: Mapping[str, Any], known: set[str], where: str) -> None:
    extra = sorted(set(table) - known)
    if extra:
        raise SettingsError(f"{where}: unknown key(s) {', '.join(extra)}; known: "
                            f"{', '.join(sorted(known))}")


def _table(data: Mapping[str, Any], name: str, where: str) -> dict[str, Any]:
    t = data.get(name, {})
    if not isinstance(t, Mapping):
        raise SettingsError(f"{where}: [{name}] must be a table")
    return dict(t)


def level_from_name(name: str) -> float | None:
    """Dimming level [%] written in a file name (``_level050``, ``_50pct``), if any."""
    for pattern in _LEVEL_IN_NAME:
        m = pattern.search(name)
        if m:
            return float(m.group(1).replace("p", "."))
    return None


def _level(value: Any, where: str) -> float:
    """Check a dimming level in percent, (0, 100] [%]."""
    return require_number(value, where, low=0.0, high=100.0, open_low=True,
                          not_number="{what}: level must be a number of percent, got {value!r}",
                          outside="{what}: level {v:g} % is outside 0-100 %")


def load_project(path: str | Path, *, column: str | int | None = None) -> Project:
    """Read and validate a project file.

    Parameters
    ----------
    path : str or path-like
        Project file (TOML), or a folder of captures.
    column : str or int, optional
        The light's column in every capture of a folder (name or 1-based number); a
        project file names it in its ``[read]`` table instead.

    Raises
    ------
    SettingsError
        Naming the file, the table and the key that is wrong.
    """
    from .readers.sidefile import load_toml

    p = Path(path)
    where = str(p)
    if p.is_dir():
        return project_from_folder(p, column=column)
    if column is not None:
        raise SettingsError(f"{where}: --column is for a folder of captures; a project file "
                            f"names the column in its [read] table or a [[capture]]")
    data = load_toml(p, "project file")
    _unknown(data, _TOP_KEYS, where)
    base = p.parent
    product = _table(data, "product", where)
    _unknown(product, _PRODUCT_KEYS, f"{where} [product]")
    product = check_table(product, SPECS["product"], source=where, name="product")
    if not str(product.get("name", "")).strip():
        raise SettingsError(f"{where}: [product] needs a name")
    product = {k: str(v) for k, v in product.items()}
    setup = _table(data, "setup", where)
    judged = setup.get("judged_on", _dt.date.today())
    judged = check_value(judged, Spec("date"), source=where, table="setup", key="judged_on")
    read = _table(data, "read", where)
    _unknown(read, _READ_KEYS, f"{where} [read]")
    read = check_table(read, SPECS["read"], source=where, name="read")

    entries: list[CaptureEntry] = []
    listed = data.get("capture", [])
    if not isinstance(listed, list):
        raise SettingsError(f"{where}: captures are listed as [[capture]] tables")
    for i, c in enumerate(listed, start=1):
        w = f"{where} [[capture]] {i}"
        if not isinstance(c, Mapping):
            raise SettingsError(f"{w}: must be a table")
        _unknown(c, _CAPTURE_KEYS, w)
        c = check_table(c, SPECS["capture"], source=where, name=f"[capture] {i}")
        if "file" not in c:
            raise SettingsError(f"{w}: needs 'file'")
        f = base / str(c["file"])
        level = _level(c["level"], w) if "level" in c else level_from_name(f.name)
        opts = {**read, **{k: v for k, v in c.items() if k in _READ_KEYS}}
        entries.append(CaptureEntry(f, level, str(c.get("label", f.name)), opts))
    glob = _table(data, "captures", where)
    if glob:
        _unknown(glob, {"glob"}, f"{where} [captures]")
        check_table(glob, SPECS["captures"], source=where, name="captures")
        pattern = str(glob.get("glob", "*"))
        if not pattern.strip() or Path(pattern).is_absolute():
            raise SettingsError(f"{where} [captures] glob: {pattern!r} must be a non-empty "
                                f"pattern relative to the project's folder")
        files = sorted(x for x in base.glob(str(glob.get("glob", "*")))
                       if x.suffix.lower() in CAPTURE_SUFFIXES and x.is_file())
        if not files:
            raise SettingsError(f"{where} [captures]: glob {glob.get('glob')!r} matches no "
                                f"capture files in {base}")
        entries += [CaptureEntry(x, level_from_name(x.name), x.name, dict(read)) for x in files]

    entries = _distinct(entries, where)

    drive = data.get("drive")
    levels: tuple[float, ...] = ()
    if drive is not None:
        if not isinstance(drive, Mapping):
            raise SettingsError(f"{where}: [drive] must be a table")
        drive = dict(drive)
        from .validate import check_drive

        check_drive(drive, source=where, name="drive")
        raw_levels = drive.pop("levels", [100, 50, 20, 10, 5, 1])
        if not isinstance(raw_levels, list) or not raw_levels:
            raise SettingsError(f"{where} [drive]: levels must be a list of percentages")
        levels = tuple(_level(x, f"{where} [drive]") for x in raw_levels)
    if not entries and drive is None:
        raise SettingsError(f"{where}: lists no captures ([[capture]] or [captures]) and no "
                            f"[drive]")
    if entries and drive is not None:
        raise SettingsError(f"{where}: give captures or a [drive], not both")

    crit = _table(data, "criteria", where)
    _unknown(crit, _CRITERIA_KEYS, f"{where} [criteria]")
    crit = check_table(crit, SPECS["criteria"], source=where, name="criteria")
    ids = crit.get("apply")
    if ids is not None and (not isinstance(ids, list) or not all(isinstance(x, str) for x in ids)):
        raise SettingsError(f"{where} [criteria]: apply must be a list of criterion ids")
    analysis = _table(data, "analysis", where)
    _unknown(analysis, _ANALYSIS_KEYS, f"{where} [analysis]")
    analysis = check_table(analysis, SPECS["analysis"], source=where, name="analysis")
    steps = data.get("steps")
    if steps is not None:
        if not isinstance(steps, Mapping):
            raise SettingsError(f"{where}: [steps] must be a table")
        _unknown(steps, _STEPS_KEYS, f"{where} [steps]")
        steps = check_table(steps, SPECS["steps"], source=where, name="steps")
    return Project(
        path=p, product=product, setup=setup, captures=tuple(entries), drive=drive,
        drive_levels=levels, criteria_ids=tuple(ids) if ids else None,
        criteria_file=(base / str(crit["file"])) if "file" in crit else None,
        analysis=analysis, steps=steps, judged_on=judged, raw=data,
    )


def _level_text(level: float | None) -> str:
    return "no level" if level is None else f"level {level:g} %"


def _distinct(entries: list[CaptureEntry], where: str = "") -> list[CaptureEntry]:
    """Give captures that share a label labels of their own.

    Two captures share a label when one name stands in two folders or a file is listed
    twice; with labels of their own none hides another in the record. One file (any
    spelling, hard link) listed at two dimming levels is refused: it would forge a level's
    row.
    """
    from dataclasses import replace

    from .labels import unique_labels

    seen: dict[tuple[int, int], tuple[int, CaptureEntry]] = {}
    for i, e in enumerate(entries, start=1):
        try:
            st = os.stat(e.file)
        except OSError:
            continue  # reported when the capture is read
        key = (st.st_dev, st.st_ino)
        if key in seen and seen[key][1].level != e.level:
            j, first = seen[key]
            raise SettingsError(
                f"{where} [[capture]] {j} ({first.file}, {_level_text(first.level)}) and "
                f"[[capture]] {i} ({e.file}, {_level_text(e.level)}) are the same file: one "
                f"capture cannot record two dimming levels; correct the file name")
        seen.setdefault(key, (i, e))
    labels, notes = unique_labels([e.label for e in entries], [str(e.file) for e in entries])
    return [e if note is None else replace(e, label=lab, label_note=note)
            for e, lab, note in zip(entries, labels, notes)]


def project_from_folder(folder: Path, *, column: str | int | None = None) -> Project:
    """Make a project of every capture file in a folder (levels from the file names).

    ``column`` (name or 1-based number) is the light's column in every capture.
    """
    files = sorted(x for x in folder.iterdir()
                   if x.suffix.lower() in CAPTURE_SUFFIXES and x.is_file()
                   and "dark" not in x.name.lower())
    if not files:
        raise SettingsError(f"{folder}: holds no capture files ({', '.join(CAPTURE_SUFFIXES)})")
    return Project(
        path=folder, product={"name": folder.resolve().name}, setup={},
        captures=tuple(CaptureEntry(x, level_from_name(x.name), x.name,
                                    {} if column is None else {"column": column})
                       for x in files),
        drive=None, drive_levels=(), criteria_ids=None, criteria_file=None, analysis={},
        steps=None, judged_on=_dt.date.today(),
    )
