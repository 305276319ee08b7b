"""``flickerkit measure``: figures of measured light captures."""

from __future__ import annotations

import argparse
import sys

HELP = "percent flicker, flicker index, IEEE 1789 region, SVM and Pst LM of captures"

DESCRIPTION = """\
Measure photodiode captures: fundamental modulation frequency, percent flicker
(modulation depth) and flicker index over whole periods, per-period median and
worst, the modulation spectrum, the noise floor, the IEEE 1789-2015 region,
the stroboscopic visibility measure SVM (CIE TN 006 / IEC TR 63158), the
short-term flicker severity of light Pst LM (IEC 61000-4-15 chain) and the
filtered percent flicker of California JA10.6.

Pst LM needs at least 15 s of capture (60 s for a full observation); shorter
captures report it as null with a warning. Its default calibration is
PROVISIONAL (IEC TR 61547-1's light constants were not available): give a
laboratory's constants with --pst-calibration FILE.toml for compliance work.
With --signal voltage the captures are mains voltage and the result is the
supply's Pst (IEC 61000-4-15 voltage flickermeter), not a light metric.

Files: text tables (.csv, .txt, .tsv, .dat; comma, semicolon, tab or space
separated; decimal comma; metadata lines; a names row and optionally a units
row; a time column with its unit, or a sample index with the time base the
file states, or --sample-rate), .wav, .npy, and raw binary .raw/.bin
(--raw-dtype, --sample-rate). A column of whole numbers 0, 1, 2... is a sample
index, never seconds. Each capture's read summary (layout, column and unit,
time base, rate, samples, lines skipped) goes to stderr; --peek shows it and
the first rows without measuring. Captures larger than memory are read block
by block, with the same results.

examples:
  flickerkit measure bench/level_100.csv
  flickerkit measure scope.csv --column CH2 --dark 0.0031
  flickerkit measure scope.csv --peek
  flickerkit measure logger.txt --sample-rate 50000 --json > result.json
  flickerkit measure caps/*.csv --xlsx record.xlsx
  flickerkit measure long_60s.csv --pst-calibration lab.toml --pst-observation 60
  flickerkit measure mains.wav --signal voltage --lamp 230V --json
"""


def add_read_options(p: argparse.ArgumentParser) -> None:
    """Add the options for reading captures (shared by every command that reads them)."""
    g = p.add_argument_group("reading captures")
    g.add_argument("-c", "--column", metavar="NAME|N",
                   help="signal column by header name or 1-based number (WAV: channel); "
                        "default: the one column whose name or unit says light (photodiode, "
                        "lux...), else the first that is not time, with a warning")
    g.add_argument("-r", "--sample-rate", type=float, metavar="HZ",
                   help="sample rate in Hz, for files without a time column (overrides one; "
                        "above 0, at most 1e10)")
    g.add_argument("--time-unit", metavar="UNIT",
                   help="unit of the time column: s, ms, us, µs or ns, in any case (default: "
                        "from the header or units row; without one, s if that gives at least "
                        "1 kHz, else refused); overrides the file's unit, with a warning")
    g.add_argument("--dark", metavar="LEVEL|FILE",
                   help="dark level to subtract: a number in the signal's unit, or a dark "
                        "capture file whose mean is used")
    g.add_argument("--resample", action="store_true",
                   help="resample non-uniform or unordered time onto a uniform grid "
                        "(default: refuse such files)")
    g.add_argument("--fill-gaps", action="store_true",
                   help="interpolate blank or NaN cells (default: refuse them)")
    g.add_argument("--raw-dtype", metavar="TYPE",
                   help="sample format of .raw/.bin files: float32, float64, int16, uint16, "
                        "int32, ... (little-endian; needs --sample-rate)")
    g.add_argument("--raw-channels", type=int, default=1, metavar="N",
                   help="interleaved channels in a .raw/.bin file (default 1; pick one with "
                        "--column)")
    s = g.add_mutually_exclusive_group()
    s.add_argument("--stream", dest="stream", action="store_true", default=None,
                   help="read block by block in bounded memory (default: automatic above "
                        "2**25 samples or 1 GiB of text)")
    s.add_argument("--no-stream", dest="stream", action="store_false",
                   help="always read the whole capture into memory")


