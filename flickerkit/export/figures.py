"""Pictures of what was measured, for the record: PNG and SVG files and workbook images.

Per capture: a few periods of the waveform with its mean, minimum and maximum
marked, and the modulation spectrum relative to the mean on log axes with the
SVM threshold curve and the IEEE 1789 lines. Per product: the IEEE 1789 chart
with every judged component as a labelled point, and each metric against
dimming level with its limit lines. For ``plan``: the timer settings against
the lowest frequency found and the resolution needed.

matplotlib is imported only here, and only when pictures are asked for, with
the non-interactive Agg backend (no display needed). Every picture is drawn
from figures already computed (the assessment objects) and from the capture's
own samples; nothing is re-measured.

References
----------
IEEE Std 1789-2015, clause 8 (boundary lines; recalled, not read in the standard).
J. Perz et al., JOSA A 35(2) 309 (2018) (SVM threshold, power form).
"""

from __future__ import annotations

import io
import math
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Sequence

import numpy as np

#: Formats written to disk.
FORMATS = ("png", "svg")
#: Size of a picture [inch] and its resolution in PNG [dots per inch].
SIZE_IN = (7.0, 3.6)
DPI = 110

_COLOURS = {"low": "#c00000", "noel": "#2f5597", "svm": "#7f6000", "data": "#000000",
            "mean": "#548235", "minmax": "#7f7f7f"}
_LEVEL_COLOURS = ("#1f4e79", "#c55a11", "#548235", "#7030a0", "#bf9000", "#2e75b6")


def _plt():
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt

    return plt


@dataclass(frozen=True)
class Trace:
    """A few periods of a capture's samples, to draw.

    Attributes
    ----------
    label : str
    samples : numpy.ndarray
        The samples shown [input unit].
    sample_rate_hz : float
        Sample rate [Hz].
    """

    label: str
    samples: np.ndarray
    sample_rate_hz: float


def trace_of(capture: Any, frequency_hz: float | None, periods: int = 4) -> Trace:
    """Cut the first ``periods`` periods of a capture (20 ms when no period was found).

    Reads only the slice needed, so captures read in blocks stay in bounded memory.
    """
    fs = float(capture.sample_rate_hz)
    span = periods / frequency_hz if frequency_hz else 0.02
    n = int(min(capture.n_samples, max(16, math.ceil(span * fs))))
    return Trace(capture.label, np.asarray(capture.samples[:n], dtype=float), fs)


def safe_name(text: str) -> str:
    """Make a file-name stem from a label (letters, digits, ``-``, ``_``, ``.``)."""
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", str(text)).strip("_.") or "capture"


def waveform_figure(trace: Trace, record: dict[str, Any]):
    """Draw a few periods of the waveform, with the capture's mean, min and max marked.

    Parameters
    ----------
    trace : Trace
    record : dict
        The capture's assessment object (``mean``, ``min``, ``max``,
        ``frequency_hz``, ``percent_flicker``) [input unit].
    """
    plt = _plt()
    fig, ax = plt.subplots(figsize=SIZE_IN, dpi=DPI, layout="constrained")
    t_ms = np.arange(trace.samples.size) / trace.sample_rate_hz * 1e3
    ax.plot(t_ms, trace.samples, color=_COLOURS["data"], lw=0.9, label="light")
    for key, style, colour in (("mean", "-", _COLOURS["mean"]), ("max", "--", _COLOURS["minmax"]),
                               ("min", ":", _COLOURS["minmax"])):
        v = record.get(key)
        if isinstance(v, (int, float)) and math.isfinite(v):
            ax.axhline(v, ls=style, color=colour, lw=1.0, label=f"{key} {v:.4g}")
    f = record.get("frequency_hz")
    pf = record.get("percent_flicker")
    head = f"{trace.label}: waveform"
    if isinstance(f, (int, float)):
        head += f", {f:.5g} Hz"
    if isinstance(pf, (int, float)):
        head += f", percent flicker {pf:.3g} %"
    ax.set_title(head, fontsize=9)
    ax.set_xlabel("time from the start of the capture [ms]")
    ax.set_ylabel("light [input unit]")
    ax.grid(True, alpha=0.3)
    lo, hi = ax.get_ylim()
    ax.set_ylim(lo, hi + 0.25 * (hi - lo))  # headroom: the legend never covers the max line
    ax.legend(fontsize=7, loc="upper right", ncols=4)
    return fig


