"""Converting dates between every installed calendar, as one array job.

:func:`convert_dates` reads date strings, resolves them to Julian Days (UT
and TT) through the delta-T model, and names each day in the target
calendars with one vectorized ``from_jdn`` call per calendar.  For calendars
whose day begins at sunset or sunrise, an input with a time of day and a
site is placed on the calendar day it falls in; otherwise the civil day is
named (and the table says when that calendar's day began).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .daylib import WEEKDAY_NAMES, jd_to_mjd, jdn_to_rd, weekday


@dataclass
class Conversion:
    """The result of :func:`convert_dates`."""

    texts: list
    resolved: object
    calendars: list
    names: dict          # calendar label -> list of (iso text, long text) per date
    errors: dict         # calendar label -> message when that calendar could not name the dates
    deltat_s: np.ndarray
    sigma_s: np.ndarray
    provenance: dict = field(default_factory=dict)

    def records(self) -> list[dict]:
        """One dict per input date, with every calendar's naming of it."""
        out = []
        res = self.resolved
        for i, text in enumerate(self.texts):
            rec = {
                "input": text,
                "read_as": f"{res.calendars[i].label}",
                "jd_ut": float(res.jd_ut[i]),
                "jd_tt": float(res.jd_tt[i]),
                "jdn": int(res.jdn[i]),
                "mjd_ut": float(jd_to_mjd(res.jd_ut[i])),
                "rd": int(jdn_to_rd(res.jdn[i])),
                "weekday": WEEKDAY_NAMES[int(weekday(res.jdn[i]))],
                "time_given": bool(res.time_given[i]),
                "delta_t_s": round(float(self.deltat_s[i]), 1),
                "delta_t_sigma_s": round(float(self.sigma_s[i]), 1),
                "calendars": {},
            }
            for cal in self.calendars:
                if cal.label in self.errors:
                    rec["calendars"][cal.label] = {"error": self.errors[cal.label]}
                    continue
                fields, iso, long = self.names[cal.label][i]
                rec["calendars"][cal.label] = {"fields": fields, "date": iso, "long": long,
                                               "day_start": cal.day_start}
            out.append(rec)
        return out


def convert_dates(texts, targets=(), site=None, deltat=None, reform=None, host=None) -> Conversion:
    """Resolve date strings and name them in the target calendars.

    Parameters
    ----------
    texts : list of str
        Dates as written (see :mod:`calendra.dateparse`).
    targets : iterable of str
        Calendar names (``NAME[opt=value]`` allowed); empty means all installed.
    site : Site or None
        Civil time of the dates, and the place for sunset/sunrise day boundaries.
    deltat : delta-T model or None
    reform : str or None
        Reform of the western calendar for dates with no calendar named.
    host : Host or None
    """
    from . import provenance as prov
    from .daybounds import calendar_day
    from .dateparse import parse_date, resolve_dates
    from .deltat import DEFAULT_MODEL, get_model
    from .errors import CalendraError
    from .pluginmanager import get_host

    host = host or get_host()
    model = deltat or get_model(DEFAULT_MODEL)
    specs = [parse_date(t, host) for t in texts]
    res = resolve_dates(specs, host, model, site, reform)
    if targets:
        cals = [host.calendars.get(t) for t in targets]
    else:
        cals = list(host.calendars)
        if reform:
            cals = [c.with_options(reform=reform) if c.name == "western" else c for c in cals]
    names, errors = {}, {}
    for cal in cals:
        try:
            jdn = res.jdn
            if cal.day_start != "midnight" and site is not None and res.time_given.any():
                shifted = calendar_day(res.jd_ut, cal.day_start, site, model)
                jdn = np.where(res.time_given, shifted, res.jdn)
            fields = cal.from_jdn(jdn)
            cols = [np.atleast_1d(fields[f]) for f in cal.fields]
            entries = []
            for i in range(len(texts)):
                vals = tuple(c[i].item() if hasattr(c[i], "item") else c[i] for c in cols)
                iso = cal.format(*vals)
                try:
                    long = cal.format(*vals, style="long")
                except CalendraError:
                    long = iso
                entries.append((dict(zip(cal.fields, vals)), iso, long))
            names[cal.label] = entries
        except CalendraError as exc:
            if targets:
                raise
            errors[cal.label] = str(exc)
    dt = np.atleast_1d(model.seconds(res.jd_tt))
    sig = np.atleast_1d(model.sigma(res.jd_tt))
    p = prov.build(res.jd_tt, model, cals, site=site)
    return Conversion(list(texts), res, cals, names, errors, dt, sig, p)


def render(conv: Conversion, fmt: str) -> str:
    """Render a conversion as a table (one block per date), JSON or CSV (one row per date and calendar)."""
    from .output import render_csv, render_json, render_table
    from .provenance import footer_lines, format_seconds

    records = conv.records()
    if fmt == "json":
        return render_json({"dates": records, "provenance": conv.provenance})
    if fmt == "csv":
        rows = []
        for rec in records:
            for label, c in rec["calendars"].items():
                rows.append({"input": rec["input"], "jd_ut": rec["jd_ut"], "jd_tt": rec["jd_tt"],
                             "weekday": rec["weekday"], "delta_t_s": rec["delta_t_s"],
                             "delta_t_sigma_s": rec["delta_t_sigma_s"], "calendar": label,
                             "date": c.get("date", ""), "long": c.get("long", c.get("error", ""))})
        return render_csv(rows, ["input", "jd_ut", "jd_tt", "weekday", "delta_t_s", "delta_t_sigma_s",
                                 "calendar", "date", "long"])
    blocks = []
    for rec in records:
        when = "" if rec["time_given"] else " (0h civil time)"
        title = (f"{rec['input']}  [read as {rec['read_as']}]\n"
                 f"  JD {rec['jd_ut']:.5f} UT{when} = JD {rec['jd_tt']:.5f} TT   MJD {rec['mjd_ut']:.5f}   "
                 f"RD {rec['rd']}   {rec['weekday']}\n"
                 f"  delta T {format_seconds(rec['delta_t_s'])} +- {format_seconds(rec['delta_t_sigma_s'])} (1 sigma)")
        rows = []
        for label, c in rec["calendars"].items():
            if "error" in c:
                rows.append({"calendar": label, "date": "-", "long": c["error"]})
            else:
                note = "" if c["day_start"] == "midnight" else f"  (day begins at {c['day_start']})"
                rows.append({"calendar": label, "date": c["date"], "long": c["long"] + note})
        blocks.append(render_table(rows, ["calendar", "date", "long"], ["calendar", "date", "written out"],
                                   title=title))
    return "\n\n".join(blocks) + "\n\n" + "\n".join(footer_lines(conv.provenance))
