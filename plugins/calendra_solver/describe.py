"""Details of one solution: each observation's event, its dates, residuals and margins; each relation's residual.

Dates are shown in the western calendar (Julian before 1582 October 15,
astronomical years, UT) with the long BC/AD form beside, in the site's
civil (local mean) time, and in the calendar the record's date information
names (with its free epochs at the middle of the range for which the
solution holds).
"""

from __future__ import annotations

import numpy as np

from calendra.errors import CalendraError

from .dates import Variants, event_days


def _western(host, jd_ut, offset_days=0.0):
    from calendra.daylib import split_jd

    w = host.calendars.get("western")
    jdn, frac = split_jd(np.array([jd_ut + offset_days]))
    f = w.from_jdn(jdn)
    y, m, d = (int(np.atleast_1d(f[k])[0]) for k in w.fields)
    secs = int(round(float(frac[0]) * 86400.0)) % 86400
    return w.format(y, m, d), w.format(y, m, d, style="long"), f"{secs // 3600:02d}:{secs % 3600 // 60:02d}"


def _plain(v):
    if isinstance(v, np.generic):
        v = v.item()
    if isinstance(v, float) and not np.isfinite(v):
        return None
    return v


def _assignment(problem, res, row):
    out = {}
    for e_i, e in enumerate(problem.epochs):
        lo, hi = int(res.epoch_lo[row, e_i]), int(res.epoch_hi[row, e_i])
        samples = e.samples()
        inside = samples[(samples >= lo) & (samples <= hi)]
        out[e.name] = int(inside[len(inside) // 2]) if len(inside) else lo
    return out


def events_of(problem, res, row) -> list:
    """Per observation of solution ``row``: the event and how well it fits (dicts of plain values)."""
    host = problem.host
    variants = Variants(problem.book, problem.epochs)
    assignment = _assignment(problem, res, row)
    out = []
    for i, o in enumerate(problem.record.observations):
        j = int(res.idx[row, i])
        ev = {"observation": o.id, "detector": o.detector, "text": o.text}
        if j < 0:
            ev.update({"holds": False, "note": "no event fits with the other observations"})
            out.append(ev)
            continue
        c = res.cands[i]
        cols = {k: _plain(v[j]) for k, v in c.table.columns.items()}
        site = problem.sites[i]
        jd_tt, jd_ut = float(cols["jd_tt"]), float(cols["jd_ut"])
        iso, long, hhmm = _western(host, jd_ut)
        ev.update({"holds": True, "kind": str(cols.get("kind", "")), "jd_tt": round(jd_tt, 5),
                   "jd_ut": round(jd_ut, 5), "date_ut": iso, "date_long": long, "time_ut": hhmm})
        if site is not None:
            liso, _, lhhmm = _western(host, jd_ut, site.offset_days)
            ev["local"] = f"{liso} {lhhmm} ({site.time_rule.split(' (')[0]}, {site.name})"
        terms = {}
        if o.date is not None and o.date.calendar:
            cal = variants.get(o.date.calendar, assignment)
            try:
                day = int(event_days(np.array([jd_ut]), cal.day_start, site or problem.day_site, res.model)[0])
                f = cal.from_jdn([day])
                ev["stated_calendar"] = cal.label
                ev["stated_date"] = cal.format(*(int(np.atleast_1d(f[k])[0]) for k in cal.fields))
            except CalendraError as exc:
                ev["stated_date"] = f"({exc})"
            r = res.date_res[row, i]
            ev["date_residual_d"] = None if not np.isfinite(r) else float(r)
            if o.date.tolerance_days > 0 and np.isfinite(r):
                terms["date"] = float((r / o.date.tolerance_days) ** 2 * o.weight)
        resid = []
        for label, values, unit, tol in c.terms:
            v = float(values[j])
            resid.append({"column": label, "value": cols.get(label), "residual": round(v, 4), "unit": unit})
            if tol > 0:
                terms[label] = float((v / tol) ** 2 * o.weight)
        ev["residuals"] = resid
        if o.margin is not None:
            m = cols.get(o.margin[0])
            ev["margin"] = {"column": o.margin[0], "value": m, "scale": o.margin[1]}
            if m is None or (isinstance(m, float) and not np.isfinite(m)):
                terms["margin"] = 1.0 * o.weight
            else:
                terms["margin"] = float(max(0.0, (o.margin[1] - float(m)) / o.margin[1]) ** 2 * o.weight)
        ev["score_terms"] = terms
        shown = [r.column for r in o.require] + [cl.column for g in o.where for cl in g]
        if o.margin:
            shown.append(o.margin[0])
        ev["columns"] = {k: cols[k] for k in dict.fromkeys(shown) if k in cols}
        out.append(ev)
    return out


def relations_of(problem, res, row) -> list:
    """Per relation of solution ``row``: what it measures and its residual."""
    out = []
    ids = problem.record.ids
    T = {i: (float(res.cands[i].t[res.idx[row, i]]) if res.idx[row, i] >= 0 else None) for i in range(problem.n)}
    for r in problem.record.relations:
        item = {"relation": r.index, "type": r.type, "label": r.label, "holds": True}
        members = [ids.index(m) for m in r.members]
        if any(T[m] is None for m in members):
            item.update({"holds": None, "note": "not evaluated: an observation is left out"})
            out.append(item)
            continue
        if r.type in ("interval", "before"):
            dt = T[members[1]] - T[members[0]]
            item["days_between"] = round(dt, 2)
            if r.type == "interval" and r.days is not None:
                item["residual_d"] = round(dt - r.days, 2)
                if r.plus_minus > 0:
                    item["score_term"] = float(((dt - r.days) / r.plus_minus) ** 2)
        elif r.type == "regnal":
            item["epochs"] = [e for e in epochs_of(problem, res, row) if e["calendar"] == r.calendar]
        out.append(item)
    return out


def _jtext(jdn):
    from calendra import julian_gregorian as jg
    from calendra.calendar import iso_year

    y, m, d = (int(v) for v in jg.julian_from_jdn(jdn))
    return f"julian {iso_year(y)}-{m:02d}-{d:02d}"


def epochs_of(problem, res, row) -> list:
    """Per free epoch: the range of accession days (sampled) for which solution ``row`` holds."""
    out = []
    for e_i, e in enumerate(problem.epochs):
        lo, hi = int(res.epoch_lo[row, e_i]), int(res.epoch_hi[row, e_i])
        out.append({"epoch": e.name, "calendar": e.calendar, "key": e.key, "lo_jdn": lo, "hi_jdn": hi,
                    "text": f"accession between {_jtext(lo)} and {_jtext(hi)} (tried every {e.step_days:g} d)"})
    return out
