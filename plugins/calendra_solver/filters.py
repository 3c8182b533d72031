"""Conditions on a detector's output columns, evaluated over whole columns at once.

Two forms exist in a record, and neither evaluates user text as code:

* ``where = "umbral_mag >= 0.5 and seen == 'yes'"``: comparisons
  ``COLUMN OP VALUE`` (``OP`` one of ``< <= > >= == !=``; ``VALUE`` a
  number, a quoted text, ``true`` or ``false``) or ``COLUMN in (V1, V2, ...)``,
  joined by ``and``; groups joined by ``or`` (``and`` binds tighter; no
  parentheses).  A small tokenizer reads it into :class:`Clause` objects.
* ``[[observation.require]]`` tables (:class:`calendra_solver.schema.Require`):
  ``min``/``max``, ``target`` with ``tolerance``, ``equals``, ``one_of``.
  A tolerance makes the condition soft: values outside the hard limits by
  no more than the tolerance pass, and the excess (in the column's unit,
  divided by the tolerance) enters the score.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

_TOKEN_RE = re.compile(r"""\s*(?:
    (?P<num>[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)
  | (?P<str>'[^']*'|"[^"]*")
  | (?P<op><=|>=|==|!=|<|>)
  | (?P<punct>[(),])
  | (?P<name>[A-Za-z_][A-Za-z0-9_.\-]*)
)""", re.X)
_OPS = ("<", "<=", ">", ">=", "==", "!=")


@dataclass(frozen=True)
class Clause:
    """One comparison ``column op value`` (``op`` may be ``in`` with a tuple value)."""

    column: str
    op: str
    value: object

    @property
    def text(self) -> str:
        if self.op == "in":
            return f"{self.column} in ({', '.join(repr(v) for v in self.value)})"
        return f"{self.column} {self.op} {self.value!r}"


def _tokens(text: str):
    pos = 0
    out = []
    while pos < len(text):
        if text[pos:].strip() == "":
            break
        m = _TOKEN_RE.match(text, pos)
        if not m or m.end() == pos:
            raise ValueError(f"cannot read {text[pos:].strip()[:20]!r} in {text!r}")
        kind = m.lastgroup
        val = m.group(kind)
        if kind == "num":
            out.append(("value", float(val)))
        elif kind == "str":
            out.append(("value", val[1:-1]))
        elif kind == "name" and val.lower() in ("and", "or", "in"):
            out.append((val.lower(), val))
        elif kind == "name" and val.lower() in ("true", "false"):
            out.append(("value", val.lower() == "true"))
        else:
            out.append((kind, val))
        pos = m.end()
    return out


def parse_where(text: str) -> tuple:
    """Read a ``where`` text into or-groups of and-clauses.

    Returns
    -------
    tuple of tuple of Clause
        ``((c1, c2), (c3,))`` means ``(c1 and c2) or c3``.

    Raises
    ------
    ValueError
        With a message saying what could not be read.
    """
    toks = _tokens(text)
    if not toks:
        raise ValueError("empty condition")
    groups, current, i = [], [], 0

    def expect(kind):
        nonlocal i
        if i >= len(toks) or toks[i][0] != kind:
            got = toks[i][1] if i < len(toks) else "the end"
            raise ValueError(f"expected {kind} but found {got!r} in {text!r}")
        i += 1
        return toks[i - 1][1]

    while True:
        col = expect("name")
        if i < len(toks) and toks[i][0] == "in":
            i += 1
            if i >= len(toks) or toks[i] != ("punct", "("):
                raise ValueError(f"expected '(' after 'in' in {text!r}")
            i += 1
            values = [expect("value")]
            while i < len(toks) and toks[i] == ("punct", ","):
                i += 1
                values.append(expect("value"))
            if i >= len(toks) or toks[i] != ("punct", ")"):
                raise ValueError(f"missing ')' in {text!r}")
            i += 1
            current.append(Clause(col, "in", tuple(values)))
        else:
            op = expect("op")
            current.append(Clause(col, op, expect("value")))
        if i >= len(toks):
            break
        word = toks[i][0]
        if word == "and":
            i += 1
        elif word == "or":
            i += 1
            groups.append(tuple(current))
            current = []
        else:
            raise ValueError(f"expected 'and' or 'or' but found {toks[i][1]!r} in {text!r}")
    groups.append(tuple(current))
    return tuple(groups)


class ColumnError(ValueError):
    """A condition names a column the detector does not report, or compares it with the wrong type."""


def column(table, name: str) -> np.ndarray:
    """Return a column of an EventTable, or raise ColumnError listing the columns."""
    if name not in table.columns:
        raise ColumnError(f"the detector reports no column {name!r} (columns: {', '.join(table.names)})")
    return table.columns[name]


def _numeric(values: np.ndarray, name: str) -> np.ndarray:
    try:
        return np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise ColumnError(f"column {name!r} holds text, compare it with == or != and a quoted value") from None


def _compare(values, op, value, name):
    if op == "in":
        return np.isin(np.asarray(values).astype(str) if any(isinstance(v, str) for v in value) else values,
                       [str(v) if isinstance(v, str) else v for v in value])
    if isinstance(value, str):
        if op not in ("==", "!="):
            raise ColumnError(f"{name} {op} {value!r}: text can be compared with == or != only")
        eq = np.asarray(values).astype(str) == value
        return eq if op == "==" else ~eq
    if isinstance(value, bool):
        arr = np.asarray(values)
        if arr.dtype.kind in "OUS":
            arr = np.isin(arr.astype(str), ["True", "true", "yes", "1"])
        eq = arr.astype(bool) == value
        if op not in ("==", "!="):
            raise ColumnError(f"{name} {op} {value}: true/false can be compared with == or != only")
        return eq if op == "==" else ~eq
    x = _numeric(values, name)
    with np.errstate(invalid="ignore"):
        return {"<": x < value, "<=": x <= value, ">": x > value, ">=": x >= value,
                "==": x == value, "!=": x != value}[op]


def where_mask(table, groups) -> np.ndarray:
    """Return the rows of ``table`` where the or-groups of and-clauses hold (NaN compares False)."""
    n = len(table)
    if not groups:
        return np.ones(n, dtype=bool)
    out = np.zeros(n, dtype=bool)
    for group in groups:
        m = np.ones(n, dtype=bool)
        for c in group:
            m &= _compare(column(table, c.column), c.op, c.value, c.column)
        out |= m
    return out


def require_terms(table, req):
    """Evaluate one Require over a table.

    Returns
    -------
    ok : bool array
        Rows that pass (within the tolerance band for soft conditions).
    residual : float array
        Signed distance from the accepted range (target: value - target), in
        the column's unit; 0 inside; NaN for text conditions.
    normalised : float array
        ``residual / tolerance`` where a tolerance is given, else 0.
    """
    values = column(table, req.column)
    n = len(table)
    if req.equals is not None or req.one_of is not None:
        opts = (req.equals,) if req.equals is not None else req.one_of
        ok = _compare(values, "in", tuple(opts), req.column)
        return ok, np.full(n, np.nan), np.zeros(n)
    x = _numeric(values, req.column)
    tol = req.tolerance or 0.0
    if req.target is not None:
        res = x - req.target
        with np.errstate(invalid="ignore"):
            ok = np.abs(res) <= tol
        norm = res / tol if tol > 0 else np.zeros(n)
        return ok, res, norm
    lo = -np.inf if req.min is None else req.min
    hi = np.inf if req.max is None else req.max
    with np.errstate(invalid="ignore"):
        res = np.where(x < lo, x - lo, np.where(x > hi, x - hi, 0.0))
        ok = np.isfinite(x) & (np.abs(res) <= tol)
    norm = res / tol if tol > 0 else np.zeros(n)
    return ok, res, norm