def spectrum_figure(record: dict[str, Any], *, threshold: str = "power"):
    """Modulation spectrum relative to the mean, with the SVM threshold and IEEE 1789 lines.

    Each component's amplitude over the mean is drawn in percent (a single
    sinusoidal component of relative amplitude a has Mod% = 100 a), so the
    IEEE 1789 lines read directly at each component's frequency; the SVM
    threshold T(f) is drawn as 100 T(f): a component on it alone gives SVM 1.
    """
    from ..ieee1789 import low_risk_limit_percent, noel_limit_percent
    from ..svm import get_threshold

    plt = _plt()
    fig, ax = plt.subplots(figsize=SIZE_IN, dpi=DPI, layout="constrained")
    f = np.geomspace(1.0, 10_000.0, 400)
    ax.plot(f, np.where(np.isfinite(low_risk_limit_percent(f)), low_risk_limit_percent(f),
                        np.nan), color=_COLOURS["low"], lw=1.2,
            label="IEEE 1789 low risk (recalled)")
    ax.plot(f, np.where(np.isfinite(noel_limit_percent(f)), noel_limit_percent(f), np.nan),
            color=_COLOURS["noel"], lw=1.2, ls="--", label="IEEE 1789 no observable effect")
    model = get_threshold(threshold)
    fs = np.geomspace(80.0, 2000.0, 200)
    ax.plot(fs, 100 * model.function(fs), color=_COLOURS["svm"], lw=1.2, ls="-.",
            label=f"SVM threshold 100 T(f) ({model.name})")
    # every component above the noise (the modulation analysis), so modulation not locked
    # to the period (an envelope, ripple under PWM) is drawn where it is judged; the
    # harmonics only when the record has no analysis
    found = (record.get("modulation") or {}).get("components") or []
    comp = [(c["frequency_hz"], c["amplitude"], c.get("kind") != "harmonic") for c in found
            if c.get("amplitude") and c.get("frequency_hz")]
    if not comp:
        comp = [(h["frequency_hz"], h["amplitude"], False) for h in record.get("harmonics") or []
                if h.get("amplitude") and h.get("frequency_hz")]
    if comp:
        fc = np.array([c[0] for c in comp], dtype=float)
        ac = 100 * np.array([c[1] for c in comp], dtype=float)
        other = np.array([c[2] for c in comp], dtype=bool)
        ax.vlines(fc, 1e-3, ac, color=_COLOURS["data"], lw=1.4)
        if (~other).any():
            ax.plot(fc[~other], ac[~other], "o", color=_COLOURS["data"], ms=3,
                    label="harmonics of the period / mean")
        if other.any():
            ax.plot(fc[other], ac[other], "s", color=_COLOURS["low"], ms=4,
                    label="other modulation / mean")
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlim(1, 10_000)
    ax.set_ylim(1e-2, 200)
    ax.set_title(f"{record.get('label', '')}: modulation spectrum relative to the mean",
                 fontsize=9)
    ax.set_xlabel("frequency [Hz]")
    ax.set_ylabel("amplitude / mean [%]")
    ax.grid(True, which="both", alpha=0.25)
    ax.legend(fontsize=7, loc="lower left")
    if not comp:
        ax.text(0.5, 0.5, "no periodic components found", transform=ax.transAxes,
                ha="center", fontsize=9)
    return fig


