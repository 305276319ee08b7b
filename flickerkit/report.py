"""A product's flicker record: captures (or a drive) -> figures -> verdicts.

``build_report`` adds judging and provenance to what ``measure`` and ``drive``
already compute; it computes no metric of its own.
"""

from __future__ import annotations

import datetime as _dt
import functools
import hashlib
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any, Callable

from . import __version__, cautions, criteria
from .criteria import Verdict  # the Report field ``criteria`` hides the module in its body
from .errors import FlickerkitError, SettingsError
from .project import Project

if TYPE_CHECKING:  # pragma: no cover - types only
    from .assess import Assessment
    from .judgement import GroupOutcome

#: Cautions every report carries (summary sheet and terminal); text in :mod:`flickerkit.cautions`.
CAUTIONS = cautions.REPORT


@dataclass(frozen=True)
class Report:
    """Everything a report shows, computed once.

    ``records`` are the captures' (or drive levels') JSON objects, the form the
    edges read (workbook, pictures, ``--json``); the verdicts were judged on the
    typed assessments (:func:`judge_capture`). Levels are percent, as the
    project file gives them.
    """

    project: Project
    records: tuple[dict[str, Any], ...]
    failures: tuple[tuple[str, str], ...]
    criteria: tuple[criteria.Criterion, ...]
    verdicts: tuple[Verdict, ...]
    overall: str
    inputs: tuple[dict[str, Any], ...]
    settings: dict[str, Any]
    steps: Any = None
    groups: tuple[GroupOutcome, ...] = ()
    run_at: str = field(default_factory=lambda: _dt.datetime.now(_dt.timezone.utc)
                        .strftime("%Y-%m-%d %H:%M:%S UTC"))

    def verdicts_for(self, criterion_id: str) -> list[Verdict]:
        """Return the verdicts of one criterion, in the order of :attr:`verdicts`."""
        return [v for v in self.verdicts if v.criterion == criterion_id]

    @property
    def limiting(self) -> str:
        """Say what limits the product, in plain words (see :func:`.judgement.limiting_text`)."""
        from .judgement import limiting_text

        return limiting_text(self.groups)

    def to_dict(self) -> dict[str, Any]:
        """Return the JSON object of the report (``--json``), with its cautions."""
        return {
            "product": self.project.product,
            "judged_on": self.project.judged_on.isoformat(),
            "overall": self.overall,
            "by_kind": [g.to_dict() for g in self.groups],
            "limiting": self.limiting,
            "verdicts": [v.to_dict() for v in self.verdicts],
            "records": list(self.records),
            "failures": [{"label": a, "error": b} for a, b in self.failures],
            "cautions": list(CAUTIONS),
        }


