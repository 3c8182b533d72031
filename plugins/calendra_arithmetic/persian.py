"""The arithmetic Persian (Solar Hijri) calendar: Birashk's 2820-year cycle, or the 33-year rule.

Months 1-6 (Farvardin ... Shahrivar) have 31 days, 7-11 (Mehr ... Bahman)
30, Esfand 29 or 30 in leap years.  Year 1 begins on 1 Farvardin = Julian
622-03-19 (RD 226896).  Which years are leap is chosen by the option
``rule``:

* ``2820`` (default): the cycle of 2820 years with 683 leap years proposed by
  A. Birashk, as "arithmetic Persian" in Reingold & Dershowitz, 3rd ed.
  (year ``y`` is leap when ``((y' + 38) 31) mod 128 < 31`` with
  ``y' = (y - 474) mod 2820 + 474``);
* ``33``: leap when ``y mod 33`` is one of 1, 5, 9, 13, 17, 22, 26, 30 (the
  33-year approximation used, e.g., by the Windows Persian calendar).  Counted
  back to year 1 as its implementations count it (1 Farvardin 1381 =
  Gregorian 2002-03-21, the example of Microsoft's documentation), it puts 1
  Farvardin 1 on Julian 622-03-18, one day before the epoch of the 2820-year
  cycle.

Neither is the official calendar of Iran, whose year begins on the day of
the vernal equinox reckoned at the Tehran (52.5 deg E) meridian; that rule
needs the ephemeris and is not implemented here.  The arithmetic rules
agree with it over most of the modern era and differ from it by one day in
some years.

Years are continuous: year 0 precedes year 1 (Reingold & Dershowitz count
Persian years without a year 0: their year -1 is year 0 here, their -n is
-n + 1).  The civil day runs from midnight.

References
----------
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), sec. 14.4 (``fixed-from-arithmetic-persian``,
``arithmetic-persian-year-from-fixed``).
Microsoft, Windows.Globalization ``CalendarIdentifiers.Persian``
documentation (leap years of the 33-year rule).
"""

from __future__ import annotations

import numpy as np

from calendra.daylib import RD_EPOCH_JDN

from .base import MONTH_COLUMNS, ArithmeticCalendar, OptionsMixin, floor_divmod, month_table, parse_choice_option

#: Day number of 1 Farvardin 1 = Julian 622-03-19 (RD 226896).
PERSIAN_EPOCH_JDN = 226896 + RD_EPOCH_JDN
#: Day number of 1 Farvardin 1 under the 33-year rule (Julian 622-03-18), see the module docstring.
PERSIAN_33_EPOCH_JDN = PERSIAN_EPOCH_JDN - 1
#: Days of the 2820-year cycle.
CYCLE_2820_DAYS = 1029983
#: Days of the 33-year cycle (8 leap years).
CYCLE_33_DAYS = 33 * 365 + 8
_COMMON = [31] * 6 + [30] * 5 + [29]
_TABLE = month_table((_COMMON, range(1, 13)), (_COMMON[:11] + [30], range(1, 13)))
#: Days from 1 Farvardin to the first of each month (index = month - 1).
_MONTH_STARTS = np.array([0, 31, 62, 93, 124, 155, 186, 216, 246, 276, 306, 336], dtype=np.int64)
_RULES = {"2820": "2820", "birashk": "2820", "33": "33", "33-year": "33"}
LEAP_YEARS_33 = (1, 5, 9, 13, 17, 22, 26, 30)


