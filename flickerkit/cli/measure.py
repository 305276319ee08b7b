"""``flickerkit measure``: figures of measured light captures."""

from __future__ import annotations

import argparse
import sys

HELP = "percent flicker, flicker index, frequency and IEEE 1789 region of captures"

DESCRIPTION = """\
Measure photodiode captures: fundamental modulation frequency, percent flicker
(modulation depth) and flicker index over whole periods, per-period median and
worst, the modulation spectrum, the noise floor, and the IEEE 1789-2015 region.

Files: text tables (.csv, .txt, .tsv, .dat; comma, semicolon, tab or space
separated; decimal comma; comment/metadata lines; a time column with its unit
in the header, or --sample-rate), .wav and .npy.

examples:
  flickerkit measure bench/level_100.csv
  flickerkit measure scope.csv --column CH2 --dark 0.0031
  flickerkit measure logger.txt --sample-rate 50000 --json > result.json
  flickerkit measure caps/*.csv --xlsx record.xlsx
"""


def add_read_options(p: argparse.ArgumentParser) -> None:
    """Options for reading captures (shared by every command that reads them)."""
    g = p.add_argument_group("reading captures")
    g.add_argument("-c", "--column", metavar="NAME|N",
                   help="signal column by header name or 1-based number (WAV: channel); "
                        "default: the first column that is not time")
    g.add_argument("-r", "--sample-rate", type=float, metavar="HZ",
                   help="sample rate in Hz, for files without a time column (overrides one)")
    g.add_argument("--time-unit", metavar="UNIT",
                   help="unit of the time column: s, ms, us, µs or ns (default: from the "
                        "header, else s)")
    g.add_argument("--dark", metavar="LEVEL|FILE",
                   help="dark level to subtract: a number in the signal's unit, or a dark "
                        "capture file whose mean is used")
    g.add_argument("--resample", action="store_true",
                   help="resample non-uniform or unordered time onto a uniform grid "
                        "(default: refuse such files)")
    g.add_argument("--fill-gaps", action="store_true",
                   help="interpolate blank or NaN cells (default: refuse them)")


def read_options(args: argparse.Namespace, quantity: str = "light"):
    from ..readers import ReadOptions

    dark = args.dark
    if dark is not None:
        try:
            dark = float(dark)
        except ValueError:
            pass
    return ReadOptions(column=args.column, sample_rate_hz=args.sample_rate,
                       time_unit=args.time_unit, dark=dark, resample=args.resample,
                       fill_gaps=args.fill_gaps, quantity=quantity)


