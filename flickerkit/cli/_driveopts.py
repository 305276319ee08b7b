"""Options that describe a drive, shared by ``drive``, ``plan`` and ``camera`` (not a command)."""

from __future__ import annotations

import argparse


def add_drive_options(p: argparse.ArgumentParser, *, frequency: bool = True) -> None:
    """Drive description options; a TOML file (--drive-file) gives defaults for them."""
    g = p.add_argument_group("drive description (options override --drive-file)")
    g.add_argument("--drive-file", metavar="DRIVE.toml",
                   help="TOML drive description: keys method, frequency_hz, off_level, "
                        "turn_on_delay_s, min_on_time_s, min_on_mode, crossover, channels, "
                        "phase_offsets_deg, counts_per_period, dither_bits; tables [edges] "
                        "(kind, rise_s, fall_s) and [ripple] (percent, line_frequency_hz, shape); "
                        "off_level and crossover are fractions 0-1 there, 'levels' percent")
    g.add_argument("--method", choices=("pwm", "analogue", "hybrid"),
                   help="dimming method (default pwm)")
    if frequency:
        g.add_argument("-f", "--frequency", type=float, metavar="HZ",
                       help="PWM frequency in Hz (default 1000; above 0, at most 1e8)")
    g.add_argument("--edges", choices=("ideal", "first-order", "linear"),
                   help="edge model: ideal, first-order (time constants) or linear (slew "
                        "time of a full swing)")
    g.add_argument("--rise-us", type=float, metavar="US",
                   help="rise time constant or slew time [us]")
    g.add_argument("--fall-us", type=float, metavar="US",
                   help="fall time constant or slew time [us]")
    g.add_argument("--delay-us", type=float, metavar="US", help="turn-on delay [us]")
    g.add_argument("--min-on-us", type=float, metavar="US",
                   help="shortest light pulse the driver makes [us]")
    g.add_argument("--min-on-mode", choices=("clamp", "skip"),
                   help="a shorter pulse is stretched (clamp, default) or not made (skip)")
    g.add_argument("--off-level", type=float, metavar="FRACTION",
                   help="light while off, as a fraction of full output (leakage, floor)")
    g.add_argument("--ripple", type=float, metavar="PERCENT",
                   help="line ripple on the light, as its own percent flicker")
    g.add_argument("--ripple-shape", choices=("sine", "rectified"), help="ripple shape")
    g.add_argument("--line-hz", type=float, metavar="HZ",
                   help="mains frequency; ripple at twice it (default 50)")
    g.add_argument("--crossover-level", type=float, metavar="PERCENT",
                   help="hybrid: analogue above this dimming level, PWM below, in percent "
                        "(default 10)")
    g.add_argument("--crossover", type=float, help=argparse.SUPPRESS)  # refused: see below
    g.add_argument("--channels", type=int, metavar="N",
                   help="channels driven together (1 to 64)")
    g.add_argument("--phases", metavar="DEG,DEG,...",
                   help="channel phase offsets in degrees (default evenly spread)")
    g.add_argument("--counts", type=int, metavar="N",
                   help="timer counts per PWM period; duty rounds to whole counts (1 to 2^32)")
    g.add_argument("--dither-bits", type=int, metavar="M",
                   help="first-order sigma-delta dither bits across PWM periods (needs "
                        "--counts; 0 to 12)")


def _us(v):
    return None if v is None else v * 1e-6


