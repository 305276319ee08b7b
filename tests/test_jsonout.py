"""JSON text: valid, the same data back, nesting indented and flat objects on one line."""

import json
import math

import numpy as np

from flickerkit.export.jsonout import dumps, dumps_list, dumps_object_item


def test_dumps_round_trips_and_keeps_rows_on_one_line():
    data = {"label": "lamp \u00e9 \"A\"", "n": np.int64(3), "x": np.float64(0.1),
            "bad": [math.nan, math.inf, -math.inf], "empty": {}, "none": [],
            "rows": [{"step": i, "light": i / 7, "visible": i % 2 == 0} for i in range(5)],
            "deep": {"a": {"b": [1, [2, 3]]}}}
    text = dumps(data)
    back = json.loads(text)  # reference: the standard library's parser
    assert back["bad"] == [None, None, None]
    assert back["n"] == 3 and back["x"] == 0.1 and back["label"] == data["label"]
    assert back["rows"] == [{"step": i, "light": i / 7, "visible": i % 2 == 0}
                            for i in range(5)]
    assert back["deep"] == {"a": {"b": [1, [2, 3]]}} and back["empty"] == {}
    lines = text.splitlines()
    assert lines[0] == "{" and text.endswith("}\n")
    rows = [ln for ln in lines if ln.lstrip().startswith('{"step"')]
    assert len(rows) == 5 and all(ln.startswith("    {") for ln in rows)
    # the same bytes as the standard encoder's compact form of each row
    assert rows[1].strip().rstrip(",") == json.dumps(back["rows"][1])


def test_a_list_written_object_by_object_is_the_same_text():
    objs = [{"label": "a", "x": np.float64(0.25), "bad": math.nan, "rows": [{"k": 1}, {"k": 2}],
             "deep": {"a": {"b": [1, [2, (3, math.inf)]]}}, "n": np.int64(7)},
            {"flat": 1.5, "s": "\u00b5"}, {}, {"empty": [], "obj": {}}]
    for k in range(len(objs) + 1):
        part = objs[:k]
        assert dumps_list([dumps_object_item(o) for o in part]) == dumps(part)


def test_each_value_is_written_as_the_standard_encoder_writes_it():
    """Scalars of an object that holds containers (written one per line without the encoder,
    for speed) read exactly as Python's json module writes them (reference: json.dumps with
    the same separators)."""
    values = [0.1, -0.0, 1e-310, 1.7976931348623157e308, 123456789.123, 2**70, -3, 0, True,
              False, None, "", "\u00e9\u00b5 \"q\" \\ \n\t\u2028", np.float64(1 / 3),
              np.int64(-9), np.bool_(True), np.float32(0.1)]
    data = {**{f"k{i}\u00e9": v for i, v in enumerate(values)}, "deep": {"x": [1, {}]}}
    lines = [ln.rstrip(",") for ln in dumps(data).split("\n")]
    for i, v in enumerate(values):
        plain = v.item() if hasattr(v, "item") else v
        want = json.dumps({f"k{i}\u00e9": plain}, ensure_ascii=False, separators=(", ", ": "))
        assert f"  {want[1:-1]}" in lines