def read_options(args: argparse.Namespace, quantity: str = "light"):
    """Check the reading options and build the read options for a ``quantity`` capture.

    Raises
    ------
    SettingsError
        For a sample rate [Hz] out of range, an unknown time unit or a bad
        channel count.
    """
    from ..errors import SettingsError
    from ..readers import TIME_UNITS, build_read_options
    from ..readers.units import OPTION_TIME_UNITS
    from ..validate import MAX_SAMPLE_RATE_HZ, check_count, check_number

    check_number(args.sample_rate, "--sample-rate", low=0, high=MAX_SAMPLE_RATE_HZ,
                 open_low=True)
    if args.time_unit is not None and args.time_unit.strip().lower() not in TIME_UNITS:
        raise SettingsError(f"--time-unit {args.time_unit!r} is not a unit of time; use one of "
                            f"{', '.join(OPTION_TIME_UNITS)} (any case: MS is milliseconds)")
    if getattr(args, "raw_channels", None) is not None:
        check_count(args.raw_channels, 1024, "--raw-channels")
    return build_read_options(column=args.column, sample_rate_hz=args.sample_rate,
                              time_unit=args.time_unit, dark=args.dark, resample=args.resample,
                              fill_gaps=args.fill_gaps, quantity=quantity,
                              raw_dtype=getattr(args, "raw_dtype", None),
                              channels=getattr(args, "raw_channels", 1),
                              stream=getattr(args, "stream", None))


def add_parser(sub) -> None:
    """Add the ``measure`` command and its options to the subcommand parsers ``sub``."""
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
                   help="harmonics to report (default 20; 1 to 1000)")
    g.add_argument("--signal", choices=("light", "voltage"), default="light",
                   help="what the captures hold: light (default) or the mains voltage, "
                        "which gives the supply's Pst (key 'pst') instead of light metrics")
    g.add_argument("--svm-threshold", choices=("power", "sigmoid"), default="power",
                   help="SVM threshold curve: power (default; Perz et al. 2018, sourced) or "
                        "sigmoid (recalled, unverified; to see how much a verdict depends "
                        "on it)")
    g.add_argument("--svm-lower", type=float, default=80.0, metavar="HZ",
                   help="lowest component frequency in the SVM sum (default 80 Hz; the "
                        "upper end is 2000 Hz)")
    g.add_argument("--pst-calibration", metavar="NAME|FILE.toml",
                   help="flickermeter constants: a built-in name (light-provisional-230v "
                        "[default for light], light-provisional-120v, iec61000-4-15-230v, "
                        "iec61000-4-15-120v) or a TOML file with a laboratory's constants")
    g.add_argument("--pst-observation", type=float, metavar="S",
                   help="observation time of one Pst in seconds (default: the "
                        "calibration's, 60 s for light, 600 s for voltage; at least 10)")
    g.add_argument("--detector-bandwidth", type=float, metavar="HZ", dest="detector_bandwidth",
                   help="bandwidth of the detector and its amplifier; above half the sample "
                        "rate, content the capture shows near the top of its band may be "
                        "folded down from above and verdicts become insufficient data")
    g.add_argument("--lamp", choices=("auto", "230V", "120V"), default="auto",
                   help="--signal voltage: reference lamp constants (default auto: 230V for "
                        "50 Hz mains, 120V for 60 Hz)")
    o = p.add_argument_group("output")
    o.add_argument("--json", action="store_true",
                   help="print a JSON array (one object per capture) instead of the table")
    o.add_argument("--xlsx", metavar="OUT.xlsx", help="also write a workbook")
    o.add_argument("--force", action="store_true",
                   help="replace an existing workbook (and pictures)")
    o.add_argument("-q", "--quiet", action="store_true",
                   help="no progress, read summary or cautions on stderr")
    o.add_argument("--peek", action="store_true",
                   help="only show what would be read from each capture (layout, column and "
                        "unit, time base, sample rate, samples, lines skipped) and its first "
                        "rows; measure nothing")
    from .report import add_picture_option

    add_picture_option(p)
    add_batch_options(p)
    p.set_defaults(run=run)


