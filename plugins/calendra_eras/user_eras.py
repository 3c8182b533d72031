"""User-defined eras and regnal years, read from TOML files.

A historian describes an era (years counted from an epoch) or a dynasty (a
list of reigns, dates given as "year 7 of ruler X, month 2, day 14") in a
small TOML file; each becomes a calendar of calendra, converting both ways
between such dates and day numbers.  Files listed in the environment
variable ``CALENDRA_ERAS`` (separated by ``os.pathsep``) are registered with
the plugin; :func:`load_eras` reads one file in code.

File format
-----------
::

    [about]                          # optional, free keys (title, note, source...)
    title = "..."

    [[era]]                          # any number of eras
    name = "varenth-founding"        # calendar name: lower case, digits, - _ .
    title = "Era of the Founding of Varenth"   # optional (default: name)
    abbreviation = "AFV"             # optional: written before the year
    aliases = ["founding"]           # optional
    description = "..."              # optional
    epoch = "egyptian:Nabonassar 23 Pharmuthi 9"   # the era's starting day, any installed calendar
    year_start = "egyptian:1 Thoth"  # when its years turn (see below)
    counting = "non-accession-year"  # optional, see below

    [[dynasty]]                      # any number of dynasties
    name = "tarsenid"
    title = "Tarsenid kings of Varenth"
    year_start = "egyptian:1 Thoth"
    counting = "accession-year"      # required unless year_start = "anniversary"

    [[dynasty.reign]]                # in order of succession
    ruler = "Tarsenel I"
    key = "tarsenel1"                # optional (default: the ruler's name, lower case, spaces -> -)
    accession = "julian:-0731-05-14" # exact accession day, any installed calendar
    length = 19                      # recorded length in regnal years (years 1..length)

    [[dynasty.reign]]
    ruler = "Ovrecca"                # no accession: follows the previous reign, beginning at the
    length = 8                       # year start after its last recorded year

    [[dynasty.reign]]
    ruler = "Hemmadun the Wise"
    accession_between = [-700, -690] # uncertain: a free parameter (Julian years, or two dates)
    length = 27

    [[dynasty.reign]]
    ruler = "Someone"
    accession_year = 60              # regnal year 1 begins at the year start of this year of the
                                     # dynasty's calendar (day of accession unknown)

Dates (``epoch``, ``accession``, ``accession_between`` entries) are read by
:func:`calendra.dateparse.parse_date`: ``CAL:TEXT`` for any installed
calendar, ``JD 1448638``, ``RD -272787`` or a western-calendar date.  A time
of day, if written, is ignored (eras name days).

``year_start`` is ``CAL:DAY``, a day of the year of calendar ``CAL`` written
as a month name and day (``egyptian:1 Thoth``, ``julian:1 September``) or
``MM-DD`` (``julian:09-01``), or ``CAL:new year`` (also ``first month``: day
1 of month 1); the era's or dynasty's dates then use that calendar's months
and days ("month 2" of an Egyptian-year dynasty is Phaophi, of a Julian-year
one February).  The calendar has fields year, month, day, or year, month,
leap, day: a lunisolar calendar (``babylonian:1 Nisannu``, or a day of any
other regular month, e.g. the spring month of a calendar whose year begins
in autumn); the dates then have a leap field too (reign, year, month, leap,
day), and a leap month, which not every year has, cannot start the year.
Days before the year start in the calendar's own order of months (a leap
month follows the month it repeats) belong to the year before.
``year_start = "anniversary"`` counts years from the anniversary of the
epoch or of each accession; then ``calendar = "CAL"`` names the calendar.

``counting``:

* ``non-accession-year`` (antedating): the year in which the epoch or
  accession falls is year 1, from the epoch or accession day on; year 2
  begins at the next year start.  Default for eras.
* ``accession-year`` (postdating, the Babylonian and Assyrian practice):
  the rest of the year of accession is the *accession year*, year 0 here;
  year 1 begins at the next year start (on the accession day itself when it
  is a year start).

Eras continue proleptically before their epoch (years 0, -1, ...).  A
dynasty names only days from its first accession on; a reign covers the
days from its accession until the next accession, or to the end of its
recorded length if that is later (the year of death is often counted by
both kings); days after a reign's recorded length that no successor has
claimed are named in its further years, and the long text form says so.

Uncertain accessions
--------------------
An ``accession_between`` makes the reign's start a free parameter,
:class:`FreeEpoch` (name ``DYNASTY.KEY``, day-number bounds); the reigns that
follow it move with it.  Until it is fixed, such reigns cannot be converted
(a specific :class:`~calendra.errors.InvalidDateError` says how to fix it) and
the dynasty's valid range ends before the lower bound.  Fix it with a
calendar option, ``tarsenid[hemmadun=julian:-0695-03-02]`` (or a day number),
or ask :func:`regnal_interval` for the span of days a regnal date can fall on
across the bounds.

Calendar names in a file are looked up among the core calendars, this
plugin's and the file's own earlier entries; a name unknown there (a
calendar of another plugin) is looked up in the process host when the era
is first used, so while plugins register, an error in such an entry shows
only at first use.

Errors in a file raise :class:`EraFileError` (a
:class:`~calendra.errors.ParameterError`) with one line naming the file, the
table and the key.
"""

from __future__ import annotations

import os
import re
import sys
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from calendra.calendar import Calendar, iso_year
from calendra.daylib import as_int_array
from calendra.errors import CalendraError, DateParseError, InvalidDateError, ParameterError, UnknownNameError
from calendra.registry import CalendarRegistry, parse_spec

from ._text import Reader, month_lookup

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10
    import tomli as tomllib

#: Environment variable listing era files (os.pathsep-separated).
ENV_VAR = "CALENDRA_ERAS"

COUNTINGS = {"accession-year": "postdating", "postdating": "postdating",
             "non-accession-year": "antedating", "antedating": "antedating"}
ANNIVERSARY_WORDS = ("anniversary", "accession", "epoch")
_NAME_RE = re.compile(r"^[a-z][a-z0-9_.\-]*$")
_BIG = 3_000_000_000


class EraFileError(ParameterError):
    """An era file that cannot be used: names the file, the place in it and the problem.

    Attributes
    ----------
    path : str
    where : str
        The table and key, e.g. ``[[dynasty]] 'tarsenid', reign 3, key 'accession'``.
    """

    def __init__(self, path, where: str, problem: str):
        self.path = str(path)
        self.where = where
        super().__init__(f"era file {self.path}: {where}: {problem}")


