"""A record made ready to solve: window, sites, delta-T model, calendars, free epochs, edges.

:func:`prepare` resolves every name of a :class:`~calendra_solver.schema.Record`
against the installed plugins (and the record's own era files) and checks
what can be checked before any detector runs: calendar names and fields,
rulers, the regnal relations' epochs and bounds, and whether the relations
contradict one another.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from calendra.errors import CalendraError

from .dates import CalendarBook, FreeEpoch, open_epochs, wanted_fields
from .join import check_consistency, edges_from_relations
from .schema import RecordError, split_window


@dataclass
class Problem:
    """Everything the solver needs, resolved.

    Attributes
    ----------
    record : Record
    host : Host
    deltat : DeltaTModel
        The nominal model.
    window_tt : (float, float)
        The search window, Julian Days (TT).
    sites : list of Site or None
        Per observation.
    bounds_tt : list of (float, float)
        Per observation, ``not_before``/``not_after`` (TT Julian Days).
    book : CalendarBook
    epochs : list of FreeEpoch
    edges : list of Edge
    day_site : Site or None
        Site used to place events of site-less observations on sunset/sunrise calendar days.
    """

    record: object
    host: object
    deltat: object
    window_tt: tuple
    sites: list
    bounds_tt: list
    book: CalendarBook
    epochs: list
    edges: list
    day_site: object = None
    notes: list = field(default_factory=list)

    @property
    def n(self) -> int:
        return len(self.record.observations)

    def fail(self, where, problem):
        return RecordError(self.record.path, where, problem)


def _to_tt(text, host, model, fail, where):
    from calendra.dateparse import date_to_jd_tt

    try:
        return float(date_to_jd_tt(str(text), host, model, allow_partial=True))
    except CalendraError as exc:
        raise fail(where, f"{text!r}: {exc}") from None


def _to_jdn(text, host, fail, where):
    from calendra.dateparse import parse_date, resolve_dates

    t = str(text).strip()
    if t.lstrip("+-").isdigit() and len(t.lstrip("+-")) <= 4:       # a Julian year alone
        t = f"julian:{int(t)}-01-01"
    try:
        return int(resolve_dates([parse_date(t, host, allow_partial=True)], host).jdn[0])
    except CalendraError as exc:
        raise fail(where, f"{text!r}: {exc}") from None


def prepare(record, host=None, window=None, site=None, deltat=None) -> Problem:
    """Resolve a record against the installed plugins.

    Parameters
    ----------
    record : Record
    host : Host, optional
    window : str or (str, str), optional
        Overrides the record's window (``"FROM..TO"``).
    site : str, optional
        Overrides the record's default site.
    deltat : str or DeltaTModel, optional
        Overrides the record's delta-T model.

    Raises
    ------
    RecordError, Contradiction
    """
    from calendra.deltat import DEFAULT_MODEL, get_model
    from calendra.ephemeris import SPAN_JD
    from calendra.pluginmanager import get_host
    from calendra.sites import parse_site

    host = host or get_host()

    def fail(where, problem):
        return RecordError(record.path, where, problem)

    try:
        model = get_model(deltat or record.delta_t or DEFAULT_MODEL)
    except CalendraError as exc:
        raise fail("[record], key 'delta_t'", str(exc)) from None
    if window is not None:
        parts = split_window(window) if isinstance(window, str) else tuple(window)
        if parts is None:
            raise fail("--window", f"{window!r}: write FROM..TO, e.g. -1500..-300")
        record.window = tuple(parts)
    a = _to_tt(record.window[0], host, model, fail, "[record], key 'window'")
    b = _to_tt(record.window[1], host, model, fail, "[record], key 'window'")
    if b <= a:
        raise fail("[record], key 'window'", "the end of the window must come after its start")
    lo, hi = SPAN_JD
    a, b = max(a, lo + 1.0), min(b, hi - 1.0)
    if b <= a:
        raise fail("[record], key 'window'", "the window lies outside the ephemeris span (-3000..3000)")
    if site is not None:
        record.site = site
    default_site = None
    if record.site:
        try:
            default_site = parse_site(record.site)
        except CalendraError as exc:
            raise fail("[record], key 'site'", str(exc)) from None
    sites, bounds = [], []
    for o in record.observations:
        where = f"[[observation]] {o.id!r}"
        if o.site == "record":
            if default_site is None:
                raise fail(where, f"detector {o.detector} needs a site: set site in [record] or give --site")
            sites.append(default_site)
        elif o.site == "none":
            sites.append(None)
        else:
            sites.append(parse_site(o.site))
        nb, na = -np.inf, np.inf
        if o.date is not None and o.date.not_before:
            nb = _to_tt(o.date.not_before, host, model, fail, f"{where}, key 'date.not_before'")
        if o.date is not None and o.date.not_after:
            na = _to_tt(o.date.not_after, host, model, fail, f"{where}, key 'date.not_after'")
        bounds.append((nb, na))
    book = CalendarBook(host, record.eras, fail, lunisolar_files=record.lunisolar)
    # calendars named by dates and relations; their free epochs
    named = []
    for o in record.observations:
        if o.date is not None and o.date.calendar:
            where = f"[[observation]] {o.id!r}, key 'date.calendar'"
            try:
                cal = book.get(o.date.calendar)
            except CalendraError as exc:
                raise fail(where, str(exc)) from None
            named.append(o.date.calendar)
            try:
                if not open_epochs(cal):
                    wanted_fields(cal, o.date)
                else:
                    _check_fields_free(cal, o.date)
            except CalendraError as exc:
                raise fail(f"[[observation]] {o.id!r}, [observation.date]", str(exc)) from None
    for r in record.relations:
        if r.calendar:
            try:
                book.get(r.calendar)
            except CalendraError as exc:
                raise fail(f"[[relation]] #{r.index} ({r.type}), key 'calendar'", str(exc)) from None
            named.append(r.calendar)
    epochs = _free_epochs(record, book, named, host, fail)
    edges = edges_from_relations(record.relations, record.ids)
    check_consistency(edges, len(record.observations), record.ids)
    day_site = default_site or next((s for s in sites if s is not None), None)
    return Problem(record, host, model, (a, b), sites, bounds, book, epochs, edges, day_site)


def _check_fields_free(cal, info):
    """Field names of a calendar whose epoch is still free (no conversion possible yet)."""
    unknown = [k for k in info.fields if k not in cal.fields]
    if unknown:
        from calendra.errors import ParameterError

        raise ParameterError(f"calendar {cal.label} has no field {unknown[0]!r} (fields: {', '.join(cal.fields)})")
    if info.ruler is not None:
        cal.reign_index(info.ruler)


def _free_epochs(record, book, named, host, fail) -> list:
    regnal = {}
    for r in record.relations:
        if r.type == "regnal":
            regnal.setdefault(r.calendar, []).append(r)
    out = []
    for spec in dict.fromkeys(named):
        cal = book.get(spec)
        opened = open_epochs(cal)
        rels = regnal.get(spec, [])
        for r in rels:
            if not opened:
                raise fail(f"[[relation]] #{r.index} (regnal), key 'calendar'",
                           f"calendar {spec} has no uncertain epoch to free")
            if r.epoch is not None and r.epoch not in [k for k, _, _ in opened]:
                raise fail(f"[[relation]] #{r.index} (regnal), key 'epoch'",
                           f"{r.epoch!r}: the uncertain epochs of {spec} are {', '.join(k for k, _, _ in opened)}")
        for key, lo, hi in opened:
            rel = next((r for r in rels if r.epoch in (None, key)), None)
            step = rel.step_days if rel else 30.0
            if rel is not None and rel.between is not None:
                where = f"[[relation]] #{rel.index} (regnal), key 'between'"
                blo = _to_jdn(rel.between[0], host, fail, where)
                bhi = _to_jdn(rel.between[1], host, fail, where)
                if str(rel.between[1]).strip().lstrip("+-").isdigit():
                    bhi = _to_jdn(str(int(rel.between[1]) + 1), host, fail, where) - 1
                nlo, nhi = max(lo, blo), min(hi, bhi)
                if nlo > nhi:
                    raise fail(where, f"the bounds lie outside those of the reign list (days {lo}..{hi})")
                lo, hi = nlo, nhi
            out.append(FreeEpoch(spec, key, lo, hi, step))
    return out
