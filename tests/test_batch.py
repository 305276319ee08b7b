"""Many captures: order, reproducibility across worker counts, bad captures, interruption."""

import json
import os
import signal
import subprocess
import sys
import time

import numpy as np
import pytest

from flickerkit.assess import AssessSettings
from flickerkit.batch import measure_many
from flickerkit.cli import main
from flickerkit.readers import ReadOptions

from .synth import pwm

FS = 20_000.0


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    d = tmp_path_factory.mktemp("caps")
    for i, duty in enumerate(np.linspace(0.05, 0.95, 12)):
        np.save(d / f"cap{i:02d}.npy", pwm(100.0 + 10 * i, duty, 0.0, FS, 0.3))
    (d / "cap99_bad.npy").write_bytes(b"\x93NUMPY garbage")
    return d


def test_order_and_results_do_not_depend_on_workers(folder):
    paths = sorted(str(p) for p in folder.glob("*.npy"))
    opts, st = ReadOptions(sample_rate_hz=FS), AssessSettings()
    one = measure_many(paths, opts, st, workers=1)
    two = measure_many(paths, opts, st, workers=2)
    assert [o.path for o in one] == paths == [o.path for o in two]
    assert json.dumps([o.record for o in one]) == json.dumps([o.record for o in two])
    # analytic: FI = 1 - D for each PWM capture, in input order. 2 %: at 90-200 samples per
    # period the two edge samples of each period bias the discrete flicker index low by
    # about 1/(samples per period) (computed here, no source)
    duties = np.linspace(0.05, 0.95, 12)
    fis = [o.record["flicker_index"] for o in one[:12]]
    np.testing.assert_allclose(fis, 1 - duties, rtol=0.02)
    assert one[-1].record is None and "npy" in one[-1].error


def test_cli_reports_bad_capture_and_keeps_the_rest(folder, capsys):
    paths = sorted(str(p) for p in folder.glob("*.npy"))
    rc = main(["measure", *paths, "-r", str(FS), "--json", "-q", "-j", "2"])
    captured = capsys.readouterr()
    assert rc == 1
    assert len(json.loads(captured.out)) == 12
    assert "cap99_bad.npy" in captured.err and "1 of 13 captures" in captured.err


def test_json_written_as_records_arrive_is_the_whole_list_dumped(folder, tmp_path, capsys):
    # measure --json writes each record as it arrives; the text must be what dumping the
    # finished list gives, also for a record relabelled afterwards (same name, two folders)
    import shutil

    from flickerkit.cli import CAUTION_TEXT
    from flickerkit.cli.measure import distinct_records
    from flickerkit.export.jsonout import dumps

    for sub, src in (("a", "cap01.npy"), ("b", "cap02.npy")):
        (tmp_path / sub).mkdir()
        shutil.copy(folder / src, tmp_path / sub / "same.npy")
    paths = [str(tmp_path / "a" / "same.npy"), str(folder / "cap03.npy"),
             str(tmp_path / "b" / "same.npy")]
    assert main(["measure", *paths, "-r", str(FS), "--json", "-q", "-j", "1"]) == 0
    printed = capsys.readouterr().out
    records, notes = distinct_records(measure_many(paths, ReadOptions(sample_rate_hz=FS),
                                                   AssessSettings(), workers=1))
    assert notes and [r["label"] for r in records] == ["a/same.npy", "cap03.npy", "b/same.npy"]
    assert printed == dumps([{**r, "caution": CAUTION_TEXT} for r in records])


def test_json_is_byte_identical_across_runs_and_workers(folder):
    paths = sorted(str(p) for p in folder.glob("cap0*.npy"))
    outs = []
    for j in ("1", "2", "2"):
        r = subprocess.run([sys.executable, "-m", "flickerkit", "measure", *paths, "-r", str(FS),
                            "--json", "-q", "-j", j], capture_output=True)
        assert r.returncode == 0, r.stderr
        outs.append(r.stdout)
    assert outs[0] == outs[1] == outs[2]


def _children(pid):
    """Processes whose parent is ``pid`` (Linux /proc), or None where /proc cannot tell."""
    if not os.path.isdir("/proc/self"):
        return None
    kids = []
    for entry in os.listdir("/proc"):
        if entry.isdigit():
            try:
                with open(f"/proc/{entry}/stat") as fh:
                    if int(fh.read().rsplit(")", 1)[1].split()[1]) == pid:
                        kids.append(int(entry))
            except (OSError, IndexError, ValueError):
                continue
    return kids


def test_sigint_leaves_no_workbook(tmp_path):
    # enough work (40 captures of 100,000 samples) that the batch is still running when the
    # signal comes: it is sent as soon as both workers exist, i.e. once the map has started
    for i in range(40):
        np.save(tmp_path / f"c{i:03d}.npy", pwm(100.0 + i, 0.3, 0.0, 200_000.0, 0.5))
    out = tmp_path / "record.xlsx"
    proc = subprocess.Popen([sys.executable, "-m", "flickerkit", "measure",
                             *sorted(str(p) for p in tmp_path.glob("*.npy")), "-r", "200000",
                             "-q", "-j", "2", "--xlsx", str(out)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 30
    while time.monotonic() < deadline and proc.poll() is None:
        kids = _children(proc.pid)
        if kids is None:  # no /proc: wait as long as start-up takes at most
            time.sleep(2.0)
            break
        if len(kids) >= 2:
            break
        time.sleep(0.02)
    assert proc.poll() is None, "the batch ended before it could be interrupted"
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 130, err
    assert b"interrupted after" in err and b"Traceback" not in err
    assert not out.exists()
    assert not [p for p in os.listdir(tmp_path) if p.endswith(".part")]
