"""Joining the candidates of several observations across the record's relations.

Relations become *edges* between two observations:

* a time edge ``lo <= t_b - t_a <= hi`` (days between the events' instants,
  TT): intervals ("14 +- 1 days after") and order ("before", with or
  without a longest gap);
* a key edge ``key_b - key_a == offset`` on the year keys of one calendar:
  same year (offset 0), consecutive years (1), N years after (N).

Partial solutions are rows of an integer matrix (one column per placed
observation, holding candidate indices).  Each step adds the observation
reachable by an edge with the fewest candidates: for every row, the range
of its candidates that satisfies the edge is found with ``np.searchsorted``
on the sorted times (or sorted keys), and the rows are expanded with
``np.repeat``; every other edge to the placed observations is then applied
as a mask.  An observation tied to none is joined by a full product, which
is refused beyond :data:`MAX_ROWS` rows with a message saying which
observations to tie.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from calendra.errors import ParameterError

#: Most partial solutions held at once.
MAX_ROWS = 4_000_000


@dataclass(frozen=True)
class Edge:
    """One pairwise condition between observations ``a`` and ``b`` (indices in the record)."""

    a: int
    b: int
    kind: str              # "time" or "key"
    lo: float = -np.inf    # time: bounds of t_b - t_a, days
    hi: float = np.inf
    calendar: str = ""     # key: calendar of the year keys
    offset: int = 0        # key: key_b - key_a
    relation: int = 0      # index of the relation in the record (1-based)
    label: str = ""


def edges_from_relations(relations, ids) -> list:
    """Turn the record's relations into edges (regnal relations give none: they act through the dates)."""
    pos = {oid: i for i, oid in enumerate(ids)}
    out = []
    for r in relations:
        m = [pos[x] for x in r.members]
        if r.type == "interval":
            lo, hi = ((r.days - r.plus_minus, r.days + r.plus_minus) if r.days is not None
                      else (r.min_days, r.max_days))
            out.append(Edge(m[0], m[1], "time", lo, hi, relation=r.index, label=r.label))
        elif r.type == "before":
            hi = np.inf if r.max_days is None else r.max_days
            out.append(Edge(m[0], m[1], "time", max(r.min_days or 0.0, 1e-9), hi, relation=r.index, label=r.label))
        elif r.type in ("same-year", "consecutive-years"):
            step = 0 if r.type == "same-year" else 1
            for x, y in zip(m[:-1], m[1:]):
                out.append(Edge(x, y, "key", calendar=r.calendar, offset=step, relation=r.index, label=r.label))
        elif r.type == "years-after":
            out.append(Edge(m[0], m[1], "key", calendar=r.calendar, offset=r.years, relation=r.index,
                            label=r.label))
    return out


class Contradiction(ParameterError):
    """The relations of a record cannot all hold, whatever the sky did."""


def check_consistency(edges, n, ids):
    """Raise :class:`Contradiction` when the time edges or the key edges contradict one another.

    Time edges are difference constraints; a negative cycle in their graph
    (Floyd-Warshall) means no instants can satisfy them.  Key edges are
    checked with offsets along a spanning forest.
    """
    inf = np.inf
    d = np.full((n, n), inf)
    np.fill_diagonal(d, 0.0)
    via = {}
    for e in edges:
        if e.kind != "time":
            continue
        if e.hi < d[e.a, e.b]:
            d[e.a, e.b] = e.hi
            via[(e.a, e.b)] = e
        if -e.lo < d[e.b, e.a]:
            d[e.b, e.a] = -e.lo
            via[(e.b, e.a)] = e
    nxt = np.where(np.isfinite(d), np.arange(n)[np.newaxis, :], -1)
    for k in range(n):
        alt = d[:, k:k + 1] + d[k:k + 1, :]
        better = alt < d - 1e-9
        d = np.where(better, alt, d)
        nxt = np.where(better, nxt[:, k:k + 1], nxt)
    bad = np.flatnonzero(np.diag(d) < -1e-9)
    if bad.size:
        i = int(bad[0])
        path, u = [i], int(nxt[i, i])
        for _ in range(n + 1):
            if u < 0:
                break
            path.append(u)
            if u == i:
                break
            u = int(nxt[u, i])
        labels = []
        for x, y in zip(path[:-1], path[1:]):
            e = via.get((x, y))
            if e is not None and e.label not in labels:
                labels.append(e.label)
        raise Contradiction("the record contradicts itself: the relations " + "; ".join(labels or ["(time)"]) +
                            " cannot all hold (their day counts around "
                            f"{' -> '.join(ids[p] for p in path)} do not add up)")
    # key edges: potentials per calendar
    by_cal = {}
    for e in edges:
        if e.kind == "key":
            by_cal.setdefault(e.calendar, []).append(e)
    for cal, es in by_cal.items():
        pot = {}
        adj = {}
        for e in es:
            adj.setdefault(e.a, []).append((e.b, e.offset, e))
            adj.setdefault(e.b, []).append((e.a, -e.offset, e))
        for start in adj:
            if start in pot:
                continue
            pot[start] = 0
            stack = [start]
            while stack:
                u = stack.pop()
                for v, off, e in adj[u]:
                    if v not in pot:
                        pot[v] = pot[u] + off
                        stack.append(v)
                    elif pot[v] != pot[u] + off:
                        raise Contradiction(f"the record contradicts itself: the year relations in calendar {cal} "
                                            f"put {ids[v]} both {pot[v] - pot[start]} and "
                                            f"{pot[u] + off - pot[start]} years after {ids[start]} "
                                            f"(relation: {e.label})")


