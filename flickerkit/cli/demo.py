"""``flickerkit demo``: the invented example product, end to end."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

HELP = "write invented captures of an invented product and measure them"

DESCRIPTION = """\
Write captures of an INVENTED product (a made-up hybrid-driver downlight at
five dimming levels, in five different file layouts, plus a dark capture) and
its project file to a folder, then run 'flickerkit report' on it: every
capture measured, judged against IEEE 1789, the EU ecodesign SVM and Pst LM
limits, California JA8 and a seizure screen, with a brightness table, and the
record written as a workbook beside them. Nothing here describes a real
product or a real measurement.

example:
  flickerkit demo                    # into ./flickerkit-demo
  flickerkit demo --out /tmp/demo --force
"""


def add_parser(sub) -> None:
    """Add the ``demo`` command: invented captures and the record made from them."""
    p = sub.add_parser("demo", help=HELP, description=DESCRIPTION,
                       formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--out", default="flickerkit-demo", metavar="FOLDER",
                   help="folder for the invented captures and the workbook "
                        "(default ./flickerkit-demo)")
    p.add_argument("--force", action="store_true", help="replace an earlier demo's files")
    p.add_argument("--json", action="store_true", help="print the JSON instead of the table")
    p.add_argument("-q", "--quiet", action="store_true", help="no cautions on stderr")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Run ``demo``: write invented captures and their project, then ``report`` on them."""
    from .. import demo
    from ..errors import OutputError
    from . import build_parser, report

    folder = Path(args.out)
    workbook = folder / "ardent12_record.xlsx"
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"{folder}: exists and is not a folder")
    if (folder / demo.CAPTURES[0].filename).exists() and not args.force:
        raise OutputError(f"{folder}: holds an earlier demo; use --force to replace it")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{folder}: cannot be created ({exc.strerror})") from None
    project = demo.write_project(folder)
    if not args.quiet:
        print(f"INVENTED demo: {demo.PRODUCT['name']} by {demo.PRODUCT['maker']}; captures "
              f"and project written to {folder}/", file=sys.stderr)
    rargs = ["report", str(project), "-o", str(workbook), "--force",
             "--pictures", str(folder / "pictures")]
    if args.json:
        rargs.append("--json")
    if args.quiet:
        rargs.append("--quiet")
    return report.run(build_parser().parse_args(rargs))
