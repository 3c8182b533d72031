"""Delta-T sensitivity: where to re-run the UT-dependent observations, and matching solutions across ΔT.

An observation made at a site (a crescent, a heliacal rising, an eclipse
seen or not) depends on UT = TT - ΔT, and ΔT is uncertain by hours before
the common era.  The solver re-runs such observations with ΔT moved by
``k`` sigma (``k`` spread over ``-n_sigma..+n_sigma``,
:class:`calendra_solver.candidates.ShiftedDeltaT`) and solves again.

In ``near`` mode (the default) the re-runs cover only the neighbourhood
that the other observations allow: for every solution that holds with all
observations but the one re-run, the relations tying it to the others give
an interval of days (padded by the matching tolerance and a lunation), and
these intervals, merged, are searched.  This finds every solution that
needs a shifted ΔT for one observation; a solution needing it for two at
once is found in ``full`` mode, which re-runs over the whole window.

The extreme shifts (``+-n_sigma``) are run first.  The shifts between them
are run only around the solutions that do not hold at both extremes and at
the nominal value; a solution that holds at both extremes and at the nominal
value is taken to hold in between (visibility changes monotonically with
the shift of UT over such a range), which ``full`` mode checks instead.

Solutions of different scenarios are the same solution when every event
lies within ``match_days`` of its counterpart; such a group is reported
once, with the ΔT shifts for which it holds.
"""

from __future__ import annotations

import numpy as np

#: Days added on both sides of a re-run interval (a lunation and a half).
NEAR_PAD_DAYS = 45.0
#: Shortest re-run interval, days (a detector that cannot search a span this short is re-run over the window).
NEAR_MIN_DAYS = 120.0
#: Most separate intervals searched per observation and scenario.
NEAR_MAX_SPANS = 16


def near_spans(problem, i, partial, window, pad):
    """Intervals (TT Julian Days) where observation ``i`` can lie, given solutions of the others.

    Parameters
    ----------
    problem : Problem
    i : int
        The observation to re-run.
    partial : ScenarioResult or None
        Solutions of the record without observation ``i`` (None: unknown, search the window).
    window : (float, float)
    pad : float
        Days added on both sides.

    Returns
    -------
    list of (float, float)
    """
    if partial is None:
        return [tuple(window)]
    if not len(partial.idx):
        return []
    T = partial.times()
    n_sol = len(T)
    lo = np.full(n_sol, window[0])
    hi = np.full(n_sol, window[1])
    tied = False
    for e in problem.edges:
        if i not in (e.a, e.b) or e.a == e.b:
            continue
        tied = True
        if e.kind == "time":
            if e.b == i:
                ref = T[:, e.a]
                a, b = ref + e.lo, ref + e.hi
            else:
                ref = T[:, e.b]
                a, b = ref - e.hi, ref - e.lo
        else:
            other = e.a if e.b == i else e.b
            sign = 1 if e.b == i else -1
            centre = T[:, other] + sign * e.offset * 365.25
            a, b = centre - 400.0, centre + 400.0
        lo = np.maximum(lo, np.where(np.isfinite(a), a, window[0]))
        hi = np.minimum(hi, np.where(np.isfinite(b), b, window[1]))
    if not tied:
        return [tuple(window)]
    keep = hi >= lo
    lo, hi = lo[keep] - pad, hi[keep] + pad
    short = hi - lo < NEAR_MIN_DAYS
    mid = 0.5 * (lo + hi)
    lo = np.where(short, mid - NEAR_MIN_DAYS / 2, lo)
    hi = np.where(short, mid + NEAR_MIN_DAYS / 2, hi)
    lo, hi = np.clip(lo, *window), np.clip(hi, *window)
    return merge_spans(lo, hi)


def edge_spans(problem, i, cands, window, pad):
    """Intervals where observation ``i`` can lie given each related observation alone (a looser bound).

    Used when the record without ``i`` is too loose to list its solutions:
    every relation of ``i`` maps the candidates of its partner to an interval
    for ``i``; the days covered by every relation at once (a day grid over
    the window, one array per relation) are the intervals returned.
    """
    a0 = np.floor(window[0])
    n_days = int(np.ceil(window[1] - a0)) + 2
    cover = np.ones(n_days, dtype=bool)
    tied = False
    for e in problem.edges:
        if i not in (e.a, e.b) or e.a == e.b:
            continue
        other = e.a if e.b == i else e.b
        t = cands[other].t
        if e.kind == "time":
            lo, hi = (t + e.lo, t + e.hi) if e.b == i else (t - e.hi, t - e.lo)
        else:
            sign = 1 if e.b == i else -1
            lo, hi = t + sign * e.offset * 365.25 - 400.0, t + sign * e.offset * 365.25 + 400.0
        if not (np.all(np.isfinite(lo)) and np.all(np.isfinite(hi))):
            continue
        tied = True
        s = np.clip(np.floor(lo - pad - a0).astype(np.int64), 0, n_days)
        f = np.clip(np.ceil(hi + pad - a0).astype(np.int64) + 1, 0, n_days)
        diff = np.zeros(n_days + 1, dtype=np.int64)
        np.add.at(diff, s, 1)
        np.add.at(diff, f, -1)
        cover &= np.cumsum(diff)[:n_days] > 0
    if not tied:
        return [tuple(window)]
    on = np.flatnonzero(np.diff(np.concatenate([[0], cover.astype(np.int8), [0]])) == 1)
    off = np.flatnonzero(np.diff(np.concatenate([[0], cover.astype(np.int8), [0]])) == -1)
    lo, hi = a0 + on, a0 + off
    short = hi - lo < NEAR_MIN_DAYS
    mid = 0.5 * (lo + hi)
    lo = np.clip(np.where(short, mid - NEAR_MIN_DAYS / 2, lo), *window)
    hi = np.clip(np.where(short, mid + NEAR_MIN_DAYS / 2, hi), *window)
    return merge_spans(lo, hi)