@dataclass(frozen=True)
class FreeEpoch:
    """An uncertain epoch: a free parameter between two day numbers (inclusive).

    Attributes
    ----------
    name : str
        ``DYNASTY.KEY`` of the reign whose accession is uncertain.
    lo_jdn, hi_jdn : int
        Earliest and latest possible day number of the accession.
    """

    name: str
    lo_jdn: int
    hi_jdn: int

    def __post_init__(self):
        if self.lo_jdn > self.hi_jdn:
            raise ParameterError(f"free epoch {self.name}: lower bound {self.lo_jdn} is after upper bound {self.hi_jdn}")

    def contains(self, jdn) -> bool:
        """True if day number ``jdn`` lies within the bounds."""
        return self.lo_jdn <= int(jdn) <= self.hi_jdn


class RegnalInterval(NamedTuple):
    """Day numbers a regnal date (or year) can fall on: ``lo_jdn..hi_jdn`` inclusive.

    ``free`` is the :class:`FreeEpoch` the result depends on (None when the
    reign's start is fixed).
    """

    lo_jdn: int
    hi_jdn: int
    free: FreeEpoch | None


# ------------------------------------------------------------ look-ups
_REGISTERING = False


class _Deferred(Exception):
    """A calendar named in a file is not known yet (during plugin registration)."""


class _Lookup:
    """Calendar look-up for era files: core and this package first, then the process host."""

    def __init__(self, extra=()):
        from calendra.calendars_core import core_calendars

        from .plugin import builtin_calendars

        self.registry = CalendarRegistry()
        for cal in list(core_calendars()) + list(builtin_calendars()) + list(extra):
            self.registry.add(cal, "local")

    def add(self, cal):
        self.registry.add(cal, "file")

    def get(self, spec: str):
        name, _ = parse_spec(spec)
        if name in self.registry:
            return self.registry.get(spec)
        if _REGISTERING:
            raise _Deferred(spec)
        from calendra.pluginmanager import get_host

        return get_host().calendars.get(spec)


class _HostShim:
    """What :func:`calendra.dateparse.parse_date` needs of a host: ``.calendars.get``."""

    def __init__(self, lookup: _Lookup):
        self.calendars = lookup


def _date_to_jdn(text: str, lookup: _Lookup) -> int:
    from calendra.dateparse import parse_date

    spec = parse_date(str(text), host=_HostShim(lookup))
    if spec.jd is not None:
        return int(np.floor(spec.jd + 0.5))
    cal = lookup.get(spec.calendar or "western")
    return int(cal.to_jdn(*spec.fields))


# ----------------------------------------------------------- year rules
@dataclass
class YearRule:
    """When years turn: a day of the year of calendar ``base``, or None for anniversary years.

    ``inner`` holds the fields after the year: (month, day), or (month, leap, day) for a
    lunisolar calendar (fields year, month, leap, day).
    """

    base: Calendar
    inner: tuple | None
    text: str

    @property
    def anniversary(self) -> bool:
        return self.inner is None


#: Words of ``year_start`` meaning day 1 of month 1 of the base calendar's year.
NEW_YEAR_WORDS = ("new year", "first month", "first month of the year", "year start", "first day")


def _split_prefix(text: str):
    m = re.match(r"^\s*([A-Za-z][\w\-]*(?:\[[^\]]*\])?)\s*:\s*(.*)$", text)
    if not m:
        return None, text.strip()
    return m.group(1), m.group(2).strip()


def _month_names(cal) -> list[str]:
    names = list(getattr(cal, "month_names", ()) or ())
    return names


def _probe_years(base, n=8):
    """``n`` consecutive years of ``base`` well inside its valid span (for rules that must hold every year)."""
    lo, hi = base.valid_jdn
    jdn = int(np.clip(1721424, lo + 4000, hi - 4000)) if hi - lo > 8000 else (lo + hi) // 2
    first = int(np.asarray(base.from_jdn(jdn)[base.fields[0]]))
    return np.arange(first, first + n)


def _leap_field(base) -> bool:
    """True for a lunisolar base (fields year, month, leap, day)."""
    return len(base.fields) == 4


def _read_lunisolar_day(base, text: str, who: str) -> tuple[int, int, int]:
    """Read (month, leap, day) of a lunisolar ``base`` from ``14 Nisannu``, ``Addaru II 14`` or ``12L-14``.

    The calendar reads its own month names (and leap months): it is given the text with a year.
    """
    m = re.fullmatch(r"\s*(\d{1,2})(L?)-(\d{1,2})\s*", text, flags=re.I)
    if m:
        return int(m.group(1)), 1 if m.group(2) else 0, int(m.group(3))
    year = int(_probe_years(base, 1)[0])
    try:
        _, month, lf, day = base.parse(f"{text} {year}")
    except DateParseError:
        raise DateParseError(f"cannot read {text!r} as a day of a {base.label} month in {who}: write the day and "
                             f"month, e.g. '14 {base.month_name(1)}', '{base.month_name(12, None, True)} 3', "
                             "or MM-DD (MML-DD for a leap month)") from None
    return int(month), int(lf), int(day)


def _read_day_of_year(base, text: str, fail):
    """Read a day of the year of ``base`` (``1 Thoth``, ``09-01``, ``1 Nisannu``): its inner fields."""
    if _leap_field(base):
        try:
            return _read_lunisolar_day(base, text, "year_start")
        except DateParseError as exc:
            raise fail("year_start", str(exc)) from None
    m = re.fullmatch(r"(\d{1,2})-(\d{1,2})", text)
    if m:
        return int(m.group(1)), int(m.group(2))
    try:
        _, month, day = Reader(text, base.name).read_ymd(month_lookup(_month_names(base)), need_year=False)
    except DateParseError as exc:
        raise fail("year_start", f"{text!r}: {exc} (write a month name and day, e.g. '1 Thoth', or MM-DD)")
    return (month, day)


def _parse_year_rule(text: str, calendar_key, lookup: _Lookup, fail) -> YearRule:
    if not isinstance(text, str):
        raise fail("year_start", f"expected text like 'julian:1 September', got {text!r}")
    if text.strip().lower() in ANNIVERSARY_WORDS:
        if not calendar_key:
            raise fail("calendar", "anniversary years need the calendar whose months and days the dates use "
                                   "(calendar = \"julian\")")
        base = _base_calendar(calendar_key, lookup, fail, "calendar")
        return YearRule(base, None, "anniversary")
    prefix, rest = _split_prefix(text)
    if prefix is None:
        raise fail("year_start", f"{text!r} names no calendar: write e.g. 'julian:1 September' or "
                                 "'egyptian:1 Thoth'")
    base = _base_calendar(prefix, lookup, fail, "year_start")
    if calendar_key and parse_spec(calendar_key)[0] != parse_spec(prefix)[0]:
        raise fail("calendar", f"calendar {calendar_key!r} differs from the calendar of year_start {prefix!r}")
    if " ".join(rest.lower().split()) in NEW_YEAR_WORDS:
        inner = (1, 0, 1) if _leap_field(base) else (1, 1)
    else:
        inner = _read_day_of_year(base, rest, fail)
    if _leap_field(base) and inner[1]:
        raise fail("year_start", f"{text!r} is in a leap month, which not every year has")
    # The day must occur in every year: test a run of consecutive years.
    years = _probe_years(base)
    if not np.all(base.is_valid(years, *(np.full(years.size, v) for v in inner))):
        raise fail("year_start", f"{text!r} is not a day of every year of {base.label}")
    return YearRule(base, tuple(int(v) for v in inner), text)