def sha256(path: Path) -> str:
    """Return the SHA-256 of a file (hex), read in 1 MiB blocks."""
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for block in iter(lambda: fh.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def _sha256_or_reason(path: Path) -> str:
    """Return the file's SHA-256, or why it could not be read.

    The capture is then reported as not measured by its own outcome; one
    unreadable file never stops the report.
    """
    try:
        return sha256(path)
    except OSError as exc:
        return f"not computed: cannot read {path} ({exc.strerror or exc})"


def _read_options(entry_read: dict[str, Any], base: Path):
    from .readers import build_read_options

    return build_read_options(column=entry_read.get("column"),
                              sample_rate_hz=entry_read.get("sample_rate_hz"),
                              time_unit=entry_read.get("time_unit"), dark=entry_read.get("dark"),
                              resample=bool(entry_read.get("resample", False)),
                              fill_gaps=bool(entry_read.get("fill_gaps", False)),
                              base=base, require_column=True)


def build_report(project: Project, *, workers: int | None = None,
                 on_result: Callable[[Any], None] | None = None,
                 on_level: Callable | None = None) -> Report:
    """Measure (or model), judge and collect provenance for a project.

    Parameters
    ----------
    project : Project
    workers : int, optional
        Worker processes for captures (default: one per CPU).
    on_result : callable, optional
        Called with each capture's outcome as it arrives (progress).
    on_level : callable, optional
        Wraps the drive levels iterable (progress).
    """
    from .assess import AssessSettings
    from .batch import measure_many

    bw = project.setup.get("bandwidth_hz")
    try:
        bw = None if bw is None else float(bw)
        if bw is not None and not (bw > 0 and bw < float("inf")):
            raise ValueError
    except (TypeError, ValueError):
        raise SettingsError(f"{project.path} [setup]: bandwidth_hz must be a positive number "
                            f"of Hz, got {bw!r}") from None
    try:
        settings = AssessSettings(
            ieee1789_mode=project.analysis.get("ieee1789_mode", "fundamental"),
            harmonics=int(project.analysis.get("harmonics", 20)),
            detector_bandwidth_hz=bw)
    except (TypeError, ValueError) as exc:
        raise SettingsError(f"{project.path} [analysis]: {exc}") from None
    base = project.path.parent if project.path.is_file() else project.path
    extra = criteria.load_user_criteria(project.criteria_file) if project.criteria_file else {}
    try:
        chosen = criteria.get(project.criteria_ids, extra)
    except SettingsError as exc:
        raise SettingsError(f"{project.path} [criteria]: {exc}") from None
    # the brightness table needs no capture: settle it before the (long) measuring
    steps = _steps_table(project) if project.steps else None

    records: list[dict[str, Any]] = []
    failures: list[tuple[str, str]] = []
    inputs: list[dict[str, Any]] = []
    levels: list[float | None] = []
    verdicts: list[Verdict] = []
    if project.captures:
        opts = [_read_options(e.read, base) for e in project.captures]
        # each capture is judged in its worker, on its typed assessment
        judging = [functools.partial(judge_capture, chosen=tuple(chosen), level=e.level,
                                     label=e.label, date=project.judged_on)
                   for e in project.captures]
        outcomes = measure_many([str(e.file) for e in project.captures], opts, settings,
                                workers=workers, on_result=on_result, then=judging)
        for entry, opt, out in zip(project.captures, opts, outcomes):
            info = {"label": entry.label, "file": str(entry.file), "level": entry.level}
            if entry.file.is_file():
                info["size_bytes"] = entry.file.stat().st_size
                info["sha256"] = _sha256_or_reason(entry.file)
            if isinstance(opt.dark, str) and Path(opt.dark).is_file():
                info["dark_file"] = opt.dark
                info["dark_sha256"] = _sha256_or_reason(Path(opt.dark))
            if out.record is None:
                failures.append((entry.label, out.error or "not measured"))
                info["status"] = f"not measured: {out.error}"
                inputs.append(info)
                continue
            # the record's JSON object, for the edges (workbook, pictures, --json)
            rec = {**out.record, "label": entry.label, "level": entry.level}
            if entry.label_note:
                rec["notes"] = [*rec.get("notes", []), entry.label_note]
            info.update(status="measured", sample_rate_hz=rec["sample_rate_hz"],
                        duration_s=rec["duration_s"], n_samples=rec["n_samples"],
                        dark_level=(rec.get("input") or {}).get("dark_level"),
                        column=(rec.get("input") or {}).get("column",
                                                            entry.read.get("column")))
            read = rec.get("read") or {}
            info.update(layout=read.get("layout"), unit=read.get("unit"),
                        time_base=read.get("time_base"), rows_skipped=read.get("rows_skipped"),
                        channel_choice=read.get("channel_choice"))
            records.append(rec)
            levels.append(entry.level)
            inputs.append(info)
            verdicts.extend(out.then)
    else:
        from .drivefile import drive_from_mapping
        from .levels import fraction
        from .sweep import sweep

        if project.drive is None:  # load_project refuses a project with neither
            raise SettingsError(f"{project.path}: lists no captures and no [drive]")
        drive = drive_from_mapping(project.drive, source=f"{project.path} [drive]")
        result = sweep(drive, [fraction(lv) for lv in project.drive_levels], progress=on_level)
        for lv, row in zip(project.drive_levels, result.rows):
            records.append(row.to_dict())
            levels.append(lv)
            verdicts.extend(criteria.judge(row.assessment, c, level=lv, label=row.label,
                                           date=project.judged_on) for c in chosen)
        inputs.append({"label": "drive model", "file": str(project.path), "level": None,
                       "status": "modelled", "description": result.drive})
    for label, err in failures:
        for c in chosen:
            verdicts.append(criteria.Verdict(c.id, label, None, "insufficient data", None, None,
                                             None, f"capture could not be measured: {err}"))
    settings_out = {
        "flickerkit version": __version__,
        "project file": str(project.path),
        "judged on": project.judged_on.isoformat(),
        "IEEE 1789 headline mode": settings.ieee1789_mode,
        "criteria": ", ".join(c.id for c in chosen),
        **{f"setup: {k}": v for k, v in project.setup.items()},
    }
    from .judgement import group, worst_status

    groups = group(chosen, verdicts, levels)
    # the overall line only sums the groups; reports show each group's line apart
    overall = worst_status([criteria.overall(verdicts)] + [g.status for g in groups])
    return Report(project=project, records=tuple(records), failures=tuple(failures),
                  criteria=tuple(chosen), verdicts=tuple(verdicts),
                  overall=overall, inputs=tuple(inputs),
                  settings=settings_out, steps=steps, groups=groups)


def judge_capture(assessment: Assessment, *, chosen: tuple[criteria.Criterion, ...],
                  level: float | None, label: str, date: _dt.date) -> tuple[Verdict, ...]:
    """Judge a capture against the chosen criteria, from its typed assessment.

    Run in the worker that measured it (:func:`flickerkit.batch.measure_many`'s
    ``then``); ``level`` [percent] and ``label`` are the project's. A report's
    captures are light (its reading options never ask for a voltage).
    """
    return tuple(criteria.judge(assessment, c, level=level, date=date, label=label)
                 for c in chosen)


def _steps_table(project: Project):
    from .steps import build_table_percent

    s = dict(project.steps or {})  # called only when the project has [steps]
    try:
        return build_table_percent(
            int(s.get("steps", 64)), str(s.get("curve", "cie1976")),
            min_percent=s.get("min"), max_percent=s.get("max", 100),
            off_step=bool(s.get("off", True)),
            bits=s.get("bits"), top=s.get("top"), min_count=int(s.get("min_count", 0)),
            rounding=str(s.get("rounding", "distinct")),
            curve_params={"gamma": float(s["gamma"])} if "gamma" in s else None,
            pwm_frequency_hz=s.get("pwm_frequency_hz"),
            target_region=str(s.get("target_region", "low-risk")),
            visible_step=s.get("visible_step"),
        )
    except (TypeError, ValueError, FlickerkitError) as exc:
        raise SettingsError(f"{project.path} [steps]: {exc}") from None


def capture_traces(report: Report, periods: int = 4) -> dict[str, Any]:
    """Return a few periods of each measured capture's samples, read again from its file.

    The traces are keyed by label. For a drive project the modelled light of
    each level is used. Captures that cannot be read again are left out (their
    pictures show the spectrum only).
    """
    from .errors import FlickerkitError
    from .export.figures import trace_of

    project = report.project
    base = project.path.parent if project.path.is_file() else project.path
    by_label = {rec["label"]: rec for rec in report.records}
    out: dict[str, Any] = {}
    if project.captures:
        from .readers import read_capture

        for entry in project.captures:
            rec = by_label.get(entry.label)
            if rec is None:
                continue
            try:
                cap = read_capture(str(entry.file), _read_options(entry.read, base))
            except (FlickerkitError, OSError):
                continue
            out[entry.label] = trace_of(cap, rec.get("frequency_hz"), periods)
    elif project.drive:
        from .drivefile import drive_from_mapping

        drive = drive_from_mapping(project.drive, source=f"{project.path} [drive]")
        for lv in project.drive_levels:
            rec = next((r for r in report.records if r.get("level") == lv), None)
            if rec is None:
                continue
            try:
                cap = drive.at(lv / 100.0).capture(label=rec["label"])
            except FlickerkitError:
                continue
            out[rec["label"]] = trace_of(cap, rec.get("frequency_hz"), periods)
    return out


def report_pictures(report: Report) -> list[Any]:
    """Draw every picture of the record: per capture, then the IEEE 1789 chart, metrics by level."""
    from .export.figures import capture_pictures, ieee_figure, levels_figure, limit_lines, render

    pics = capture_pictures(report.records, capture_traces(report), sheet="Pictures")
    pics.append(render(ieee_figure(report.records), "ieee1789_chart", "IEEE 1789 chart",
                       "IEEE 1789 chart"))
    if any(isinstance(r.get("level"), (int, float)) for r in report.records):
        pics.append(render(levels_figure(report.records,
                                         limit_lines(report.criteria, report.project.judged_on)),
                           "metrics_by_level", "Metrics by level", "metrics by level"))
    return pics