def ieee_figure(records: Sequence[dict[str, Any]], title: str = "IEEE 1789-2015 chart"):
    """IEEE 1789 boundaries with every judged component as a labelled point.

    The headline point of each capture (its ``ieee1789`` mode and frequency)
    is drawn filled and labelled with the capture and level; its harmonics
    (per-harmonic mode) as small open points.
    """
    from ..ieee1789 import low_risk_limit_percent, noel_limit_percent

    plt = _plt()
    fig, ax = plt.subplots(figsize=(7.5, 4.6), dpi=DPI, layout="constrained")
    f = np.geomspace(1.0, 10_000.0, 400)
    lr, no = low_risk_limit_percent(f), noel_limit_percent(f)
    ax.plot(f, np.where(np.isfinite(lr), lr, np.nan), color=_COLOURS["low"], lw=1.4,
            label="low-risk boundary (RP1, recalled)")
    ax.plot(f, np.where(np.isfinite(no), no, np.nan), color=_COLOURS["noel"], lw=1.4, ls="--",
            label="no observable effect boundary (RP2, recalled)")
    many = len(records) > 8  # then the legend keeps the lines only
    spots: dict[tuple[int, int], list] = {}  # points that fall together share one label
    for i, rec in enumerate(records):
        colour = _LEVEL_COLOURS[i % len(_LEVEL_COLOURS)]
        for h in rec.get("harmonics") or []:
            if h.get("amplitude") and h.get("frequency_hz") and 100 * h["amplitude"] >= 1e-2:
                ax.plot(h["frequency_hz"], 100 * h["amplitude"], "o", mfc="none",
                        mec=colour, ms=4, alpha=0.7)
        ieee = rec.get("ieee1789") or {}
        fx, m = ieee.get("frequency_hz"), ieee.get("modulation_percent")
        if fx and m:
            lv = rec.get("level")
            name = rec.get("label", "")
            text = f"{lv:.3g} %" if isinstance(lv, (int, float)) else name
            ax.plot(fx, max(m, 1e-2), "o", color=colour, ms=7,
                    label=None if many else f"{name} ({ieee.get('region')})")
            key = (round(math.log10(fx) / 0.03), round(math.log10(max(m, 1e-2)) / 0.03))
            spots.setdefault(key, []).append((fx, max(m, 1e-2), text, colour))
    for k, pts in enumerate(spots.values()):
        fx, m, text, colour = pts[0]
        if len(pts) > 1:
            text = ", ".join(p[2] for p in pts) if len(pts) <= 3 else \
                f"{pts[-1][2]} to {pts[0][2]} ({len(pts)} levels)"
        ax.annotate(text, (fx, m), textcoords="offset points", xytext=(6, 4 + 8 * (k % 2)),
                    fontsize=7, color=colour if len(pts) == 1 else "black")
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlim(1, 10_000)
    ax.set_ylim(1e-2, 1000)
    ax.set_xlabel("modulation frequency [Hz]")
    ax.set_ylabel("modulation (percent flicker) [%]")
    ax.set_title(title + ": filled = headline point per capture, open = harmonics", fontsize=9)
    ax.grid(True, which="both", alpha=0.25)
    ax.legend(fontsize=6.5, loc="lower right", ncols=1)
    return fig


#: (record key, axis label, log axis) of the metrics drawn against level.
LEVEL_METRICS = (("percent_flicker", "percent flicker [%]", True),
                 ("flicker_index", "flicker index [1]", True),
                 ("svm", "SVM [1]", True),
                 ("pst_lm", "Pst LM [1]", True))


def levels_figure(records: Sequence[dict[str, Any]], limits: Sequence[tuple[str, float, str]],
                  *, level_key: str = "level", level_scale: float = 1.0):
    """Each metric against dimming level, one panel each, with its limit lines.

    Parameters
    ----------
    records : sequence of dict
        Assessment objects with a dimming level.
    limits : sequence of (metric key, limit, label)
        Horizontal limit lines (e.g. ``("svm", 0.4, "eu-2019-2020-svm")``).
    level_key, level_scale
        Where the level is and the factor to percent (1 for percent, 100 for 0-1).
    """
    plt = _plt()
    fig, axes = plt.subplots(2, 2, figsize=(7.5, 5.2), dpi=DPI, layout="constrained")
    rows = [r for r in records if isinstance(r.get(level_key), (int, float))]
    lv = np.array([r[level_key] * level_scale for r in rows], dtype=float)
    for ax, (key, label, log) in zip(axes.flat, LEVEL_METRICS):
        y = np.array([r.get(key) if isinstance(r.get(key), (int, float)) else np.nan
                      for r in rows], dtype=float)
        ok = np.isfinite(y) & (y > 0)
        if ok.any():
            order = np.argsort(lv[ok])
            ax.plot(lv[ok][order], y[ok][order], "o-", color=_LEVEL_COLOURS[0], ms=4, lw=1,
                    label="unfiltered" if key == "percent_flicker" else None)
        if key == "percent_flicker":
            yf = np.array([_filtered_200(r) for r in rows], dtype=float)
            okf = np.isfinite(yf) & (yf > 0)
            if okf.any():
                order = np.argsort(lv[okf])
                ax.plot(lv[okf][order], yf[okf][order], "s--", color=_LEVEL_COLOURS[2], ms=4,
                        lw=1, label="below 200 Hz (JA10.6)")
                ok = ok | okf
        if lv.size:
            ax.set_xlim(lv.min() / 1.5, lv.max() * 1.5)
        if not ok.any():
            ax.text(0.5, 0.5, "no value at any level", transform=ax.transAxes, ha="center",
                    fontsize=8)
        for j, (_, lim, name) in enumerate(x for x in limits if x[0] == key):
            ax.axhline(lim, color=_LEVEL_COLOURS[(j + 1) % len(_LEVEL_COLOURS)], ls="--",
                       lw=1, label=f"{name}: {lim:g}")
        ax.set_xscale("log")
        if log and ok.any():
            ax.set_yscale("log")
        ax.set_xlabel("dimming level [%]", fontsize=8)
        ax.set_ylabel(label, fontsize=8)
        ax.tick_params(labelsize=7)
        ax.grid(True, which="both", alpha=0.25)
        if ax.get_legend_handles_labels()[0]:
            ax.legend(fontsize=6, loc="best")
    fig.suptitle("Metrics against dimming level, with limit lines (each limit applies only "
                 "where its criterion says)", fontsize=9)
    return fig


