"""Eras counted in Julian years that begin on a fixed day of the Julian calendar.

Ab Urbe Condita, the Byzantine Anno Mundi, the Seleucid era (as Julian
years), the Olympiads and the indiction cycle all name a day with an era
year and the *Julian* month and day.  What distinguishes them is the era's
first year and the day on which its years turn (1 January, 1 September,
1 October, 1 July...).  :class:`JulianYearCount` holds that arithmetic;
:class:`JulianEraCalendar` is the calendar base class of the three-field
eras (year, month, day).

Conventions
-----------
* Month and day are those of the proleptic Julian calendar (the civil day
  from midnight to midnight); before AD 8 that is a convention (see
  :mod:`calendra_eras.julian_roman` for the Roman leap years of 45 BC -
  AD 8).
* Era year 1 is the year that begins on the new-year day *nearest* to the
  era's reference date (so a reference of 1 September AD 312 with a new
  year on 1 January gives 1 January AD 313, and with 24 September gives
  24 September AD 312).
* An era year ``Y`` runs from the new-year day of Julian year ``E + Y - 1``
  to the day before the next one; days earlier in the Julian year than the
  new-year day belong to the era year that began in the previous Julian
  year.  Era years before year 1 continue the count backwards with a
  year 0 (astronomical style): they are proleptic.
"""

from __future__ import annotations

import re

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import SolarCalendar, iso_year
from calendra.calendars_core import MONTH_NAMES
from calendra.daylib import as_int_array
from calendra.errors import DateParseError, ParameterError

from ._text import Reader, month_lookup, normalize_phrases

JULIAN_MONTH = month_lookup(MONTH_NAMES, {"sept": 9})


def parse_month_day(text, what: str = "new_year") -> tuple[int, int]:
    """Read a Julian month and day: ``09-01``, ``1 September``, ``September 1`` or ``Sep 1``.

    Raises
    ------
    ParameterError
        If the text is not a month and day, or names 29 February (a day that
        does not occur every year cannot begin a year).
    """
    if isinstance(text, tuple):
        month, day = text
    else:
        s = str(text).strip()
        m = re.fullmatch(r"(\d{1,2})-(\d{1,2})", s)
        if m:
            month, day = int(m.group(1)), int(m.group(2))
        else:
            try:
                _, month, day = Reader(s, "julian").read_ymd(JULIAN_MONTH, need_year=False)
            except DateParseError:
                raise ParameterError(f"{what}={text!r}: give a Julian month and day as MM-DD or '1 September'") from None
    if not (1 <= month <= 12 and 1 <= day <= int(jg.month_length(1, month, jg.julian_is_leap))):
        raise ParameterError(f"{what}={text!r}: {MONTH_NAMES[month - 1] if 1 <= month <= 12 else 'month ' + str(month)} "
                             f"{day} is not a day of every Julian year")
    return int(month), int(day)


