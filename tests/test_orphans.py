"""Issue 12, no orphans: -j workers end when their parent is killed; streamed captures leave
no temporary folder after a kill (the next run removes it); lines of unbounded length are
refused with a bound, not parsed into memory."""

import os
import signal
import subprocess
import sys
import textwrap
import time

import numpy as np
import pytest

from flickerkit.errors import InputError
from flickerkit.readers import MAX_LINE_BYTES, ReadOptions, read_capture


def _alive(pid):
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    try:  # a zombie has ended; only its exit status waits for its (new) parent
        with open(f"/proc/{pid}/stat") as fh:
            return fh.read().split(")")[-1].split()[0] != "Z"
    except OSError:
        return True


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="uses /proc")
def test_workers_end_when_the_parent_is_killed(tmp_path):
    script = tmp_path / "parent.py"
    pids = tmp_path / "pids"
    script.write_text(textwrap.dedent(f"""
        import os, time
        from concurrent.futures import ProcessPoolExecutor
        from flickerkit.batch import _worker_init

        def pid(_):
            time.sleep(0.2)
            return os.getpid()

        pool = ProcessPoolExecutor(2, initializer=_worker_init, initargs=(os.getpid(), 2))
        got = set(pool.map(pid, range(8)))
        open({str(pids)!r}, "w").write(" ".join(map(str, got)))
        time.sleep(600)  # killed here with SIGKILL: no clean-up can run
    """))
    env = {**os.environ, "PYTHONPATH": os.getcwd()}
    proc = subprocess.Popen([sys.executable, str(script)], env=env)
    try:
        for _ in range(600):
            if pids.exists() and pids.read_text().strip():
                break
            time.sleep(0.1)
        workers = [int(x) for x in pids.read_text().split()]
        assert workers and all(_alive(w) for w in workers)
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        deadline = time.monotonic() + 20  # the watch thread polls every 0.5 s
        while time.monotonic() < deadline and any(_alive(w) for w in workers):
            time.sleep(0.1)
        assert not any(_alive(w) for w in workers), "workers outlived their parent"
    finally:
        if proc.poll() is None:
            proc.kill()


def test_stale_stream_folder_of_a_killed_run_is_removed(tmp_path, monkeypatch):
    import tempfile

    from flickerkit import readers

    monkeypatch.setattr(tempfile, "tempdir", str(tmp_path))
    dead = subprocess.Popen([sys.executable, "-c", "pass"])
    dead.wait()  # a pid that no longer runs
    stale = tmp_path / f"{readers.STREAM_FOLDER_PREFIX}{dead.pid}-cap-abc"
    stale.mkdir()
    (stale / "signal.f64").write_bytes(b"\0" * 64)
    live = tmp_path / f"{readers.STREAM_FOLDER_PREFIX}{os.getppid()}-cap-xyz"
    live.mkdir()
    cap = tmp_path / "long capture.csv"
    cap.write_text("light\n" + "\n".join(f"{1 + 0.3 * np.sin(i / 5):.5f}"
                                         for i in range(3000)) + "\n")
    c = read_capture(cap, ReadOptions(sample_rate_hz=1000.0, stream=True))
    assert not stale.exists() and live.exists()
    mine = [d.name for d in tmp_path.glob(f"{readers.STREAM_FOLDER_PREFIX}{os.getpid()}-*")]
    assert mine and all("long_capture" in n for n in mine)  # a person can tell what it is
    del c


def test_first_line_longer_than_the_bound_is_refused_at_once(tmp_path):
    p = tmp_path / "one_line.csv"
    p.write_bytes(b"1.25," * (MAX_LINE_BYTES // 5 + 10))
    with pytest.raises(InputError, match="longer than 1 MiB"):
        read_capture(p, ReadOptions(sample_rate_hz=1000.0))


@pytest.mark.parametrize("stream", [True])
def test_long_line_inside_a_streamed_table_is_refused(tmp_path, stream):
    p = tmp_path / "mid.csv"
    with open(p, "wb") as fh:
        fh.write(b"light\n" + b"1.5\n" * 20000 + b"1" * (MAX_LINE_BYTES + 10) + b"\n"
                 + b"1.5\n" * 20000)
    with pytest.raises(InputError, match="longer than 1 MiB"):
        read_capture(p, ReadOptions(sample_rate_hz=1000.0, stream=stream))


def test_lines_just_below_the_bound_still_read(tmp_path):
    """The bound refuses only long lines: a normal streamed table reads as in memory."""
    x = 1 + 0.3 * np.sin(np.arange(5000) / 5)
    p = tmp_path / "ok.csv"
    p.write_text("light\n" + "\n".join(f"{v:.6f}" for v in x) + "\n")
    a = read_capture(p, ReadOptions(sample_rate_hz=1000.0, stream=True))
    b = read_capture(p, ReadOptions(sample_rate_hz=1000.0, stream=False))
    assert np.allclose(np.asarray(a.samples), b.samples, atol=1e-12)


def test_long_line_inside_an_in_memory_table_is_refused(tmp_path, monkeypatch):
    from flickerkit.readers import linebounds

    monkeypatch.setattr(linebounds, "SCAN_LINES_ABOVE_BYTES", 0)  # scan this small file too
    p = tmp_path / "mid.csv"
    p.write_bytes(b"light\n" + b"1.5\n" * 20000 + b"1" * (MAX_LINE_BYTES + 10) + b"\n"
                  + b"1.5\n" * 20000)
    with pytest.raises(InputError, match="longer than 1 MiB"):
        read_capture(p, ReadOptions(sample_rate_hz=1000.0, stream=False))
