"""Rendering results as a readable table (default), JSON or CSV.

Results are lists of row dicts with a column order, plus a provenance dict.
Tables end with the provenance footer; JSON puts it in a ``provenance``
field; CSV holds the rows only (one header line), so that it loads
directly into a spreadsheet or a data frame.
"""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np

from .provenance import footer_lines

FORMATS = ("table", "json", "csv")


def _cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, (float, np.floating)):
        if math.isnan(value):
            return "-"
        return f"{value:.6f}".rstrip("0").rstrip(".") if abs(value) < 1e7 else f"{value:.1f}"
    return str(value)


def render_table(rows, columns, headers=None, title: str = "", provenance: dict | None = None) -> str:
    """Return rows as an aligned text table with a title and provenance footer."""
    headers = headers or columns
    cells = [[_cell(r.get(c)) for c in columns] for r in rows]
    widths = [max([len(h)] + [len(row[i]) for row in cells]) for i, h in enumerate(headers)]
    numeric = [all(_is_number(row[i]) for row in cells if row[i]) and any(row[i] for row in cells)
               for i in range(len(columns))]
    out = []
    if title:
        out.append(title)
    out.append("  ".join(h.ljust(w) for h, w in zip(headers, widths)).rstrip())
    out.append("  ".join("-" * w for w in widths))
    for row in cells:
        out.append("  ".join((c.rjust(w) if num else c.ljust(w)) for c, w, num in zip(row, widths, numeric)).rstrip())
    if provenance:
        out.append("")
        out.extend(footer_lines(provenance))
    return "\n".join(out)


def _is_number(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return text == "-"


def _jsonable(value):
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and (math.isnan(value) or math.isinf(value)):
        return None
    if isinstance(value, dict):
        return {k: _jsonable(v) for k, v in value.items()}
    if isinstance(value, (list, tuple, np.ndarray)):
        return [_jsonable(v) for v in value]
    return value


def render_json(payload) -> str:
    """Return ``payload`` (dicts, lists, numpy values) as indented JSON; NaN becomes null."""
    return json.dumps(_jsonable(payload), indent=2, ensure_ascii=False)


def render_csv(rows, columns) -> str:
    """Return rows as CSV with one header line."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(columns)
    for r in rows:
        writer.writerow([_cell(r.get(c)) for c in columns])
    return buf.getvalue()