def _base_calendar(spec, lookup, fail, key):
    try:
        cal = lookup.get(spec)
    except _Deferred:
        raise
    except UnknownNameError as exc:
        raise fail(key, str(exc)) from None
    except ParameterError as exc:
        raise fail(key, str(exc)) from None
    if tuple(cal.fields) not in (("year", "month", "day"), ("year", "month", "leap", "day")):
        raise fail(key, f"calendar {cal.label} has fields {', '.join(cal.fields)}; eras need a calendar with "
                        "year, month and day (or year, month, leap, day: a lunisolar calendar)")
    return cal


# --------------------------------------------------------- year counting
def _earlier(values, starts):
    """True where the fields ``values`` (month, [leap,] day) come before ``starts`` in the year.

    Compared field by field (lexicographic order), which is the order of the days of a year; a
    leap month follows the month it repeats.  ``starts`` may be numbers or arrays.
    """
    lt = eq = None
    for value, start in zip(values, starts):
        v = as_int_array(value)
        lt = (v < start) if lt is None else lt | (eq & (v < start))
        eq = (v == start) if eq is None else eq & (v == start)
    return lt


class _Count:
    """Regnal or era years over a base calendar: year n begins at the year start of base year K + n.

    ``inner`` is the year start as the fields after the year: (month, day) or (month, leap, day).
    Days of the base year before it (in the order of those fields) belong to the year before.
    """

    def __init__(self, base, offset: int, inner: tuple):
        self.base = base
        self.offset = int(offset)
        self.inner = tuple(int(v) for v in inner)

    def before(self, *inner):
        return _earlier(inner, self.inner)

    def base_year(self, year, *inner):
        return self.offset + as_int_array(year) + self.before(*inner)

    def to_jdn(self, year, *inner):
        return self.base._to_jdn(self.base_year(year, *inner), *(as_int_array(v) for v in inner))

    def year_start(self, year):
        y = as_int_array(year)
        return self.base._to_jdn(self.offset + y, *(np.full(np.shape(y), v) for v in self.inner))

    def year_of(self, by, *inner):
        return as_int_array(by) - self.before(*inner) - self.offset


def _count_from_start(rule: YearRule, start_jdn: int, counting: str, fail) -> tuple[_Count, int]:
    """Return the year count of a reign or era beginning on ``start_jdn`` and its first year number."""
    base = rule.base
    f = base.from_jdn(start_jdn)
    sy, *start_inner = (int(np.asarray(f[k])) for k in base.fields)
    start_inner = tuple(start_inner)
    if rule.anniversary:
        years = np.arange(sy, sy + 8)
        if not np.all(base.is_valid(years, *(np.full(8, v) for v in start_inner))):
            raise fail(f"{base.format(sy, *start_inner, style='long')} does not recur every year, so anniversary "
                       "years cannot be counted from it")
        return _Count(base, sy - 1, start_inner), 1
    before = start_inner < rule.inner
    cy = sy - 1 if before else sy         # base year whose year start opens the year holding the start
    on_start = start_inner == rule.inner
    if counting == "postdating" and not on_start:
        return _Count(base, cy, rule.inner), 0
    return _Count(base, cy - 1, rule.inner), 1


# --------------------------------------------------------------- reigns
@dataclass
class ReignSpec:
    """One reign as written in the file (unresolved)."""

    ruler: str
    key: str
    where: str
    accession: str | None = None
    accession_year: int | None = None
    between: tuple | None = None
    length: int | None = None
    note: str = ""


@dataclass
class Reign:
    """A reign with its start resolved (``count`` None while it depends on an unfixed free epoch)."""

    spec: ReignSpec
    index: int
    start: int | None = None
    count: _Count | None = None
    first_year: int = 1
    end: int | None = None           # first day after the recorded length
    free: FreeEpoch | None = None    # its own uncertain accession
    root: FreeEpoch | None = None    # the free epoch it depends on (its own or a predecessor's)
    upper: int = _BIG                # first day after the days it may name

    @property
    def resolved(self) -> bool:
        return self.count is not None


def _slug(text: str) -> str:
    s = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")
    return s or "reign"


# ------------------------------------------------------------ calendars
class _FileCalendar(Calendar):
    """Shared behaviour of calendars read from era files (lazy resolution of calendar names)."""

    path = ""

    @property
    def day_start(self):  # type: ignore[override]
        """The day boundary of the base calendar (a reign list over a sunset-day calendar begins its days at sunset)."""
        return self.base.day_start

    def _ready(self):
        if self._state is None:
            global _REGISTERING
            saved, _REGISTERING = _REGISTERING, False
            try:
                self._state = self._resolve(self._lookup or _Lookup())
            finally:
                _REGISTERING = saved
        return self._state

    #: Fields before those of the base calendar's year (the year itself, and the reign).
    _lead_fields: tuple = ("year",)

    @property
    def base(self) -> Calendar:
        """The calendar whose months and days this era's dates use."""
        return self._ready()["rule"].base

    @property
    def fields(self):  # type: ignore[override]
        """``_lead_fields`` and the base calendar's fields after its year: month, day (or month, leap, day)."""
        return self._lead_fields + tuple(self.base.fields[1:])

    @property
    def has_leap(self) -> bool:
        """True when the dates carry a leap field (a lunisolar base calendar)."""
        return _leap_field(self.base)

    @property
    def month_names(self):  # type: ignore[override]
        return _month_names(self.base)

    def month_name(self, month, year=None, leap=False):
        if self.has_leap:
            return self.base.month_name(int(month), None, bool(leap))
        return self.base.month_name(month)

    def _first_inner(self) -> tuple:
        """Month 1, day 1 as the fields after the year."""
        return (1, 0, 1) if self.has_leap else (1, 1)

    def _inner_text(self, inner) -> str:
        """``MM-DD`` (``MML-DD`` for a leap month) of the fields after the year."""
        if self.has_leap:
            m, lf, d = (int(v) for v in inner)
            return f"{m:02d}{'L' if lf else ''}-{d:02d}"
        m, d = (int(v) for v in inner)
        return f"{m:02d}-{d:02d}"

    def _inner_words(self, inner) -> str:
        """``Phaophi 14`` / ``Addaru II 14`` of the fields after the year."""
        if self.has_leap:
            m, lf, d = (int(v) for v in inner)
            return f"{self.month_name(m, None, lf)} {d}"
        m, d = (int(v) for v in inner)
        return f"{self.month_name(m)} {d}"

    def _read_inner(self, reader) -> tuple:
        """Read the month and day (and leap) left in ``reader``."""
        if self.has_leap:
            rest = " ".join(t.raw for t in reader.tokens)
            return _read_lunisolar_day(self.base, rest, self.name)
        _, m, d = reader.read_ymd(self._month_reader(), need_year=False)
        return int(m), int(d)

    def _month_reader(self):
        base = self.base
        names = _month_names(base)
        return month_lookup(names, getattr(base, "month_spellings", None))

    def _fail(self, where):
        def fail(key, problem=None):
            if problem is None:
                key, problem = None, key
            return EraFileError(self.path, where + (f", key {key!r}" if key else ""), problem)
        return fail


