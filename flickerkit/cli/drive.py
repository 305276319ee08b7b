"""``flickerkit drive``: a dimming sweep of a modelled drive."""

from __future__ import annotations

import argparse
import sys

from ._driveopts import add_drive_options

HELP = "flicker of a modelled drive at each dimming level (sweep)"

DESCRIPTION = """\
Model the light of an LED drive from its description alone and assess it at
each dimming level exactly as 'measure' assesses a capture: percent flicker,
flicker index, IEEE 1789 region and margins, SVM, per level; and the level at
which each criterion first fails, scanning down from the brightest.

The level is the dimming command: the duty for PWM, the current for analogue
dimming; 'relative_light' is the mean light it gives (rise, fall, delay and
off-level make them differ).

examples:
  flickerkit drive -f 1000 --levels 100,50,10,1,0.1
  flickerkit drive -f 2000 --edges linear --rise-us 2 --fall-us 1 --levels 100:0.1:200
  flickerkit drive --method hybrid --crossover-level 20 -f 1250 --ripple 4 --json
  flickerkit drive --drive-file mydriver.toml --xlsx sweep.xlsx
"""


def add_parser(sub) -> None:
    """Add the ``drive`` command: the modelled light of a drive at dimming levels."""
    p = sub.add_parser("drive", help=HELP, description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    add_drive_options(p)
    p.add_argument("--levels", metavar="LIST|RANGE",
                   help="levels in percent: a list 100,50,10,1 or a log-spaced range "
                        "FROM:TO[:COUNT] such as 100:0.1:200 (default 100:0.1:25, or "
                        "'levels' in the drive file; at most 1000 levels)")
    o = p.add_argument_group("output")
    o.add_argument("--json", action="store_true",
                   help="print JSON: an object with 'levels' (one object per level, the keys "
                        "of 'measure' plus 'level' in percent) and 'first_failing_level' "
                        "(percent)")
    o.add_argument("--xlsx", metavar="OUT.xlsx", help="also write a workbook")
    o.add_argument("--force", action="store_true", help="replace an existing workbook")
    o.add_argument("-q", "--quiet", action="store_true", help="no progress or cautions on stderr")
    from .report import add_picture_option

    add_picture_option(o)
    p.set_defaults(run=run)


def _levels(args):
    import numpy as np

    from ..errors import SettingsError
    from ._driveopts import file_levels, parse_levels

    if args.levels is not None:
        return parse_levels(args.levels)
    fl = file_levels(args)
    if fl is not None:
        if isinstance(fl, str):
            return parse_levels(fl)
        try:
            vals = np.array([float(x) for x in fl]) / 100.0
        except (TypeError, ValueError):
            raise SettingsError(f"{args.drive_file}: 'levels' must be a list of percents") from None
        if vals.size == 0 or (vals <= 0).any() or (vals > 1).any():
            raise SettingsError(f"{args.drive_file}: 'levels' must lie in (0, 100] %")
        return vals
    return parse_levels("100:0.1:25")


def run(args: argparse.Namespace) -> int:
    """Run ``drive``: assess the modelled light at each level and where each criterion fails."""
    from ..fileio import check_writable
    from ._driveopts import drive_from_args

    if args.xlsx:
        check_writable(args.xlsx, force=args.force, suffix=".xlsx")
    drive = drive_from_args(args)
    levels = _levels(args)
    for lv in levels:
        drive.at(float(lv))  # validate every level before any work
    from ..sweep import sweep

    progress = None
    if not args.quiet and len(levels) > 20:
        from tqdm import tqdm

        def progress(it):
            return tqdm(it, file=sys.stderr, disable=None, unit="level", leave=False)
    result = sweep(drive, levels, progress=progress)
    out = result.to_dict()
    from ._driveopts import emit

    from ..export.modelbooks import sweep_pictures, write_sweep_workbook

    return emit(args, out, table, write_sweep_workbook,
                "modelled light: figures hold for the model as described, not for a built "
                "product; measure the product.", draw=sweep_pictures)


def table(out: dict) -> str:
    """Format the ``drive`` result as a terminal table."""
    from ..export.table import fmt, render

    rows = []
    for r in out["levels"]:
        ieee = r.get("ieee1789") or {}
        rows.append([fmt(r["level"], ".4g"), fmt(100 * r["relative_light"], ".4g"),
                     fmt(r.get("frequency_hz"), ".5g"), fmt(r.get("percent_flicker"), ".4g"),
                     fmt(r.get("flicker_index"), ".4f"), fmt(r.get("svm"), ".3f"),
                     ieee.get("region") or "–", fmt(ieee.get("low_risk_margin_percent"), ".3g"),
                     "; ".join(r.get("warnings") or [])[:60]])
    text = f"drive: {out['drive']}\n\n" + render(
        ["Level [%]", "Light [%]", "Frequency [Hz]", "Percent flicker [%]", "Flicker index",
         "SVM", "IEEE 1789 region", "Low-risk margin [pp]", "Warnings"], rows,
        right=[True] * 8 + [False])
    from .measure import decided_line

    text += "".join(decided_line(r) for r in out["levels"])
    text += "\nfirst failing level (scanning down from the brightest):\n"
    for name, lv in out["first_failing_level"].items():
        text += f"  {name:<18} {_first_failing_text(out, name, lv, fmt)}\n"
    return text


def _first_failing_text(out: dict, name: str, lv, fmt) -> str:
    if name in out.get("not_assessed", ()):
        return "not assessed (no level gives the figure)"
    return "none" if lv is None else fmt(lv, ".4g") + " %"
