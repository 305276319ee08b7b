"""JSON output: deterministic text of assessments."""

from __future__ import annotations

import json
import math
from typing import Any


def _clean(v: Any) -> Any:
    if isinstance(v, float):
        return v if math.isfinite(v) else None
    if isinstance(v, dict):
        return {k: _clean(x) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_clean(x) for x in v]
    if hasattr(v, "item") and callable(v.item):  # numpy scalar
        return _clean(v.item())
    return v


def dumps(obj: Any) -> str:
    """JSON text with NaN/inf as null, stable key order, two-space indent, final newline."""
    return json.dumps(_clean(obj), indent=2, ensure_ascii=False, allow_nan=False) + "\n"