class EraCalendar(_FileCalendar):
    """An era read from a file: fields year, month, day (the months and days of its base calendar).

    Years before year 1 continue as 0, -1, ... (proleptic); see the module
    docstring for the counting rules.
    """

    def __init__(self, data: dict, path: str, where: str, lookup: _Lookup | None = None):
        self.path = str(path)
        self.where = where
        self._data = data
        self._lookup = lookup
        self._state = None
        self.name = data["name"]
        self.aliases = tuple(data.get("aliases", ()))
        self.title = data.get("title", self.name)
        self.abbreviation = data.get("abbreviation", "")
        self._description = data.get("description", "")

    def _resolve(self, lookup):
        fail = self._fail(self.where)
        d = self._data
        rule = _parse_year_rule(d["year_start"], d.get("calendar"), lookup, fail)
        try:
            epoch = _date_to_jdn(d["epoch"], lookup)
        except _Deferred:
            raise
        except CalendraError as exc:
            raise fail("epoch", f"{d['epoch']!r}: {exc}") from None
        counting = COUNTINGS.get(str(d.get("counting", "non-accession-year")).lower())
        if counting is None:
            raise fail("counting", f"{d.get('counting')!r}: use accession-year or non-accession-year")
        count, _ = _count_from_start(rule, epoch, counting, lambda p: fail("epoch", p))
        return {"rule": rule, "epoch": epoch, "count": count, "counting": counting}

    @property
    def description(self):  # type: ignore[override]
        s = self._ready()
        text = self._description or self.title
        return f"{text} (from {os.path.basename(self.path)}; years turn on {s['rule'].text})"

    @property
    def year_numbering(self):  # type: ignore[override]
        s = self._ready()
        base = s["rule"].base
        start = int(s["count"].year_start(1))
        bf = base.from_jdn(start)
        return (f"years of the {self.title}: year 1 begins {base.label} "
                f"{base.format(*(int(np.asarray(bf[k])) for k in base.fields), style='long')}; "
                "years 0, -1, ... before it (proleptic, with a year 0)")

    @property
    def epoch_jdn(self):  # type: ignore[override]
        return int(self._ready()["count"].year_start(1))

    @property
    def valid_jdn(self):  # type: ignore[override]
        return self.base.valid_jdn

    def epoch_day(self) -> int:
        """Day number of the epoch as written in the file (may lie inside year 1)."""
        return int(self._ready()["epoch"])

    def months_in_year(self, year):
        return self.base.months_in_year(as_int_array(year))

    def month_length(self, year, *month):
        """Days of a month (fields month, or month and leap) of ``year`` of the era."""
        c = self._ready()["count"]
        return self.base.month_length(c.base_year(year, *month, 1), *month)

    def is_valid(self, year, *inner):
        c = self._ready()["count"]
        return np.asarray(self.base.is_valid(c.base_year(year, *inner), *inner), dtype=bool)

    def _invalid_reason(self, year, *inner):
        c = self._ready()["count"]
        by = int(c.base_year(year, *inner))
        reason = self.base._invalid_reason(by, *inner) or "date does not exist"
        return f"year {year} of the {self.title} (= {self.base.label} year {by}): {reason}"

    def _to_jdn(self, year, *inner):
        return self._ready()["count"].to_jdn(year, *inner)

    def _from_jdn(self, jdn):
        c = self._ready()["count"]
        f = self.base.from_jdn(jdn)
        by, *inner = (f[k] for k in self.base.fields)
        return (c.year_of(by, *inner), *inner)

    def year_start_jdn(self, year):
        return self._ready()["count"].year_start(year)

    def format(self, year, *inner, style: str = "iso") -> str:
        y = int(year)
        if style == "iso":
            head = f"{self.abbreviation} " if self.abbreviation else "year "
            return f"{head}{iso_year(y)}-{self._inner_text(inner)}"
        if style == "long":
            return f"year {y} of the {self.title}, {self._inner_words(inner)}"
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def parse(self, text: str):
        s = _remove_phrase(text, self.title)
        if self.has_leap:
            return self._parse_lunisolar(s)
        reader = Reader(s, self.name)
        year = None
        if self.abbreviation:
            abbr = self.abbreviation.lower().replace(".", "")
            _, pos = reader.take_word(lambda w: True if w.replace(".", "") == abbr else None)
            if pos >= 0:
                tok = reader.number_at(pos)
                if tok is not None and tok.kind == "ymd":
                    return tuple(int(v) for v in tok.value)
                if tok is not None and tok.kind == "num":
                    year = int(tok.value)
        if year is None:
            for i, t in enumerate(reader.tokens):
                if t.kind == "word" and t.word == "year" and i + 1 < len(reader.tokens) \
                        and reader.tokens[i + 1].kind == "ymd":
                    value = reader.tokens[i + 1].value
                    del reader.tokens[i:i + 2]
                    if reader.tokens:
                        raise reader.fail(f"unexpected {reader.tokens[0].raw!r}")
                    return tuple(int(v) for v in value)
            year = reader.take_keyword_number(("year", "yr"))
        y, m, d = reader.read_ymd(self._month_reader(), year=year)
        return int(y), int(m), int(d)

    def _parse_lunisolar(self, s: str):
        # ``AFV 5-08L-14`` / ``year 5-08-14``, or the year (``AFV 5``, ``year 5``) and a day of a month.
        heads = ["year"] + ([re.escape(self.abbreviation.replace(".", ""))] if self.abbreviation else [])
        plain = s.replace(".", "") if self.abbreviation else s
        m = re.fullmatch(r"\s*(?:" + "|".join(heads) + r")\s+([+-]?\d+)-(\d{1,2})(L?)-(\d{1,2})\s*", plain,
                         flags=re.I)
        if m:
            return int(m.group(1)), int(m.group(2)), 1 if m.group(3) else 0, int(m.group(4))
        m = re.search(r"(?i)(?<!\w)(?:" + "|".join(heads) + r")\s+([+-]?\d+)(?!\w)", plain)
        if not m:
            raise DateParseError(f"cannot read {s.strip()!r} as a {self.name} date: give the year "
                                 f"('year 5, 14 {self.base.month_name(1)}'" +
                                 (f" or '{self.abbreviation} 5 ...'" if self.abbreviation else "") + ")")
        rest = (plain[:m.start()] + " " + plain[m.end():]).replace(",", " ")
        month, lf, day = _read_lunisolar_day(self.base, rest, self.name)
        return int(m.group(1)), month, lf, day


