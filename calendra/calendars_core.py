"""The calendars of the core: proleptic Julian and Gregorian, the western
civil calendar with a selectable reform date, and plain day counts.

These are registered through the same ``calendra_calendars`` hook as every
plugin calendar (the plugin manager registers this module as the ``core``
plugin).  Years are astronomical (year 0 = 1 BC); the long text form writes
BC/AD years.
"""

from __future__ import annotations

import re

import numpy as np

from . import julian_gregorian as jg
from .calendar import Calendar, SolarCalendar, historical_year, iso_year, parse_ymd_text
from .daylib import as_int_array
from .errors import DateParseError, InvalidDateError, ParameterError
from .hookspecs import hookimpl

MONTH_NAMES = ("January", "February", "March", "April", "May", "June", "July",
               "August", "September", "October", "November", "December")

ASTRONOMICAL_YEARS = "astronomical (year 0 = 1 BC, -1 = 2 BC); long form BC/AD"


class _JulianGregorianBase(SolarCalendar):
    month_names = MONTH_NAMES
    year_numbering = ASTRONOMICAL_YEARS
    #: "1957 Oct 4.81" is read as a day with a fraction (Meeus' notation).
    accepts_decimal_day = True

    def format(self, year, month, day, style: str = "iso") -> str:
        y, m, d = int(year), int(month), int(day)
        if style == "iso":
            return f"{iso_year(y)}-{m:02d}-{d:02d}"
        if style in ("long", "BC"):
            return f"{d} {MONTH_NAMES[m - 1]} {historical_year(y, 'BC')}"
        if style == "BCE":
            return f"{d} {MONTH_NAMES[m - 1]} {historical_year(y, 'BCE')}"
        raise ParameterError(f"unknown date style {style!r} (iso, long, BCE)")

    def parse(self, text: str):
        return parse_ymd_text(text, MONTH_NAMES, self.name)

    def day_of_year(self, year, month, day):
        """Return the day of the year, 1 = January 1."""
        return jg.day_of_year(year, month, day, self.is_leap)

    #: Fused conversion + validation kernel (set by the proleptic calendars).
    _checked = None

    def to_jdn(self, *fields, **named):
        if self._checked is None:
            return super().to_jdn(*fields, **named)
        values = self._gather(fields, named)
        jdn, ok = type(self)._checked(*values)
        if not np.all(ok):
            self._raise_invalid(values, ~ok)
        return jdn

    def is_valid(self, year, month, day):
        if self._checked is None:
            return super().is_valid(year, month, day)
        return type(self)._checked(year, month, day)[1]


class JulianCalendar(_JulianGregorianBase):
    """The proleptic Julian calendar: a leap year every fourth year, with no exceptions."""

    name = "julian"
    aliases = ("jul", "old-style", "os")
    description = ("Proleptic Julian calendar, leap year every 4 years; before AD 8 a convention, "
                   "not Roman practice")
    epoch_jdn = 1721424
    _checked = staticmethod(jg.julian_to_jdn_checked)

    def is_leap(self, year):
        return jg.julian_is_leap(year)

    def month_length(self, year, month):
        return jg.month_length(year, month, jg.julian_is_leap)

    def _to_jdn(self, year, month, day):
        return jg.julian_to_jdn(year, month, day)

    def _from_jdn(self, jdn):
        return jg.julian_from_jdn(jdn)



class GregorianCalendar(_JulianGregorianBase):
    """The proleptic Gregorian calendar (century years leap only when divisible by 400)."""

    name = "gregorian"
    aliases = ("greg", "new-style", "ns")
    description = "Proleptic Gregorian calendar, extended before 1582 by the same rules"
    epoch_jdn = 1721426
    _checked = staticmethod(jg.gregorian_to_jdn_checked)

    def is_leap(self, year):
        return jg.gregorian_is_leap(year)

    def month_length(self, year, month):
        return jg.month_length(year, month, jg.gregorian_is_leap)

    def _to_jdn(self, year, month, day):
        return jg.gregorian_to_jdn(year, month, day)

    def _from_jdn(self, jdn):
        return jg.gregorian_from_jdn(jdn)

    def _invalid_reason(self, year, month, day):
        reason = super()._invalid_reason(year, month, day)
        if reason and month == 2 and day == 29:
            return f"February 29 does not exist in gregorian {year}; it does in julian {year}"
        return reason


