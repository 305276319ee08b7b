"""Property-based layout detection: invented tables in random bench layouts read right or refuse.

Each example writes a table whose truth is known (the light's values, the sample rate,
which column is the light) in a random combination of separator, decimal mark, header
rows, metadata lines, trailing separators, quoting, line ends, a gate-drive column and
a time base given one of several ways; the reader must find exactly that rate and that
column, or -- for a time base that cannot be known -- refuse with one line.
"""

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from flickerkit.errors import InputError
from flickerkit.readers import ReadOptions, read_capture

FUZZ = settings(max_examples=80, deadline=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture,
                                       HealthCheck.too_slow])
#: the rate from printed times (10 significant digits over >= 40 rows)
RATE_TOL = 1e-7
JUNK = ["Operator", "Model", "Probe", "Note", "Firmware", "Location"]
STYLES = ["time-s-header", "time-ms-header", "time-us-units-row", "index-increment-units-row",
          "index-interval-metadata", "rate-metadata-values", "index-rate-metadata",
          "per-div-metadata", "given-rate-values"]


@st.composite
def layouts(draw):
    sep = draw(st.sampled_from([",", ";", "\t", " "]))
    dec = draw(st.sampled_from([".", ","])) if sep in (";", "\t") else "."
    fs = draw(st.floats(2_000.0, 2_000_000.0))
    n = draw(st.integers(40, 160))
    seed = draw(st.integers(0, 2**31 - 1))
    x = np.round(np.random.default_rng(seed).uniform(0.1, 1.0, n), 6)
    style = draw(st.sampled_from(STYLES))
    gate = draw(st.sampled_from([None, "before", "after"]))
    light_name = draw(st.sampled_from(["PD", "Light", "photodiode", "Licht", "sensor 1"]))
    junk = draw(st.lists(st.tuples(st.sampled_from(JUNK),
                                   st.text(alphabet="abcXYZ 0123456789-", min_size=1,
                                           max_size=12).map(str.strip).filter(bool)),
                         max_size=3, unique_by=lambda kv: kv[0]))
    meta_style = draw(st.sampled_from(["{k} = {v}", "{k},{v}", '"{k}","{v}"', "# {k}: {v}",
                                       "{k}: {v}"]))
    trailing = draw(st.booleans()) and sep != " "
    quoted = draw(st.booleans()) and sep != " "
    crlf = draw(st.booleans())
    return dict(sep=sep, dec=dec, fs=fs, x=x, style=style, gate=gate, light_name=light_name,
                junk=junk, meta_style=meta_style, trailing=trailing, quoted=quoted, crlf=crlf)


def num(v, dec, fmt="{:.10g}"):
    s = fmt.format(v)
    return s.replace(".", ",") if dec == "," else s


def write(path, lay):
    sep, dec, fs, x, style = lay["sep"], lay["dec"], lay["fs"], lay["x"], lay["style"]
    n = x.size
    q = (lambda s: f'"{s}"') if lay["quoted"] else (lambda s: s)
    meta = [lay["meta_style"].format(k=k, v=v) for k, v in lay["junk"]]
    if sep == " ":  # names cannot hold spaces in a space-separated table
        names_ok = lambda s: s.replace(" ", "_")  # noqa: E731
    else:
        names_ok = lambda s: s  # noqa: E731
    light = names_ok(lay["light_name"])
    sig_cols = [("Gate_drive" if sep == " " else "Gate drive", np.where(x > 0.5, 4.9, 0.1), "V"),
                (light, x, "V")]
    if lay["gate"] is None:
        sig_cols = sig_cols[1:]
    elif lay["gate"] == "after":
        sig_cols = sig_cols[::-1]
    first_col = None  # (name, values, unit)
    units_row = False
    extra_names, extra_units = [], []
    if style == "time-s-header":
        first_col = ("Time_(s)" if sep == " " else "Time (s)", np.arange(n) / fs, None)
    elif style == "time-ms-header":
        first_col = ("t[ms]", np.arange(n) / fs * 1e3, None)
    elif style == "time-us-units-row":
        first_col, units_row = ("Time", np.arange(n) / fs * 1e6, "us"), True
    elif style == "index-increment-units-row":
        first_col, units_row = ("X", np.arange(n), "Sequence"), True
        extra_names, extra_units = ["Start", "Increment"], [num(-0.001, dec), num(1 / fs, dec)]
    elif style == "index-interval-metadata":
        first_col = ("Sample", np.arange(n), None)
        meta.append(f"Sample interval{',' if sep != ',' and dec == ',' else ':'} "
                    f"{num(1 / fs, dec)} s")
    elif style == "index-rate-metadata":
        first_col = ("Index", np.arange(n), None)
        meta.append(f"Sampling frequency = {num(fs / 1e3, dec)} kHz")
    elif style == "rate-metadata-values":
        meta.append(f"Sample rate: {num(fs, dec)} Hz")
    elif style == "per-div-metadata":
        meta += [f"Time/div: {num(n / fs / 10 * 1e6, dec)} us", f"Record length: {n}",
                 "Horizontal divisions: 10"]
    cols = ([first_col] if first_col else []) + sig_cols
    names = [q(c[0]) for c in cols] + [q(e) for e in extra_names]
    units = [q(c[2] or "V") for c in cols] + extra_units
    body = []
    for i in range(n):
        cells = [num(c[1][i], dec) for c in cols]
        body.append(sep.join(cells) + (sep if lay["trailing"] else ""))
    header = [] if style == "given-rate-values" and not cols[0][0] else [sep.join(names)]
    if units_row:
        header.append(sep.join(units))
    end = "\r\n" if lay["crlf"] else "\n"
    path.write_bytes(end.join(meta + header + body).encode("utf-8") + end.encode())
    return [c[0] for c in cols].index(light) + 1


