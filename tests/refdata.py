"""Read the reference CSV files (comment lines start with '#')."""

import csv
from pathlib import Path

REFERENCE = Path(__file__).resolve().parent.parent / "reference"


def rows(name: str) -> list[dict[str, str]]:
    with open(REFERENCE / name, newline="", encoding="utf-8") as fh:
        lines = [ln for ln in fh if not ln.startswith("#")]
    return list(csv.DictReader(lines))
