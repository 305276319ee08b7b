"""JSON output: deterministic text of assessments."""

from __future__ import annotations

import json
import math
from json.encoder import encode_basestring
from typing import Any, Sequence


def _clean(v: Any) -> Any:
    t = type(v)  # exact built-in types first: a batch's records hold hundreds of values
    if t is float:
        return v if math.isfinite(v) else None
    if t is str or t is int or t is bool or v is None:
        return v
    if t is dict:
        return {k: _clean(x) for k, x in v.items()}
    if t is list:
        return [_clean(x) for x in v]
    if isinstance(v, float):
        return v if math.isfinite(v) else None
    if isinstance(v, dict):
        return {k: _clean(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_clean(x) for x in v]
    if hasattr(v, "item") and callable(v.item):  # numpy scalar
        return _clean(v.item())
    return v


#: Writes one flat object or list (no containers inside) on one line, with the C encoder.
_FLAT = json.JSONEncoder(ensure_ascii=False, allow_nan=False, separators=(", ", ": ")).encode


def _flat(v: Any) -> bool:
    """Return whether ``v`` is a scalar, or an object or list without containers inside."""
    if isinstance(v, dict):
        v = v.values()
    elif not isinstance(v, list):
        return True
    for x in v:
        if isinstance(x, (dict, list)):
            return False
    return True


def _scalar(v: Any) -> str | None:
    """Return the JSON text of a finite float, str, int, bool or None as ``_FLAT`` writes it.

    None for any other value (``_FLAT`` then writes it, or refuses it).
    """
    t = type(v)
    if t is float:
        return float.__repr__(v) if math.isfinite(v) else None
    if t is str:
        return encode_basestring(v)
    if v is None:
        return "null"
    if t is bool:
        return "true" if v else "false"
    if t is int:
        return int.__repr__(v)
    return None


def _write(v: Any, pad: str, out: list[str]) -> None:
    text = _scalar(v)
    if text is not None:
        out.append(text)
        return
    if _flat(v):
        out.append(_FLAT(v))
        return
    inner = pad + "  "
    if isinstance(v, dict):
        out.append("{")
        sep = "\n"
        for k, x in v.items():
            out.append(sep + inner + encode_basestring(str(k)) + ": ")  # as _FLAT writes it
            _write(x, inner, out)
            sep = ",\n"
        out.append("\n" + pad + "}")
    else:
        out.append("[")
        sep = "\n"
        for x in v:
            out.append(sep + inner)
            if _flat(x):
                out.append(_FLAT(x))
            else:
                _write(x, inner, out)
            sep = ",\n"
        out.append("\n" + pad + "]")


def dumps(obj: Any) -> str:
    """Return JSON text with NaN/inf as null, stable key order, final newline.

    Objects and lists that hold others are indented by two spaces; a flat one
    (a table row, a harmonic, a list of numbers) is written on one line. Python's
    JSON encoder runs its fast C code only without indentation, so indenting
    every level made a 65,536-step table about 3x slower to write.
    """
    out: list[str] = []
    _write(_clean(obj), "", out)
    out.append("\n")
    return "".join(out)


def dumps_object_item(obj: dict[str, Any]) -> str:
    """Return one object of a top-level JSON list, as :func:`dumps` writes it inside the list.

    ``dumps_list([dumps_object_item(o) for o in objs]) == dumps(objs)``, so the objects of
    a long list can be written as they arrive (a batch's records while the workers run).
    """
    if not isinstance(obj, dict):
        raise TypeError("dumps_object_item writes objects (dicts) only")
    out: list[str] = []
    v = _clean(obj)
    if _flat(v):
        out.append(_FLAT(v))
    else:
        _write(v, "  ", out)
    return "".join(out)


def dumps_list(items: Sequence[str]) -> str:
    """Join objects' :func:`dumps_object_item` texts into the JSON text of a list."""
    if not items:
        return "[]\n"
    return "[\n  " + ",\n  ".join(items) + "\n]\n"