@FUZZ
@given(lay=layouts())
def test_random_layouts_read_the_light_at_the_right_rate(tmp_path_factory, lay):
    p = tmp_path_factory.mktemp("lay") / "cap.csv"
    want = write(p, lay)
    given_rate = lay["fs"] if lay["style"] == "given-rate-values" else None
    cap = read_capture(p, ReadOptions(sample_rate_hz=given_rate))
    assert cap.sample_rate_hz == pytest.approx(lay["fs"], rel=RATE_TOL), cap.read
    np.testing.assert_allclose(np.asarray(cap.samples), lay["x"], rtol=1e-9)
    assert cap.read.column_number if hasattr(cap.read, "column_number") else True
    assert cap.meta["read"]["column"].strip('"') == lay["light_name"].replace(
        " ", "_" if lay["sep"] == " " else " ")
    assert cap.n_samples == lay["x"].size
    assert not any("could be the light" in w for w in cap.warnings)
    assert want >= 1


@FUZZ
@given(fs=st.floats(2_000.0, 2_000_000.0),
       unit=st.sampled_from([("ms", 1e3), ("us", 1e6), ("ns", 1e9)]),
       n=st.integers(40, 120), sep=st.sampled_from([",", ";", "\t"]))
def test_unitless_times_that_only_make_sense_scaled_are_refused(tmp_path_factory, fs, unit, n,
                                                                 sep):
    """Read as seconds these give under 1 kHz: never measured, always the hint (a step of
    exactly 1 is refused as a sample count, which also names the options)."""
    name, per_s = unit
    t = np.arange(n) / fs * per_s
    if 1.0 / (t[1] - t[0]) >= 1000.0:
        return  # read as seconds this is a plausible rate: not the case under test
    p = tmp_path_factory.mktemp("u") / "t.csv"
    p.write_text(f"time{sep}light\n" + "".join(f"{a:.10g}{sep}{0.5 + (i % 7) / 10}\n"
                                               for i, a in enumerate(t)))
    with pytest.raises(InputError, match=r"(has no unit|counts samples).*--sample-rate") as exc:
        read_capture(p)
    assert "\n" not in str(exc.value)


@FUZZ
@given(n=st.integers(10, 200), start=st.integers(0, 5), name=st.sampled_from(
    ["", "X", "Index", "Sample", "time", "Time", "n", "#"]), sep=st.sampled_from([",", ";"]))
def test_consecutive_whole_numbers_are_never_seconds(tmp_path_factory, n, start, name, sep):
    p = tmp_path_factory.mktemp("i") / "i.csv"
    head = f"{name}{sep}light\n" if name else ""
    p.write_text(head + "".join(f"{start + i}{sep}{0.5 + (i % 5) / 10}\n" for i in range(n)))
    with pytest.raises(InputError, match="counts samples"):
        read_capture(p)