class DynastyCalendar(_FileCalendar):
    """A list of reigns read from a file: fields reign (1-based, in file order), year, month, day.

    Options: for each reign with an uncertain accession, ``KEY=DATE`` (a
    date text or a day number) fixes it within its bounds.
    """

    _lead_fields = ("reign", "year")

    def __init__(self, data: dict, path: str, where: str, lookup: _Lookup | None = None, fixes=None):
        self.path = str(path)
        self.where = where
        self._data = data
        self._lookup = lookup
        self._state = None
        self._fixes = dict(fixes or {})
        self.name = data["name"]
        self.aliases = tuple(data.get("aliases", ()))
        self.title = data.get("title", self.name)
        self._description = data.get("description", "")
        self.specs = _reign_specs(data, path, where)

    # ---------------------------------------------------------- resolve
    def _resolve(self, lookup):
        fail = self._fail(self.where)
        d = self._data
        rule = _parse_year_rule(d["year_start"], d.get("calendar"), lookup, fail)
        counting = None
        if not rule.anniversary:
            if "counting" not in d:
                raise fail("counting", "missing: say accession-year (postdating) or non-accession-year (antedating)")
            counting = COUNTINGS.get(str(d["counting"]).lower())
            if counting is None:
                raise fail("counting", f"{d['counting']!r}: use accession-year or non-accession-year")
        reigns: list[Reign] = []
        for i, sp in enumerate(self.specs):
            rfail = self._fail(sp.where)
            r = Reign(sp, i)
            prev = reigns[-1] if reigns else None
            if sp.between is not None:
                lo, hi = _bounds(sp.between, lookup, rfail)
                r.free = FreeEpoch(f"{self.name}.{sp.key}", lo, hi)
                r.root = r.free
                fixed = self._fixes.get(sp.key)
                if fixed is not None:
                    r.start = fixed
            elif sp.accession is not None:
                try:
                    r.start = _date_to_jdn(sp.accession, lookup)
                except _Deferred:
                    raise
                except CalendraError as exc:
                    raise rfail("accession", f"{sp.accession!r}: {exc}") from None
            elif sp.accession_year is not None:
                if rule.anniversary:
                    raise rfail("accession_year", "anniversary years need the accession day, not only the year")
                r.count = _Count(rule.base, sp.accession_year - 1, rule.inner)
                r.first_year = 1
                try:
                    r.start = int(r.count.year_start(1))
                except CalendraError as exc:
                    raise rfail("accession_year", str(exc)) from None
            else:
                if prev is None:
                    raise rfail("the first reign needs accession, accession_year or accession_between")
                if prev.spec.length is None:
                    raise rfail(f"it follows {prev.spec.ruler!r}, whose length is not given; give length there "
                                "or an accession here")
                r.root = prev.root
                if prev.resolved:
                    r.start = int(prev.count.year_start(prev.spec.length + 1))
            if r.start is not None and r.count is None:
                r.count, r.first_year = _count_from_start(rule, r.start, counting,
                                                          lambda p, rf=rfail: rf("accession", p))
            if r.resolved and sp.length is not None:
                r.end = int(r.count.year_start(sp.length + 1))
            reigns.append(r)
        # The days each resolved reign may name, and the dynasty's valid range.
        cut = _BIG
        for r in reigns:
            if not r.resolved:
                cut = min(cut, r.root.lo_jdn if r.root is not None else _BIG)
        resolved = sorted((r for r in reigns if r.resolved), key=lambda r: (r.start, r.index))
        for k, r in enumerate(resolved):
            nxt = resolved[k + 1].start if k + 1 < len(resolved) else None
            later = [x for x in (nxt, r.end) if x is not None]
            upper = max(later) if later else _BIG
            if nxt is None and cut < _BIG:
                upper = max(upper, cut)
            r.upper = upper
        if not resolved:
            lo, hi = _BIG, _BIG - 1
        else:
            lo = resolved[0].start
            hi = min(max(r.upper for r in resolved), cut) - 1
        starts = np.array([r.start for r in resolved], dtype=np.int64)
        order = np.array([r.index for r in resolved], dtype=np.int64)
        return {"rule": rule, "counting": counting, "reigns": reigns, "valid": (int(lo), int(hi)),
                "starts": starts, "order": order}

    # ---------------------------------------------------------- options
    @property
    def free_epochs(self) -> list[FreeEpoch]:
        """The uncertain accessions of this dynasty (fixed or not)."""
        return [r.free for r in self._ready()["reigns"] if r.free is not None]

    @property
    def options(self):  # type: ignore[override]
        return {r.spec.key: f"accession of {r.spec.ruler}: a date between {self._jtext(r.free.lo_jdn)} and "
                            f"{self._jtext(r.free.hi_jdn)} (or a day number)"
                for r in self._ready()["reigns"] if r.free is not None}

    @staticmethod
    def _jtext(jdn) -> str:
        from calendra import julian_gregorian as jg

        y, m, d = (int(v) for v in jg.julian_from_jdn(jdn))
        return f"julian:{iso_year(y)}-{m:02d}-{d:02d}"

    def with_options(self, **options):
        free = {r.spec.key: r for r in self._ready()["reigns"] if r.free is not None}
        fixes = dict(self._fixes)
        lookup = self._lookup or _Lookup()
        for key, value in options.items():
            if key not in free:
                known = ", ".join(free) or "none (no reign has an uncertain accession)"
                raise ParameterError(f"calendar {self.name} has no option {key!r}; options: {known}")
            r = free[key]
            if isinstance(value, (int, np.integer)) or re.fullmatch(r"[+-]?\d+", str(value).strip()):
                jdn = int(value)
            else:
                try:
                    jdn = _date_to_jdn(str(value), lookup)
                except CalendraError as exc:
                    raise ParameterError(f"{self.name}[{key}=...]: {exc}") from None
            if not r.free.contains(jdn):
                raise ParameterError(f"{self.name}[{key}={value}]: the accession of {r.spec.ruler} lies between "
                                     f"{self._jtext(r.free.lo_jdn)} and {self._jtext(r.free.hi_jdn)} "
                                     f"(day {r.free.lo_jdn}..{r.free.hi_jdn}); got day {jdn}")
            fixes[key] = jdn
        return DynastyCalendar(self._data, self.path, self.where, self._lookup, fixes)

    @property
    def label(self):
        if not self._fixes:
            return self.name
        keys = [sp.key for sp in self.specs if sp.key in self._fixes]
        return f"{self.name}[{','.join(f'{k}={self._jtext(self._fixes[k])}' for k in keys)}]"

    # --------------------------------------------------------- metadata
    @property
    def description(self):  # type: ignore[override]
        s = self._ready()
        text = self._description or self.title
        how = "anniversary years" if s["rule"].anniversary else \
            f"{'accession-year' if s['counting'] == 'postdating' else 'non-accession-year'} counting, years turn on " \
            f"{s['rule'].text}"
        return f"{text}: {len(self.specs)} reigns, {how} (from {os.path.basename(self.path)})"

    @property
    def year_numbering(self):  # type: ignore[override]
        s = self._ready()
        if s["rule"].anniversary:
            return "regnal years from each accession's anniversary (year 1 begins on the accession day)"
        if s["counting"] == "postdating":
            return ("regnal years, accession-year counting: year 0 = the accession year (accession to the next "
                    f"year start), year 1 from the next {s['rule'].text}")
        return f"regnal years, non-accession-year counting: year 1 = accession to the next {s['rule'].text}"

    @property
    def epoch_jdn(self):  # type: ignore[override]
        s = self._ready()
        return int(s["starts"].min()) if s["starts"].size else None

    @property
    def valid_jdn(self):  # type: ignore[override]
        return self._ready()["valid"]

    def rulers(self) -> list[str]:
        """Ruler names, in file order (reign 1 first)."""
        return [sp.ruler for sp in self.specs]

    def reign_index(self, ruler) -> int:
        """Return the 1-based reign of a ruler given by name, key or number."""
        if isinstance(ruler, (int, np.integer)):
            if 1 <= int(ruler) <= len(self.specs):
                return int(ruler)
        else:
            low = str(ruler).strip().lower()
            for i, sp in enumerate(self.specs):
                if low in (sp.ruler.lower(), sp.key.lower()):
                    return i + 1
        raise ParameterError(f"no ruler {ruler!r} in {self.name} (rulers: {', '.join(self.rulers())})")

    # ------------------------------------------------------- arithmetic
    def months_in_year(self, year):
        return self.base.months_in_year(as_int_array(year))

    def month_length(self, reign, year, *month):
        """Days of a month (fields month, or month and leap) of regnal ``year`` of ``reign`` (0 where unknown)."""
        r, y, *mf = np.broadcast_arrays(as_int_array(reign), as_int_array(year), *(as_int_array(v) for v in month))
        out = np.zeros(r.shape, dtype=np.int64)
        for rg in self._ready()["reigns"]:
            sel = r == rg.index + 1
            if rg.resolved and np.any(sel):
                ms = [v[sel] for v in mf]
                out[sel] = self.base.month_length(rg.count.base_year(y[sel], *ms, 1), *ms)
        return out

    def _reign_arrays(self, reign, year, *inner):
        return np.broadcast_arrays(*(as_int_array(v) for v in (reign, year) + tuple(inner)))

    def is_valid(self, reign, year, *inner):
        r, y, *inn = self._reign_arrays(reign, year, *inner)
        ok = np.zeros(r.shape, dtype=bool)
        first = self._first_inner()
        for rg in self._ready()["reigns"]:
            sel = r == rg.index + 1
            if not rg.resolved or not np.any(sel):
                continue
            ys, parts = y[sel], [v[sel] for v in inn]
            good = np.asarray(self.base.is_valid(rg.count.base_year(ys, *parts), *parts), dtype=bool)
            good &= ys >= rg.first_year
            j = rg.count.to_jdn(ys, *(np.where(good, v, f) for v, f in zip(parts, first)))
            good &= (j >= rg.start) & (j < rg.upper)
            ok[sel] = good
        return ok

    def _invalid_reason(self, reign, year, *inner):
        s = self._ready()
        if not 1 <= reign <= len(self.specs):
            return f"reign {reign} does not exist in {self.name} (reigns 1..{len(self.specs)}: {', '.join(self.rulers())})"
        rg = s["reigns"][reign - 1]
        who = rg.spec.ruler
        if not rg.resolved:
            root = rg.root
            owner = next(r for r in s["reigns"] if r.free is root)
            what = (f"the accession of {who} is uncertain" if owner is rg else
                    f"the reign of {who} follows the uncertain accession of {owner.spec.ruler}")
            return (f"{what} (between {self._jtext(root.lo_jdn)} and {self._jtext(root.hi_jdn)}, free epoch "
                    f"{root.name}): fix it with the option {self.name}[{owner.spec.key}=DATE] or use "
                    "regnal_interval()")
        if year < rg.first_year:
            if rg.first_year == 1:
                return (f"{who} has no year {year}: {self.name} counts non-accession years (year 1 begins at the "
                        "accession)" if year == 0 else f"{who} has no year {year} (regnal years start at 1)")
            return f"{who} has no year {year}: regnal years start with the accession year 0"
        by = int(rg.count.base_year(year, *inner))
        reason = self.base._invalid_reason(by, *inner)
        if reason or not bool(np.asarray(self.base.is_valid(by, *inner))):
            return f"year {year} of {who} (= {self.base.label} year {by}): {reason or 'date does not exist'}"
        j = int(rg.count.to_jdn(year, *inner))
        if j < rg.start:
            return (f"{self._text(reign, year, *inner)} is before the accession of {who} "
                    f"({self._jtext(rg.start)}, day {rg.start})")
        if j >= rg.upper:
            length = f"{rg.spec.length} recorded years" if rg.spec.length else "no recorded length"
            return (f"{self._text(reign, year, *inner)} is after the reign of {who} ({length}; the days it "
                    f"names end on {self._jtext(rg.upper - 1)})")
        return None

    def _to_jdn(self, reign, year, *inner):
        r, y, *inn = self._reign_arrays(reign, year, *inner)
        out = np.zeros(r.shape, dtype=np.int64)
        for rg in self._ready()["reigns"]:
            sel = r == rg.index + 1
            if rg.resolved and np.any(sel):
                out[sel] = rg.count.to_jdn(y[sel], *(v[sel] for v in inn))
        return out

    def _from_jdn(self, jdn):
        s = self._ready()
        j = as_int_array(jdn)
        f = self.base.from_jdn(j)
        by, *inner = (as_int_array(f[k]) for k in self.base.fields)
        k = np.clip(np.searchsorted(s["starts"], j, side="right") - 1, 0, max(len(s["starts"]) - 1, 0))
        idx = s["order"][k]
        reigns = s["reigns"]
        offset = np.array([r.count.offset if r.resolved else 0 for r in reigns], dtype=np.int64)[idx]
        first = self._first_inner()
        starts = np.array([r.count.inner if r.resolved else first for r in reigns], dtype=np.int64)[idx]
        # Days before the reign's year start belong to the year before.
        before = _earlier(inner, [starts[..., col] for col in range(starts.shape[-1])])
        year = by - before - offset
        return (idx + 1, year, *inner)

    def year_start_jdn(self, reign, year=None):
        """Day number of the first day of regnal ``year`` of ``reign`` (default: the reign's first day)."""
        s = self._ready()
        rg = s["reigns"][self.reign_index(int(reign)) - 1]
        if not rg.resolved:
            raise InvalidDateError(self._invalid_reason(rg.index + 1, 1, *self._first_inner()), self.name)
        if year is None:
            return np.int64(rg.start)
        return np.maximum(rg.count.year_start(year), rg.start)

    # ------------------------------------------------------------- text
    def _text(self, reign, year, *inner) -> str:
        who = self.specs[reign - 1].ruler
        yr = "accession year" if year == 0 else f"year {year}"
        return f"{yr} of {who}, {self._inner_words(inner)}"

    def format(self, reign, year, *inner, style: str = "iso") -> str:
        r, y = int(reign), int(year)
        who = self.specs[r - 1].ruler
        if style == "iso":
            return f"{who}, year {y}, {self._inner_text(inner)}"
        if style == "long":
            text = self._text(r, y, *inner)
            length = self.specs[r - 1].length
            if length is not None and y > length:
                text += f" (beyond the recorded {length} years)"
            return text
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def parse(self, text: str):
        """Read ``year 7 of Tarsenel I, Phaophi 14``, ``Tarsenel I, year 7, 02-14``, ``accession year of X, ...``."""
        s = re.sub(r"\([^)]*\)", " ", text)       # remarks in parentheses
        found = None
        names = sorted(((n, i) for i, sp in enumerate(self.specs) for n in (sp.ruler, sp.key)),
                       key=lambda t: -len(t[0]))
        for n, i in names:
            m = re.search(r"(?<!\w)" + re.escape(n) + r"(?!\w)", s, flags=re.I)
            if m:
                found = i + 1
                s = s[:m.start()] + " " + s[m.end():]
                break
        if found is None:
            raise DateParseError(f"cannot read {text!r} as a {self.name} date: no ruler named "
                                 f"(rulers: {', '.join(self.rulers())})")
        s = re.sub(r"(?i)\baccession\s+year\b", " year 0 ", s)
        leap_form = None
        if self.has_leap:           # ``12L-03`` (a day of a leap month) is read before the words
            m = re.search(r"(?<![\w-])(\d{1,2})L-(\d{1,2})(?!\w)", s, flags=re.I)
            if m:
                leap_form = (int(m.group(1)), 1, int(m.group(2)))
                s = s[:m.start()] + " " + s[m.end():]
        reader = Reader(s, self.name, fillers=("of", "the", "in", "on", "and", "regnal", "reign"))
        year = reader.take_keyword_number(("year", "yr"))
        if year is None:
            raise reader.fail("give the regnal year ('year 7 of ...' or 'accession year of ...')")
        if leap_form is not None:
            if reader.tokens:
                raise reader.fail(f"unexpected {reader.tokens[0].raw!r}")
            return (found, int(year)) + leap_form
        return (found, int(year)) + tuple(self._read_inner(reader))


