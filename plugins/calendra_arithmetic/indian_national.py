"""The Indian national calendar (Saka era), as adopted in 1957.

The year begins on 1 Chaitra = Gregorian 22 March, or 21 March when the
Gregorian year is leap; Chaitra has 30 days (31 in leap years), Vaishakha
to Bhadra 31, Ashvina to Phalguna 30.  Saka year ``y`` is leap when
Gregorian year ``y + 78`` is.  Saka 1 began on Gregorian (proleptic)
79-03-22; the rule is extended backwards unchanged, years continuous (year
0 precedes Saka 1).  The civil day runs from midnight.

References
----------
Calendar Reform Committee, *Report of the Calendar Reform Committee*
(Government of India, 1955); the rule as summarised in the *Explanatory
Supplement to the Astronomical Almanac* (1992), sec. 12.6.
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.daylib import as_int_array

from .base import MONTH_COLUMNS, ArithmeticCalendar, month_table

_COMMON = [30] + [31] * 5 + [30] * 6
_TABLE = month_table((_COMMON, range(1, 13)), ([31] + _COMMON[1:], range(1, 13)))
#: Days from 1 Vaishakha to the first of months 2..12 (index k + 1 for k = months after Vaishakha; 0 for Chaitra).
_AFTER_CHAITRA = np.array([0, 0, 31, 62, 93, 124, 155, 185, 215, 245, 275, 305], dtype=np.int64)
#: Day number of Gregorian March 22 of year 0; March 22 of year g is 365 g + g//4 - g//100 + g//400 after it.
_MARCH_22_YEAR_0 = int(jg.gregorian_to_jdn(0, 3, 22))
SAKA_OFFSET = 78


class IndianNationalCalendar(ArithmeticCalendar):
    """The Indian national (Saka) calendar: 1 Chaitra = 22 March (21 in Gregorian leap years).

    Day numbers are chronological JDNs; years continuous (year 0 precedes
    Saka 1 = AD 79/80); months 1 = Chaitra ... 12 = Phalguna; day begins at
    midnight.
    """

    name = "indian-national"
    aliases = ("saka", "indian-civil")
    description = ("Indian national calendar (Saka era): 1 Chaitra = Gregorian March 22 (21 in leap years), "
                   "leap with the Gregorian year y + 78; Calendar Reform Committee 1955")
    year_numbering = "Saka era, continuous (year 0 precedes Saka 1 = AD 79); long form 'Saka' for years >= 1"
    epoch_jdn = int(jg.gregorian_to_jdn(79, 3, 22))
    era = "Saka"
    era_words = ("Saka", "Śaka", "SE", "S.E.")
    month_names = ("Chaitra", "Vaishakha", "Jyaishtha", "Ashadha", "Shravana", "Bhadra", "Ashvina",
                   "Kartika", "Agrahayana", "Pausha", "Magha", "Phalguna")
    month_variants = {"Caitra": 1, "Vaisakha": 2, "Vaishakh": 2, "Jyeshtha": 3, "Jyaistha": 3, "Asadha": 4,
                      "Ashadh": 4, "Sravana": 5, "Shravan": 5, "Bhadrapada": 6, "Bhadra": 6, "Asvina": 7,
                      "Ashvin": 7, "Ashwin": 7, "Karttika": 8, "Kartik": 8, "Margashirsha": 9, "Agrahayan": 9,
                      "Pausa": 10, "Paush": 10, "Magh": 11, "Phalgun": 12}

    _offsets, _lengths = _TABLE

    def is_leap(self, year):
        """Return True where Gregorian year ``year + 78`` is leap (Chaitra then has 31 days)."""
        return jg.gregorian_is_leap(as_int_array(year) + SAKA_OFFSET)

    def _year_terms(self, year):
        # 1 Chaitra = Gregorian March 22 of g = y + 78, or March 21 when g is leap.
        g = year + SAKA_OFFSET
        q4, q100, q400 = g // 4, g // 100, g // 400
        leap = (g == 4 * q4) & ((g != 100 * q100) | (g == 400 * q400))
        return _MARCH_22_YEAR_0 + 365 * g + q4 - q100 + q400 - leap, leap * MONTH_COLUMNS

    def year_length(self, year):
        return 365 + self.is_leap(year)

    def _length_note(self, year, month):
        if month == 1:
            return f"Gregorian {year + SAKA_OFFSET} is {'' if bool(self.is_leap(year)) else 'not '}a leap year"
        return ""

    def _from_jdn(self, jdn):
        # The Saka year is that of the Gregorian year's March or the one before.
        guess = jg.gregorian_from_jdn(jdn)[0] - SAKA_OFFSET
        start, row = self._year_terms(guess)
        before = jdn < start
        if np.any(before):
            prev_start, prev_row = self._year_terms(guess - 1)
            start = start + before * (prev_start - start)
            row = row + before * (prev_row - row)
        chaitra = 30 + (row > 0)
        after = jdn - start - chaitra        # days since 1 Vaishakha (< 0 in Chaitra)
        # Months after Chaitra: five of 31 days, then six of 30 (from day 155); -1 in Chaitra.
        k = np.maximum(after // 31, (after - 5) // 30)
        day = after - _AFTER_CHAITRA[k + 1] + 1 + (k < 0) * chaitra
        return guess - before, k + 2, day
