"""Atomic output files: permissions like a plain open(), never half-written."""

import os
import stat
import sys

import pytest

from flickerkit.errors import OutputError
from flickerkit.fileio import write_text, write_with

posix_only = pytest.mark.skipif(sys.platform == "win32", reason="POSIX permission bits")


@posix_only
def test_new_output_gets_the_umask_mode_not_a_private_one(tmp_path):
    # POSIX: open(..., "w") creates files with mode 0666 & ~umask (common practice, no source)
    old = os.umask(0o022)
    try:
        p = write_text(tmp_path / "t.h", "x\n")
    finally:
        os.umask(old)
    assert stat.S_IMODE(p.stat().st_mode) == 0o644


@posix_only
def test_replaced_output_keeps_the_mode_it_had(tmp_path):
    p = tmp_path / "t.csv"
    p.write_text("old\n")
    p.chmod(0o640)
    write_text(p, "new\n", force=True)
    assert p.read_text() == "new\n"
    assert stat.S_IMODE(p.stat().st_mode) == 0o640


def test_failed_writer_leaves_nothing(tmp_path):
    def boom(tmp):
        tmp.write_text("half")
        raise RuntimeError("writer failed")

    with pytest.raises(RuntimeError):
        write_with(tmp_path / "out.xlsx", boom)
    assert list(tmp_path.iterdir()) == []
    with pytest.raises(OutputError, match="exists"):
        (tmp_path / "x.txt").write_text("keep")
        write_text(tmp_path / "x.txt", "new")
    assert (tmp_path / "x.txt").read_text() == "keep"
