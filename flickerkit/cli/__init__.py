"""Command line: ``flickerkit COMMAND ...``.

Each command lives in its own module in this package with two functions:
``add_parser(subparsers)`` (argparse set-up; light imports only) and
``run(args) -> int``. Heavy libraries are imported inside ``run`` so that
``flickerkit --help`` starts fast. Commands print; nothing below this package
does.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from .. import __version__, cautions

#: Command modules, in the order ``--help`` lists them.
COMMANDS = ("measure", "report", "demo", "drive", "plan", "camera", "steps")

_DESCRIPTION = """\
Temporal light modulation (flicker) of dimmable LED lighting: measure
photodiode captures, judge them against published criteria, and write the
record.

  flickerkit demo                      invented example product, end to end
  flickerkit measure CAPTURE.csv       percent flicker, flicker index, IEEE 1789 region
  flickerkit steps -n 64 --bits 12     perceptually even brightness table for a PWM counter

Run 'flickerkit COMMAND --help' for each command's options.
"""

#: The caution for the terminal (one home: :mod:`flickerkit.cautions`).
_CAUTION = cautions.TERMINAL


class _Parser(argparse.ArgumentParser):
    """argparse with usage errors on one line, like every other error of the tool."""

    def error(self, message: str):  # type: ignore[override]
        command = self.prog.removeprefix("flickerkit").strip()
        where = f"{command}: " if command else ""
        self.exit(2, f"flickerkit: error: {where}{message} (see '{self.prog} --help')\n")

#: The caution as one line, for JSON output (key ``caution``).
CAUTION_TEXT = cautions.CAUTION


def build_parser() -> argparse.ArgumentParser:
    """Return the top-level parser with every command registered."""
    parser = _Parser(
        prog="flickerkit",
        description=_DESCRIPTION,
        epilog=_CAUTION,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"flickerkit {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        module = importlib.import_module(f".{name}", __name__)
        module.add_parser(sub)
    parser.set_defaults(_commands=sub.choices)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; return the exit status.

    Project errors become one line on stderr (``flickerkit: error: ...``) and
    exit status 1; usage errors exit with 2 (argparse's convention); Ctrl-C
    exits with 130.
    """
    parser = build_parser()
    args, extra = parser.parse_known_args(argv)
    if extra:  # name the command whose help lists the options
        command = getattr(args, "command", None)
        (args._commands.get(command, parser) if command else parser).error(
            f"unrecognized arguments: {' '.join(extra)}")
    if not getattr(args, "command", None):
        parser.print_help(sys.stderr)
        return 2
    from ..errors import FlickerkitError
    from ..fileio import forget_inputs

    if argv is None:  # this process's own command line: large arrays reuse freed memory
        from ..allocator import keep_freed_memory

        keep_freed_memory()
    forget_inputs()
    _note_inputs(args)
    try:
        status = int(args.run(args) or 0)
        sys.stdout.flush()
        return status
    except FlickerkitError as exc:
        print(f"flickerkit: error: {exc}", file=sys.stderr)
        return 1
    except KeyboardInterrupt as exc:
        detail = str(exc) or "no partial output was left"
        print(f"flickerkit: interrupted: {detail}", file=sys.stderr)
        return 130
    except BrokenPipeError:
        _silence_stdout()
        return 1
    except OSError as exc:
        if exc.errno is None:
            raise
        _silence_stdout()
        if exc.filename:  # a file opened below: name it, and do not guess read or write
            print(f"flickerkit: error: {exc.filename}: {exc.strerror}", file=sys.stderr)
        else:
            print(f"flickerkit: error: cannot write the output ({exc.strerror})",
                  file=sys.stderr)
        return 1


#: Options that name input files (a list, or ``COUNT=PATH`` items for calibration captures).
_INPUT_OPTIONS = ("captures", "project", "dark", "pst_calibration", "drive_file", "calibration",
                  "curve_file", "calibration_capture")


def _note_inputs(args: argparse.Namespace) -> None:
    """Record every input file the options name, so that no output can replace one."""
    import os

    from ..fileio import note_input

    for name in _INPUT_OPTIONS:
        value = getattr(args, name, None)
        for item in value if isinstance(value, list) else [value]:
            if not isinstance(item, str):
                continue
            if name == "calibration_capture" and "=" in item:
                item = item.split("=", 1)[1]
            if name in ("captures", "project") or os.path.lexists(item):
                note_input(item)


def _silence_stdout() -> None:
    """Point stdout at /dev/null so the interpreter's last flush cannot fail again."""
    import os

    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):
        pass