def _pictures(args, outcomes, records, settings):
    """Draw the waveform and spectrum of each measured capture into ``args.pictures``.

    ``records`` are :func:`distinct_records` of ``outcomes``, in their order: the pictures
    take the labels the table and workbook show (equal file names in two folders).
    """
    from ..errors import FlickerkitError
    from ..export.figures import (capture_picture_names, capture_pictures, check_picture_names,
                                  trace_of, write_pictures)
    from ..readers import read_capture

    opts = read_options(args, args.signal)
    traces = {}
    done = [o for o in outcomes if o.record is not None]  # in the order of records
    for o, rec in zip(done, records):
        try:
            cap = read_capture(o.path, opts)
        except (FlickerkitError, OSError):
            continue
        traces[rec["label"]] = trace_of(cap, rec.get("frequency_hz"))
    check_picture_names(args.pictures, capture_picture_names(records, traces), force=args.force)
    pics = capture_pictures(records, traces, threshold=settings.svm_threshold)
    write_pictures(pics, args.pictures, force=args.force)
    if not args.quiet:
        print(f"pictures written: {args.pictures}/ ({len(pics)} as PNG and SVG)",
              file=sys.stderr)
    return pics


def add_batch_options(p: argparse.ArgumentParser) -> None:
    """Add the options for measuring many captures at once."""
    g = p.add_argument_group("many captures")
    g.add_argument("-j", "--workers", type=int, metavar="N",
                   help="worker processes (default: one per CPU; 1 = no workers)")
    g.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on a Dask distributed scheduler (tcp://host:8786) instead of "
                        "local workers; needs the 'distributed' extra")


def run(args: argparse.Namespace) -> int:
    """Measure the captures and print their figures; return the exit status.

    The figures go out as a table or JSON, and to a workbook and pictures
    when asked. The status is 1 when any capture could not be measured (the
    others are still reported), else 0; ``--peek`` only shows what would be
    read.
    """
    from ..fileio import check_writable

    from ..validate import MAX_HARMONICS, check_count

    check_count(args.harmonics, MAX_HARMONICS, "--harmonics")
    if args.workers is not None:
        check_count(args.workers, 1024, "--workers")
    if getattr(args, "peek", False):
        from ..errors import SettingsError

        given = [o for o, v in (("--xlsx", args.xlsx), ("--json", args.json),
                                ("--pictures", args.pictures)) if v]
        if given:
            raise SettingsError(f"--peek only shows what would be read and measures nothing; "
                                f"it cannot be combined with {', '.join(given)}")
    if args.xlsx:
        check_writable(args.xlsx, force=args.force, suffix=".xlsx")
    if getattr(args, "peek", False):
        return peek(args.captures, read_options(args, args.signal))
    if args.pictures:
        from ..export.figures import check_picture_folder

        check_picture_folder(args.pictures)
    settings = assess_settings(args)
    encoded: dict[int, str] = {}  # --json: each record's text, written as it arrives
    if args.json:
        from ..export.jsonout import dumps_object_item
        from . import CAUTION_TEXT

        def encode(outcome) -> None:  # while the workers measure the next captures
            if outcome.record is not None:
                encoded[id(outcome)] = dumps_object_item({**outcome.record,
                                                          "caution": CAUTION_TEXT})
    outcomes = run_batch(args, args.captures, read_options(args, args.signal), settings,
                         on_result=encode if args.json else None)
    records, label_notes = distinct_records(outcomes)
    if not args.quiet:
        for note in label_notes:
            print(f"flickerkit: note: {note}", file=sys.stderr)
    failed = [o for o in outcomes if o.record is None]
    if not args.quiet:
        print_read(records)
    for o in failed:
        print(f"flickerkit: error: {o.error}", file=sys.stderr)
    if failed and len(outcomes) > 1:
        print(f"flickerkit: {len(failed)} of {len(outcomes)} captures could not be measured"
              + ("; the others are reported" if records else ""), file=sys.stderr)
    if not records:
        return 1
    # pictures before any output: a refusal (an existing picture) leaves stdout empty
    pictures = None
    if args.pictures and args.signal == "light":
        pictures = _pictures(args, outcomes, records, settings)
    elif args.pictures and not args.quiet:
        print("flickerkit: note: --pictures draws light captures only; none drawn",
              file=sys.stderr)
    if args.json:
        from ..export.jsonout import dumps_list, dumps_object_item
        from . import CAUTION_TEXT

        done = [o for o in outcomes if o.record is not None]  # in the order of records
        sys.stdout.write(dumps_list([
            (encoded.get(id(o)) if r == o.record else None)  # a relabelled one is written again
            or dumps_object_item({**r, "caution": CAUTION_TEXT})
            for o, r in zip(done, records)]))
    elif args.signal == "voltage":
        sys.stdout.write(voltage_table(records))
    else:
        sys.stdout.write(summary_table(records))
    if args.xlsx:
        from ..export.workbook import VOLTAGE_COLUMNS, MEASURE_COLUMNS, write_measure_workbook

        columns = VOLTAGE_COLUMNS if args.signal == "voltage" else MEASURE_COLUMNS
        write_measure_workbook(args.xlsx, records, settings_record(args, settings),
                               force=args.force, columns=columns, pictures=pictures)
        if not args.quiet:
            print(f"workbook written: {args.xlsx}", file=sys.stderr)
    if not args.quiet:
        from . import _CAUTION

        print(_CAUTION, file=sys.stderr, end="")
    return 1 if failed else 0


