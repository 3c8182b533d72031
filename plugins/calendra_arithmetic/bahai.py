"""The Baháʼí (Badíʻ) calendar, arithmetic ("western") form.

Nineteen months of 19 days and the intercalary days Ayyám-i-Há (4, or 5
when the following February has a 29th day) before the last month, ʻAláʼ.
The year begins at Naw-Rúz, fixed here on Gregorian 21 March; year 1 of the
Badíʻ era (BE) began on 1844-03-21.  This is the calendar the Baháʼís of the
West followed until BE 171 (2014); since BE 172 Naw-Rúz is the day of the
vernal equinox at Tehran, which needs the ephemeris and is not this
calendar.

Fields are (year, month, day) with the year of the era (BE) and the month
numbered by its place in the year: 1 = Bahá ... 18 = Mulk, 19 =
Ayyám-i-Há, 20 = ʻAláʼ (Reingold & Dershowitz number Ayyám-i-Há 0 and
ʻAláʼ 19; their major cycle (Kull-i-Shayʼ, 361 years), cycle (Váḥid, 19
years) and year of the cycle are given by :meth:`BahaiArithmeticCalendar.vahid`).
Years are continuous (year 0 precedes BE 1).  The day begins at sunset: the
date given for civil day N began at sunset on day N-1.

References
----------
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), sec. 15.2 (``fixed-from-bahai``,
``bahai-from-fixed``, the western Baháʼí calendar).
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.daylib import as_int_array

from .base import MONTH_COLUMNS, ArithmeticCalendar, floor_divmod, month_table

#: Gregorian year in which BE 1 began.
GREGORIAN_OFFSET = 1843
#: Day number of Gregorian March 21 of year 0; March 21 of year g is 365 g + g//4 - g//100 + g//400 after it.
_MARCH_21_YEAR_0 = int(jg.gregorian_to_jdn(0, 3, 21))
AYYAM_I_HA = 19
ALA = 20


class BahaiArithmeticCalendar(ArithmeticCalendar):
    """The arithmetic (western) Baháʼí calendar: Naw-Rúz on Gregorian March 21.

    Fields (year BE, month 1..20, day): 1 = Bahá ... 18 = Mulk, 19 =
    Ayyám-i-Há (4 or 5 days), 20 = ʻAláʼ.  Day numbers are chronological
    JDNs; years continuous (year 0 precedes BE 1); the day begins at sunset.
    """

    name = "bahai-arithmetic"
    aliases = ("bahai-western", "badi-arithmetic")
    description = ("Baha'i (Badi') calendar, arithmetic western form: Naw-Ruz on Gregorian March 21, 19 x 19 "
                   "days + Ayyam-i-Ha (month 19, 4/5 days) before 'Ala (month 20); Reingold & Dershowitz 15.2")
    year_numbering = "Badi' era (BE 1 began 1844-03-21), continuous (year 0 precedes BE 1); long form 'BE'"
    day_start = "sunset"
    epoch_jdn = int(jg.gregorian_to_jdn(1844, 3, 21))
    era = "BE"
    era_words = ("BE", "B.E.", "Badi")
    month_names = ("Bahá", "Jalál", "Jamál", "ʻAẓamat", "Núr", "Raḥmat", "Kalimát", "Kamál", "Asmáʼ",
                   "ʻIzzat", "Mashíyyat", "ʻIlm", "Qudrat", "Qawl", "Masáʼil", "Sharaf", "Sulṭán", "Mulk",
                   "Ayyám-i-Há", "ʻAláʼ")
    month_variants = {"Ayyam i Ha": 19, "Ayyamiha": 19, "Intercalary days": 19, "Azamat": 4, "Rahmat": 6,
                      "Sultan": 17, "Masail": 15, "Asma": 9, "Izzat": 10, "Ilm": 12, "Ala": 20}

    _offsets, _lengths = month_table(([19] * 18 + [4, 19], range(1, 21)), ([19] * 18 + [5, 19], range(1, 21)))

    def is_leap(self, year):
        """Return True where Ayyám-i-Há has 5 days (Gregorian year ``year + 1844`` is leap)."""
        return jg.gregorian_is_leap(as_int_array(year) + GREGORIAN_OFFSET + 1)

    def _year_terms(self, year):
        # Naw-Ruz: Gregorian March 21 of g = y + 1843; Ayyam-i-Ha has 5 days when g + 1 is leap.
        g = year + GREGORIAN_OFFSET
        h = g + 1
        q100, q400 = h // 100, h // 400
        leap = ((h & 3) == 0) & ((h != 100 * q100) | (h == 400 * q400))
        start = _MARCH_21_YEAR_0 + 365 * g + g // 4 - g // 100 + g // 400
        return start, leap * MONTH_COLUMNS

    def year_length(self, year):
        return 365 + self.is_leap(year)

    def _length_note(self, year, month):
        if month == AYYAM_I_HA:
            return (f"it has 5 days when the following February has 29 days; Gregorian {year + GREGORIAN_OFFSET + 1} "
                    f"is {'' if bool(self.is_leap(year)) else 'not '}a leap year")
        return ""

    def _from_jdn(self, jdn):
        # The year is that of the Gregorian year's March or the one before.
        guess = jg.gregorian_from_jdn(jdn)[0] - GREGORIAN_OFFSET
        start, row = self._year_terms(guess)
        before = jdn < start
        if np.any(before):
            prev_start, prev_row = self._year_terms(guess - 1)
            start = start + before * (prev_start - start)
            row = row + before * (prev_row - row)
        doy = jdn - start
        ayyam = 4 + (row > 0)
        month, day = floor_divmod(doy, 19)
        # From day 342 on: Ayyam-i-Ha (month 19) then 'Ala (month 20).
        ala = doy >= 342 + ayyam
        month = month + ala * (ALA - 1 - month)
        day = day + ala * (doy - 342 - ayyam - day)
        return guess - before, month + 1, day + 1

    def vahid(self, year):
        """Return (Kull-i-Shayʼ, Váḥid, year of the Váḥid) of BE ``year``: 361-year and 19-year cycles from 1."""
        major, rest = floor_divmod(as_int_array(year) - 1, 361)
        cycle, y = floor_divmod(rest, 19)
        return major + 1, cycle + 1, y + 1

    def from_vahid(self, major, cycle, year):
        """Return the BE year of (Kull-i-Shayʼ, Váḥid, year of the Váḥid)."""
        return 361 * (as_int_array(major) - 1) + 19 * (as_int_array(cycle) - 1) + as_int_array(year)