def add_parser(sub) -> None:
    p = sub.add_parser("measure", help=HELP, description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("captures", nargs="+", metavar="CAPTURE", help="capture files")
    add_read_options(p)
    g = p.add_argument_group("analysis")
    g.add_argument("--ieee1789-mode", choices=("fundamental", "per-harmonic"),
                   default="fundamental",
                   help="headline IEEE 1789 region from the overall percent flicker at the "
                        "fundamental (default, as the standard states it) or from each "
                        "harmonic at its own frequency (this project's extension); both are "
                        "always in the JSON")
    g.add_argument("--harmonics", type=int, default=20, metavar="N",
                   help="harmonics to report (default 20)")
    o = p.add_argument_group("output")
    o.add_argument("--json", action="store_true",
                   help="print a JSON array (one object per capture) instead of the table")
    o.add_argument("--xlsx", metavar="OUT.xlsx", help="also write a workbook")
    o.add_argument("--force", action="store_true", help="replace an existing workbook")
    o.add_argument("-q", "--quiet", action="store_true", help="no progress or cautions on stderr")
    add_batch_options(p)
    p.set_defaults(run=run)


def add_batch_options(p: argparse.ArgumentParser) -> None:
    """Options for measuring many captures at once."""
    g = p.add_argument_group("many captures")
    g.add_argument("-j", "--workers", type=int, metavar="N",
                   help="worker processes (default: one per CPU; 1 = no workers)")
    g.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on a Dask distributed scheduler (tcp://host:8786) instead of "
                        "local workers; needs the 'distributed' extra")


def run(args: argparse.Namespace) -> int:
    from ..errors import SettingsError
    from ..fileio import check_writable

    if args.harmonics < 1:
        raise SettingsError("--harmonics must be at least 1")
    if args.workers is not None and args.workers < 1:
        raise SettingsError("--workers must be at least 1")
    if args.xlsx:
        check_writable(args.xlsx, force=args.force)
    from ..assess import AssessSettings

    settings = AssessSettings(ieee1789_mode=args.ieee1789_mode, harmonics=args.harmonics)
    outcomes = run_batch(args, args.captures, read_options(args), settings)
    records = [o.record for o in outcomes if o.record is not None]
    failed = [o for o in outcomes if o.record is None]
    for o in failed:
        print(f"flickerkit: error: {o.error}", file=sys.stderr)
    if failed and len(outcomes) > 1:
        print(f"flickerkit: {len(failed)} of {len(outcomes)} captures could not be measured"
              + ("; the others are reported" if records else ""), file=sys.stderr)
    if not records:
        return 1
    if args.json:
        from ..export.jsonout import dumps

        sys.stdout.write(dumps(records))
    else:
        sys.stdout.write(summary_table(records))
    if args.xlsx:
        from ..export.workbook import write_measure_workbook

        write_measure_workbook(args.xlsx, records, settings_record(args), force=args.force)
        if not args.quiet:
            print(f"workbook written: {args.xlsx}", file=sys.stderr)
    if not args.quiet:
        from . import _CAUTION

        print(_CAUTION, file=sys.stderr, end="")
    return 1 if failed else 0


def run_batch(args: argparse.Namespace, paths: list[str], options, settings):
    """Measure ``paths`` with the batch options; report progress and interruption."""
    from ..batch import measure_many

    bar = None
    if not args.quiet and len(paths) >= 3:
        from tqdm import tqdm

        bar = tqdm(total=len(paths), file=sys.stderr, disable=None, unit="capture",
                   leave=False)
    done = []

    def tick(outcome) -> None:
        done.append(outcome)
        if bar is not None:
            bar.update(1)

    try:
        return measure_many(paths, options, settings, workers=args.workers,
                            scheduler=args.scheduler, on_result=tick)
    except KeyboardInterrupt:
        if bar is not None:
            bar.close()
        raise _Interrupted(len(done), len(paths)) from None
    finally:
        if bar is not None:
            bar.close()


class _Interrupted(KeyboardInterrupt):
    def __init__(self, done: int, total: int) -> None:
        super().__init__(f"interrupted after {done} of {total} captures; no output was written")


def settings_record(args: argparse.Namespace) -> dict:
    """The settings a workbook records."""
    return {
        "command": "measure",
        "captures": ", ".join(args.captures),
        "column": args.column, "sample rate option [Hz]": args.sample_rate,
        "time unit option": args.time_unit, "dark level option": args.dark,
        "resample": args.resample, "fill gaps": args.fill_gaps,
        "IEEE 1789 headline mode": args.ieee1789_mode, "harmonics reported": args.harmonics,
        "IEEE 1789 boundaries": "RP1 low-risk 0.025f (<90 Hz), 0.08f (90-1250 Hz); RP2 NOEL "
                                "0.01f, 0.0333f (90-3000 Hz); recalled, not read in the "
                                "standard (methods brief §2.2)",
    }


def summary_table(records: list[dict]) -> str:
    """Terminal table of measured captures, then their warnings."""
    from ..export.table import fmt, render

    headers = ["capture", "f [Hz]", "percent flicker [%]", "flicker index", "IEEE 1789",
               "periods", "noise floor [%]"]
    rows = []
    for r in records:
        ieee = r.get("ieee1789") or {}
        rows.append([r["label"], fmt(r["frequency_hz"], ".5g"), fmt(r["percent_flicker"], ".3f"),
                     fmt(r["flicker_index"], ".4f"), ieee.get("region", "–"),
                     str(r["periods"]), fmt((r.get("noise") or {}).get("percent_flicker_floor"),
                                            ".2g")])
    out = render(headers, rows)
    for r in records:
        for w in r["warnings"]:
            out += f"warning: {r['label']}: {w}\n"
    return out
