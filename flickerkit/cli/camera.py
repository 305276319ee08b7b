"""``flickerkit camera``: rolling-shutter banding and beat flicker on video."""

from __future__ import annotations

import argparse
import sys

from ._driveopts import add_drive_options

HELP = "banding and beat of PWM light on video cameras, and frequencies that avoid them"

DESCRIPTION = """\
Predict what video cameras see of a modelled drive: for each frame rate and
exposure, the beat (how fast bands roll, 0 when they stand still), bands per
frame, rows per band and band contrast (Michelson contrast of the rows'
exposure-averaged light); then PWM frequencies in a range that avoid banding
on all of them, each judged by its worst contrast over the PWM clock's
tolerance band (--tolerance). Exposures are seconds or fractions such as 1/120.

examples:
  flickerkit camera -f 1000 --level 10 --fps 24,25,30,50,60,120 --exposure 1/60,1/120
  flickerkit camera -f 2500 --fps 30 --exposure 1/1000,1/4000 --suggest 2000:30000 --json
"""


def add_parser(sub) -> None:
    """Add the ``camera`` command: rolling bands and beats of cameras under the modelled light."""
    p = sub.add_parser("camera", help=HELP, description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    add_drive_options(p)
    p.add_argument("--level", type=float, default=10.0, metavar="PERCENT",
                   help="dimming level in percent (default 10)")
    p.add_argument("--fps", default="24,25,30,50,60,120", metavar="LIST",
                   help="frame rates (default 24,25,30,50,60,120; each 0.01 to 1e6)")
    p.add_argument("--exposure", default="1/60,1/120", metavar="LIST",
                   help="exposure times in s or as 1/N (default 1/60,1/120; each above 0, at "
                        "most 100 s); each frame rate uses the exposures that fit in its frame "
                        "period")
    p.add_argument("--readout-ms", type=float, metavar="MS",
                   help="rolling-shutter readout time (default one frame period; at most 1e5)")
    p.add_argument("--rows", type=int, default=1080,
                   help="sensor rows (default 1080; 1 to 100000)")
    p.add_argument("--suggest", metavar="LOW:HIGH",
                   help="suggest PWM frequencies in this range that avoid banding")
    p.add_argument("--max-contrast", type=float, default=1.0, metavar="PERCENT",
                   help="band contrast accepted in suggestions (default 1)")
    p.add_argument("--tolerance", type=float, default=2.0, metavar="PERCENT",
                   help="frequency tolerance of the PWM clock, +- percent: a suggestion's "
                        "contrast is the worst over its band (default 2, an internal RC "
                        "oscillator, as in plan; 0 for an exact clock; common practice)")
    o = p.add_argument_group("output")
    o.add_argument("--json", action="store_true", help="print JSON")
    o.add_argument("--xlsx", metavar="OUT.xlsx", help="also write a workbook")
    o.add_argument("--force", action="store_true", help="replace an existing workbook")
    o.add_argument("-q", "--quiet", action="store_true", help="no cautions on stderr")
    p.set_defaults(run=run)


def _numbers(text: str, name: str):
    from ..errors import SettingsError

    out = []
    for part in (x.strip() for x in text.split(",")):
        if not part:
            continue
        try:
            if "/" in part:
                a, b = part.split("/")
                v = float(a) / float(b)
            else:
                v = float(part)
        except (ValueError, ZeroDivisionError):
            raise SettingsError(f"{name}: {part!r} is not a number") from None
        if not v > 0:
            raise SettingsError(f"{name}: {part!r} must be positive")
        out.append(v)
    if not out:
        raise SettingsError(f"{name}: nothing given")
    return out


def run(args: argparse.Namespace) -> int:
    """Run ``camera``: the banding of each camera setting, and frequencies that avoid it."""
    from ..camera import Camera, banding, suggest_frequencies
    from ..errors import SettingsError
    from ..fileio import check_writable
    from ._driveopts import drive_from_args

    if args.xlsx:
        check_writable(args.xlsx, force=args.force, suffix=".xlsx")
    drive = drive_from_args(args)
    if not (0 < args.level <= 100):
        raise SettingsError(f"--level must lie in (0, 100] %, got {args.level:g}")
    if not (0.0 <= args.max_contrast <= 100.0):
        raise SettingsError(f"--max-contrast must be 0 to 100 %, got {args.max_contrast:g}")
    level = args.level / 100.0
    model = drive.at(level)
    fps = _numbers(args.fps, "--fps")
    exps = _numbers(args.exposure, "--exposure")
    from ..validate import check_count, check_number

    for f in fps:  # documented ranges: 0.01 to 1e6 frames per second
        check_number(f, "--fps", low=0.01, high=1e6)
    for e in exps:  # exposures above 0 and at most 100 s
        check_number(e, "--exposure", low=0, high=100.0, open_low=True)
    check_number(args.readout_ms, "--readout-ms", high=1e5)
    check_count(args.rows, 100_000, "--rows")
    readout = None if args.readout_ms is None else args.readout_ms * 1e-3
    cams = [Camera(f, e, readout, args.rows) for f in fps for e in exps
            if e <= 1.0 / f * (1 + 1e-9)]
    if not cams:
        raise SettingsError("no exposure fits in any frame period")
    rows = [banding(model, c).to_dict() for c in cams]
    out = {"drive": drive.describe(), "level": 100.0 * level, "cameras": rows,
           "suggestions": []}  # dimming level in percent at the JSON edge
    if args.suggest:
        try:
            lo, hi = (float(x) for x in args.suggest.split(":"))
        except ValueError:
            raise SettingsError(f"--suggest: {args.suggest!r} is not LOW:HIGH in Hz") from None
        check_number(args.tolerance, "--tolerance", low=0, high=10)
        sugg = suggest_frequencies(lambda f: drive.with_frequency(f).at(level), cams, lo, hi,
                                   max_contrast=args.max_contrast / 100.0,
                                   tolerance=args.tolerance / 100.0)
        out["suggestions"] = [s.to_dict() for s in sugg]
    if args.json:
        from ..export.jsonout import dumps

        sys.stdout.write(dumps(out))
    else:
        sys.stdout.write(text(out))
    if args.xlsx:
        write_workbook(args.xlsx, out, force=args.force)
    if not args.quiet:
        print("modelled light and idealised camera timing: check on the real camera.",
              file=sys.stderr)
    return 0


def text(out: dict) -> str:
    """Format the ``camera`` result for the terminal."""
    from ..export.table import fmt, render

    rows = [[fmt(r["frame_rate_hz"], ".4g"), f"1/{1 / r['exposure_s']:.4g}",
             fmt(r["beat_hz"], ".4g"), fmt(r["bands_per_frame"], ".4g"),
             fmt(r["rows_per_band"], ".4g"), fmt(r["band_contrast_percent"], ".3g")]
            for r in out["cameras"]]
    s = f"drive: {out['drive']} at level {out['level']:.4g} %\n\n"
    s += render(["Frame rate [fps]", "Exposure [s]", "Beat [Hz]", "Bands per frame",
                 "Rows per band", "Band contrast [%]"], rows)
    if out["suggestions"]:
        s += "\nsuggested PWM frequencies:\n"
        for g in out["suggestions"]:
            s += (f"  {g['frequency_hz']:.6g} Hz: worst band contrast "
                  f"{g['worst_band_contrast_percent']:.3g} % ({g['reason']})\n")
    return s


def write_workbook(path, out: dict, *, force: bool = False):
    """Write the ``camera`` result to an Excel workbook."""
    from openpyxl import Workbook

    from ..export.workbook import print_setup, set_properties, write_rows
    from ..fileio import write_with

    wb = Workbook()
    ws = wb.active
    ws.title = "Cameras"
    keys = ["frame_rate_hz", "exposure_s", "beat_hz", "bands_per_frame", "rows_per_band",
            "band_contrast_percent", "band_depth_percent"]
    write_rows(ws, ["Frame rate [fps]", "Exposure [s]", "Beat [Hz]", "Bands per frame",
                    "Rows per band", "Band contrast [%]", "Band depth [%]"],
               [[r[k] for k in keys] for r in out["cameras"]])
    ss = wb.create_sheet("Suggestions")
    write_rows(ss, ["Frequency [Hz]", "Worst band contrast [%]", "Reason"],
               [[g["frequency_hz"], g["worst_band_contrast_percent"], g["reason"]]
                for g in out["suggestions"]], widths=[16, 24, 90])
    set_properties(wb, "flickerkit camera banding", f"{out['drive']} at level {out['level']:g} %")
    print_setup(wb, product=str(out["drive"]), document="Camera banding (modelled light)")
    return write_with(path, lambda tmp: wb.save(tmp), force=force)
