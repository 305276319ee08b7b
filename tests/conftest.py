import csv
from pathlib import Path

import pytest

REFERENCE = Path(__file__).resolve().parent.parent / "reference"


def read_reference(name: str) -> list[dict[str, str]]:
    """Rows of a CSV file in reference/."""
    with open(REFERENCE / name, newline="", encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


@pytest.fixture
def reference():
    return read_reference