def _remove_phrase(text: str, phrase: str) -> str:
    if not phrase:
        return text
    return re.sub(r"(?i)(?<!\w)" + r"\s+".join(re.escape(w) for w in phrase.split()) + r"(?!\w)", " ", text)


def _bounds(value, lookup, fail) -> tuple[int, int]:
    from calendra import julian_gregorian as jg

    if not isinstance(value, (list, tuple)) or len(value) != 2:
        raise fail("accession_between", f"expected two dates or two Julian years, got {value!r}")
    out = []
    for k, v in enumerate(value):
        if isinstance(v, bool) or not isinstance(v, (int, str)):
            raise fail("accession_between", f"{v!r} is neither a date text nor a Julian year")
        if isinstance(v, int):
            out.append(int(jg.julian_to_jdn(v, 1, 1)) if k == 0 else int(jg.julian_to_jdn(v, 12, 31)))
            continue
        try:
            out.append(_date_to_jdn(v, lookup))
        except _Deferred:
            raise
        except CalendraError as exc:
            raise fail("accession_between", f"{v!r}: {exc}") from None
    if out[0] > out[1]:
        raise fail("accession_between", f"the first bound ({value[0]!r}) is after the second ({value[1]!r})")
    return out[0], out[1]


# ----------------------------------------------------------- file reading
_ERA_KEYS = {"name": str, "title": str, "abbreviation": str, "aliases": list, "description": str, "epoch": str,
             "year_start": str, "calendar": str, "counting": str, "note": str}