#: Named reform dates: the first Gregorian day (proleptic Gregorian y, m, d).
REFORMS = {
    "rome": (1582, 10, 15),
    "france": (1582, 12, 20),
    "britain": (1752, 9, 14),
    "sweden": (1753, 3, 1),
    "russia": (1918, 2, 14),
    "greece": (1923, 3, 1),
}


def parse_reform(spec) -> int:
    """Return the day number of the first Gregorian day for a reform name or an ISO Gregorian date.

    ``spec`` is one of :data:`REFORMS` (``rome`` = 1582-10-15, ``britain`` =
    1752-09-14, ...), a Gregorian date ``YYYY-MM-DD`` naming the first
    Gregorian day, or an integer day number.
    """
    if isinstance(spec, (int, np.integer)):
        return int(spec)
    text = str(spec).strip().lower()
    if text in REFORMS:
        return int(jg.gregorian_to_jdn(*REFORMS[text]))
    m = re.fullmatch(r"(\d{3,4})-(\d{1,2})-(\d{1,2})", text)
    if not m:
        raise ParameterError(f"unknown reform {spec!r}: give one of {', '.join(REFORMS)} or the first "
                             "Gregorian day as YYYY-MM-DD")
    y, mo, d = (int(g) for g in m.groups())
    greg = GregorianCalendar()
    try:
        return int(greg.to_jdn(y, mo, d))
    except InvalidDateError as exc:
        raise ParameterError(f"reform date {spec!r}: {exc}") from None


