"""C header export: valid C that a compiler accepts, with the table and its provenance."""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest

from flickerkit import __version__
from flickerkit.errors import SettingsError
from flickerkit.export.cheader import c_header, check_c_name, table_header
from flickerkit.steps import build_table

CC = shutil.which("gcc") or shutil.which("cc") or shutil.which("clang")
#: Strict C99 with every common warning as an error (a header firmware can include as is).
CFLAGS = ["-std=c99", "-Wall", "-Wextra", "-pedantic", "-Werror"]


def array_values(text: str) -> list[int]:
    body = text[text.index("= {") + 3:text.index("};")]
    return [int(v) for v in re.findall(r"(\d+)u", body)]


def compile_and_run(tmp_path, header: str, name: str) -> str:
    (tmp_path / "table.h").write_text(header)
    main = tmp_path / "main.c"
    macro = name.upper()
    main.write_text(
        '#include <stdio.h>\n#include "table.h"\n#include "table.h"\n'  # guard: twice is fine
        "int main(void) {\n"
        f"    unsigned long i, sum = 0;\n"
        f"    for (i = 0; i < {macro}_STEPS; ++i) sum += {name}[i];\n"
        f'    printf("%lu %lu %lu\\n", (unsigned long){macro}_STEPS, '
        f"(unsigned long){macro}_TOP, sum);\n"
        "    return 0;\n}\n")
    exe = tmp_path / "main"
    subprocess.run([CC, *CFLAGS, "-o", str(exe), str(main)], check=True, capture_output=True,
                   text=True, timeout=60)
    return subprocess.run([str(exe)], check=True, capture_output=True, text=True,
                          timeout=30).stdout


def test_header_lists_the_counts_and_provenance():
    t = build_table(64, "cie1976", bits=12)
    h = table_header(t, name="fade_table", version=__version__)
    assert array_values(h) == t.counts.tolist()
    assert "static const uint16_t fade_table[FADE_TABLE_STEPS]" in h
    assert "#define FADE_TABLE_STEPS 64u" in h and "#define FADE_TABLE_TOP 4095u" in h
    assert f"flickerkit {__version__}" in h
    assert "curve: cie1976" in h and "12-bit (TOP 4095)" in h and "range: 0 % to 100 %" in h


def test_wide_counters_use_uint32():
    h = c_header([0, 70000, 100000], top=100000, name="wide")
    assert "static const uint32_t wide[" in h


@pytest.mark.skipif(CC is None, reason="no C compiler on this machine")
@pytest.mark.parametrize("bits, n", [(8, 16), (12, 64), (16, 300), (20, 40)])
def test_header_compiles_and_holds_the_table(tmp_path, bits, n):
    t = build_table(n, "gamma", bits=bits, curve_params={"gamma": 2.2}, off_step=True,
                    min_level=0.001)
    h = table_header(t, name="steps_tbl", version=__version__)
    out = compile_and_run(tmp_path, h, "steps_tbl").split()
    # the compiled program sees the same table the library built
    assert [int(v) for v in out] == [n, t.counter.top, int(t.counts.sum())]


@pytest.mark.skipif(CC is None, reason="no C compiler on this machine")
def test_hostile_comment_text_cannot_break_the_header(tmp_path):
    h = c_header([0, 1, 2], top=2, name="t", description=["closing */ here", "/* nested",
                                                             "non-ascii µ"], version="x*/y")
    (tmp_path / "t.h").write_text(h)
    subprocess.run([CC, *CFLAGS, "-fsyntax-only", "-x", "c", str(tmp_path / "t.h")],
                   check=True, capture_output=True, timeout=60)
    assert h.count("*/") == 2  # the block comment's end and the guard's comment


@pytest.mark.parametrize("name", ["1table", "my-table", "int", "", "__x", "_Table"])
def test_bad_array_names(name):
    with pytest.raises(SettingsError, match="array name"):
        check_c_name(name)


def test_counts_must_fit_the_counter():
    with pytest.raises(SettingsError, match="0..3"):
        c_header([0, 4], top=3)
