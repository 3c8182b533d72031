"""Year tables and month grids of any calendar.

Works for every calendar whose first field is a year (or a reign, then the
year) followed by a month (or week): the days of the year are named by one
vectorized ``from_jdn`` call and grouped by the fields between the year and
the day, so no calendar needs code of its own.
"""

from __future__ import annotations

import numpy as np

from .daylib import WEEKDAY_NAMES, weekday
from .errors import ParameterError


def _year_index(cal) -> int:
    """Position of the year among the fields: 0, or 1 after a reign (reign lists)."""
    if len(cal.fields) < 2:
        raise ParameterError(f"calendar {cal.label} has no months (fields: {', '.join(cal.fields)})")
    return cal.fields.index("year") if "year" in cal.fields[:-2] else 0


def _year_days(cal, year, lead=()):
    """Day numbers of ``year`` (after the leading fields ``lead``, e.g. the reign) and their fields."""
    k = _year_index(cal)
    if len(lead) != k:
        need = ", ".join(cal.fields[:k])
        raise ParameterError(f"calendar {cal.label} needs {need} besides the year (a reign list: give the ruler, "
                             "calendra calendar CAL YEAR --ruler NAME)")
    start = int(np.asarray(cal.year_start_jdn(*lead, year)))
    end = int(np.asarray(cal.year_start_jdn(*lead, year + 1)))
    if end <= start:
        raise ParameterError(f"calendar {cal.label}: year {year + 1} does not start after year {year}")
    jdn = np.arange(start, end)
    fields = cal.from_jdn(jdn)
    if k:                                     # a reign's year may be cut short by the next accession
        keep = np.asarray(fields[cal.fields[k]]) == year
        for name, value in zip(cal.fields[:k], lead):
            keep &= np.asarray(fields[name]) == value
        jdn = jdn[keep]
        fields = {f: np.asarray(v)[keep] for f, v in fields.items()}
    return jdn, fields


def _month_keys(cal, fields):
    """The fields between the year and the day (month, and e.g. a leap flag), as an (n, k) array."""
    k = _year_index(cal)
    middle = cal.fields[k + 1:-1] if len(cal.fields) > k + 2 else cal.fields[k + 1:k + 2]
    return np.stack([np.asarray(fields[f]) for f in middle], axis=-1), middle


def _month_label(cal, key, middle, year) -> str:
    values = dict(zip(middle, (int(v) for v in key)))
    if values.get("leap"):
        name = cal.month_name(int(key[0]), year, True)        # the calendar's own name of a leap month
    else:
        name = cal.month_name(int(key[0]), year)
    extras = [f"{f} {v}" for f, v in list(values.items())[1:] if v and f != "leap"]
    return name + (f" ({', '.join(extras)})" if extras else "")


def year_table(cal, year: int, host, lead=()) -> list[dict]:
    """Return one row per month of ``year``: number, name, length, first day.

    A month is a run of days sharing every field between the year and the
    day, so a leap month (a leap flag beside the month number) is its own row.
    ``lead`` gives the fields before the year (the reign of a reign list).
    """
    jdn, fields = _year_days(cal, year, lead)
    keys, middle = _month_keys(cal, fields)
    western = host.calendars.get("western")
    rows = []
    change = np.any(keys[1:] != keys[:-1], axis=1)
    starts = np.flatnonzero(np.r_[True, change])
    ends = np.r_[starts[1:], len(jdn)]
    for s, e in zip(starts, ends):
        first = int(jdn[s])
        wf = western.from_jdn(first)
        rows.append({
            "month": int(keys[s][0]),
            "name": _month_label(cal, keys[s], middle, year),
            "days": int(e - s),
            "first_jd": first - 0.5,
            "first_western": western.format(*(int(np.asarray(wf[f])) for f in western.fields)),
            "first_weekday": WEEKDAY_NAMES[int(weekday(first))],
        })
    return rows


def month_grid(cal, year: int, month: int, host, lead=()) -> str:
    """Return a text grid (Sunday-first weeks) of one month, with the western date of its first day."""
    jdn, fields = _year_days(cal, year, lead)
    second = np.asarray(fields[cal.fields[_year_index(cal) + 1]])
    sel = jdn[second == month]
    if sel.size == 0:
        raise ParameterError(f"{cal.label} {year} has no month {month}")
    days = np.asarray(fields[cal.fields[-1]])[second == month]
    western = host.calendars.get("western")
    wf = western.from_jdn(int(sel[0]))
    title = (f"{cal.month_name(month, year)} ({month}) {year}, {cal.label}; day 1 = "
             f"{western.format(*(int(np.asarray(wf[f])) for f in western.fields))} western, JD {sel[0] - 0.5}")
    lines = [title, " ".join(w[:2] for w in WEEKDAY_NAMES)]
    pad = int(weekday(int(sel[0])))
    cells = ["  "] * pad + [f"{int(d):2d}" for d in days]
    for i in range(0, len(cells), 7):
        lines.append(" ".join(cells[i:i + 7]))
    return "\n".join(lines)