class PersianArithmeticCalendar(OptionsMixin, ArithmeticCalendar):
    """The arithmetic Persian calendar (Solar Hijri), Birashk's 2820-year cycle or the 33-year rule.

    Option ``rule``: ``2820`` (default) or ``33``.  Day numbers are
    chronological JDNs; years continuous (year 0 precedes AP 1); months 1 =
    Farvardin ... 12 = Esfand; day begins at midnight.
    """

    name = "persian-arithmetic"
    aliases = ("persian-2820", "solar-hijri-arithmetic")
    year_numbering = "Anno Persico (Solar Hijri), continuous (year 0 precedes AP 1); long form 'AP' for years >= 1"
    epoch_jdn = PERSIAN_EPOCH_JDN
    era = "AP"
    era_words = ("AP", "A.P.", "SH", "HS", "Anno Persico")
    option_defaults = {"rule": "2820"}
    option_help = {"rule": "2820 (Birashk's 2820-year cycle, Reingold & Dershowitz 3rd ed.) or 33 "
                           "(leap when year mod 33 is 1, 5, 9, 13, 17, 22, 26 or 30)"}
    month_names = ("Farvardin", "Ordibehesht", "Khordad", "Tir", "Mordad", "Shahrivar", "Mehr", "Aban",
                   "Azar", "Dey", "Bahman", "Esfand")
    month_variants = {"Farvardīn": 1, "Ordibehesht": 2, "Ardibehesht": 2, "Khurdad": 3, "Khordād": 3,
                      "Amordad": 5, "Mordād": 5, "Shahrīvar": 6, "Shahriwar": 6, "Mihr": 7, "Ābān": 8,
                      "Āzar": 9, "Adhar": 9, "Day": 10, "Dei": 10, "Esfand": 12, "Esfandarmad": 12,
                      "Isfand": 12}

    _offsets, _lengths = _TABLE

    def __init__(self, rule="2820"):
        self.options = {"rule": parse_choice_option("rule", rule, _RULES, self.name)}
        self.epoch_jdn = PERSIAN_EPOCH_JDN if self.options["rule"] == "2820" else PERSIAN_33_EPOCH_JDN

    @property
    def description(self):  # type: ignore[override]
        if self.options["rule"] == "2820":
            return ("Persian (Solar Hijri) arithmetic calendar, Birashk's 2820-year cycle as in Reingold & "
                    "Dershowitz 3rd ed. (not the official equinox rule)")
        return ("Persian (Solar Hijri) arithmetic calendar, 33-year rule (leap when year mod 33 is 1, 5, 9, 13, "
                "17, 22, 26 or 30; 1 Farvardin 1 = Julian 622-03-18); not the official equinox rule")

    # ------------------------------------------------------------ arithmetic
    def _year_terms(self, year):
        if self.options["rule"] == "33":
            # Leap when (8 y + 29) mod 33 < 8 (= y mod 33 in {1, 5, 9, 13, 17, 22, 26, 30}); the leap
            # years among 1 .. y number floor((8 y + 29) / 33).
            count, r = floor_divmod(8 * year + 29, 33)
            leap = r < 8
            return self.epoch_jdn - 365 + 365 * year + count - leap, leap * MONTH_COLUMNS
        # Reingold & Dershowitz, fixed-from-arithmetic-persian: y0 = y - 474 (continuous years),
        # x = y0 mod 2820 + 474; leap when ((x + 38) 31) mod 128 < 31.
        cycles, x = floor_divmod(year - 474, 2820)
        x += 474
        _, r = floor_divmod((x + 38) * 31, 128)
        start = self.epoch_jdn + CYCLE_2820_DAYS * cycles + 365 * (x - 1) + (31 * x - 5) // 128
        return start, (r < 31) * MONTH_COLUMNS

    def year_length(self, year):
        return 365 + self.is_leap(year)

    def _length_note(self, year, month):
        if month == 12:
            kind = "leap" if bool(self.is_leap(year)) else "common"
            return f"{year} is a {kind} year under the {self.options['rule']}-year rule"
        return ""

    def _year_of_day(self, jdn):
        if self.options["rule"] == "33":
            cycles, r = floor_divmod(jdn - self.epoch_jdn, CYCLE_33_DAYS)
            # Year of the 33-year cycle: r // 366 or one more.
            k = r // 366
            year = 33 * cycles + k + 1
            return year + (self.year_start_jdn(year + 1) <= jdn)
        # Reingold & Dershowitz, arithmetic-persian-year-from-fixed (continuous years).
        d0 = jdn - self.year_start_jdn(475)
        n2820, d1 = floor_divmod(d0, CYCLE_2820_DAYS)
        y2820 = (128 * d1 + 46878) // 46751
        y2820 += (d1 == CYCLE_2820_DAYS - 1) * (2820 - y2820)
        return 474 + 2820 * n2820 + y2820

    def _from_jdn(self, jdn):
        year = self._year_of_day(jdn)
        doy = jdn - self.year_start_jdn(year)
        # Months 1-7 begin every 31 days, months 8-12 every 30 days from day 186.
        m = np.maximum(doy // 31, (doy - 6) // 30)
        day = doy - _MONTH_STARTS[m] + 1
        return year, m + 1, day
