"""``flickerkit plan``: lowest PWM frequency and timer settings for perception targets."""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING

from ._driveopts import add_drive_options

if TYPE_CHECKING:  # pragma: no cover - types only (planner imports numpy)
    from ..planner import Plan

HELP = "lowest PWM frequency meeting flicker targets, and the timer settings that give it"

DESCRIPTION = """\
Find the lowest PWM frequency at which every dimming level from the smallest
level to 100 % meets the targets, judged on the modelled light with the same
IEEE 1789 and SVM code as measured captures. With a timer clock, list the
feasible settings (mode, prescaler, TOP, actual frequency, bits, smallest duty
step, minimum duty from delay/rise/minimum on-time, targets met). When none
meets both the targets and the resolution, show the ways out and their cost:
a faster clock or high-resolution timer, hybrid dimming, or dithering (with
the dither's own low-frequency flicker computed).

A real clock is off by its tolerance (--tolerance, default +-2 %, an internal
RC oscillator over temperature; a quartz crystal is about +-0.01 %; common
practice). The plan recommends the lowest frequency whose whole band
f (1 +- tolerance) meets the targets, starts the timer settings there, and
names nearby frequencies where a target changes abruptly (SVM's 80 Hz and
2 kHz band ends, IEEE 1789's 90 Hz step and 1250/3000 Hz line ends).
Dimming levels are percent on the command line and in the JSON.

Targets: ieee1789-low-risk, ieee1789-noel, svm<=VALUE; several with commas.
SVM ignores components below its band, so it says nothing about direct
flicker at very low frequencies: combine it with an IEEE 1789 target.

examples:
  flickerkit plan --target ieee1789-low-risk
  flickerkit plan --target ieee1789-noel,svm<=0.4 --clock-mhz 48 --prescalers 1,2,4,8 \\
      --min-level 0.1 --max-step 1
  flickerkit plan --target svm<=0.9 --clock-mhz 16 --bits 12 --edges linear --rise-us 1
  flickerkit plan --target svm<=0.4 --tolerance 0.01     # a crystal-clocked timer
"""