class JulianYearCount:
    """Era years made of Julian years that begin on a fixed Julian month and day.

    Parameters
    ----------
    reference_jdn : int
        A day number at (or near) the beginning of era year 1.
    new_year : tuple of int
        Julian (month, day) on which every era year begins; not 29 February.

    Attributes
    ----------
    first_julian_year : int
        Astronomical Julian year in which era year 1 begins: the year whose
        new-year day is nearest to ``reference_jdn``.
    """

    def __init__(self, reference_jdn: int, new_year=(1, 1)):
        self.new_year = parse_month_day(new_year)
        nm, nd = self.new_year
        ry = int(jg.julian_from_jdn(reference_jdn)[0])
        candidates = [ry - 1, ry, ry + 1]
        dist = [abs(int(jg.julian_to_jdn(c, nm, nd)) - reference_jdn) for c in candidates]
        self.first_julian_year = candidates[int(np.argmin(dist))]

    def before_new_year(self, month, day) -> np.ndarray:
        """True where Julian (month, day) comes before the new-year day within a Julian year."""
        nm, nd = self.new_year
        m = as_int_array(month)
        d = as_int_array(day)
        return (m < nm) | ((m == nm) & (d < nd))

    def julian_year(self, year, month, day) -> np.ndarray:
        """Return the astronomical Julian year of era date (year, month, day)."""
        return self.first_julian_year + as_int_array(year) - 1 + self.before_new_year(month, day)

    def to_jdn(self, year, month, day) -> np.ndarray:
        """Return day numbers of era dates (no validation)."""
        return jg.julian_to_jdn(self.julian_year(year, month, day), month, day)

    def from_jdn(self, jdn) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Return (era year, Julian month, Julian day) of day numbers."""
        jy, m, d = jg.julian_from_jdn(jdn)
        return jy - self.first_julian_year + 1 - self.before_new_year(m, d), m, d

    def month_length(self, year, month) -> np.ndarray:
        """Days of Julian ``month`` within era ``year`` (0 for months outside 1..12)."""
        jy = self.julian_year(year, month, 31)   # the month's last days decide which Julian year it is
        return jg.month_length(jy, month, jg.julian_is_leap)

    def is_valid(self, year, month, day) -> np.ndarray:
        y, m, d = (as_int_array(v) for v in (year, month, day))
        ok = (m >= 1) & (m <= 12)
        length = self.month_length(y, np.where(ok, m, 1))
        return ok & (d >= 1) & (d <= length)

    def invalid_reason(self, where: str, year: int, month: int, day: int) -> str | None:
        """Return a specific message if era date (year, month, day) does not exist, else None.

        ``where`` names the year in the message (e.g. ``"auc 754"``).
        """
        if not 1 <= month <= 12:
            return f"month {month} does not exist in {where} (Julian months 1..12)"
        length = int(self.month_length(year, month))
        if not 1 <= day <= length:
            jy = int(self.julian_year(year, month, day if 1 <= day <= 31 else 31))
            extra = ""
            if month == 2 and day == 29:
                extra = f" (its February falls in Julian year {iso_year(jy)}, not a leap year)"
            return (f"{MONTH_NAMES[month - 1]} {day} does not exist in {where}: "
                    f"{MONTH_NAMES[month - 1]} has {length} days{extra}")
        return None

    def year_start_jdn(self, year) -> np.ndarray:
        """Day number of the first day (the new-year day) of era ``year``."""
        nm, nd = self.new_year
        return jg.julian_to_jdn(self.first_julian_year + as_int_array(year) - 1, nm, nd)


class JulianEraCalendar(SolarCalendar):
    """Base class of the calendars ``era year, Julian month, Julian day``.

    Subclasses set ``name``, ``era_word`` (written before the year, e.g.
    ``"AUC"``), ``era_words`` (accepted spellings, lower case, without dots)
    and ``phrases`` (multi-word spellings), and create the
    :class:`JulianYearCount` in ``__init__``.
    """

    month_names = MONTH_NAMES
    day_start = "midnight"
    era_word = ""
    era_words: frozenset = frozenset()
    phrases: dict = {}

    def __init__(self, count: JulianYearCount):
        self.count = count

    # arithmetic
    def month_length(self, year, month):
        return self.count.month_length(year, month)

    def is_valid(self, year, month, day):
        return self.count.is_valid(year, month, day)

    def _invalid_reason(self, year, month, day):
        return self.count.invalid_reason(f"{self.label} {year}", year, month, day)

    def _to_jdn(self, year, month, day):
        return self.count.to_jdn(year, month, day)

    def _from_jdn(self, jdn):
        return self.count.from_jdn(jdn)

    def year_start_jdn(self, year):
        return self.count.year_start_jdn(year)

    def julian_year(self, year, month, day):
        """Return the astronomical Julian year in which era date (year, month, day) falls."""
        return self.count.julian_year(year, month, day)

    @property
    def epoch_jdn(self):  # type: ignore[override]
        return int(self.count.year_start_jdn(1))

    # text
    def format(self, year, month, day, style: str = "iso") -> str:
        y, m, d = int(year), int(month), int(day)
        if style == "iso":
            return f"{self.era_word} {iso_year(y)}-{m:02d}-{d:02d}"
        if style == "long":
            return f"{d} {MONTH_NAMES[m - 1]} {self.era_word} {y}"
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def parse(self, text: str):
        reader = Reader(normalize_phrases(text, self.phrases), self.name)
        _, pos = reader.take_word(lambda w: True if w.replace(".", "") in self.era_words else None)
        year = None
        if pos >= 0:
            tok = reader.number_at(pos)
            if tok is not None and tok.kind == "ymd":
                return tok.value
            if tok is not None and tok.kind == "num":
                year = int(tok.value)
            elif tok is not None:
                raise reader.fail(f"{tok.raw!r} after {self.era_word} is not a year")
        if year is None:
            year = reader.take_keyword_number(("year",))
        y, m, d = reader.read_ymd(JULIAN_MONTH, year=year)
        return int(y), int(m), int(d)
