"""``flickerkit report``: judge a product against criteria and write the record."""

from __future__ import annotations

import argparse
import sys

HELP = "judge a product's captures (or drive) against criteria and write the workbook record"

DESCRIPTION = """\
Read a project file (TOML: the product, the measurement set-up, the captures
with their dimming levels -- or a drive model -- the criteria to apply and an
optional brightness table), measure every capture in parallel, judge each
against each criterion, and write the record as a workbook: summary with the
overall verdict and cautions, verdicts, metrics, harmonics, an IEEE 1789 chart,
metrics by level, the brightness table, inputs with SHA-256, and method notes.

A folder of captures works too: every capture file in it is measured, with the
dimming level read from names like ..._level050.csv or ..._50pct.csv.

Criteria (ids for [criteria] apply = [...]):
  ieee1789-low-risk, ieee1789-noel, eu-2019-2020-svm, eu-2019-2020-pst,
  ca-title24-ja8, gbt50034-pst, gbt50034-svm, seizure-screen-below-90hz,
  nema77-guidance-svm, nema77-guidance-pst (see README.md for sources and confidence)

examples:
  flickerkit report ardent12_project.toml -o ardent12_record.xlsx
  flickerkit report captures/ -o record.xlsx --force --json > verdicts.json
"""


def add_picture_option(p) -> None:
    """Add the option that asks for pictures (shared by measure, report, drive and plan)."""
    p.add_argument("--pictures", metavar="FOLDER",
                   help="also draw the pictures (waveform and spectrum per capture, IEEE 1789 "
                        "chart, metrics against level) as PNG and SVG files in FOLDER, and "
                        "place them in the workbook")


