"""Candidate events of each observation: detector runs over the window, then the column filters.

A detector is called through the Detector protocol only (``search(jd_tt_start,
jd_tt_end, site=, deltat=, progress=, **params)`` returning an EventTable),
so any installed plugin's detector can serve.  Long windows are cut into
chunks of ``chunk_years`` (each searched with a margin on both sides and
trimmed to its own part, so that no event is lost or doubled at a cut);
every chunk is one array job of the detector.  Results are cached per
detector, parameters, site, delta-T model and span, so that two
observations asking the same detector the same question share one run.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from calendra.deltat import DeltaTModel
from calendra.errors import CalendraError, ParameterError

from .filters import ColumnError, require_terms, where_mask

#: Margin searched on both sides of a chunk, days (longer than a lunation, shorter than a year).
CHUNK_MARGIN_DAYS = 45.0
DAYS_PER_YEAR = 365.25


class ShiftedDeltaT(DeltaTModel):
    """A delta-T model moved by ``k`` times its own uncertainty: ΔT' = ΔT + k σ (seconds).

    Parameters
    ----------
    base : DeltaTModel
    k : float
        Multiple of sigma (e.g. -2 or +2).
    """

    def __init__(self, base: DeltaTModel, k: float):
        self.base = base
        self.k = float(k)
        self.name = f"{base.name}{self.k:+g}sigma"
        self.title = f"{base.title or base.name}, shifted by {self.k:+g} sigma"
        self.reference = base.reference

    @property
    def valid_span(self):
        return self.base.valid_span

    def _seconds(self, jd_tt):
        return np.asarray(self.base.seconds(jd_tt)) + self.k * np.asarray(self.base.sigma(jd_tt))

    def _sigma(self, jd_tt):
        return np.asarray(self.base.sigma(jd_tt))


@dataclass
class ObsCandidates:
    """The candidate events of one observation (one delta-T scenario), after the column filters.

    Attributes
    ----------
    obs : Observation
    site : Site or None
    table : EventTable
        The detector rows that pass, in time order (``jd_tt`` TT, ``jd_ut`` UT1 Julian Days).
    penalty : float array
        Score of the soft conditions per candidate (sum of squared normalised excesses).
    terms : list of (label, residual array, unit)
        Signed residuals of the conditions, in the columns' units (degrees where the column is in deg).
    margin : float array or None
        The visibility-margin column named by the observation.
    counts : dict
        Candidates left after each stage: detector, kind, where, require, bounds.
    """

    obs: object
    site: object
    table: object
    penalty: np.ndarray
    terms: list
    margin: np.ndarray | None
    counts: dict = field(default_factory=dict)

    @property
    def t(self) -> np.ndarray:
        return np.asarray(self.table["jd_tt"], dtype=float)

    @property
    def jd_ut(self) -> np.ndarray:
        return np.asarray(self.table["jd_ut"], dtype=float)

    def __len__(self):
        return len(self.table)


class DetectorRunner:
    """Runs detectors over spans, in chunks, with a cache and a progress callback."""

    def __init__(self, host, progress=None):
        self.host = host
        self.progress = progress
        self.cache = {}
        self.seconds = {}
        self.calls = 0

    def run(self, obs, spans, site, deltat, label=""):
        """Search every span (list of ``(jd_tt_start, jd_tt_end)``) and join the tables (time order).

        Raises
        ------
        CalendraError
            Naming the observation when the detector rejects its input.
        """
        import time

        from calendra.events import EventTable

        det = self.host.detectors.get(obs.detector)
        tables = []
        for a, b in spans:
            key = (det.name, tuple(sorted((k, repr(v)) for k, v in obs.params.items())),
                   None if site is None else (site.latitude_deg, site.longitude_deg, site.elevation_m, site.name),
                   deltat.name, round(a, 6), round(b, 6), obs.chunk_years)
            if key not in self.cache:
                t0 = time.perf_counter()
                self.cache[key] = self._chunks(det, obs, a, b, site, deltat, label)
                self.seconds[obs.detector] = self.seconds.get(obs.detector, 0.0) + time.perf_counter() - t0
            tables.append(self.cache[key])
        tables = [t for t in tables if t is not None]
        if not tables:
            return None
        table = tables[0] if len(tables) == 1 else EventTable.concat(tables)
        return table.sorted()

    def _chunks(self, det, obs, a, b, site, deltat, label):
        from calendra.ephemeris import SPAN_JD

        lo, hi = SPAN_JD
        span = obs.chunk_years * DAYS_PER_YEAR
        if det.max_span_days:
            span = min(span, det.max_span_days - 2 * CHUNK_MARGIN_DAYS)
        n = max(1, int(math.ceil((b - a) / span)))
        edges = np.linspace(a, b, n + 1)
        parts = []
        for i in range(n):
            s, e = edges[i], edges[i + 1]
            qa = max(s - (CHUNK_MARGIN_DAYS if n > 1 else 0.0), lo + 1e-6)
            qb = min(e + (CHUNK_MARGIN_DAYS if n > 1 else 0.0), hi - 1e-6)
            if qb <= qa:
                continue
            self.calls += 1
            try:
                tab = det.search(qa, qb, site=site, deltat=deltat, progress=None, **obs.params)
            except CalendraError as exc:
                raise ParameterError(f"observation {obs.id!r} ({det.name}): {exc}") from None
            if n > 1 and len(tab):
                t = np.asarray(tab["jd_tt"], dtype=float)
                tab = tab.select((t >= s) & ((t < e) | (i == n - 1)))
            parts.append(tab)
            if self.progress:
                self.progress(i + 1, n, label or f"{obs.id}: {det.name}")
        if not parts:
            return None
        parts = [p for p in parts if len(p)] or parts[:1]
        from calendra.events import EventTable

        return parts[0] if len(parts) == 1 else EventTable.concat(parts)


def filter_candidates(obs, table, site, bounds_tt=(-np.inf, np.inf), fail=None, strict=True) -> ObsCandidates:
    """Apply an observation's kind, ``where`` and ``require`` conditions and its absolute date bounds.

    Parameters
    ----------
    obs : Observation
    table : EventTable or None
        The detector's events (None: none).
    site : Site or None
    bounds_tt : (float, float)
        ``not_before`` / ``not_after`` as Julian Days (TT).
    fail : callable(where, problem) -> Exception
        Makes the one-line record error for a bad column name.
    strict : bool
        Treat a ``kind`` that the detector never reports as an error (the
        whole-window run); re-runs over short spans pass False.
    """
    from calendra.events import EventTable

    if table is None:
        table = EventTable({"jd_tt": np.zeros(0), "jd_ut": np.zeros(0), "kind": np.zeros(0, dtype=object)})
    counts = {"detector": len(table)}
    where = f"[[observation]] {obs.id!r}"
    mask = np.ones(len(table), dtype=bool)
    if obs.kinds:
        kinds = np.asarray(table["kind"]).astype(str)
        mask &= np.isin(kinds, obs.kinds)
        if strict and len(table) and not mask.any():
            known = sorted(set(kinds.tolist()))
            raise fail(f"{where}, key 'kind'", f"no event of kind {', '.join(obs.kinds)}; "
                                               f"detector {obs.detector} reports kinds {', '.join(known)}")
    counts["kind"] = int(mask.sum())
    try:
        if obs.where:
            mask &= where_mask(table, obs.where) if len(table) else mask
        counts["where"] = int(mask.sum())
        penalty = np.zeros(len(table))
        terms = []
        for req in obs.require:
            if not len(table):
                break
            ok, res, norm = require_terms(table, req)
            mask &= ok
            penalty += np.nan_to_num(norm) ** 2
            if req.equals is None and req.one_of is None:
                unit = table.meta[req.column].unit if req.column in table.meta else ""
                terms.append((req.column, res, unit, req.tolerance or 0.0))
        if obs.margin and len(table):
            from .filters import column

            margin = np.asarray(column(table, obs.margin[0]), dtype=float)
        else:
            margin = None
    except ColumnError as exc:
        raise fail(where, str(exc)) from None
    counts["require"] = int(mask.sum())
    t = np.asarray(table["jd_tt"], dtype=float)
    mask &= (t >= bounds_tt[0]) & (t <= bounds_tt[1])
    counts["bounds"] = int(mask.sum())
    idx = np.flatnonzero(mask)
    idx = idx[np.argsort(t[idx], kind="stable")]
    sub = table.select(idx)
    if margin is not None:
        margin = margin[idx]
    terms = [(label, res[idx], unit, tol) for label, res, unit, tol in terms]
    return ObsCandidates(obs, site, sub, penalty[idx] * obs.weight, terms, margin, counts)


def with_shifted_ut(cands: ObsCandidates, model) -> ObsCandidates:
    """Return candidates whose UT column is recomputed from TT with another delta-T model (TT events)."""
    t = cands.t
    jd_ut = np.asarray(model.ut_from_tt(t)) if len(t) else t
    table = cands.table.with_column("jd_ut", jd_ut, "d", "UT1 Julian Day")
    return ObsCandidates(cands.obs, cands.site, table, cands.penalty, cands.terms, cands.margin, dict(cands.counts))
