"""``flickerkit steps``: a perceptually even brightness table for a PWM counter."""

from __future__ import annotations

import argparse
import sys

HELP = "brightness table for a PWM counter: counts, L* steps, losses, C header"

DESCRIPTION = """\
Build a table of brightness steps that look evenly spaced (CIE 1976 L*, a power
law, the IEC 62386-102 logarithmic curve, linear, or your own points), put it
on a PWM counter of n bits (full scale 2^n - 1 = 100 % duty) or an explicit
TOP, and show where it fails: steps that collapse onto one count at the dark
end, steps above a visibility threshold in L*, the lowest lit level, and the
bits the table would need. With measured light at several counts (a CSV of
count,light) the table is built on the product's own transfer, so that the
light, not the duty, is even. With a PWM frequency each step also gets its
percent flicker, flicker index, IEEE 1789 region and SVM: of ideal on/off
pulses (exact, vectorised), or, with a drive description (--drive-file or
the drive options), of the drive model's light through the measurement path.

Duty is count / TOP. A step is flagged visible when its L* step exceeds
--visible-step (default 2.3, the CIE 1976 JND of Mahy et al. 1994 as kept by
colour-science; measured side by side on object colours, so abrupt steps in a
fade may be seen below it).

examples:
  flickerkit steps -n 64 --bits 12
  flickerkit steps -n 255 --curve iec62386 --off --bits 16
  flickerkit steps -n 100 --curve gamma --gamma 2.2 --min 0.5 --top 47999 --min-count 8
  flickerkit steps -n 64 --bits 12 --format c --name fade_table -o fade_table.h
  flickerkit steps -n 128 --bits 16 --calibration measured.csv --format json
  flickerkit steps -n 64 --bits 12 --dark 0.002 --calibration-capture 40=c40.csv \\
      --calibration-capture 400=c400.csv --calibration-capture 4095=c4095.csv
  flickerkit steps -n 64 --bits 10 --pwm-frequency 2000 --xlsx table.xlsx
  flickerkit steps -n 32 --bits 12 --drive-file driver.toml --target-region no-observable-effect
  flickerkit steps -n 32 --bits 12 --pwm-frequency 1500 --off-level 0.05 --edges linear \\
      --rise-us 3 --fall-us 3

Flicker figures come from a model of the light, not a measurement; the
applicable standards, local codes and an accredited laboratory decide
compliance.
"""

#: Rows shown in the terminal table before it is shortened (see --all-rows).
SHORT_TABLE_ROWS = 64


