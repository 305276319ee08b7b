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


def pytest_collection_modifyitems(items):
    """Under ``pytest -n N --dist loadgroup`` (pytest-xdist) the tests that read the demo run
    on one worker, so the demo (a session fixture, one per worker) is run once, not N times."""
    for item in items:
        if "demo_run" in getattr(item, "fixturenames", ()):
            item.add_marker(pytest.mark.xdist_group("demo"))


@pytest.fixture(scope="session")
def demo_run(tmp_path_factory):
    """The demo, run once for the session: ``(folder, JSON text it printed)``.

    Its record, pictures and captures are read by several test modules; drawing the pictures
    is most of its time, so it runs once (into a folder it creates) instead of once per module.
    Tests read the folder and write elsewhere.
    """
    import contextlib
    import io

    from flickerkit.cli import main

    folder = tmp_path_factory.mktemp("demo_run") / "demo"
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(["demo", "--out", str(folder), "--json", "-q"]) == 0
    return folder, out.getvalue()