def merge_spans(lo, hi, gap=60.0, most=NEAR_MAX_SPANS):
    """Merge intervals closer than ``gap`` days; widen the gap until at most ``most`` remain."""
    if not len(lo):
        return []
    order = np.argsort(lo)
    lo, hi = np.asarray(lo)[order], np.asarray(hi)[order]
    while True:
        run_hi = np.maximum.accumulate(hi)
        start = np.concatenate([[True], lo[1:] > run_hi[:-1] + gap])
        gid = np.cumsum(start) - 1
        out_lo = lo[start]
        out_hi = np.zeros(len(out_lo))
        np.maximum.at(out_hi, gid, hi)
        if len(out_lo) <= most:
            return [(float(a), float(b)) for a, b in zip(out_lo, out_hi) if b > a]
        gap *= 2.0


def cluster(scenarios, match_days, limit=20000):
    """Group the solutions of all scenarios into distinct solutions.

    Parameters
    ----------
    scenarios : list of ScenarioResult
        The nominal scenario (k = 0) first.
    match_days : float
        Largest difference of any event's instant for two solutions to be the same.

    Returns
    -------
    list of dict
        ``{"members": {k: row}, "anchor": (k, row)}`` ordered by the anchor's
        score with the ΔT penalty ``k^2``.
    """
    pool_t, pool_k, pool_row, pool_score = [], [], [], []
    for s in scenarios:
        m = min(len(s.idx), limit)
        if not m:
            continue
        pool_t.append(s.times()[:m])
        pool_k.append(np.full(m, s.k))
        pool_row.append(np.arange(m))
        pool_score.append(s.chi2[:m] + s.k ** 2)
    if not pool_t:
        return []
    T = np.concatenate(pool_t)
    K = np.concatenate(pool_k)
    R = np.concatenate(pool_row)
    S = np.concatenate(pool_score)
    order = np.lexsort((np.abs(K), S))
    T, K, R, S = T[order], K[order], R[order], S[order]
    assigned = np.zeros(len(T), dtype=bool)
    out = []
    for p in range(len(T)):
        if assigned[p]:
            continue
        near = ~assigned & (np.nanmax(np.abs(T - T[p]), axis=1) <= match_days) & (K != K[p])
        members = {float(K[p]): (int(R[p]), float(S[p]))}
        assigned[p] = True
        for q in np.flatnonzero(near):        # at most one member per scenario: its best match
            kq = float(K[q])
            if kq not in members:
                members[kq] = (int(R[q]), float(S[q]))
                assigned[q] = True
        out.append({"members": {k: r for k, (r, _) in members.items()},
                    "scores": {k: s for k, (_, s) in members.items()},
                    "anchor": (float(K[p]), int(R[p])), "score": float(S[p])})
        if len(out) >= 2000:
            break
    return out


def fragility(holds_k, all_k, n_sigma):
    """Say how a solution depends on ΔT.

    Parameters
    ----------
    holds_k : iterable of float
        Shifts (in sigma) at which the solution holds.
    all_k : iterable of float
        Shifts examined.

    Returns
    -------
    (str, str)
        A class (``robust``, ``fragile``, ``needs-shift``, ``unlikely-delta-t``,
        ``not-examined``) and a sentence.
    """
    ks = sorted(set(float(k) for k in holds_k))
    allk = sorted(set(float(k) for k in all_k))
    if len(allk) <= 1:
        return "not-examined", "delta-T sensitivity not examined"
    text_k = ", ".join(f"{k:+g}" for k in ks)
    if ks == allk:
        return "robust", f"holds for delta T anywhere within +-{n_sigma:g} sigma"
    if 0.0 in ks:
        fails = [k for k in allk if k not in ks]
        return "fragile", (f"holds at the nominal delta T but not at {', '.join(f'{k:+g}' for k in fails)} sigma: "
                           "the sighting is near its limit")
    if ks and min(abs(k) for k in ks) >= 2.0 - 1e-9:
        return "unlikely-delta-t", (f"holds only for an unlikely delta T ({text_k} sigma from the model), "
                                    "not at the nominal value")
    return "needs-shift", f"holds only with delta T moved by {text_k} sigma, not at the nominal value"