def _expand(sol, left, right, pick=None):
    counts = np.maximum(right - left, 0)
    total = int(counts.sum())
    if total > MAX_ROWS:
        raise ParameterError(f"the join would hold {total} partial solutions (at most {MAX_ROWS}); "
                             "tie the observations more tightly (a date, a narrower interval or a smaller window)")
    rows = np.repeat(np.arange(len(sol)), counts)
    start = np.cumsum(counts) - counts
    pos = left[rows] + (np.arange(total) - start[rows])
    new = pos if pick is None else pick[pos]
    return np.column_stack([sol[rows], new])


def _edge_ok(e, sides, cols, sol):
    ia, ib = cols[e.a], cols[e.b]
    if e.kind == "time":
        dt = sides[e.b].t[sol[:, ib]] - sides[e.a].t[sol[:, ia]]
        return (dt >= e.lo) & (dt <= e.hi)
    ka = sides[e.a].keys[e.calendar][sol[:, ia]]
    kb = sides[e.b].keys[e.calendar][sol[:, ib]]
    return kb - ka == e.offset


@dataclass
class Side:
    """What the join needs of one observation's candidates: sorted times (TT) and year keys per calendar."""

    t: np.ndarray
    keys: dict

    def __len__(self):
        return len(self.t)


def join(sides, edges, include=None, names=None) -> np.ndarray:
    """Return every combination of candidates that satisfies the edges among the included observations.

    Parameters
    ----------
    sides : list of Side
        One per observation of the record, times sorted ascending.
    edges : list of Edge
    include : iterable of int, optional
        Observations to join (default all); edges to others are ignored.
    names : list of str, optional
        Observation ids, for messages.

    Returns
    -------
    int64 array, shape (n_solutions, n_observations)
        Candidate index per observation (-1 for observations not included).
    """
    n = len(sides)
    inc = list(range(n)) if include is None else sorted(set(include))
    out_cols = n
    if not inc or any(len(sides[i]) == 0 for i in inc):
        return np.zeros((0, out_cols), dtype=np.int64)
    es = [e for e in edges if e.a in inc and e.b in inc]
    linked = {i for e in es for i in (e.a, e.b)}
    first = min(inc, key=lambda i: (i not in linked, len(sides[i])))
    placed = [first]
    cols = {first: 0}
    sol = np.arange(len(sides[first]), dtype=np.int64)[:, np.newaxis]
    remaining = [i for i in inc if i != first]
    while remaining and len(sol):
        best = None
        for j in remaining:
            for e in es:
                if (e.a == j and e.b in cols) or (e.b == j and e.a in cols):
                    bounded = e.kind == "key" or (np.isfinite(e.lo) and np.isfinite(e.hi))
                    rank = (0 if bounded else 1, len(sides[j]))
                    if best is None or rank < best[0]:
                        best = (rank, j, e)
        if best is None:
            j = min(remaining, key=lambda i: len(sides[i]))
            m = len(sides[j])
            if len(sol) * m > MAX_ROWS:
                who = names[j] if names else f"#{j + 1}"
                raise ParameterError(f"observation {who} is tied to the others by no relation: joining it would "
                                     f"make {len(sol) * m} combinations (at most {MAX_ROWS}); add a relation or "
                                     "a date to it")
            left = np.zeros(len(sol), dtype=np.int64)
            right = np.full(len(sol), m, dtype=np.int64)
            sol = _expand(sol, left, right)
            used = None
        else:
            _, j, e = best
            used = e
            if e.kind == "time":
                tj = sides[j].t
                if e.b == j:
                    ref = sides[e.a].t[sol[:, cols[e.a]]]
                    lo, hi = ref + e.lo, ref + e.hi
                else:
                    ref = sides[e.b].t[sol[:, cols[e.b]]]
                    lo, hi = ref - e.hi, ref - e.lo
                left = np.searchsorted(tj, lo, side="left")
                right = np.searchsorted(tj, hi, side="right")
                sol = _expand(sol, left, right)
            else:
                kj = sides[j].keys[e.calendar]
                order = np.argsort(kj, kind="stable")
                sk = kj[order]
                if e.b == j:
                    target = sides[e.a].keys[e.calendar][sol[:, cols[e.a]]] + e.offset
                else:
                    target = sides[e.b].keys[e.calendar][sol[:, cols[e.b]]] - e.offset
                left = np.searchsorted(sk, target, side="left")
                right = np.searchsorted(sk, target, side="right")
                sol = _expand(sol, left, right, pick=order)
        cols[j] = len(placed)
        placed.append(j)
        remaining.remove(j)
        for e in es:
            if e is used or not ((e.a == j and e.b in cols) or (e.b == j and e.a in cols)):
                continue
            if len(sol):
                sol = sol[_edge_ok(e, sides, cols, sol)]
    out = np.full((len(sol), out_cols), -1, dtype=np.int64)
    if len(sol) and not remaining:
        for i, c in cols.items():
            out[:, i] = sol[:, c]
        return out
    return np.zeros((0, out_cols), dtype=np.int64)