def add_parser(sub) -> None:
    """Add the ``report`` command and its options to the subcommand parsers ``sub``."""
    from .measure import add_batch_options

    p = sub.add_parser("report", help=HELP, description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("project", metavar="PROJECT", help="project file (.toml) or folder of captures")
    p.add_argument("-o", "--output", metavar="WORKBOOK.xlsx", required=True,
                   help="workbook to write")
    p.add_argument("--force", action="store_true",
                   help="replace an existing workbook (and pictures, PDF)")
    p.add_argument("--json", action="store_true",
                   help="print the verdicts and figures as JSON instead of the table")
    p.add_argument("-q", "--quiet", action="store_true",
                   help="no progress bar or read summary on stderr")
    add_picture_option(p)
    p.add_argument("--pdf", metavar="RECORD.pdf",
                   help="also print the workbook to a PDF with LibreOffice (soffice), when it is "
                        "installed; without it a note says so and the workbook stands")
    add_batch_options(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Judge a project's captures, write the workbook, and print the verdicts.

    Returns the exit status: 1 when a capture could not be measured, else 0.
    The workbook (and pictures, PDF) are written only when at least one
    capture was measured; the caution goes out after the verdicts.

    Raises
    ------
    SettingsError, InputError
        For a bad option or project, or when no capture could be measured.
    """
    from ..errors import SettingsError
    from ..fileio import check_writable

    if args.workers is not None and args.workers < 1:
        raise SettingsError("--workers must be at least 1")
    check_writable(args.output, force=args.force)
    if args.pictures:
        from ..export.figures import check_picture_folder

        check_picture_folder(args.pictures)
    if args.pdf:
        check_writable(args.pdf, force=args.force)
    from ..project import load_project
    from ..report import build_report

    project = load_project(args.project)
    # the project names its captures, dark captures and criteria file: none may be the output
    check_writable(args.output, force=args.force, inputs=project_inputs(project))
    bar = None
    if not args.quiet:
        from tqdm import tqdm

        total = len(project.captures) or len(project.drive_levels)
        bar = tqdm(total=total, file=sys.stderr, disable=None, leave=False,
                   unit="capture" if project.captures else "level")

    def tick(_):
        if bar is not None:
            bar.update(1)

    def levels(it):
        for x in it:
            yield x
            tick(x)

    try:
        report = build_report(project, workers=args.workers, on_result=tick, on_level=levels)
    except KeyboardInterrupt:
        raise KeyboardInterrupt("no workbook was written") from None
    finally:
        if bar is not None:
            bar.close()
    if report.failures and not report.records:
        from ..errors import InputError

        label, err = report.failures[0]
        more = f" ({len(report.failures)} failed; the first: {err})" \
            if len(report.failures) > 1 else f" ({err})"
        raise InputError(f"no capture could be measured{more}; no workbook was written",
                         source=str(args.project))
    from ..export.report_workbook import write_report_workbook

    pictures = None
    if args.pictures:
        from ..export.figures import write_pictures
        from ..report import report_pictures

        pictures = report_pictures(report)
        write_pictures(pictures, args.pictures, force=args.force)
    write_report_workbook(args.output, report, force=args.force, pictures=pictures)
    if args.json:
        from ..export.jsonout import dumps

        sys.stdout.write(dumps(report.to_dict()))
    else:
        sys.stdout.write(verdict_table(report))
    if not args.quiet:
        from .measure import print_read

        print_read(list(report.records))
    for _label, err in report.failures:
        print(f"flickerkit: error: {err}", file=sys.stderr)
    print(f"workbook written: {args.output}", file=sys.stderr)
    if pictures:
        print(f"pictures written: {args.pictures}/ ({len(pictures)} as PNG and SVG)",
              file=sys.stderr)
    if args.pdf:
        from ..errors import OutputError
        from ..export.pdf import workbook_to_pdf

        try:
            workbook_to_pdf(args.output, args.pdf, force=args.force)
            print(f"PDF written: {args.pdf}", file=sys.stderr)
        except OutputError as exc:
            print(f"flickerkit: note: {exc}", file=sys.stderr)
    from ..report import CAUTIONS

    print("\n".join(f"caution: {c}" for c in CAUTIONS),
          file=sys.stderr if args.json else sys.stdout)
    return 1 if report.failures else 0


def project_inputs(project) -> list[str]:
    """Return every file a project names (captures, their dark captures, criteria file)."""
    out = [str(project.path)] + [str(e.file) for e in project.captures]
    base = project.path.parent if project.path.is_file() else project.path
    for e in project.captures:
        dark = e.read.get("dark")
        if isinstance(dark, str):
            out.append(str(base / dark))
    if project.criteria_file is not None:
        out.append(str(project.criteria_file))
    return out


def verdict_table(report) -> str:
    """Write a report's verdicts as terminal tables: per kind, what limits, every verdict."""
    from ..export.table import fmt, render

    prod = report.project.product
    out = [f"{prod.get('name', '')}" + (f" ({prod['model']})" if prod.get("model") else ""),
           f"judged on {report.project.judged_on.isoformat()}", ""]
    for g in report.groups:
        out.append(f"{g.title}: {g.status.upper()}")
        rows = []
        for o in g.criteria:
            w = o.worst
            tol = o.criterion.verification_tolerance
            rows.append([o.criterion.id, o.status,
                         "–" if w is None else fmt(w.level, "g"),
                         "–" if w is None else fmt(w.measured, ".4g"),
                         "–" if w is None else fmt(w.limit, ".4g"),
                         "–" if w is None else fmt(w.margin, "+.3g"),
                         "–" if tol is None else f"{tol:g}",
                         ", ".join(f"{x:g} %" for x in o.missing_levels) or "–",
                         o.decided_by[:50]])
        out.append(render(["  criterion", "verdict", "worst level [%]", "measured", "limit",
                           "margin", "verification tolerance", "missing levels",
                           "decided by"],
                          [["  " + r[0], *r[1:]] for r in rows],
                          right=[False, False, True, True, True, True, True, False, False]))
    out.append("what limits the product:")
    out.append(_wrap(report.limiting))
    out.append("")
    out.append("every verdict:")
    rows = []
    for v in report.verdicts:
        rows.append([v.criterion, v.label, fmt(v.level, "g"), v.status, fmt(v.measured, ".4g"),
                     fmt(v.limit, ".4g"), fmt(v.margin, "+.3g"), v.reason])
    out.append(render(["criterion", "capture", "level [%]", "verdict", "measured", "limit",
                       "margin", "reason"], rows,
                      right=[False, False, True, False, True, True, True, False]))
    return "\n".join(out)


def _wrap(text: str, width: int = 96) -> str:
    import textwrap

    return "\n".join(textwrap.wrap(text, width, break_on_hyphens=False))