def _filtered_200(rec: dict[str, Any]) -> float:
    for k, v in (rec.get("filtered_percent_flicker") or {}).items():
        try:
            if float(k) == 200.0 and isinstance(v, (int, float)):
                return float(v)
        except (TypeError, ValueError):
            continue
    return math.nan


def plan_figure(out: dict[str, Any]):
    """Timer settings (frequency, bits) with the lowest frequency found and the bits needed."""
    plt = _plt()
    fig, ax = plt.subplots(figsize=SIZE_IN, dpi=DPI, layout="constrained")
    s = out.get("settings") or []
    for mode, marker, size in (("centre", "s", 9), ("edge", "o", 5)):  # edge drawn on top
        pts = [(r["frequency_hz"], r["bits"]) for r in s if r.get("mode") == mode]
        if pts:
            ax.plot([p[0] for p in pts], [p[1] for p in pts], marker, ls="none", ms=size,
                    label=f"{mode}-aligned settings")
    f0 = out.get("lowest_frequency_hz")
    if isinstance(f0, (int, float)) and math.isfinite(f0):
        ax.axvline(f0, color=_COLOURS["low"], ls="--",
                   label=f"lowest frequency meeting the targets: {f0:.5g} Hz")
    need = (out.get("resolution") or {}).get("counts_needed")
    if isinstance(need, (int, float)) and need > 1:
        ax.axhline(math.log2(need), color=_COLOURS["noel"], ls=":",
                   label=f"resolution needed: {math.log2(need):.3g} bits")
    fr = [r["frequency_hz"] for r in s] + ([f0] if isinstance(f0, (int, float)) else [])
    if fr and max(fr) > 10 * min(fr):
        ax.set_xscale("log")
    ax.ticklabel_format(axis="x", style="plain", useOffset=False) if ax.get_xscale() == \
        "linear" else None
    ax.set_xlabel("PWM frequency [Hz]")
    ax.set_ylabel("resolution [bits]")
    ax.set_title("Frequency plan: " + ", ".join(out.get("targets") or []), fontsize=9)
    ax.grid(True, which="both", alpha=0.25)
    ax.legend(fontsize=7)
    if not s:
        ax.text(0.5, 0.5, "no timer given: only the frequency is planned",
                transform=ax.transAxes, ha="center", fontsize=9)
    return fig


@dataclass(frozen=True)
class Picture:
    """A drawn picture: a name (file stem), the sheet it explains, PNG bytes and SVG text."""

    name: str
    sheet: str
    caption: str
    png: bytes
    svg: bytes


def render(fig, name: str, sheet: str, caption: str) -> Picture:
    """PNG and SVG of a figure, then close it."""
    plt = _plt()
    png, svg = io.BytesIO(), io.BytesIO()
    fig.savefig(png, format="png", dpi=DPI)
    fig.savefig(svg, format="svg", metadata={"Date": None})
    plt.close(fig)
    return Picture(name, sheet, caption, png.getvalue(), svg.getvalue())


def check_picture_folder(folder: str | Path) -> None:
    """Refuse, before any work, a picture folder that is a file or has no parent folder.

    The folder itself is created; the folder it stands in must exist and be
    writable, as for every output file (a mistyped path made a whole tree).
    """
    import os

    from ..errors import OutputError

    p = Path(folder)
    if p.exists() and not p.is_dir():
        raise OutputError(f"{p}: exists and is not a folder (--pictures needs a folder)")
    parent = p.parent if str(p.parent) else Path(".")
    if not p.exists() and not parent.is_dir():
        raise OutputError(f"{p}: folder {parent} does not exist (--pictures creates only "
                          f"the last folder of the path)")
    if not os.access(p if p.exists() else parent, os.W_OK):
        raise OutputError(f"{p}: folder {p if p.exists() else parent} is not writable")


