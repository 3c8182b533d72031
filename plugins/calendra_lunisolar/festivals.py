"""Festival dates: the Easter computus (Gregorian, Julian, astronomical) and year tables of festival rules.

Easter
------
* **Gregorian**: the algorithm of Meeus, *Astronomical Algorithms* (2nd ed.
  1998), ch. 8 (the anonymous algorithm of 1876 that Meeus gives for the
  Gregorian calendar), integer arithmetic on arrays of years; the result is a
  date of the Gregorian calendar.  Meeus states it for 1583 and later; here
  it runs on proleptically (as Calendrical Calculations' tables do).
* **Julian** (the Orthodox computus): Meeus ch. 8, the Julian algorithm
  (``d = (19 a + 15) mod 30``, ``e = (2 b + 4 c - d + 34) mod 7``); the result
  is a date of the **Julian** calendar.  It is never shown as a Gregorian
  date without saying so: tables name the calendar of every date and give
  both.
* **Astronomical**: the first Sunday after the first full moon after the
  March equinox, both true instants (apparent geocentric longitudes, DE406),
  the full moon dated at the meridian of Jerusalem (local apparent solar
  time by default, ``time="mean"`` for local mean time) -- the definition
  Calendrical Calculations uses for its "astronomical Easter" column
  (Reingold & Dershowitz, 3rd ed. 2008; from memory: a full moon on a
  Sunday moves Easter to the next Sunday).

Tables
------
:func:`festival_table` evaluates rules of the rule language
(:mod:`.rules`) over a range of years, one array evaluation per rule, and
:func:`to_csv`, :func:`to_json`, :func:`to_ics` export the rows.  iCalendar
(RFC 5545) output uses the ``icalendar`` library and Gregorian dates
(iCalendar has no other calendar); each event's description names the
calendar of the rule and its date there.

Where a festival governs religious practice, the community's own authority
fixes its date; these are computations under stated rules.
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import iso_year
from calendra.daylib import WEEKDAY_NAMES, as_int_array, weekday
from calendra.errors import ParameterError

CAUTION = ("dates computed under the stated rules; where a festival governs religious practice, the "
           "community's own authority decides")


# ------------------------------------------------------------------ Easter

def easter_gregorian(year):
    """Return (month, day) of Gregorian Easter Sunday of astronomical ``year`` (Meeus ch. 8), Gregorian calendar."""
    y = as_int_array(year)
    a = y % 19
    b, c = np.divmod(y, 100)
    d, e = np.divmod(b, 4)
    f = (b + 8) // 25
    g = (b - f + 1) // 3
    h = (19 * a + b - d - g + 15) % 30
    i, k = np.divmod(c, 4)
    ell = (32 + 2 * e + 2 * i - h - k) % 7
    m = (a + 11 * h + 22 * ell) // 451
    n, p = np.divmod(h + ell - 7 * m + 114, 31)
    return n, p + 1


def easter_julian(year):
    """Return (month, day) of Easter by the Julian computus (Meeus ch. 8), a date of the **Julian** calendar."""
    y = as_int_array(year)
    a, b, c = y % 4, y % 7, y % 19
    d = (19 * c + 15) % 30
    e = (2 * a + 4 * b - d + 34) % 7
    n, p = np.divmod(d + e + 114, 31)
    return n, p + 1


def easter_jdn(year, method: str = "gregorian", **options) -> np.ndarray:
    """Return the day number of Easter Sunday of ``year`` by ``method``: gregorian, julian or astronomical."""
    if method == "gregorian":
        m, d = easter_gregorian(year)
        return jg.gregorian_to_jdn(as_int_array(year), m, d)
    if method in ("julian", "orthodox"):
        m, d = easter_julian(year)
        return jg.julian_to_jdn(as_int_array(year), m, d)
    if method == "astronomical":
        return astronomical_easter_jdn(year, **options)
    raise ParameterError(f"unknown Easter method {method!r} (gregorian, julian, astronomical)")


def astronomical_easter_jdn(year, site="Jerusalem", time: str = "apparent", deltat=None) -> np.ndarray:
    """Return the day number of the astronomical Easter of Gregorian ``year``.

    The first Sunday strictly after the local date of the first full moon
    after the March equinox (instants in TT from DE406; the date of the full
    moon in local apparent -- or mean -- solar time of ``site``'s meridian,
    UT1 through ``deltat``).

    Parameters
    ----------
    year : int or array_like
        Gregorian (astronomical) years.
    site : str or Site
        Whose meridian dates the full moon (default Jerusalem).
    time : {'apparent', 'mean'}
    deltat : delta-T model or name, optional
    """
    from calendra.deltat import get_model
    from calendra.lunations import lunar_phases
    from calendra.sites import parse_site

    from . import sky

    y = as_int_array(year)
    model = get_model(deltat)
    st = parse_site(site)
    if time not in ("apparent", "mean"):
        raise ParameterError(f"astronomical Easter: time is apparent or mean, got {time!r}")
    local = sky.LocalTime(st.east_longitude_deg / 15.0, time == "apparent", f"{time} solar time of {st.name}")
    flat = y.reshape(-1)
    a = float(jg.gregorian_to_jdn(int(flat.min()), 1, 1)) - 0.5
    b = float(jg.gregorian_to_jdn(int(flat.max()), 12, 31)) + 0.5
    eq = sky.SolarSource([0.0]).crossings(a, b)[0]
    eq_year = jg.gregorian_from_jdn(np.floor(eq + 0.5).astype(np.int64))[0]
    idx = np.searchsorted(eq_year, flat)
    t_eq = eq[idx]
    full = lunar_phases(a, b + 60.0, "full").jd_tt
    t_full = full[np.searchsorted(full, t_eq, side="right")]
    day = local.days(np.asarray(model.ut_from_tt(t_full), dtype=float), model)
    # weekday 0 = Sunday: the next Sunday strictly after the day of the full moon
    return (day + 7 - weekday(day)).reshape(y.shape)


def easter_table(y0: int, y1: int, **options) -> list[dict]:
    """Easter by the three methods for years y0..y1, each date with its calendar named.

    Rows: ``year``, ``gregorian`` (Gregorian computus, Gregorian date),
    ``julian_computus`` (Julian computus, Julian date) and
    ``julian_computus_gregorian`` (the same day in the Gregorian calendar),
    ``astronomical`` (Gregorian date), and ``differ`` (the three days are not all the same).
    """
    years = np.arange(y0, y1 + 1)
    g = easter_jdn(years, "gregorian")
    j = easter_jdn(years, "julian")
    a = astronomical_easter_jdn(years, **options)
    rows = []
    for i, y in enumerate(years):
        rows.append({"year": int(y), "gregorian": "gregorian " + _ymd(jg.gregorian_from_jdn(g[i])),
                     "julian_computus": "julian " + _ymd(jg.julian_from_jdn(j[i])),
                     "julian_computus_gregorian": "gregorian " + _ymd(jg.gregorian_from_jdn(j[i])),
                     "astronomical": "gregorian " + _ymd(jg.gregorian_from_jdn(a[i])),
                     "differ": bool(not (g[i] == j[i] == a[i])),
                     "gregorian_jdn": int(g[i]), "julian_jdn": int(j[i]), "astronomical_jdn": int(a[i])})
    return rows


def _ymd(parts) -> str:
    y, m, d = (int(v) for v in parts)
    return f"{iso_year(y)}-{m:02d}-{d:02d}"


# ------------------------------------------------------------------ tables of rules

def load_rules_file(path) -> dict:
    """Read a festival TOML file: ``[community]`` (name, site, zone, note) and ``[[festival]]`` (name, rule, ...).

    Raises
    ------
    ParameterError
        If the file cannot be read or a festival lacks a name or a rule.
    """
    import tomllib
    from pathlib import Path

    p = Path(path).expanduser()
    try:
        with open(p, "rb") as fh:
            data = tomllib.load(fh)
    except OSError as exc:
        raise ParameterError(f"cannot read festival file {p}: {exc.strerror or exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise ParameterError(f"{p}: not valid TOML: {exc}") from None
    fests = data.get("festival", [])
    if not isinstance(fests, list) or not fests:
        raise ParameterError(f"{p}: no [[festival]] tables")
    for i, f in enumerate(fests):
        if not isinstance(f, dict) or not isinstance(f.get("name"), str) or not isinstance(f.get("rule"), str):
            raise ParameterError(f"{p}: festival #{i + 1} needs a name and a rule (strings)")
        extra = set(f) - {"name", "rule", "description", "days", "site", "zone", "note"}
        if extra:
            raise ParameterError(f"{p}: festival {f['name']!r}: unknown key(s) {', '.join(sorted(extra))}")
    community = data.get("community", {})
    return {"community": community, "festivals": fests, "path": str(p)}


def festival_table(festivals, y0: int, y1: int, *, site=None, zone=None, deltat=None) -> tuple[list[dict], dict]:
    """Evaluate festival rules for Gregorian years y0..y1.

    Parameters
    ----------
    festivals : list of dict
        Each with ``name`` and ``rule`` (and optional ``description``,
        ``days``, ``site``, ``zone``).
    y0, y1 : int
        Range of Gregorian (astronomical) years of the resulting dates.
    site, zone : str, optional
        Default place for dating instants (a festival's own ``site``/``zone`` wins).
    deltat : delta-T model or name, optional

    Returns
    -------
    rows : list of dict
        One row per occurrence, sorted by day: festival, date in the rule's
        calendar (named), Gregorian and Julian dates, weekday, day number, the
        instant the date came from (UT, when there is one).
    provenance : dict
    """
    from .rules import evaluate_rule, parse_rule

    rows = []
    notes = {}
    for fest in festivals:
        rule = parse_rule(fest["rule"])
        res = evaluate_rule(rule, y0, y1, site=fest.get("site", site), zone=fest.get("zone", zone), deltat=deltat)
        notes[fest["name"]] = res.describe
        for i in range(res.day.size):
            d = int(res.day[i])
            cal = res.calendar
            own = ("julian " + _ymd(jg.julian_from_jdn(d))) if cal == "julian" else (
                "gregorian " + _ymd(jg.gregorian_from_jdn(d)))
            rows.append({
                "festival": fest["name"], "year": int(jg.gregorian_from_jdn(d)[0]), "date": own,
                "gregorian": _ymd(jg.gregorian_from_jdn(d)), "julian": _ymd(jg.julian_from_jdn(d)),
                "weekday": WEEKDAY_NAMES[int(weekday(d))], "jdn": d,
                "instant_ut": (float(res.instant_ut[i]) if np.isfinite(res.instant_ut[i]) else float("nan")),
                "days": int(fest.get("days", 1)), "description": fest.get("description", ""),
                "rule": fest["rule"],
            })
    rows.sort(key=lambda r: (r["jdn"], r["festival"]))
    prov = {"rules": notes, "years": f"gregorian {y0}..{y1}", "caution": CAUTION}
    return rows, prov


TABLE_COLUMNS = ["festival", "date", "gregorian", "julian", "weekday", "jdn"]


def to_csv(rows) -> str:
    from calendra.output import render_csv

    return render_csv(rows, TABLE_COLUMNS + ["instant_ut", "rule"])


def to_json(rows, provenance) -> str:
    from calendra.output import render_json

    return render_json({"festivals": rows, "provenance": provenance})


def to_ics(rows, calendar_name: str = "calendra festivals") -> str:
    """Return the rows as an iCalendar (RFC 5545) text, one all-day VEVENT per occurrence.

    Raises
    ------
    ParameterError
        If the icalendar library is missing, or a date lies before AD 1
        (iCalendar dates are Gregorian years 1..9999).
    """
    import datetime as dt
    import hashlib

    try:
        import icalendar
    except ImportError:
        raise ParameterError("iCalendar output needs the icalendar library (pip install icalendar)") from None
    cal = icalendar.Calendar()
    cal.add("prodid", "-//calendra//festival rules//EN")
    cal.add("version", "2.0")
    cal.add("x-wr-calname", calendar_name)
    for r in rows:
        y, m, d = (int(v) for v in jg.gregorian_from_jdn(r["jdn"]))
        if not 1 <= y <= 9999:
            raise ParameterError(f"iCalendar dates are Gregorian years 1..9999; {r['festival']} falls in {y}")
        ev = icalendar.Event()
        start = dt.date(y, m, d)
        ev.add("dtstart", start)
        ev.add("dtend", start + dt.timedelta(days=int(r.get("days", 1))))
        ev.add("summary", r["festival"])
        text = (f"{r['date']} (= gregorian {r['gregorian']}, julian {r['julian']}); rule: {r['rule']}. "
                + (f"{r['description']}. " if r.get("description") else "") + f"{CAUTION}.")
        ev.add("description", text)
        uid = hashlib.sha1(f"{r['festival']}|{r['jdn']}".encode()).hexdigest()[:20]
        ev.add("uid", f"{uid}@calendra")
        ev.add("dtstamp", dt.datetime(2000, 1, 1, tzinfo=dt.timezone.utc))
        cal.add_component(ev)
    return cal.to_ical().decode("utf-8")