def add_parser(sub) -> None:
    """Add the ``steps`` command: a perceptually even brightness table for a PWM counter."""
    p = sub.add_parser("steps", help=HELP, description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    t = p.add_argument_group("table")
    t.add_argument("-n", "--steps", type=int, default=64, metavar="N",
                   help="number of steps, the off step included (default 64)")
    t.add_argument("--curve", default="cie1976",
                   choices=("cie1976", "gamma", "iec62386", "linear"),
                   help="cie1976: even in L* (default); gamma: light = v^G; iec62386: equal "
                        "light ratio per step (the IEC 62386-102 curve with --off, 255 steps); "
                        "linear: light = v")
    t.add_argument("--curve-file", metavar="CSV",
                   help="your own curve: rows 'input,output' (perceptual value, relative "
                        "light), both rising; joined by monotone PCHIP. Overrides --curve")
    t.add_argument("--gamma", type=float, metavar="G",
                   help="exponent of --curve gamma (default 2.2)")
    t.add_argument("--min", type=float, dest="min_percent", metavar="PERCENT",
                   help="light of the lowest lit step in %% of full (default 0, or 0.1 for "
                        "iec62386)")
    t.add_argument("--max", type=float, dest="max_percent", default=100.0, metavar="PERCENT",
                   help="light of the top step in %% of full (default 100)")
    t.add_argument("--off", action="store_true",
                   help="add an off step (count 0) below the range")
    c = p.add_argument_group("counter")
    g = c.add_mutually_exclusive_group(required=True)
    g.add_argument("--bits", type=int, metavar="N", help="counter resolution; TOP = 2^N - 1")
    g.add_argument("--top", type=int, metavar="TOP",
                   help="full-scale count (100 %% duty). Timers differ: where duty is "
                        "CMP / (TOP + 1), as for plan's edge-aligned settings, 100 %% is "
                        "CMP = TOP + 1, so give that timer's TOP + 1 here; where it is "
                        "CMP / TOP (plan's centre-aligned), its TOP")
    c.add_argument("--min-count", type=int, default=0, metavar="N",
                   help="smallest non-zero count the driver turns on (default: any)")
    c.add_argument("--rounding", choices=("distinct", "nearest"), default="distinct",
                   help="distinct: keep steps apart where the counter has a count between "
                        "them (default); nearest: plain rounding of each step")
    cal = c.add_mutually_exclusive_group()
    cal.add_argument("--calibration", metavar="CSV",
                     help="measured light of the product: rows 'count,light' (dark level "
                          "removed, full scale included); the table is built on it")
    cal.add_argument("--calibration-capture", action="append", metavar="COUNT=CAPTURE",
                     help="a light capture taken at a count (repeat for each count, full "
                          "scale included); its mean is the measured light. Captures are "
                          "read as by 'flickerkit measure' (see the reading options, --dark)")
    j = p.add_argument_group("judgement")
    j.add_argument("--visible-step", type=float, default=None, metavar="DL",
                   help="L* step above which a step is flagged visible (default 2.3; above 0, "
                        "at most 100)")
    j.add_argument("--pwm-frequency", type=float, metavar="HZ",
                   help="PWM frequency: adds percent flicker, flicker index, IEEE 1789 region "
                        "and SVM per step, for ideal on/off pulses (exact, vectorised; at most "
                        "1e8 Hz)")
    j.add_argument("--target-region", choices=("low-risk", "no-observable-effect"),
                   default="low-risk",
                   help="IEEE 1789 region the table should stay in (default low-risk); the "
                        "summary names the first step outside it")
    from ._driveopts import add_drive_options
    from .measure import add_read_options

    add_drive_options(p, frequency=False)
    add_read_options(p)
    o = p.add_argument_group("output")
    o.add_argument("--format", choices=("table", "csv", "json", "c"), default="table",
                   help="table for the terminal (default), csv, json, or c (a C header)")
    o.add_argument("-o", "--output", metavar="FILE",
                   help="write the --format output to FILE instead of standard output")
    o.add_argument("--name", default="brightness_table", metavar="IDENT",
                   help="array name in the C header (default brightness_table)")
    o.add_argument("--xlsx", metavar="OUT.xlsx",
                   help="also write a workbook with the steps and a chart of L* by step")
    o.add_argument("--all-rows", action="store_true",
                   help=f"terminal table: show every step (default: shortened above "
                        f"{SHORT_TABLE_ROWS})")
    o.add_argument("--force", action="store_true", help="replace existing output files")
    o.add_argument("-q", "--quiet", action="store_true", help="no notes or cautions on stderr")
    p.set_defaults(run=run)


def _same_path(a: str, b: str) -> bool:
    """Tell whether two spellings name one file (resolved paths; device and inode if it exists)."""
    import os
    from pathlib import Path

    try:
        return Path(a).resolve() == Path(b).resolve() or os.path.samefile(a, b)
    except OSError:
        return False


def run(args: argparse.Namespace) -> int:
    """Run ``steps``: build the brightness table and write it out."""
    from .. import __version__
    from ..errors import SettingsError
    from ..fileio import check_writable, write_text

    if args.output and args.xlsx and _same_path(args.output, args.xlsx):
        raise SettingsError("--output and --xlsx name the same file")
    if args.output:
        check_writable(args.output, force=args.force)
    if args.xlsx:
        check_writable(args.xlsx, force=args.force, suffix=".xlsx")
    from ..validate import MAX_FREQUENCY_HZ, check_number

    check_number(args.pwm_frequency, "--pwm-frequency", high=MAX_FREQUENCY_HZ)
    check_number(args.visible_step, "--visible-step", low=0, high=100, open_low=True)
    table = build(args)

    if args.format == "json":
        from ..export.jsonout import dumps
        from . import CAUTION_TEXT

        data = table.to_dict()
        if table.flicker is not None:
            data["caution"] = CAUTION_TEXT
        text = dumps(data)
    elif args.format == "csv":
        text = to_csv(table.rows())
    elif args.format == "c":
        from ..export.cheader import table_header

        text = table_header(table, name=args.name, version=__version__)
    else:
        text = terminal_table(table, all_rows=args.all_rows)
    if args.format == "c":
        from ..export.cheader import check_c_name

        check_c_name(args.name)
    if args.xlsx:
        from ..export.stepsbook import write_steps_workbook

        write_steps_workbook(args.xlsx, table, settings_record(args), force=args.force)
    if args.output:
        write_text(args.output, text, force=args.force)
    else:
        sys.stdout.write(text)
    if not args.quiet:
        for path in (args.output, args.xlsx):
            if path:
                print(f"written: {path}", file=sys.stderr)
        if table.flicker is not None:
            from . import _CAUTION

            print(_CAUTION, file=sys.stderr, end="")
    return 0


def build(args: argparse.Namespace):
    """Build the brightness table the options describe."""
    from ..errors import SettingsError
    from ..steps import build_table_percent, make_counter, read_transfer_csv

    params: dict = {}
    curve = args.curve
    if args.curve_file:
        from ..curves import read_two_columns

        xs, ys = read_two_columns(args.curve_file, "curve file")
        curve, params = "user", {"inputs": xs, "outputs": ys, "source": args.curve_file}
    if args.gamma is not None:
        if curve != "gamma":
            raise SettingsError("--gamma belongs to --curve gamma")
        params["gamma"] = args.gamma
    counter = make_counter(bits=args.bits, top=args.top, min_count=args.min_count)
    transfer = None
    if args.calibration:
        transfer = read_transfer_csv(args.calibration, top=counter.top)
    elif args.calibration_capture:
        transfer = transfer_from_files(args, counter.top)
    drive = drive_of(args)
    return build_table_percent(
        args.steps, curve, min_percent=args.min_percent, max_percent=args.max_percent,
        off_step=args.off, bits=args.bits, top=args.top, min_count=args.min_count,
        rounding=args.rounding, transfer=transfer, visible_step=args.visible_step,
        pwm_frequency_hz=args.pwm_frequency, curve_params=params, drive=drive,
        target_region=args.target_region)


def transfer_from_files(args: argparse.Namespace, top: int):
    """Read the product's transfer from ``COUNT=CAPTURE`` options (the mean light of each)."""
    from ..errors import SettingsError
    from ..readers import read_capture
    from ..steps import transfer_from_captures
    from .measure import read_options

    counts, captures = [], []
    options = read_options(args)
    for item in args.calibration_capture:
        count, sep, path = item.partition("=")
        try:
            c = int(count)
        except ValueError:
            c = None
        if not sep or c is None or not path:
            raise SettingsError(f"--calibration-capture wants COUNT=CAPTURE, got {item!r}")
        counts.append(c)
        captures.append(read_capture(path, options))
    return transfer_from_captures(counts, captures, top=top, source="calibration captures")


#: Options of the shared drive description; any of them selects the drive-model path.
DRIVE_OPTIONS = ("drive_file", "method", "edges", "rise_us", "fall_us", "delay_us", "min_on_us",
                 "min_on_mode", "off_level", "ripple", "ripple_shape", "line_hz", "crossover",
                 "crossover_level", "channels", "phases", "counts", "dither_bits")


def drive_of(args: argparse.Namespace):
    """Return the drive the options describe, or None (ideal PWM at --pwm-frequency)."""
    if all(getattr(args, k, None) is None for k in DRIVE_OPTIONS):
        return None
    from ..errors import SettingsError
    from ._driveopts import drive_from_args

    if args.pwm_frequency is not None:
        args.frequency = args.pwm_frequency  # the drive's frequency_hz, over the file's
    drive = drive_from_args(args)
    if args.pwm_frequency is None and not args.drive_file:
        raise SettingsError("a drive description needs --pwm-frequency or a --drive-file "
                            "with frequency_hz")
    return drive


def settings_record(args: argparse.Namespace) -> dict:
    """Return the options a workbook records."""
    return {
        "command": "steps", "steps": args.steps, "curve": args.curve_file or args.curve,
        "gamma": args.gamma, "min level [%]": args.min_percent, "max level [%]": args.max_percent,
        "off step": args.off, "bits": args.bits, "TOP": args.top, "minimum on-count":
        args.min_count, "rounding": args.rounding, "calibration file": args.calibration,
        "calibration captures": ", ".join(args.calibration_capture or []) or None,
        "dark level option": args.dark,
        "visible step [L*]": args.visible_step, "PWM frequency [Hz]": args.pwm_frequency,
        "drive file": args.drive_file, "target IEEE 1789 region": args.target_region,
    }


def to_csv(rows: list[dict]) -> str:
    """Rows as CSV text (empty cells for null values)."""
    import csv
    import io

    buf = io.StringIO()
    w = csv.DictWriter(buf, fieldnames=list(rows[0]), lineterminator="\n")
    w.writeheader()
    for r in rows:
        w.writerow({k: ("" if v is None else (repr(v) if isinstance(v, float) else v))
                    for k, v in r.items()})
    return buf.getvalue()


def terminal_table(table, *, all_rows: bool = False) -> str:
    """Format the table and its summary for the terminal."""
    from ..export.table import fmt, render

    rows = table.rows()
    flick = table.flicker is not None
    headers = ["step", "count", "duty [%]", "light [%]", "L*", "dL*", "Weber [%]", "visible"]
    if table.transfer is not None:
        headers[3:3] = ["uncal. count"]
    if flick:
        headers += ["PF [%]", "FI", "IEEE 1789", "SVM"]
    shown = list(range(len(rows)))
    if not all_rows and len(rows) > SHORT_TABLE_ROWS:
        shown = shown[:SHORT_TABLE_ROWS // 2] + [-1] + shown[-SHORT_TABLE_ROWS // 4:]
    out_rows = []
    for i in shown:
        if i < 0:
            out_rows.append(["..."] + [""] * (len(headers) - 1))
            continue
        r = rows[i]
        weber = r["weber"]
        cells = [str(r["step"]), str(r["count"]), fmt(100 * r["duty"], ".4g"),
                 fmt(100 * r["relative_light"], ".4g"), fmt(r["lightness"], ".2f"),
                 fmt(r["delta_lightness"], ".2f"),
                 ("from off" if weber is None and i > 0 else fmt(
                     None if weber is None else 100 * weber, ".3g")),
                 "yes" if r["visible"] else ""]
        if table.transfer is not None:
            cells[3:3] = [str(r["uncalibrated_count"])]
        if flick:
            cells += [fmt(r["percent_flicker"], ".3g"), fmt(r["flicker_index"], ".3g"),
                      r["ieee1789_region"] or "–", fmt(r["svm"], ".3g")]
        out_rows.append(cells)
    text = render(headers, out_rows)
    if len(shown) < len(rows):
        text += f"({len(rows) - len(shown) + 1} steps not shown; --all-rows or --format csv)\n"
    return text + "\n" + summary_text(table)


def summary_text(table) -> str:
    """Summary lines for the terminal."""
    s = table.summary()
    cv = s["curve"]

    def short(v: list[int]) -> str:
        if not v:
            return "none"
        return ", ".join(map(str, v[:12])) + (f", ... ({len(v)} in all)" if len(v) > 12 else "")

    lines = [
        f"curve: {cv['method']} ({cv['description']}); range {100 * cv['min_level']:g} to "
        f"{100 * cv['max_level']:g} %{', step 0 off' if cv['off_step'] else ''}",
        f"counter: {table.counter.describe()}; duty = count / TOP; rounding {s['rounding']}",
        f"distinct counts: {s['distinct_counts']} of {s['steps']} (steps lost {s['steps_lost']});"
        f" collapsed steps: {short(s['collapsed_steps'])}",
        f"strictly rising from step {s['monotonic_from_step']}; lit steps with no light: "
        f"{short(s['lit_steps_dark'])}",
    ]
    if s["lowest_lit"]:
        lo = s["lowest_lit"]
        lines.append(f"lowest lit level: step {lo['step']}, count {lo['count']}, "
                     f"{100 * lo['relative_light']:.4g} % light, L* {lo['lightness']:.2f}")
    if s["largest_jump"]:
        j = s["largest_jump"]
        lines.append(f"largest step: {j['delta_lightness']:.3f} L* at step {j['step']} "
                     f"(count {j['from_count']} -> {j['to_count']})")
    lines.append(f"steps above {s['visible_step']:g} L*: {len(s['visible_steps'])}"
                 f" ({short(s['visible_steps'])}); threshold: {s['visible_step_source']}")
    lines.append(f"bits needed for every step to be at least one count apart: {s['bits_needed']}")
    if "calibration" in s:
        c = s["calibration"]
        lines.append(f"calibrated on {c['source']} ({c['points']} points; dark up to count "
                     f"{c['dead_zone_to_count']}); largest count shift {c['largest_count_shift']};"
                     f" uncalibrated on this product: largest step "
                     f"{c['uncalibrated_largest_jump']:.3f} L*, "
                     f"{c['uncalibrated_dark_steps']} lit steps dark")
    if "flicker" in s:
        lines += table.flicker.summary_lines()
    if "warning" in s.get("drive_light", {}):
        lines.append("warning: " + s["drive_light"]["warning"])
    return "\n".join(lines) + "\n"
