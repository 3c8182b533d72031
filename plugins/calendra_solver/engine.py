"""Dating a record end to end: candidates, join, delta-T scenarios, ranking, explanations.

:func:`date_record` is the library entry point; the ``calendra date``
command is a thin front over it.  The stages are timed (``result.timings``,
seconds) and the candidates left after each are counted (``result.counts``).
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np

from calendra.errors import ParameterError

from .candidates import DetectorRunner, ShiftedDeltaT, filter_candidates, with_shifted_ut
from .problem import prepare
from .schema import Record, load_record
from .sensitivity import NEAR_PAD_DAYS, cluster, edge_spans, fragility, near_spans
from .solve import scenario_classes, solve_scenario

#: Score difference under which two solutions are called nearly equally good.
NEAR_TIE = 1.0


@dataclass
class Solution:
    """One ranked solution (or partial solution) of a record.

    Attributes
    ----------
    rank : int
    score : float
        Score including the delta-T penalty (smaller is better).
    scenario_k : float
        The delta-T shift (sigma) of the scenario the events are taken from.
    holds_k : list of float
        Shifts at which the solution holds.
    fragility : str
        Class (robust, fragile, needs-shift, unlikely-delta-t, not-examined).
    note : str
        Sentence on the delta-T dependence.
    events : list of dict
        Per observation: the event, its dates, residuals, whether it holds.
    relations : list of dict
        Per relation: the residual (days) and whether it holds.
    epochs : list of dict
        Per free epoch: the range of accession days for which the solution holds.
    failed : list of str
        Observations the solution does not satisfy (partial matches).
    """

    rank: int
    score: float
    scenario_k: float
    holds_k: list
    fragility: str
    note: str
    events: list
    relations: list
    epochs: list
    failed: list = field(default_factory=list)
    terms: dict = field(default_factory=dict)


@dataclass
class DatingResult:
    """The outcome of :func:`date_record`."""

    record: Record
    problem: object
    solutions: list
    partial: list
    counts: list
    n_solutions: int
    timings: dict
    messages: list
    chronology: dict | None
    provenance: dict
    scenarios: list = field(default_factory=list)


def _progress_stage(progress, label):
    if progress is None:
        return None
    return lambda done, total, _lab: progress(done, total, label)


def date_record(record, host=None, top=None, window=None, site=None, deltat=None, sweep=None,
                progress=None) -> DatingResult:
    """Find and rank the dates on which the observations of a record all hold.

    Parameters
    ----------
    record : Record or str or path-like
        A record, or the path of a record file.
    host : Host, optional
    top : int, optional
        Solutions to report (default: the record's ``top``).
    window : str, optional
        ``FROM..TO`` overriding the record's window.
    site : str, optional
        Default site overriding the record's.
    deltat : str or DeltaTModel, optional
    sweep : str, optional
        ``near``, ``full`` or ``off`` overriding ``[record.delta_t_sweep] mode``.
    progress : callable(done, total, label), optional

    Returns
    -------
    DatingResult

    Raises
    ------
    RecordError, Contradiction, ParameterError
    """
    from calendra.pluginmanager import get_host

    host = host or get_host()
    timings = {}
    t0 = time.perf_counter()
    if not isinstance(record, Record):
        record = load_record(record, host)
    problem = prepare(record, host, window=window, site=site, deltat=deltat)
    if sweep is not None:
        record.sweep.mode = sweep
    top = top or record.top
    timings["load"] = time.perf_counter() - t0
    runner = DetectorRunner(host, progress)
    n = problem.n
    messages = list(problem.notes)

    # ---- candidates at the nominal delta T
    t0 = time.perf_counter()
    nominal = []
    for i, o in enumerate(record.observations):
        table = runner.run(o, [problem.window_tt], problem.sites[i], problem.deltat, f"{o.id}: {o.detector}")
        nominal.append(filter_candidates(o, table, problem.sites[i], problem.bounds_tt[i], problem.fail))
    timings["candidates"] = time.perf_counter() - t0

    # ---- join at the nominal delta T, and without each observation in turn
    t0 = time.perf_counter()
    classes = scenario_classes(problem, nominal, problem.deltat)
    base = solve_scenario(problem, nominal, problem.deltat, 0.0, classes=classes)
    drop = {}
    diagnostics = []
    if n > 1:
        for i in range(n):
            try:
                drop[i] = solve_scenario(problem, nominal, problem.deltat, 0.0,
                                         include=[j for j in range(n) if j != i], classes=classes)
            except ParameterError as exc:
                drop[i] = None
                diagnostics.append(f"without {record.ids[i]} the record is too loose to list partial solutions "
                                   f"({exc})")
    timings["join"] = time.perf_counter() - t0

    # ---- delta-T scenarios: the extremes first, the shifts between them only where a solution changes
    t0 = time.perf_counter()
    sw = record.sweep
    scenarios = [base]
    ks = []
    site_obs = [i for i in range(n) if problem.sites[i] is not None]
    if sw.mode != "off" and sw.steps > 1 and site_obs:
        ks = [float(k) for k in np.linspace(-sw.n_sigma, sw.n_sigma, sw.steps) if abs(k) > 1e-9]
    outer = [k for k in ks if abs(abs(k) - sw.n_sigma) < 1e-9]
    inner = [k for k in ks if k not in outer]
    pad = NEAR_PAD_DAYS + sw.match_days

    def spans_for(i):
        if sw.mode == "full" or n == 1:
            return [problem.window_tt]
        if drop.get(i) is not None:
            return near_spans(problem, i, drop[i], problem.window_tt, pad)
        return edge_spans(problem, i, nominal, problem.window_tt, pad)

    def scenario(k, spans_of):
        model = ShiftedDeltaT(problem.deltat, k)
        cands = []
        for i, o in enumerate(record.observations):
            if problem.sites[i] is None:
                cands.append(with_shifted_ut(nominal[i], model))
                continue
            table = _run_near(runner, o, spans_of(i), problem, i, model, k)
            cands.append(filter_candidates(o, table, problem.sites[i], problem.bounds_tt[i], problem.fail,
                                           strict=False))
        return solve_scenario(problem, cands, model, k)

    for k in outer:
        scenarios.append(scenario(k, spans_for))
    inferred = False
    if inner:
        changing = [g for g in cluster(scenarios, sw.match_days) if set(g["members"]) != set([0.0] + outer)]
        events = {i: [] for i in site_obs}
        by_k0 = {s.k: s for s in scenarios}
        for g in changing:
            for k, row in g["members"].items():
                T = by_k0[k].times()[row]
                for i in site_obs:
                    events[i].append(T[i])
        if sw.mode == "full":
            spans_inner = lambda i: [problem.window_tt]          # noqa: E731
        else:
            from .sensitivity import merge_spans

            def spans_inner(i):
                t = np.asarray(events[i], dtype=float)
                t = t[np.isfinite(t)]
                return merge_spans(np.clip(t - pad, *problem.window_tt), np.clip(t + pad, *problem.window_tt))
        for k in inner:
            scenarios.append(scenario(k, spans_inner))
        inferred = sw.mode != "full"
    timings["delta_t"] = time.perf_counter() - t0

    # ---- ranking
    t0 = time.perf_counter()
    groups = cluster(scenarios, sw.match_days)
    all_k = [0.0] + ks
    by_k = {s.k: s for s in scenarios}
    solutions = []
    groups.sort(key=lambda g: g["score"])
    anchors = []
    for g in groups:
        k, row = g["anchor"]
        if 0.0 in g["members"]:
            k, row = 0.0, g["members"][0.0]
        anchors.append(by_k[k].times()[row])
    for g in groups[: max(top, 2)]:          # only those shown (and the runner-up) are described
        k, row = g["anchor"]
        if 0.0 in g["members"]:
            k, row = 0.0, g["members"][0.0]
        held = set(g["members"])
        if inferred and set([0.0] + outer) <= held:
            held |= set(inner)       # holding at both extremes and the nominal value: held in between
        cls, note = fragility(held, all_k, sw.n_sigma)
        sol = describe(problem, by_k[k], row, g["score"], sorted(held), cls, note)
        solutions.append(sol)
    for r, s in enumerate(solutions, start=1):
        s.rank = r
    partial = []
    if not solutions and n > 1:
        partial = _partials(problem, drop, top)
    counts = _counts(problem, base, anchors)
    if not solutions:
        messages.append(_why_none(problem, base, drop, nominal))
        messages.extend(diagnostics)
    elif len(groups) > 1:
        messages.append(explain_runner_up(solutions[0], solutions[1]))
    else:
        messages.append("this is the only solution in the window: no other combination of events satisfies "
                        "the record (within the tolerances it states)")
    chronology = _chronology(problem, base) if problem.epochs else None
    timings["ranking"] = time.perf_counter() - t0
    timings["detector_calls"] = runner.calls
    prov = _provenance(problem, solutions[:top] or partial[:top])
    return DatingResult(record, problem, solutions[:top], partial, counts, len(groups), timings, messages,
                        chronology, prov, scenarios)


def _run_near(runner, o, spans, problem, i, model, k):
    if not spans:
        return None
    try:
        return runner.run(o, spans, problem.sites[i], model, f"{o.id}: delta T {k:+g} sigma")
    except ParameterError:
        raise
    except Exception:   # a detector that cannot search a short span: search the whole window
        return runner.run(o, [problem.window_tt], problem.sites[i], model, f"{o.id}: delta T {k:+g} sigma")


def _partials(problem, drop, top):
    out = []
    for i, res in drop.items():
        if res is None or not len(res.idx):
            continue
        for row in range(min(len(res.idx), top)):
            s = describe(problem, res, row, float(res.chi2[row]), [0.0], "not-examined",
                         "partial solution: delta-T sensitivity not examined")
            s.failed = [problem.record.ids[i]]
            out.append(s)
    out.sort(key=lambda s: s.score)
    for r, s in enumerate(out, start=1):
        s.rank = r
    return out[: max(top, 1) * 2]


def _why_none(problem, base, drop, nominal) -> str:
    ids = problem.record.ids
    empty = [ids[i] for i, c in enumerate(nominal) if len(c) == 0]
    if empty:
        return (f"no solution: observation(s) {', '.join(empty)} have no candidate in the window that meets "
                "their own conditions")
    nodate = [ids[i] for i, c in enumerate(base.date_counts) if c == 0]
    if nodate:
        return f"no solution: no candidate of {', '.join(nodate)} falls on its stated date"
    rescued = [ids[i] for i, r in drop.items() if r is not None and len(r.idx)]
    if rescued:
        return ("no solution satisfies every observation; dropping any one of " + ", ".join(rescued) +
                " leaves solutions (listed as partial matches)")
    return "no solution satisfies every observation, nor all but one: the record may hold several errors"


def _counts(problem, base, anchors):
    out = []
    times = np.array(anchors).reshape(len(anchors), problem.n)
    for i, o in enumerate(problem.record.observations):
        c = base.cands[i].counts
        used = np.unique(np.round(times[:, i], 5)) if len(times) else []
        out.append({"observation": o.id, "detector": o.detector, "events": c.get("detector", 0),
                    "after_kind": c.get("kind", 0), "after_where": c.get("where", 0),
                    "after_require": c.get("require", 0), "after_bounds": c.get("bounds", 0),
                    "after_date": base.date_counts[i], "in_solutions": len(used)})
    return out


def _chronology(problem, base):
    grid = base.grid
    out = {"epochs": [e.name for e in problem.epochs], "observations": problem.record.ids,
           "samples": [[g[e.name] for e in problem.epochs] for g in grid],
           "holding": base.holds.sum(axis=1).tolist(), "holds": base.holds.tolist(), "full": base.full.tolist()}
    return out


def describe(problem, res, row, score, holds_k, cls, note) -> Solution:
    """Turn one row of a scenario's solutions into a :class:`Solution` with every event's details."""
    from .describe import events_of, relations_of, epochs_of

    events = events_of(problem, res, row)
    rels = relations_of(problem, res, row)
    eps = epochs_of(problem, res, row)
    terms = {}
    for ev in events:
        for name, val in ev.get("score_terms", {}).items():
            terms[f"{ev['observation']}: {name}"] = val
    for r in rels:
        if r.get("score_term") is not None:
            terms[f"relation {r['relation']}"] = r["score_term"]
    if res.k:
        terms["delta T shift"] = res.k ** 2
    return Solution(0, float(score), float(res.k), [float(k) for k in holds_k], cls, note, events, rels, eps,
                    terms=terms)


def explain_runner_up(best: Solution, second: Solution) -> str:
    """Say why the second solution ranks below the first, or that the record does not decide."""
    d = second.score - best.score
    date1 = best.events[0].get("date_ut", "?")
    date2 = second.events[0].get("date_ut", "?")
    if d < NEAR_TIE:
        return (f"solutions 1 ({date1}) and 2 ({date2}) are nearly equally good (scores {best.score:.2f} and "
                f"{second.score:.2f}): the record does not decide between them")
    diffs = {k: second.terms.get(k, 0.0) - best.terms.get(k, 0.0) for k in set(best.terms) | set(second.terms)}
    worst = max(diffs, key=diffs.get) if diffs else None
    why = f", mostly from {worst} (+{diffs[worst]:.2f})" if worst and diffs[worst] > 0 else ""
    return f"the runner-up ({date2}) scores {d:.2f} worse than the best ({date1}){why}"


def _provenance(problem, sols):
    from calendra.provenance import build

    jd = [ev["jd_tt"] for s in sols for ev in s.events if ev.get("jd_tt") is not None]
    cals = [c for c in problem.book.calendars() if hasattr(c, "label")]
    site = problem.day_site
    models = {"solver": "calendra_solver: candidates by installed detectors, joined across relations; "
                        f"delta-T sweep {problem.record.sweep.mode} (+-{problem.record.sweep.n_sigma:g} sigma, "
                        f"{problem.record.sweep.steps} steps)"}
    return build(jd_tt=jd or [sum(problem.window_tt) / 2], deltat=problem.deltat, calendars=cals, ephemeris=True,
                 models=models, site=site)