_DYNASTY_KEYS = {"name": str, "title": str, "aliases": list, "description": str, "year_start": str,
                 "calendar": str, "counting": str, "reign": list, "note": str}
_REIGN_KEYS = {"ruler": str, "key": str, "accession": str, "accession_year": int, "accession_between": list,
               "length": int, "note": str}


def _check_table(table, allowed, required, path, where):
    if not isinstance(table, dict):
        raise EraFileError(path, where, f"expected a table, got {type(table).__name__}")
    for key, value in table.items():
        if key not in allowed:
            raise EraFileError(path, where, f"unknown key {key!r} (allowed: {', '.join(allowed)})")
        want = allowed[key]
        if want is int and (isinstance(value, bool) or not isinstance(value, int)):
            raise EraFileError(path, f"{where}, key {key!r}", f"expected a whole number, got {value!r}")
        if want is not int and not isinstance(value, want):
            raise EraFileError(path, f"{where}, key {key!r}", f"expected {want.__name__}, got {value!r}")
    for key in required:
        if key not in table:
            raise EraFileError(path, where, f"missing key {key!r}")
    name = table.get("name")
    if name is not None and not _NAME_RE.match(name):
        raise EraFileError(path, f"{where}, key 'name'", f"{name!r}: use lower-case letters, digits, '-', '_' or '.' "
                                                         "(a calendar name)")


def _reign_specs(data, path, where) -> list[ReignSpec]:
    reigns = data.get("reign", [])
    if not reigns:
        raise EraFileError(path, where, "no [[dynasty.reign]] entries")
    specs, keys = [], set()
    for i, t in enumerate(reigns, start=1):
        w = f"{where}, reign {i}"
        _check_table(t, _REIGN_KEYS, ("ruler",), path, w)
        w = f"{where}, reign {i} ({t['ruler']})"
        given = [k for k in ("accession", "accession_year", "accession_between") if k in t]
        if len(given) > 1:
            raise EraFileError(path, w, f"give only one of {', '.join(given)}")
        if "length" in t and t["length"] < 1:
            raise EraFileError(path, f"{w}, key 'length'", f"a reign lasts at least one year, got {t['length']}")
        key = t.get("key") or _slug(t["ruler"])
        if key in keys:
            raise EraFileError(path, f"{w}, key 'key'", f"{key!r} is used by another reign of this dynasty")
        keys.add(key)
        between = tuple(t["accession_between"]) if "accession_between" in t else None
        specs.append(ReignSpec(t["ruler"], key, w, t.get("accession"), t.get("accession_year"), between,
                               t.get("length"), t.get("note", "")))
    return specs


