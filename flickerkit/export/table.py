"""Plain-text tables for the terminal."""

from __future__ import annotations

from typing import Any, Sequence


def fmt(value: Any, spec: str = ".4g") -> str:
    """Format a value for a table cell; None/NaN as an en dash."""
    if value is None:
        return "–"
    if isinstance(value, float):
        if value != value:
            return "–"
        if value in (float("inf"), float("-inf")):
            return "exempt" if value > 0 else "-inf"
        return format(value, spec)
    return str(value)


def render(headers: Sequence[str], rows: Sequence[Sequence[str]], *,
           right: Sequence[bool] | None = None) -> str:
    """Render rows under headers with aligned columns (two spaces between)."""
    cols = len(headers)
    right = right or [False] + [True] * (cols - 1)
    widths = [len(h) for h in headers]
    for r in rows:
        for i, c in enumerate(r):
            widths[i] = max(widths[i], len(c))

    def line(cells: Sequence[str]) -> str:
        out = [c.rjust(widths[i]) if right[i] else c.ljust(widths[i]) for i, c in enumerate(cells)]
        return "  ".join(out).rstrip()

    rule = "  ".join("-" * w for w in widths)
    return "\n".join([line(headers), rule, *(line(r) for r in rows)]) + "\n"
