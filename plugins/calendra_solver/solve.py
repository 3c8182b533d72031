"""Solving one delta-T scenario: date constraints per epoch sample, the join, and the score.

For every sample of the free epochs (one sample when there are none) the
date information of each observation is evaluated over its candidates
(:func:`calendra_solver.dates.date_match`) and the year keys of the key
relations are computed.  Samples that give the same masks and keys form one
class and are joined once.  Solutions found in several classes are merged,
remembering the range of epoch samples for which they hold.

Score (smaller is better; a chi-square-like sum of squared normalised residuals):

* soft column conditions: ``(excess / tolerance)^2`` per condition;
* date with a tolerance: ``(days off / tolerance_days)^2``;
* interval relations: ``((days between - days) / plus_minus)^2``;
* visibility margins: ``((scale - margin) / scale)^2`` when the margin is below its scale;
* delta T (added by :mod:`calendra_solver.sensitivity`): ``k^2`` for a solution that needs ΔT moved by k sigma.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from calendra.errors import ParameterError

from .dates import Variants, date_match, epoch_grid, event_days, year_key
from .join import Side, join


@dataclass
class ScenarioResult:
    """Solutions of one delta-T scenario.

    Attributes
    ----------
    k : float
        Delta T = nominal + k sigma.
    model : DeltaTModel
    cands : list of ObsCandidates
    idx : int64 array (n_solutions, n_observations)
        Candidate index per observation (-1: the observation is left out).
    date_res : float array (n_solutions, n_observations)
        Days from the event's day to the stated date (NaN: no date information).
    epoch_lo, epoch_hi : int64 arrays (n_solutions, n_epochs)
        Range of the epoch samples (day numbers) for which the solution holds.
    chi2 : float array (n_solutions,)
    holds : bool array (n_samples, n_observations)
        Per epoch sample, whether each observation has a candidate meeting its own conditions and date.
    full : bool array (n_samples,)
        Per epoch sample, whether a solution with every included observation exists.
    grid : list of dict
        The epoch samples.
    date_counts : list of int
        Candidates meeting the date information at one sample at least, per observation.
    """

    k: float
    model: object
    cands: list
    idx: np.ndarray
    date_res: np.ndarray
    epoch_lo: np.ndarray
    epoch_hi: np.ndarray
    chi2: np.ndarray
    holds: np.ndarray
    full: np.ndarray
    grid: list
    date_counts: list = field(default_factory=list)

    def times(self) -> np.ndarray:
        """Event instants (TT) per solution and observation (NaN where left out)."""
        out = np.full(self.idx.shape, np.nan)
        for i, c in enumerate(self.cands):
            sel = self.idx[:, i] >= 0
            if sel.any():
                out[sel, i] = c.t[self.idx[sel, i]]
        return out


class DateTables:
    """Date masks and year keys of every observation, per epoch sample."""

    def __init__(self, problem, cands, model):
        self.p = problem
        self.cands = cands
        self.model = model
        self.grid = epoch_grid(problem.epochs)
        self.variants = Variants(problem.book, problem.epochs)
        self._days = {}
        self._fixed = {}
        self.key_uses = sorted({(e.a, e.calendar) for e in problem.edges if e.kind == "key"} |
                               {(e.b, e.calendar) for e in problem.edges if e.kind == "key"})

    def days(self, i, cal):
        key = (i, cal.day_start)
        if key not in self._days:
            site = self.p.sites[i] or self.p.day_site
            if cal.day_start in ("sunset", "sunrise") and site is None:
                raise self.p.fail(f"[[observation]] {self.p.record.ids[i]!r}",
                                  f"calendar {cal.label} begins its day at {cal.day_start}: give the record a site")
            self._days[key] = event_days(self.cands[i].jd_ut, cal.day_start, site, self.model)
        return self._days[key]

    def subset(self, i, spec):
        """Candidates of observation ``i`` that can match its date at some epoch sample.

        Dates move monotonically with an epoch, so the candidates matching at
        the first and the last sample bound those matching at any sample; when
        either end matches nothing, every candidate is kept.
        """
        key = ("subset", i)
        if key not in self._fixed:
            o = self.p.record.observations[i]
            t = self.cands[i].t
            ends = []
            for a in (0, len(self.grid) - 1):
                cal = self.variants.get(spec, self.grid[a])
                ok, _ = date_match(cal, self.days(i, cal), o.date)
                ends.append(t[ok])
            if len(self.grid) < 3 or not all(len(e) for e in ends):
                self._fixed[key] = None
            else:
                lo = min(e.min() for e in ends)
                hi = max(e.max() for e in ends)
                self._fixed[key] = np.flatnonzero((t >= lo) & (t <= hi))
        return self._fixed[key]

    def evaluate(self, a: int):
        """Return (ok, residual, keys, dependent) at sample ``a``: dicts by observation (and calendar)."""
        assignment = self.grid[a]
        ok, res, keys, dep = {}, {}, {}, []
        for i, o in enumerate(self.p.record.observations):
            if o.date is None or not o.date.calendar:
                continue
            spec = o.date.calendar
            d = self.variants.depends(spec)
            if not d and ("date", i) in self._fixed:
                ok[i], res[i] = self._fixed[("date", i)]
                continue
            cal = self.variants.get(spec, assignment)
            sub = self.subset(i, spec) if d else None
            try:
                if sub is None:
                    got = date_match(cal, self.days(i, cal), o.date)
                else:
                    m, r = date_match(cal, self.days(i, cal)[sub], o.date)
                    got = (np.zeros(len(self.cands[i]), dtype=bool), np.full(len(self.cands[i]), np.nan))
                    got[0][sub], got[1][sub] = m, r
            except ParameterError as exc:
                raise self.p.fail(f"[[observation]] {o.id!r}, [observation.date]", str(exc)) from None
            ok[i], res[i] = got
            if d:
                dep.append(("date", i))
            else:
                self._fixed[("date", i)] = got
        for i, spec in self.key_uses:
            d = self.variants.depends(spec)
            if not d and ("key", i, spec) in self._fixed:
                keys[(i, spec)] = self._fixed[("key", i, spec)]
                continue
            cal = self.variants.get(spec, assignment)
            keys[(i, spec)] = year_key(cal, self.days(i, cal))
            if d:
                dep.append(("key", i, spec))
            else:
                self._fixed[("key", i, spec)] = keys[(i, spec)]
        return ok, res, keys, dep


def _signature(ok, keys, dep) -> bytes:
    parts = []
    for item in dep:
        if item[0] == "date":
            parts.append(np.packbits(ok[item[1]]).tobytes())
        else:
            parts.append(keys[(item[1], item[2])].tobytes())
    return b"|".join(parts)


def score_rows(problem, cands, idx, date_res) -> np.ndarray:
    """Score of solutions (see the module docstring); observations left out (-1) add nothing."""
    n_sol = len(idx)
    chi2 = np.zeros(n_sol)
    for i, o in enumerate(problem.record.observations):
        use = idx[:, i] >= 0
        if not use.any():
            continue
        c = cands[i]
        j = idx[use, i]
        part = c.penalty[j].copy()
        if o.date is not None and o.date.tolerance_days > 0:
            r = np.nan_to_num(date_res[use, i])
            part += (r / o.date.tolerance_days) ** 2 * o.weight
        if o.margin is not None and c.margin is not None:
            m = c.margin[j]
            scale = o.margin[1]
            short = np.where(np.isfinite(m), np.clip((scale - m) / scale, 0.0, None), 1.0)
            part += short ** 2 * o.weight
        chi2[use] += part
    for e in problem.edges:
        r = problem.record.relations[e.relation - 1]
        if e.kind != "time" or r.type != "interval" or r.days is None or r.plus_minus <= 0:
            continue
        use = (idx[:, e.a] >= 0) & (idx[:, e.b] >= 0)
        if use.any():
            dt = cands[e.b].t[idx[use, e.b]] - cands[e.a].t[idx[use, e.a]]
            chi2[use] += ((dt - r.days) / r.plus_minus) ** 2
    return chi2


def scenario_classes(problem, cands, model) -> dict:
    """Evaluate the date information at every epoch sample and group samples into classes.

    Returns
    -------
    dict
        ``grid``, ``amat`` (samples x epochs day numbers), ``groups`` (signature ->
        {assign, ok, res, keys}), ``holds`` (samples x observations), ``date_counts``.
    """
    n = problem.n
    dt = DateTables(problem, cands, model)
    grid = dt.grid
    n_ep = len(problem.epochs)
    amat = np.array([[g[e.name] for e in problem.epochs] for g in grid], dtype=np.int64).reshape(len(grid), n_ep)
    groups = {}
    holds = np.zeros((len(grid), n), dtype=bool)
    date_any = [np.zeros(len(c), dtype=bool) for c in cands]
    for a in range(len(grid)):
        ok, res, keys, dep = dt.evaluate(a)
        sig = _signature(ok, keys, dep)
        if sig not in groups:
            groups[sig] = {"assign": [], "ok": ok, "res": res, "keys": keys}
        groups[sig]["assign"].append(a)
        for i in range(n):
            holds[a, i] = bool(ok[i].any()) if i in ok else len(cands[i]) > 0
            if i in ok:
                date_any[i] |= ok[i]
    date_counts = [int(date_any[i].sum()) if problem.record.observations[i].date and
                   problem.record.observations[i].date.calendar else len(cands[i]) for i in range(n)]
    return {"grid": grid, "amat": amat, "groups": groups, "holds": holds, "date_counts": date_counts}


def solve_scenario(problem, cands, model, k=0.0, include=None, classes=None) -> ScenarioResult:
    """Join and score the candidates of one delta-T scenario.

    Parameters
    ----------
    problem : Problem
    cands : list of ObsCandidates
        Per observation, for this scenario.
    model : DeltaTModel
        The scenario's model (used to place events on calendar days).
    k : float
        The scenario's shift in sigma (recorded only).
    include : iterable of int, optional
        Observations to join (default all): the others are left out (-1).
    classes : dict, optional
        The result of :func:`scenario_classes` for these candidates (computed when not given).
    """
    n = problem.n
    inc = list(range(n)) if include is None else sorted(include)
    cl = classes or scenario_classes(problem, cands, model)
    grid, amat, groups, holds, date_counts = (cl["grid"], cl["amat"], cl["groups"], cl["holds"],
                                              cl["date_counts"])
    n_ep = len(problem.epochs)
    rows_all, res_all, gid_all = [], [], []
    full = np.zeros(len(grid), dtype=bool)
    glo, ghi = [], []
    for g, grp in enumerate(groups.values()):
        sel = [np.flatnonzero(grp["ok"][i]) if i in grp["ok"] else np.arange(len(cands[i])) for i in range(n)]
        sides = []
        for i in range(n):
            kd = {spec: grp["keys"][(j, spec)][sel[i]] for (j, spec) in grp["keys"] if j == i}
            sides.append(Side(cands[i].t[sel[i]], kd))
        local = join(sides, problem.edges, inc, names=problem.record.ids)
        a_idx = np.array(grp["assign"])
        glo.append(amat[a_idx].min(axis=0) if n_ep else np.zeros(0, dtype=np.int64))
        ghi.append(amat[a_idx].max(axis=0) if n_ep else np.zeros(0, dtype=np.int64))
        if not len(local):
            continue
        full[a_idx] = True
        glob = np.full(local.shape, -1, dtype=np.int64)
        dres = np.full(local.shape, np.nan)
        for i in inc:
            glob[:, i] = sel[i][local[:, i]]
            if i in grp["res"]:
                dres[:, i] = grp["res"][i][glob[:, i]]
        rows_all.append(glob)
        res_all.append(dres)
        gid_all.append(np.full(len(glob), g))
    if not rows_all:
        z = np.zeros((0, n), dtype=np.int64)
        return ScenarioResult(k, model, cands, z, np.zeros((0, n)), np.zeros((0, n_ep), dtype=np.int64),
                              np.zeros((0, n_ep), dtype=np.int64), np.zeros(0), holds, full, grid, date_counts)
    rows = np.concatenate(rows_all)
    dres = np.concatenate(res_all)
    gids = np.concatenate(gid_all)
    uniq, first, inv = np.unique(rows, axis=0, return_index=True, return_inverse=True)
    inv = np.asarray(inv).reshape(-1)
    glo = np.array(glo, dtype=np.int64).reshape(len(groups), n_ep)
    ghi = np.array(ghi, dtype=np.int64).reshape(len(groups), n_ep)
    lo = np.full((len(uniq), n_ep), np.iinfo(np.int64).max, dtype=np.int64)
    hi = np.full((len(uniq), n_ep), np.iinfo(np.int64).min, dtype=np.int64)
    if n_ep:
        np.minimum.at(lo, inv, glo[gids])
        np.maximum.at(hi, inv, ghi[gids])
    # the smallest date residuals over the classes a solution appears in
    absres = np.where(np.isnan(dres), np.inf, np.abs(dres))
    best = np.full((len(uniq), n), np.inf)
    np.minimum.at(best, inv, absres)
    pick = np.full((len(uniq), n), np.nan)
    for i in range(n):
        hit = absres[:, i] == best[inv, i]
        pick[inv[hit], i] = dres[hit, i]
    chi2 = score_rows(problem, cands, uniq, pick)
    order = np.argsort(chi2, kind="stable")
    return ScenarioResult(k, model, cands, uniq[order], pick[order], lo[order], hi[order], chi2[order], holds,
                          full, grid, date_counts)