class WesternCalendar(_JulianGregorianBase):
    """The civil calendar of the West: Julian up to the reform, Gregorian from it.

    The reform is the first Gregorian day (default 1582-10-15, which follows
    Julian 1582-10-04); the days skipped by the reform do not exist.  Option
    ``reform``: a name in :data:`REFORMS` or a Gregorian date.
    """

    name = "western"
    aliases = ("civil", "historical", "julian-gregorian")
    options = {"reform": "first Gregorian day: rome (1582-10-15), britain (1752-09-14), russia, greece, "
                         "... or YYYY-MM-DD"}

    def __init__(self, reform="rome"):
        self.reform_jdn = parse_reform(reform)
        self.options = {"reform": self._reform_date_text()}
        # Julian date of the last Julian day.
        self._last_julian = tuple(int(v) for v in jg.julian_from_jdn(self.reform_jdn - 1))
        self._first_greg = tuple(int(v) for v in jg.gregorian_from_jdn(self.reform_jdn))

    def _reform_date_text(self) -> str:
        y, m, d = (int(v) for v in jg.gregorian_from_jdn(self.reform_jdn))
        return f"{iso_year(y)}-{m:02d}-{d:02d}"

    @property
    def description(self):  # type: ignore[override]
        return (f"Julian calendar until {self._format_tuple(self._last_julian)}, Gregorian from "
                f"{self._format_tuple(self._first_greg)}; the default reading of a date with no calendar named")

    @staticmethod
    def _format_tuple(t):
        return f"{iso_year(t[0])}-{t[1]:02d}-{t[2]:02d}"

    @property
    def label(self):
        return self.name if self.reform_jdn == jg.GREGORIAN_REFORM_JDN else f"{self.name}[reform={self._reform_date_text()}]"

    def with_options(self, **options):
        extra = set(options) - {"reform"}
        if extra:
            raise ParameterError(f"calendar western takes option reform, not {', '.join(sorted(extra))}")
        return WesternCalendar(options.get("reform", "rome"))

    def _is_gregorian_date(self, year, month, day):
        y, m, d = (as_int_array(v) for v in (year, month, day))
        ry, rm, rd = self._first_greg
        return (y > ry) | ((y == ry) & ((m > rm) | ((m == rm) & (d >= rd))))

    def is_leap(self, year):
        y = as_int_array(year)
        ry = self._first_greg[0]
        return np.where(y > ry, jg.gregorian_is_leap(y),
                        np.where(y < ry, jg.julian_is_leap(y), jg.julian_is_leap(y) if self._first_greg[1] > 2
                                 else jg.gregorian_is_leap(y)))

    def month_length(self, year, month):
        # Length of the month as labelled (the reform month keeps its label range).
        y = as_int_array(year)
        m = as_int_array(month)
        return jg.month_length(y, m, self.is_leap)

    def is_valid(self, year, month, day):
        y, m, d = (as_int_array(v) for v in (year, month, day))
        ok = super().is_valid(y, m, d)
        greg = self._is_gregorian_date(y, m, d)
        # Labels in the gap: after the last Julian day but before the first Gregorian label.
        ly, lm, ld = self._last_julian
        after_last_julian = (y > ly) | ((y == ly) & ((m > lm) | ((m == lm) & (d > ld))))
        in_gap = ~greg & after_last_julian
        return ok & ~in_gap

    def _invalid_reason(self, year, month, day):
        if not bool(self.is_valid(year, month, day)):
            base = SolarCalendar._invalid_reason(self, year, month, day)
            if base is None:
                return (f"{iso_year(year)}-{month:02d}-{day:02d} does not exist in the western calendar: "
                        f"julian {self._format_tuple(self._last_julian)} is followed by gregorian "
                        f"{self._format_tuple(self._first_greg)} (reform option; julian: and gregorian: "
                        "prefixes name a calendar explicitly)")
            if month == 2 and day == 29:
                return base + f" (this calendar is {'gregorian' if year >= self._first_greg[0] else 'julian'} in {year})"
            return base
        return None

    def _to_jdn(self, year, month, day):
        greg = self._is_gregorian_date(year, month, day)
        return np.where(greg, jg.gregorian_to_jdn(year, month, day), jg.julian_to_jdn(year, month, day))

    def _from_jdn(self, jdn):
        g = jg.gregorian_from_jdn(jdn)
        j = jg.julian_from_jdn(jdn)
        use_g = jdn >= self.reform_jdn
        return tuple(np.where(use_g, a, b) for a, b in zip(g, j))

    def calendar_of(self, jdn) -> np.ndarray:
        """Return, for each day number, the name of the calendar in force ("julian" or "gregorian")."""
        return np.where(as_int_array(jdn) >= self.reform_jdn, "gregorian", "julian")


class DayCountCalendar(Calendar):
    """A plain count of days: one integer field."""

    fields = ("day",)
    year_numbering = "none (a continuous day count)"

    def __init__(self, name, offset, description, aliases=()):
        self.name = name
        self._offset = offset
        self.description = description
        self.aliases = aliases

    def is_valid(self, day):
        return np.ones(np.shape(day), dtype=bool)

    def _to_jdn(self, day):
        return as_int_array(day) + self._offset

    def _from_jdn(self, jdn):
        return (as_int_array(jdn) - self._offset,)

    def format(self, day, style: str = "iso") -> str:
        return f"{self.name.upper()} {int(day)}"

    def parse(self, text):
        m = re.fullmatch(r"\s*(?:" + re.escape(self.name) + r")?\s*([+-]?\d+)\s*", text, re.I)
        if not m:
            raise DateParseError(f"cannot read {text!r} as a {self.name} day number")
        return (int(m.group(1)),)


def core_calendars() -> list[Calendar]:
    """Return fresh instances of the core calendars."""
    return [
        JulianCalendar(),
        GregorianCalendar(),
        WesternCalendar(),
        DayCountCalendar("rd", 1721425, "Rata Die fixed day number (RD 1 = gregorian 0001-01-01), "
                         "Reingold & Dershowitz", aliases=("fixed",)),
        DayCountCalendar("jdn", 0, "Chronological Julian Day Number of the civil day (midnight to midnight)"),
    ]


@hookimpl
def calendra_calendars():
    return core_calendars()