def print_read(records: list[dict]) -> None:
    """Print one line per capture on stderr saying what was read."""
    from ..capture import describe_read

    for r in records:
        if r.get("read"):
            print(f"read: {r['label']}: {describe_read(r['read'])}", file=sys.stderr)


#: Rows ``--peek`` shows.
PEEK_ROWS = 5


def peek(paths: list[str], options) -> int:
    """Print what each capture's reading finds and its first rows, without measuring."""
    import numpy as np

    from ..capture import describe_read
    from ..errors import FlickerkitError
    from ..readers import read_capture

    failed = 0
    for path in paths:
        try:
            cap = read_capture(path, options)
        except FlickerkitError as exc:
            print(f"flickerkit: error: {exc}", file=sys.stderr)
            failed += 1
            continue
        read = cap.read.to_dict() if cap.read else {}
        print(f"{path}: {describe_read(read)}" if read else path)
        for key in ("layout", "column", "unit", "channel_choice", "channels", "time_base",
                    "sample_rate_hz", "samples", "rows_skipped"):
            if read.get(key) not in (None, [], ""):
                value = read[key]
                print(f"  {key.replace('_', ' ')}: "
                      f"{', '.join(value) if isinstance(value, list) else value}")
        for n in cap.notes:
            print(f"  note: {n}")
        for w in cap.warnings:
            print(f"  warning: {w}")
        first = np.asarray(cap.samples[:PEEK_ROWS], dtype=float)
        print(f"  first rows (sample, time from the first sample [s], {read.get('column')}):")
        for i, v in enumerate(first):
            print(f"    {i:>6d}  {i / cap.sample_rate_hz:<14.8g}  {v:.8g}")
    return 1 if failed else 0


def distinct_records(outcomes) -> tuple[list[dict], list[str]]:
    """Return the measured records, each with a label of its own, and notes on the changes.

    Folders tell equal file names apart; each note says which label was
    changed and why.
    """
    from ..labels import unique_labels

    done = [o for o in outcomes if o.record is not None]
    labels, notes = unique_labels([o.record["label"] for o in done], [o.path for o in done])
    records = []
    for o, lab, note in zip(done, labels, notes):
        r = dict(o.record)
        if note:
            r["label"] = lab
            r["notes"] = [*r.get("notes", []), note]
        records.append(r)
    return records, [n for n in notes if n]


def calibration_option(value: str | None):
    """Resolve ``--pst-calibration``: a built-in name, or a TOML file (by suffix or path)."""
    if value is None:
        return None
    from pathlib import Path

    from ..flickermeter import CALIBRATIONS, load_calibration

    if value in CALIBRATIONS:
        return value
    if value.lower().endswith(".toml") or Path(value).exists():
        return load_calibration(value)
    from ..errors import SettingsError

    raise SettingsError(f"--pst-calibration {value!r} is neither a built-in calibration "
                        f"({', '.join(CALIBRATIONS)}) nor a .toml file")