def load_eras(path, _registering: bool = False, calendars=()) -> list[Calendar]:
    """Read an era file and return its eras and dynasties as calendars.

    Parameters
    ----------
    path : str or path-like
        A TOML file in the format of the module docstring.
    calendars : sequence of Calendar, optional
        Further calendars the file may name (e.g. lunisolar calendars read
        from a file of their own), looked up before the installed ones.

    Returns
    -------
    list of Calendar
        :class:`EraCalendar` and :class:`DynastyCalendar` objects, in file
        order (not registered; see :func:`register_eras`).

    Raises
    ------
    EraFileError
        With one line naming the file, the table and the key at fault.
    """
    global _REGISTERING
    path = os.fspath(path)
    try:
        with open(path, "rb") as fh:
            doc = tomllib.load(fh)
    except FileNotFoundError:
        raise EraFileError(path, "file", "not found") from None
    except OSError as exc:
        raise EraFileError(path, "file", f"cannot be read: {exc.strerror or exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise EraFileError(path, "TOML syntax", str(exc)) from None
    extra = set(doc) - {"about", "era", "dynasty"}
    if extra:
        raise EraFileError(path, "top level", f"unknown table or key {sorted(extra)[0]!r} (allowed: about, era, dynasty)")
    if not doc.get("era") and not doc.get("dynasty"):
        raise EraFileError(path, "top level", "no [[era]] or [[dynasty]] tables")
    saved, _REGISTERING = _REGISTERING, _registering
    try:
        lookup = _Lookup(extra=calendars)
        out: list[Calendar] = []
        names: set[str] = set()
        for kind, cls, allowed, required in (("era", EraCalendar, _ERA_KEYS, ("name", "epoch", "year_start")),
                                             ("dynasty", DynastyCalendar, _DYNASTY_KEYS,
                                              ("name", "year_start", "reign"))):
            tables = doc.get(kind, [])
            if not isinstance(tables, list):
                raise EraFileError(path, kind, f"write [[{kind}]] (an array of tables)")
            for i, table in enumerate(tables, start=1):
                where = f"[[{kind}]] #{i}"
                _check_table(table, allowed, required, path, where)
                where = f"[[{kind}]] {table['name']!r}"
                if table["name"] in names:
                    raise EraFileError(path, f"{where}, key 'name'", "used twice in this file")
                names.add(table["name"])
                cal = cls(table, path, where, lookup)
                try:
                    cal._state = cal._resolve(lookup)
                except _Deferred:
                    cal._lookup = None      # resolved through the process host on first use
                lookup.add(cal)
                out.append(cal)
        return out
    finally:
        _REGISTERING = saved


def register_eras(path, host=None) -> list[str]:
    """Load an era file and add its calendars to ``host`` (default: the process host); return their names."""
    from calendra.pluginmanager import get_host

    host = host or get_host()
    added = []
    for cal in load_eras(path):
        if host.calendars.add(cal, "eras"):
            added.append(cal.name)
        else:
            raise ParameterError(host.calendars.clashes[-1][1])
    return added


def calendars_from_environment(environ=None) -> tuple[list, list[str]]:
    """Load the era files listed in ``CALENDRA_ERAS``; return (calendars, one-line problems)."""
    environ = os.environ if environ is None else environ
    paths = [p for p in environ.get(ENV_VAR, "").split(os.pathsep) if p.strip()]
    cals, problems = [], []
    for p in paths:
        try:
            cals.extend(load_eras(p, _registering=True))
        except CalendraError as exc:
            problems.append(str(exc))
    return cals, problems


def regnal_interval(calendar, ruler, year: int, month: int | None = None, day: int | None = None,
                    host=None, leap: int = 0) -> RegnalInterval:
    """Return the day numbers on which "year ``year`` of ``ruler``" (or a day of it) can fall.

    For a reign whose start is fixed the interval is exact: the days of the
    regnal year (clipped to the accession), or the single day when month and
    day are given.  For a reign that depends on an uncertain accession
    (:class:`FreeEpoch`) it is the envelope over the epoch's bounds: regnal
    dates move monotonically with the accession, so the earliest day is
    reached at the lower bound and the latest at the upper.

    Parameters
    ----------
    calendar : DynastyCalendar or str
        The dynasty (or its registered name).
    ruler : str or int
        Ruler name, key or 1-based reign number.
    year : int
        Regnal year (0 = accession year under accession-year counting).
    month, day : int, optional
        A day of that year in the dynasty's calendar.
    leap : int, optional
        1 for a day of a leap month (dynasties over a lunisolar calendar only).

    Returns
    -------
    RegnalInterval
        ``(lo_jdn, hi_jdn, free)``, inclusive day numbers.
    """
    if isinstance(calendar, str):
        from calendra.pluginmanager import get_host

        calendar = (host or get_host()).calendars.get(calendar)
    if not isinstance(calendar, DynastyCalendar):
        raise ParameterError(f"regnal_interval needs a dynasty calendar, not {getattr(calendar, 'label', calendar)!r}")
    if (month is None) != (day is None):
        raise ParameterError("give both month and day, or neither")
    if leap and not calendar.has_leap:
        raise ParameterError(f"{calendar.name} has no leap months (its calendar is {calendar.base.label})")
    reign = calendar.reign_index(ruler)
    rg = calendar._ready()["reigns"][reign - 1]
    root = rg.root
    if root is not None:
        owner = next(r for r in calendar._ready()["reigns"] if r.free is root)
        if owner.spec.key in calendar._fixes:
            root = None
    variants = [calendar] if root is None else [calendar.with_options(**{owner.spec.key: v})
                                                 for v in (root.lo_jdn, root.hi_jdn)]
    lo, hi = None, None
    for cal in variants:
        r = cal._ready()["reigns"][reign - 1]
        if not r.resolved:
            raise InvalidDateError(cal._invalid_reason(reign, year, *cal._first_inner()), cal.name)
        if year < r.first_year:
            raise InvalidDateError(cal._invalid_reason(reign, year, *cal._first_inner()), cal.name)
        if month is None:
            first = max(int(r.count.year_start(year)), r.start)
            last = int(r.count.year_start(year + 1)) - 1
        else:
            inner = (month, leap, day) if cal.has_leap else (month, day)
            by = int(r.count.base_year(year, *inner))
            if not bool(np.asarray(cal.base.is_valid(by, *inner))):
                raise InvalidDateError(cal._invalid_reason(reign, year, *inner), cal.name)
            first = last = int(r.count.to_jdn(year, *inner))
        lo = first if lo is None else min(lo, first)
        hi = last if hi is None else max(hi, last)
    return RegnalInterval(int(lo), int(hi), rg.root if root is not None else None)

