"""The ISO 8601 week date: (year, week, weekday), weeks from Monday.

Week 1 of a year is the week (Monday to Sunday) that contains its first
Thursday, so that it holds 4 January; a year has 52 or 53 weeks.  Weekdays
are numbered 1 = Monday ... 7 = Sunday (ISO 8601; note that
:func:`calendra.daylib.weekday` numbers 0 = Sunday).  The years are those
of the proleptic Gregorian calendar, astronomical (year 0 = 1 BC); the day
runs from midnight.

References
----------
ISO 8601:2004, sec. 3.2.2 and 4.1.4 (week dates).
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), ch. 5 (``fixed-from-iso``, ``iso-from-fixed``).
"""

from __future__ import annotations

import re

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import Calendar, iso_year
from calendra.daylib import as_int_array
from calendra.errors import DateParseError, ParameterError

from .base import BlockwiseMixin, below, floor_divmod

ISO_WEEKDAYS = ("Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday")
_WEEK_RE = re.compile(r"^\s*([+-]?\d+)\s*-?\s*W(\d{1,2})\s*-?\s*([1-7])\s*$", re.I)
_LONG_RE = re.compile(r"^\s*([A-Za-z]+)\s*,?\s*week\s+(\d{1,2})\s*(?:of|,)?\s*([+-]?\d+)\s*$", re.I)


#: Day number of Gregorian 0001-01-04; 4 January of year y is 365 n + n//4 - n//100 + n//400 later (n = y - 1).
_JAN4_YEAR_1 = int(jg.gregorian_to_jdn(1, 1, 4))


def _week_terms(year):
    """Return (day number of the Monday of week 1, weekday 0..6 of 4 January (0 = Monday)) of ``year``."""
    n = year - 1
    jan4 = _JAN4_YEAR_1 + 365 * n + n // 4 - n // 100 + n // 400
    _, weekday0 = floor_divmod(jan4, 7)                  # 0 = Monday (JDN 0 was a Monday)
    return jan4 - weekday0, weekday0


def week1_monday(year) -> np.ndarray:
    """Return the day number of the Monday of ISO week 1 of ``year`` (the Monday on or before 4 January)."""
    return _week_terms(as_int_array(year))[0]


class IsoWeekCalendar(BlockwiseMixin, Calendar):
    """ISO 8601 week dates: (year, week 1..52/53, weekday 1 = Monday .. 7 = Sunday).

    Day numbers are chronological JDNs; years are proleptic Gregorian,
    astronomical (year 0 = 1 BC); day begins at midnight.  Text:
    ``2024-W03-2``; long form ``Tuesday, week 3 of 2024``.
    """

    name = "iso-week"
    aliases = ("iso", "iso8601-week")
    fields = ("year", "week", "weekday")
    description = "ISO 8601 week date (year, week, weekday 1 = Monday), proleptic Gregorian years; R&D ch. 5"
    year_numbering = "proleptic Gregorian, astronomical (year 0 = 1 BC)"
    epoch_jdn = int(jg.gregorian_to_jdn(1, 1, 1))      # 0001-W01-1 = Gregorian 0001-01-01 (a Monday)

    def weeks_in_year(self, year) -> np.ndarray:
        """Return 52 or 53: the weeks of ISO ``year``."""
        return 52 + self._long_year(as_int_array(year), _week_terms(as_int_array(year))[1])

    @staticmethod
    def _long_year(year, jan4_weekday0):
        # 53 weeks when 1 January is a Thursday (4 January a Sunday), or a Wednesday in a leap year.
        q100, q400 = year // 100, year // 400
        leap = ((year & 3) == 0) & ((year != 100 * q100) | (year == 400 * q400))
        return (jan4_weekday0 == 6) | ((jan4_weekday0 == 5) & leap)

    def year_start_jdn(self, year):
        """Return the day number of the Monday of week 1 of ``year``."""
        return week1_monday(year)

    def is_valid(self, year, week, weekday):
        y, w, d = np.broadcast_arrays(*(as_int_array(v) for v in (year, week, weekday)))
        return self._checked_to_jdn(y, w, d)[1]

    def _checked_to_jdn(self, year, week, weekday):
        monday, jan4_weekday0 = _week_terms(year)
        week0, day0 = week - 1, weekday - 1
        ok = below(day0, 7) & below(week0, 52 + self._long_year(year, jan4_weekday0))
        return monday + 7 * week0 + day0, ok

    def _invalid_reason(self, year, week, weekday):
        if not 1 <= weekday <= 7:
            return f"weekday {weekday} does not exist: ISO weekdays run 1 = Monday ... 7 = Sunday"
        weeks = int(self.weeks_in_year(year))
        if not 1 <= week <= weeks:
            return f"week {week} does not exist in ISO year {year}: it has {weeks} weeks"
        return None

    def _to_jdn(self, year, week, weekday):
        return self._checked_to_jdn(year, week, weekday)[0]

    def _from_jdn(self, jdn):
        # The ISO year is the Gregorian year of the Thursday of the day's week.
        _, weekday0 = floor_divmod(jdn, 7)
        thursday = jdn - weekday0 + 3
        year = jg.gregorian_from_jdn(thursday)[0]
        week = (thursday - jg.gregorian_to_jdn(year, 1, 1)) // 7 + 1
        return year, week, weekday0 + 1

    def format(self, year, week, weekday, style="iso"):
        """Write ``2024-W03-2`` (``iso``) or ``Tuesday, week 3 of 2024`` (``long``)."""
        y, w, d = int(year), int(week), int(weekday)
        if style == "iso":
            return f"{iso_year(y)}-W{w:02d}-{d}"
        if style == "long":
            return f"{ISO_WEEKDAYS[d - 1]}, week {w} of {y}"
        raise ParameterError(f"unknown date style {style!r} for {self.name} (iso, long)")

    def parse(self, text):
        """Read ``2024-W03-2``, ``2024W032``, ``2024 W03 2`` or ``Tuesday, week 3 of 2024``."""
        m = _WEEK_RE.match(text)
        if m:
            return int(m.group(1)), int(m.group(2)), int(m.group(3))
        m = _LONG_RE.match(text)
        if m:
            day = next((i + 1 for i, n in enumerate(ISO_WEEKDAYS) if n.lower().startswith(m.group(1).lower())
                        and len(m.group(1)) >= 2), None)
            if day is not None:
                return int(m.group(3)), int(m.group(2)), day
        raise DateParseError(f"cannot read {text!r} as an ISO week date: write e.g. 2024-W03-2 "
                             "(year, week, weekday 1 = Monday)")