def assess_settings(args: argparse.Namespace):
    """Build the AssessSettings the options describe (shared by the commands that assess)."""
    from ..assess import AssessSettings

    from ..errors import SettingsError
    from ..flickermeter import get_calibration

    from ..validate import check_number

    # upper ends here; the lower ends are checked where the values are used
    check_number(args.svm_lower, "--svm-lower", high=2000)
    check_number(args.pst_observation, "--pst-observation", high=86_400)
    cal = calibration_option(args.pst_calibration)
    if cal is not None and get_calibration(cal).signal != args.signal:
        name = get_calibration(cal).name
        raise SettingsError(f"--pst-calibration {name!r} is for {get_calibration(cal).signal} "
                            f"captures, but --signal is {args.signal}")
    return AssessSettings(
        ieee1789_mode=args.ieee1789_mode, harmonics=args.harmonics,
        svm_threshold=args.svm_threshold, svm_f_min_hz=args.svm_lower,
        pst_calibration=cal, pst_observation_s=args.pst_observation, lamp=args.lamp,
        detector_bandwidth_hz=getattr(args, "detector_bandwidth", None))


def run_batch(args: argparse.Namespace, paths: list[str], options, settings, *,
              on_result=None):
    """Measure ``paths`` with the batch options; report progress and interruption.

    ``on_result`` is called with each outcome as it arrives, in input order.
    """
    from ..batch import measure_many

    bar = None
    if not args.quiet and len(paths) >= 3:
        from tqdm import tqdm

        bar = tqdm(total=len(paths), file=sys.stderr, disable=None, unit="capture",
                   leave=False)
    done = []

    def tick(outcome) -> None:
        done.append(outcome)
        if on_result is not None:
            on_result(outcome)
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


def settings_record(args: argparse.Namespace, settings=None) -> dict:
    """Return the settings a workbook records, by name."""
    from ..flickermeter import get_calibration
    from ..svm import DEFAULT_F_MAX_HZ, THRESHOLDS

    settings = settings or assess_settings(args)
    record = {
        "command": "measure",
        "captures": ", ".join(args.captures),
        "signal": args.signal,
        "column": args.column, "sample rate option [Hz]": args.sample_rate,
        "time unit option": args.time_unit, "dark level option": args.dark,
        "resample": args.resample, "fill gaps": args.fill_gaps,
        "detector bandwidth [Hz]": getattr(args, "detector_bandwidth", None) or "not given",
    }
    if args.signal == "light":
        model = THRESHOLDS[settings.svm_threshold]
        cal = settings.light_calibration()
        record |= {
            "IEEE 1789 headline mode": args.ieee1789_mode, "harmonics reported": args.harmonics,
            "IEEE 1789 boundaries": "RP1 low-risk 0.025f (<90 Hz), 0.08f (90-1250 Hz); RP2 "
                                    "NOEL 0.01f, 0.0333f (90-3000 Hz); recalled from IEEE "
                                    "Std 1789-2015, not read in the standard",
            "SVM threshold model": f"{model.name}: {model.formula} ({model.status}; "
                                   f"{model.reference})",
            "SVM band [Hz]": f"{settings.svm_f_min_hz:g} to {DEFAULT_F_MAX_HZ:g}",
        }
    else:
        cal = (get_calibration(settings.pst_calibration) if settings.pst_calibration
               is not None else None)
        record["lamp option"] = args.lamp
    if cal is not None:
        record |= {
            "Pst calibration": cal.name,
            "Pst calibration status": cal.status,
            "Pst calibration origin": cal.origin,
        }
    else:
        record["Pst calibration"] = "IEC 61000-4-15 lamp constants chosen per capture " \
                                    "(see the Captures sheet)"
    record["Pst observation time [s]"] = (args.pst_observation if args.pst_observation
                                          else "the calibration's")
    return record