def drive_from_args(args: argparse.Namespace):
    """Build the Drive from --drive-file and the options."""
    from ..drivefile import drive_from_mapping, read_drive_file
    from ..errors import SettingsError

    data: dict = {}
    if getattr(args, "drive_file", None):
        data = read_drive_file(args.drive_file).data
    edges = dict(data.pop("edges", {}) or {})
    ripple = data.pop("ripple", None)
    ripple = dict(ripple) if ripple else None

    def put(key, value):
        if value is not None:
            data[key] = value

    put("method", args.method)
    if hasattr(args, "frequency"):
        put("frequency_hz", args.frequency)
    put("turn_on_delay_s", _us(args.delay_us))
    put("min_on_time_s", _us(args.min_on_us))
    put("min_on_mode", args.min_on_mode)
    put("off_level", args.off_level)
    if getattr(args, "crossover", None) is not None:
        raise SettingsError("--crossover is now --crossover-level PERCENT (dimming levels are "
                            "percent on the command line)")
    if getattr(args, "crossover_level", None) is not None:
        data["crossover"] = args.crossover_level / 100.0
    put("channels", args.channels)
    put("counts_per_period", args.counts)
    put("dither_bits", args.dither_bits)
    if args.phases:
        try:
            data["phase_offsets_deg"] = [float(x) for x in args.phases.split(",") if x.strip()]
        except ValueError:
            raise SettingsError(f"--phases: {args.phases!r} is not a list of degrees") from None
    if args.edges is not None:
        edges["kind"] = args.edges
    if args.rise_us is not None:
        edges["rise_s"] = args.rise_us * 1e-6
    if args.fall_us is not None:
        edges["fall_s"] = args.fall_us * 1e-6
    if edges and "kind" not in edges and (edges.get("rise_s") or edges.get("fall_s")):
        edges["kind"] = "first-order"
    if edges:
        data["edges"] = edges
    if args.ripple is not None or args.ripple_shape or args.line_hz is not None:
        ripple = ripple or {}
        if args.ripple is not None:
            ripple["percent"] = args.ripple
        if args.ripple_shape:
            ripple["shape"] = args.ripple_shape
        if args.line_hz is not None:  # 0 is a value to refuse, not "unset"
            ripple["line_frequency_hz"] = args.line_hz
        if "percent" not in ripple:
            raise SettingsError("--ripple-shape/--line-hz need --ripple PERCENT")
    if ripple:
        data["ripple"] = ripple
    return drive_from_mapping(data, source=args.drive_file or "drive options")


def file_levels(args: argparse.Namespace):
    """Levels listed in the drive file (key ``levels``, beside or in ``[drive]``), or None."""
    if not getattr(args, "drive_file", None):
        return None
    from ..drivefile import read_drive_file

    return read_drive_file(args.drive_file).levels


def parse_levels(text: str):
    """Levels from ``"100,50,10,1"`` (percent) or a range ``"100:0.1:200"`` (log-spaced).

    Returns fractions 0-1.
    """
    import numpy as np

    from ..errors import SettingsError
    from ..validate import MAX_LEVELS

    t = str(text).strip()
    try:
        if ":" in t:
            parts = t.split(":")
            if len(parts) not in (2, 3):
                raise ValueError
            a, b = float(parts[0]), float(parts[1])
            n = int(parts[2]) if len(parts) == 3 else 25
            if n < 2:
                raise SettingsError("--levels range needs at least 2 points")
            if n > MAX_LEVELS:
                raise SettingsError(f"--levels range: {n} points is above the limit of "
                                    f"{MAX_LEVELS}")
            if a <= 0 or b <= 0:
                raise SettingsError("--levels range ends must be above 0 %")
            vals = np.geomspace(a, b, n)
        else:
            vals = np.array([float(x) for x in t.split(",") if x.strip()])
    except SettingsError:
        raise
    except ValueError:
        raise SettingsError(f"--levels: {text!r} is not a list of percents (100,50,1) or a "
                            f"range (100:0.1:200)") from None
    if vals.size == 0:
        raise SettingsError("--levels: no level given")
    if vals.size > MAX_LEVELS:
        raise SettingsError(f"--levels: {vals.size} levels is above the limit of {MAX_LEVELS}")
    bad = vals[(vals <= 0) | (vals > 100)]
    if bad.size:
        raise SettingsError(f"--levels: level {bad[0]:g} % is outside (0, 100] %")
    return vals / 100.0


def emit(args: argparse.Namespace, out: dict, text, write_workbook, reminder: str, *,
         draw=None) -> int:
    """Print a modelled-light result (JSON with the caution, or text), write its workbook,
    and remind on stderr that a model is not a measurement."""
    import sys

    from . import _CAUTION, CAUTION_TEXT

    if args.json:
        from ..export.jsonout import dumps

        sys.stdout.write(dumps({**out, "caution": CAUTION_TEXT}))
    else:
        sys.stdout.write(text(out))
    pictures = None
    if getattr(args, "pictures", None) and draw is not None:
        from ..export.figures import write_pictures

        pictures = draw(out)
        write_pictures(pictures, args.pictures, force=args.force)
        if not args.quiet:
            print(f"pictures written: {args.pictures}/ ({len(pictures)} as PNG and SVG)",
                  file=sys.stderr)
    if args.xlsx:
        write_workbook(args.xlsx, out, force=args.force, pictures=pictures)
        if not args.quiet:
            print(f"workbook written: {args.xlsx}", file=sys.stderr)
    if not args.quiet:
        print(reminder, file=sys.stderr)
        print(_CAUTION, file=sys.stderr, end="")
    return 0