def add_parser(sub) -> None:
    """Add the ``plan`` command and its options to the subcommand parsers ``sub``."""
    p = sub.add_parser("plan", help=HELP, description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("-t", "--target", required=True, metavar="TARGETS",
                   help="ieee1789-low-risk, ieee1789-noel, svm<=VALUE; comma-separated")
    p.add_argument("--range", default="10:50000", metavar="LOW:HIGH",
                   help="frequency range searched in Hz (default 10:50000)")
    p.add_argument("--min-level", type=float, default=0.1, metavar="PERCENT",
                   help="smallest dimming level that must pass and be made (default 0.1)")
    p.add_argument("--levels", type=int, default=25, metavar="N",
                   help="log-spaced levels checked from the smallest to 100 %% (default 25; "
                        "2 to 200)")
    p.add_argument("--tolerance", type=float, default=None, metavar="PERCENT",
                   help="frequency tolerance of the PWM clock (oscillator and timer clock "
                        "error), +- percent; the recommended frequency meets the targets over "
                        "its whole band (default 2, an internal RC oscillator over temperature; "
                        "a quartz crystal is about 0.01; common practice)")
    t = p.add_argument_group("timer")
    t.add_argument("--clock-mhz", type=float, metavar="MHZ", help="timer clock in MHz")
    t.add_argument("--prescalers", default="1", metavar="N,N,...",
                   help="divide ratios the timer offers (default 1)")
    t.add_argument("--prescaler", type=int, metavar="N",
                   help="use only this prescaler (must be one the timer offers)")
    t.add_argument("--max-top", type=int, default=65535, metavar="N",
                   help="largest TOP the counter holds (default 65535)")
    t.add_argument("--mode", choices=("edge", "centre", "both"), default="both",
                   help="counter mode(s) (default both)")
    t.add_argument("--bits", type=float, metavar="B", help="resolution needed, in bits")
    t.add_argument("--max-step", type=float, metavar="PERCENT",
                   help="largest relative step allowed at the smallest level, in percent "
                        "(e.g. 1 for a 1 %% Weber step)")
    add_drive_options(p, frequency=False)
    o = p.add_argument_group("output")
    o.add_argument("--json", action="store_true", help="print the plan as JSON")
    o.add_argument("--xlsx", metavar="OUT.xlsx", help="also write a workbook")
    o.add_argument("--force", action="store_true", help="replace an existing workbook")
    o.add_argument("-q", "--quiet", action="store_true", help="no cautions on stderr")
    from .report import add_picture_option

    add_picture_option(o)
    p.set_defaults(run=run)


def _range(text: str):
    from ..errors import SettingsError

    try:
        lo, hi = (float(x) for x in text.split(":"))
    except ValueError:
        raise SettingsError(f"--range: {text!r} is not LOW:HIGH in Hz") from None
    if not (0 < lo < hi):
        raise SettingsError(f"--range: need 0 < LOW < HIGH, got {lo:g}:{hi:g} Hz (negative or "
                            f"zero frequencies are impossible)")
    from ..validate import MAX_FREQUENCY_HZ

    if hi > MAX_FREQUENCY_HZ:
        raise SettingsError(f"--range: HIGH {hi:g} Hz is above the limit of "
                            f"{MAX_FREQUENCY_HZ:g} Hz")
    return lo, hi


def run(args: argparse.Namespace) -> int:
    """Plan the PWM frequency and timer setting the options ask for; return the exit status.

    The plan is printed as text or JSON, and written to a workbook and
    pictures when asked; a note on stderr says that it models the light.

    Raises
    ------
    SettingsError
        For an option out of range or timer options without ``--clock-mhz``.
    """
    from ..errors import SettingsError
    from ..fileio import check_writable
    from ._driveopts import drive_from_args

    if args.xlsx:
        check_writable(args.xlsx, force=args.force, suffix=".xlsx")
    from ..levels import fraction
    from ..planner import Resolution, default_levels, parse_targets, plan
    from ..timers import Timer

    targets = parse_targets(args.target)
    rng = _range(args.range)
    if not (0 < args.min_level <= 100):
        raise SettingsError(f"--min-level must lie in (0, 100] %, got {args.min_level:g}")
    args.frequency = None
    drive = drive_from_args(args)
    res = Resolution(bits=args.bits, min_level=fraction(args.min_level),
                     max_step=None if args.max_step is None else args.max_step / 100.0)
    timer = None
    pres = None
    if args.clock_mhz is not None and drive.counts_per_period is not None:
        raise SettingsError(
            f"the drive has {drive.counts_per_period} counts per period (--counts or "
            f"counts_per_period in the drive file), but with --clock-mhz each timer setting "
            f"has its own counts; give one of them")
    if args.clock_mhz is not None:
        try:
            prescalers = tuple(int(x) for x in args.prescalers.split(",") if x.strip())
        except ValueError:
            raise SettingsError(f"--prescalers: {args.prescalers!r} is not a list of whole "
                                f"numbers") from None
        modes = ("edge", "centre") if args.mode == "both" else (args.mode,)
        timer = Timer(args.clock_mhz * 1e6, prescalers, args.max_top, modes)
        if args.prescaler is not None:
            pres = (timer.check_prescaler(args.prescaler),)
    elif args.prescaler is not None or args.bits is not None or args.max_step is not None:
        raise SettingsError("timer options need --clock-mhz")
    if args.levels < 2:
        raise SettingsError(f"--levels must be at least 2 (the smallest level and 100 %), "
                            f"got {args.levels}")
    from ..validate import MAX_PLAN_LEVELS

    if args.levels > MAX_PLAN_LEVELS:
        raise SettingsError(f"--levels {args.levels} is above the limit of {MAX_PLAN_LEVELS}")
    levels = default_levels(res.min_level, args.levels)
    from ..planner import DEFAULT_TOLERANCE, check_tolerance

    tol = DEFAULT_TOLERANCE if args.tolerance is None else check_tolerance(args.tolerance / 100)
    result = plan(drive, targets, levels=levels, range_hz=rng, timer=timer, prescalers=pres,
                  resolution=res, tolerance=tol)
    from ._driveopts import emit

    from ..export.modelbooks import plan_pictures, write_plan_workbook

    # the JSON edge gets result.to_dict(); the text, workbook and pictures read the typed plan
    return emit(args, result.to_dict(), lambda _json: text(result),
                lambda path, _json, **kw: write_plan_workbook(path, result, **kw),
                "modelled light: verify the chosen setting by measuring the product.",
                draw=lambda _json: plan_pictures(result))


def text(p: Plan) -> str:
    """Write the plan as text for the terminal."""
    from ..export.table import fmt, render
    from ..levels import percent

    s = [f"drive: {p.drive}",
         f"targets: {', '.join(t.name for t in p.targets)} at levels "
         f"{percent(min(p.levels)):.3g} % to 100 %",
         f"lowest PWM frequency meeting all targets on an exact clock: "
         f"{p.lowest_frequency_hz:.6g} Hz"]
    tol = 100.0 * p.tolerance
    if p.recommended_frequency_hz is not None and p.recommended_band_hz is not None:
        lo, hi = p.recommended_band_hz
        s.append(f"recommended PWM frequency: {p.recommended_frequency_hz:.6g} Hz (the "
                 f"whole +-{tol:g} % clock tolerance band, {lo:.6g} to {hi:.6g} Hz, meets "
                 f"the targets)")
    for a in p.abrupt_changes:
        fig = ((lambda v: f"SVM {v:.3g}") if a.target == "svm" else (lambda v: str(v)))
        where = ("inside the recommended band" if a.inside_band else
                 f"{a.offset_percent:+.2g} % from the recommended frequency")
        s.append(f"  abrupt change at {a.frequency_hz:.6g} Hz ({where}): {a.cause}; "
                 f"worst level {fig(a.figure_below)} just below, "
                 f"{fig(a.figure_at)} at it, {fig(a.figure_above)} just above")
    f = p.frequency
    if f.limiting_level is not None:
        s.append(f"  (just below it, level {percent(f.limiting_level):.3g} % fails "
                 f"{f.limiting_target})")
    if f.passing_below_hz:
        s.append(f"  note: some lower frequencies (from {min(f.passing_below_hz):.3g} "
                 f"Hz) pass these targets but higher ones fail; not recommended")
    if len(p.per_target) > 1:
        for r in p.per_target:
            s.append(f"  {r.targets[0].name}: from {fmt(r.frequency_hz, '.6g')} Hz")
    s.append(f"resolution needed: {p.resolution.describe()} "
             f"({p.resolution.counts} counts)")
    if p.settings:
        rows = [[r.setting.mode, str(r.setting.prescaler), str(r.setting.top),
                 fmt(r.setting.frequency_hz, ".6g"), fmt(r.setting.bits, ".2f"),
                 fmt(r.setting.duty_step * 100, ".3g"), fmt(r.minimum_duty * 100, ".3g"),
                 ", ".join(r.meets) or "none"]
                for r in p.settings]
        s.append("")
        s.append(render(["Mode", "Prescaler", "TOP", "Frequency [Hz]", "Bits",
                         "Duty step [%]", "Min duty [%]", "Meets"], rows,
                        right=[False] + [True] * 6 + [False]).rstrip())
    if p.verdict:
        s.append("")
        s.append(p.verdict)
    for w in p.warnings:
        s.append(f"warning: {w}")
    for o in p.options:
        s.append(f"  option, {o.option}: {o.cost}")
    return "\n".join(s) + "\n"