def summary_table(records: list[dict]) -> str:
    """Write the terminal table of measured captures, then their notes and warnings."""
    from ..export.table import fmt, render

    headers = ["capture", "f [Hz]", "percent flicker [%]", "flicker index", "IEEE 1789",
               "SVM", "Pst LM", "periods", "noise floor [%]"]
    rows = []
    for r in records:
        ieee = r.get("ieee1789") or {}
        region = ieee.get("region", "–")
        if (r.get("acquisition") or {}).get("folding_suspected"):
            region = "insufficient (aliasing)"
        rows.append([r["label"], fmt(r["frequency_hz"], ".5g"), fmt(r["percent_flicker"], ".3f"),
                     fmt(r["flicker_index"], ".4f"), region,
                     fmt(r.get("svm"), ".3f"), fmt(r.get("pst_lm"), ".3f"),
                     str(r["periods"]), fmt((r.get("noise") or {}).get("percent_flicker_floor"),
                                            ".2g")])
    out = render(headers, rows)
    out += _method_lines(records)
    out += _modulation_lines(records)
    for r in records:
        for w in r["warnings"]:
            out += f"warning: {r['label']}: {w}\n"
    return out


def decided_line(r: dict) -> str:
    """Write a note line when a modulation other than the standard's reading decided IEEE 1789."""
    ieee = r.get("ieee1789") or {}
    by = ieee.get("decided_by") or ""
    if not by.startswith(("component", "band")):
        return ""
    lim = ieee.get("low_risk_limit_percent")
    line = "low-risk line" if lim is not None else "no-observable-effect line"
    lim = lim if lim is not None else ieee.get("noel_limit_percent")
    return (f"note: {r['label']}: IEEE 1789 decided by {by}: "
            f"{ieee['modulation_percent']:.3g} % against the {lim:.3g} % {line} "
            f"(standard reading: {(ieee.get('fundamental') or {}).get('region', '-')})\n")


def _modulation_lines(records: list[dict]) -> str:
    """Write a line each for what decided IEEE 1789, unrelated modulations and edge figures."""
    out = ""
    for r in records:
        out += decided_line(r)
        mod = r.get("modulation") or {}
        if mod.get("unrelated_hz"):
            out += f"note: {r['label']}: {mod['statement']}\n"
        edges = r.get("edge_notes") or []
        for e in edges[:3]:
            out += f"note: {r['label']}: on an edge: {e}\n"
        if len(edges) > 3:
            out += f"note: {r['label']}: {len(edges) - 3} more edge notes in the JSON\n"
    return out


def _method_lines(records: list[dict]) -> str:
    """Write which SVM threshold and Pst LM calibration produced the figures."""
    from ..flickermeter import CALIBRATIONS

    out = ""
    models = dict.fromkeys((r.get("svm_detail") or {}).get("threshold") for r in records)
    for m in filter(None, models):
        status = next((r["svm_detail"]["threshold_status"] for r in records
                       if (r.get("svm_detail") or {}).get("threshold") == m), "")
        out += f"SVM threshold model: {m} ({status})\n"
    for name in filter(None, dict.fromkeys(r.get("pst_lm_calibration") for r in records)):
        cal = CALIBRATIONS.get(name)
        status = next(((r.get("pst_lm_detail") or {}).get("calibration_status") for r in records
                       if r.get("pst_lm_calibration") == name and r.get("pst_lm_detail")),
                      cal.status if cal else None)
        out += f"Pst LM calibration: {name}" + (f" ({status})" if status else "") + "\n"
    return out


def voltage_table(records: list[dict]) -> str:
    """Write the terminal table of mains voltage captures (supply Pst), then their warnings."""
    from ..export.table import fmt, render

    headers = ["capture", "mains [Hz]", "RMS", "lamp", "Pst", "Pinst,max", "observed [s]"]
    rows = []
    for r in records:
        d = r.get("pst_detail") or {}
        rows.append([r["label"], fmt(r["frequency_hz"], ".5g"), fmt(r["rms"], ".5g"),
                     r["lamp"], fmt(r["pst"], ".3f"), fmt(d.get("pinst_max"), ".3f"),
                     fmt(d.get("observation_s"), ".4g")])
    out = render(headers, rows)
    for name in dict.fromkeys(r["pst_calibration"] for r in records):
        out += f"Pst calibration: {name}\n"
    for r in records:
        for w in r["warnings"]:
            out += f"warning: {r['label']}: {w}\n"
    return out
