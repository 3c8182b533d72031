"""Reading dates the way historians and astronomers write them.

:func:`parse_date` turns text into a :class:`DateSpec` (calendar, fields,
time of day and its time scale, or a Julian Day given directly);
:func:`resolve_date` turns a spec into Julian Days in UT and TT.

Accepted forms (see also :func:`calendra.calendar.parse_ymd_text`):

* ``-0584-05-28``, ``1957-10-04T19:26:24``: astronomical years (0 = 1 BC)
* ``585 BC May 28``, ``28 May 585 BCE``, ``AD 1066 Oct 14``
* ``1957 Oct 4.81``: a decimal day (the fraction is the time of day), in the
  calendars that declare ``accepts_decimal_day`` (julian, gregorian, western)
* a calendar prefix: ``julian:333-01-27``, ``gregorian:1582-10-15``,
  ``western[reform=britain]:1752-09-02``, ``CAL:...`` for any installed
  calendar (the text after the colon is read by that calendar)
* ``JD 1507900.5``, ``MJD 51544.5``, ``RD 1``
* a time of day ``HH:MM[:SS]`` or ``7h42m``, followed by its scale: ``UT``
  (default; ``UT1`` and ``UTC`` are read as UT), ``TT`` (``TD``, ``TDT``,
  ``ET``), ``LMT`` (local mean solar time) or ``LAT`` (local apparent solar
  time) at the site given separately
* for ranges, a year alone (``-3000``, ``585 BC``) or year and month

A date with no calendar named is read in the western calendar: Julian before
the Gregorian reform, Gregorian from it (the reform date is configurable).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from .errors import DateParseError, DateRangeError, ParameterError

TIME_SCALES = {"ut": "UT", "ut1": "UT", "utc": "UT", "gmt": "UT", "tt": "TT", "td": "TT", "tdt": "TT",
               "et": "TT", "tdb": "TT", "lmt": "LMT", "lat": "LAT"}

_PREFIX_RE = re.compile(r"^\s*([A-Za-z][\w\-]*(?:\[[^\]]*\])?)\s*:\s*(.*)$")
_JD_RE = re.compile(r"^\s*(JD|MJD|RD|JDN)\s*([+-]?\d+(?:\.\d*)?)\s*(?:([A-Za-z]+\d?)\s*)?$", re.I)
_TIME_RE = re.compile(
    r"(?:^|[\sT])(\d{1,2}):(\d{2})(?::(\d{2}(?:\.\d*)?))?(?=\s|$)|(?:^|\s)(\d{1,2})h(?:\s*(\d{1,2})m)?(?:\s*(\d{1,2}(?:\.\d*)?)s)?(?=\s|$)",
    re.I)
_SCALE_RE = re.compile(r"\s+(UT1|UTC|UT|GMT|TT|TDT|TDB|TD|ET|LMT|LAT)\s*$", re.I)
_DECIMAL_DAY_RE = re.compile(r"(?<![\d.])(\d{1,2})\.(\d+)(?![\d.])")


@dataclass
class DateSpec:
    """A date as read from text, before it is resolved to a Julian Day.

    Attributes
    ----------
    text : str
        The original text.
    calendar : str or None
        Calendar named by a prefix (None: the western default).
    fields : tuple of int or None
        Date fields in that calendar; None when a Julian Day was given.
    jd : float or None
        A Julian Day given directly (in ``scale``).
    fraction : float or None
        Time of day as a fraction from midnight (None: not given).
    scale : str or None
        Time scale of the time of day or JD: UT, TT, LMT or LAT; None when
        not written (civil time: the site's civil time when a site is given,
        else UT).
    partial : str
        ``""`` for a full date, ``"year"`` or ``"month"`` when only those were given.
    """

    text: str
    calendar: str | None = None
    fields: tuple | None = None
    jd: float | None = None
    fraction: float | None = None
    scale: str | None = None
    partial: str = ""


def parse_date(text: str, host=None, allow_partial: bool = False) -> DateSpec:
    """Read one date string into a :class:`DateSpec`.

    Parameters
    ----------
    text : str
        The date (see the module docstring for the forms).
    host : calendra.pluginmanager.Host, optional
        Where calendar names are looked up (default: the process host).
    allow_partial : bool
        Accept a year alone or a year and month (for range bounds); the
        missing fields are 1.

    Raises
    ------
    DateParseError
        When the text is not a date.
    """
    if not isinstance(text, str) or not text.strip():
        raise DateParseError("empty date")
    original = text
    s = text.strip()
    m = _JD_RE.match(s)
    if m:
        kind, value, scale = m.group(1).upper(), float(m.group(2)), m.group(3)
        sc = _scale(scale, original) if scale else None
        if kind == "JD":
            return DateSpec(original, jd=value, scale=sc)
        if kind == "MJD":
            return DateSpec(original, jd=value + 2400000.5, scale=sc)
        if value != int(value):
            raise DateParseError(f"{original!r}: {kind} is a whole day number")
        jdn = int(value) + (1721425 if kind == "RD" else 0)
        return DateSpec(original, calendar="jdn", fields=(jdn,), scale=sc)

    scale = None
    ms = _SCALE_RE.search(s)
    if ms:
        scale = _scale(ms.group(1), original)
        s = s[: ms.start()].rstrip()
    fraction = None
    mt = _TIME_RE.search(s)
    if mt:
        if mt.group(1) is not None:
            h, mi, sec = int(mt.group(1)), int(mt.group(2)), float(mt.group(3) or 0)
        else:
            h, mi, sec = int(mt.group(4)), int(mt.group(5) or 0), float(mt.group(6) or 0)
        if h > 24 or mi > 59 or sec >= 61 or (h == 24 and (mi or sec)):
            raise DateParseError(f"{original!r}: time of day {mt.group(0).strip()} is out of range")
        fraction = (h * 3600 + mi * 60 + sec) / 86400.0
        s = (s[: mt.start()] + " " + s[mt.end():]).strip()

    calendar = None
    mp = _PREFIX_RE.match(s)
    if mp:
        calendar, s = mp.group(1).lower(), mp.group(2).strip()
    from .pluginmanager import get_host

    host = host or get_host()
    cal = host.calendars.get(calendar) if calendar else host.calendars.get("western")
    if fraction is None and getattr(cal, "accepts_decimal_day", False):
        md = _DECIMAL_DAY_RE.search(s)
        if md and not re.fullmatch(r"[+-]?\d+\.\d+", s):
            fraction = float("0." + md.group(2))
            s = s[: md.start()] + md.group(1) + s[md.end():]
    partial = ""
    try:
        fields = cal.parse(s)
    except DateParseError:
        if not allow_partial:
            raise
        fields, partial = _parse_partial(s, cal, original)
    return DateSpec(original, calendar=calendar, fields=tuple(int(f) for f in fields),
                    fraction=fraction, scale=scale, partial=partial)


def _scale(word, text) -> str:
    try:
        return TIME_SCALES[word.lower()]
    except KeyError:
        raise DateParseError(f"{text!r}: unknown time scale {word!r} (UT, TT, LMT, LAT)") from None


def _parse_partial(s, cal, original):
    """Year alone or year and month, for range bounds."""
    nfields = len(cal.fields)
    tokens = s.split()
    era = None
    if tokens and tokens[-1].lower() in ("bc", "bce", "b.c."):
        era, tokens = "BC", tokens[:-1]
    elif tokens and tokens[-1].lower() in ("ad", "ce"):
        era, tokens = "AD", tokens[:-1]
    elif tokens and tokens[0].lower() in ("ad", "ce"):
        era, tokens = "AD", tokens[1:]
    body = " ".join(tokens)
    m = re.fullmatch(r"([+-]?\d+)(?:-(\d{1,2}))?", body)
    if not m:
        raise DateParseError(f"cannot read {original!r} as a date or a year")
    year = int(m.group(1))
    if era:
        if year <= 0:
            raise DateParseError(f"{original!r}: years with BC/AD are counted from 1")
        year = 1 - year if era == "BC" else year
    month = int(m.group(2)) if m.group(2) else 1
    fields = [year, month] + [1] * (nfields - 2)
    return tuple(fields[:nfields]), ("month" if m.group(2) else "year")


@dataclass
class ResolvedDates:
    """Dates resolved to Julian Days, as arrays (one element per input spec).

    Attributes
    ----------
    specs : list of DateSpec
    calendars : list of Calendar
        The calendar each date was read in.
    jdn : int64 array
        Civil day numbers (the site's civil day when a site was given).
    jd_ut, jd_tt : float arrays
        The instants, Julian Days in UT1 and TT (0h civil time of the day
        when no time was given).
    time_given : bool array
    """

    specs: list
    calendars: list
    jdn: np.ndarray
    jd_ut: np.ndarray
    jd_tt: np.ndarray
    time_given: np.ndarray

    def __len__(self):
        return len(self.specs)


#: Largest magnitude of a date field read from text: a year of 10**9 still has a day number far inside
#: int64 in every calendar's arithmetic (the Hebrew molad in parts, the Maya baktun, ...).
FIELD_LIMIT = 1_000_000_000


def resolve_dates(specs, host=None, deltat=None, site=None, reform=None) -> ResolvedDates:
    """Turn :class:`DateSpec` objects into Julian Days in UT and TT, as one array job.

    Dates are grouped by calendar, and each group is converted by one
    vectorized ``to_jdn`` call; delta T is applied to the whole array.

    Parameters
    ----------
    specs : list of DateSpec
    host : Host, optional
    deltat : delta-T model or its name, optional (default model when None)
    site : calendra.sites.Site, optional
        Needed for LMT and LAT times; with a site, a date without a written
        scale is in the site's civil time (its zone, or local mean time).
    reform : str, optional
        Reform of the western calendar used when no calendar is named.

    Raises
    ------
    InvalidDateError
        Naming the offending input text.
    ParameterError
    """
    from .deltat import DEFAULT_MODEL, get_model
    from .errors import InvalidDateError
    from .pluginmanager import get_host

    host = host or get_host()
    model = deltat if deltat is not None and not isinstance(deltat, str) else get_model(deltat or DEFAULT_MODEL)
    western = host.calendars.get("western")
    if reform:
        western = western.with_options(reform=reform)
    n = len(specs)
    cals = [host.calendars.get(sp.calendar) if sp.calendar else western for sp in specs]
    jd_local = np.empty(n)
    jdn = np.zeros(n, dtype=np.int64)
    time_given = np.array([sp.jd is not None or sp.fraction is not None for sp in specs], dtype=bool)
    groups: dict = {}
    for i, (sp, cal) in enumerate(zip(specs, cals)):
        if sp.jd is not None:
            jd_local[i] = sp.jd
        else:
            big = [(name, v) for name, v in zip(cal.fields, sp.fields) if abs(int(v)) > FIELD_LIMIT]
            if big:
                raise ParameterError(f"{sp.text!r}: {big[0][0]} {big[0][1]} is beyond what calendra converts "
                                     f"(date fields within +-{FIELD_LIMIT:,}; integer day counts would overflow)")
            groups.setdefault((id(cal), len(sp.fields)), (cal, []))[1].append(i)
    for cal, idx in groups.values():
        idx = np.array(idx)
        columns = np.array([specs[i].fields for i in idx], dtype=np.int64).T
        try:
            days = cal.to_jdn(*columns)
        except InvalidDateError as exc:
            bad = idx[np.atleast_1d(exc.mask)][0] if exc.mask is not None and np.ndim(exc.mask) else idx[0]
            raise InvalidDateError(f"{specs[bad].text!r}: {exc}", exc.calendar, exc.mask) from None
        try:
            cal.check_range(days)               # +-3e9 days (about 8 million years) for an unbounded one
        except DateRangeError as exc:
            bad = idx[np.atleast_1d(exc.mask)][0]
            raise DateRangeError(f"{specs[bad].text!r}: {exc}", exc.jd_min, exc.jd_max, exc.mask) from None
        jdn[idx] = days
        frac = np.array([specs[i].fraction or 0.0 for i in idx])
        jd_local[idx] = days - 0.5 + frac
    scales = np.array([sp.scale or ("civil" if site is not None else "UT") for sp in specs])
    if site is None and np.any((scales == "LMT") | (scales == "LAT")):
        raise ParameterError("local time (LMT or LAT) needs a site (--site)")
    jd = jd_local.copy()
    if site is not None:
        m = scales == "civil"
        jd[m] -= site.offset_days
        m = (scales == "LMT") | (scales == "LAT")
        jd[m] -= site.longitude_deg / 360.0
        m = scales == "LAT"
        if m.any():
            from .solartime import equation_of_time_days

            base = jd[m].copy()
            for _ in range(3):   # apparent = mean + equation of time, which varies slowly
                jd[m] = base - equation_of_time_days(jd[m], model)
    is_tt = scales == "TT"
    jd_ut = np.where(is_tt, model.ut_from_tt(jd), jd)
    jd_tt = np.where(is_tt, jd, model.tt_from_ut(jd))
    given_jd = np.array([sp.jd is not None for sp in specs], dtype=bool)
    if given_jd.any():
        offset = site.offset_days if site is not None else 0.0
        jdn[given_jd] = np.floor(jd_ut[given_jd] + offset + 0.5).astype(np.int64)
    return ResolvedDates(list(specs), cals, jdn, jd_ut, jd_tt, time_given)


def resolve_date(spec: DateSpec, host=None, deltat=None, site=None, reform=None) -> ResolvedDates:
    """Resolve one spec (see :func:`resolve_dates`); the arrays have one element."""
    return resolve_dates([spec], host=host, deltat=deltat, site=site, reform=reform)


def date_to_jd_tt(text: str, host=None, deltat=None, site=None, reform=None, allow_partial=True) -> float:
    """Return the Julian Day (TT) of a date string (0h civil time when no time is written)."""
    res = resolve_dates([parse_date(text, host, allow_partial=allow_partial)], host, deltat, site, reform)
    return float(res.jd_tt[0])
