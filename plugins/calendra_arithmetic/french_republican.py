"""The French Republican calendar, arithmetic ("modified", Romme) rule.

Twelve months of 30 days (three decades each) and five or six
*sansculottides* (jours complémentaires, month 13).  Year I began on 1
Vendémiaire = Gregorian 1792-09-22 (RD 654415).  In this arithmetic form a
year is leap (six sansculottides) when ``y mod 4 = 0``, except when
``y mod 400`` is 100, 200 or 300, and except when ``y mod 4000 = 0`` - the
"modified" calendar of Reingold & Dershowitz, after Romme's proposal.

This is not the calendar as it was used: from 1792 to 1805 (and in 1871)
the year began on the day of the autumnal equinox at Paris, which made
years III, VII and XI leap; that rule needs the ephemeris and is not
implemented here.  The two differ in the years the calendar was in force
(the equinox made III, VII and XI leap, the arithmetic rule makes IV, VIII
and XII leap) and again in scattered years later on.  Years are continuous
(year 0 precedes year I); the day runs from midnight.

References
----------
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), sec. 17.3 (``fixed-from-arithmetic-french``,
``arithmetic-french-from-fixed``, ``arithmetic-french-leap-year?``).
"""

from __future__ import annotations

import re

from calendra.daylib import RD_EPOCH_JDN, as_int_array
from calendra.errors import DateParseError

from .base import MONTH_COLUMNS, EpagomenalCalendar, floor_divmod
from .textforms import from_roman, to_roman, year_with_era

#: Day number of 1 Vendémiaire an I = Gregorian 1792-09-22 (RD 654415).
FRENCH_EPOCH_JDN = 654415 + RD_EPOCH_JDN

#: Names of the days of the sansculottides.
SANSCULOTTIDES = ("jour de la Vertu", "jour du Génie", "jour du Travail", "jour de l'Opinion",
                  "jour des Récompenses", "jour de la Révolution")


class FrenchArithmeticCalendar(EpagomenalCalendar):
    """The French Republican calendar with the arithmetic leap rule (4/100/400/4000).

    Day numbers are chronological JDNs; years continuous (year 0 precedes
    an I); months 1 = Vendémiaire ... 12 = Fructidor, 13 = sansculottides;
    day begins at midnight.  The long form writes the year in Roman numerals
    (``18 Brumaire an VIII``).
    """

    name = "french-arithmetic"
    aliases = ("french-modified", "french-republican-arithmetic")
    description = ("French Republican calendar, arithmetic leap rule (y mod 4 = 0 except y mod 400 in "
                   "{100, 200, 300} and y mod 4000 = 0), an I = 1792-09-22; 'modified' rule of Reingold & "
                   "Dershowitz (the historical equinox rule is not this)")
    year_numbering = "years of the Republic, continuous (year 0 precedes an I); long form 'an' + Roman numeral"
    epoch_jdn = FRENCH_EPOCH_JDN
    mean_year = 365.24225
    era_words = ("an", "an.", "l'an")
    leap_rule_text = ("leap when year mod 4 = 0, except year mod 400 in {100, 200, 300} and year mod 4000 = 0 "
                      "(arithmetic rule)")
    month_names = ("Vendémiaire", "Brumaire", "Frimaire", "Nivôse", "Pluviôse", "Ventôse", "Germinal",
                   "Floréal", "Prairial", "Messidor", "Thermidor", "Fructidor", "Sansculottides")
    month_variants = {"jours complémentaires": 13, "jour complémentaire": 13, "complementaires": 13,
                      "sans-culottides": 13, "Sanculottides": 13}

    def is_leap(self, year):
        """Return True where ``year`` has six sansculottides under the arithmetic rule."""
        y = as_int_array(year)
        _, r4 = floor_divmod(y, 4)
        _, r400 = floor_divmod(y, 400)
        _, r4000 = floor_divmod(y, 4000)
        return (r4 == 0) & (r400 != 100) & (r400 != 200) & (r400 != 300) & (r4000 != 0)

    def leap_days_before(self, year):
        """Leap years among 1 .. year-1: ``n//4 - n//100 + n//400 - n//4000`` with ``n = year - 1``."""
        n = as_int_array(year) - 1
        return n // 4 - n // 100 + n // 400 - n // 4000

    def _year_terms(self, year):
        # The leap flag as the difference of two leap counts: cheaper than the rule's remainders.
        start = self.year_start_jdn(year)
        leap = year // 4 - year // 100 + year // 400 - year // 4000 - self.leap_days_before(year)
        return start, leap * MONTH_COLUMNS

    def format(self, year, month, day, style="iso"):
        """Write a date: ``iso`` ``0008-02-18``; ``long`` ``18 Brumaire an VIII`` (Roman numerals for
        years 1..3999, ``an 4000`` beyond, the bare signed number for years before an I)."""
        if style != "long":
            return super().format(year, month, day, style)
        y, m, d = int(year), int(month), int(day)
        year_text = f"an {to_roman(y)}" if 1 <= y <= 3999 else year_with_era(y, "an")
        if m == 13:
            return f"{d} Sansculottides ({SANSCULOTTIDES[d - 1]}) {year_text}"
        return f"{d} {self.month_names[m - 1]} {year_text}"

    def parse(self, text):
        """Read ``8-02-18``, ``18 Brumaire an VIII``, ``18 Brumaire 8``, ``3 Sansculottides an II``."""
        cleaned = re.sub(r"\([^)]*\)", " ", text)

        def roman(match):
            value = from_roman(match.group(2))
            if value is None:
                raise DateParseError(f"{text!r}: {match.group(2)!r} is not a Roman numeral")
            return f"{match.group(1)} {value}"

        cleaned = re.sub(r"(?i)\b(an\.?)\s+([IVXLCDM]+)\b", roman, cleaned)
        return super().parse(cleaned)