def check_picture_names(folder: str | Path, names: Sequence[str], *, force: bool = False) -> None:
    """Refuse a picture folder that is a file, or that holds one of ``names`` without ``force``.

    Call it before drawing: the names are known from the records, the pictures
    cost a fraction of a second each to draw.
    """
    from ..errors import OutputError

    out = Path(folder)
    check_picture_folder(out)
    seen: set[str] = set()
    for name in names:  # one picture would replace another of the same run
        if name in seen:
            raise OutputError(f"{out / name}: two pictures of this run would share the name; "
                              f"give the captures labels of their own")
        seen.add(name)
    if force:
        return
    for name in names:
        for ext in FORMATS:
            if (out / f"{name}.{ext}").exists():
                raise OutputError(f"{out / f'{name}.{ext}'}: exists; use --force to "
                                  f"replace the pictures")


def write_pictures(pictures: Sequence[Picture], folder: str | Path, *,
                   force: bool = False) -> list[Path]:
    """Write every picture as PNG and SVG into ``folder`` (created); return the paths.

    Existing pictures are replaced only with ``force`` (checked for every file
    before the first is written). Each file is written to a temporary name and
    renamed, so no half-written picture is left behind.
    """
    from ..errors import OutputError

    out = Path(folder)
    check_picture_names(out, [p.name for p in pictures], force=force)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{out}: cannot be created ({exc.strerror})") from None
    paths = []
    for p in pictures:
        for ext, data in (("png", p.png), ("svg", p.svg)):
            target = out / f"{p.name}.{ext}"
            tmp = target.with_name(target.name + ".part")
            try:
                tmp.write_bytes(data)
                tmp.replace(target)
            except OSError as exc:
                tmp.unlink(missing_ok=True)
                raise OutputError(f"{target}: cannot be written ({exc.strerror})") from None
            paths.append(target)
    return paths


def _capture_plan(records: Sequence[dict[str, Any]], traces: dict[str, Trace], threshold: str
                  ) -> list[tuple[str, Any, str]]:
    """List each capture picture as (file stem, drawing call, caption), drawing nothing."""
    from functools import partial

    plan: list[tuple[str, Any, str]] = []
    for rec in records:
        label = str(rec.get("label", ""))
        stem = safe_name(label)
        tr = traces.get(label)
        if tr is not None:
            plan.append((f"{stem}_waveform", partial(waveform_figure, tr, rec),
                         f"{label}: waveform"))
        plan.append((f"{stem}_spectrum", partial(spectrum_figure, rec, threshold=threshold),
                     f"{label}: modulation spectrum"))
    return plan


def capture_picture_names(records: Sequence[dict[str, Any]], traces: dict[str, Trace]
                          ) -> list[str]:
    """Return the file stems :func:`capture_pictures` gives, without drawing."""
    return [name for name, _, _ in _capture_plan(records, traces, "power")]


def capture_pictures(records: Sequence[dict[str, Any]], traces: dict[str, Trace],
                     *, threshold: str = "power", sheet: str = "Pictures") -> list[Picture]:
    """Draw the waveform (when the samples are at hand) and spectrum of each capture."""
    return [render(draw(), name, sheet, caption)
            for name, draw, caption in _capture_plan(records, traces, threshold)]


def limit_lines(criteria: Sequence[Any], date) -> list[tuple[str, float, str]]:
    """Constant limit lines of criteria on the metrics :data:`LEVEL_METRICS` draws."""
    keys = {k for k, _, _ in LEVEL_METRICS}
    out = []
    for c in criteria:
        metric = "percent_flicker" if c.metric == "filtered_percent_flicker.200" else c.metric
        if metric not in keys:
            continue
        lim = c.limit_on(date)
        if lim is None or not math.isfinite(lim):
            continue
        name = c.id + (" (JA10.6, below 200 Hz)" if c.metric != metric else "")
        out.append((metric, float(lim), name))
    return out


__all__ = ["FORMATS", "Picture", "Trace", "capture_pictures", "check_picture_folder",
           "ieee_figure", "levels_figure", "limit_lines", "plan_figure", "render", "safe_name",
           "spectrum_figure", "trace_of", "waveform_figure", "write_pictures"]
