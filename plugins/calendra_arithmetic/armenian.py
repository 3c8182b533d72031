"""The Armenian calendar: the vague year of 365 days (12 x 30 + 5 epagomenal), no leap years.

Like the Egyptian year it drifts one day every four Julian years.  The era
begins on 1 Nawasard 1 = Julian 552-07-11 (RD 201443).  Month 13 (Aweleacʿ)
holds the five epagomenal days.  The reform of Yovhannēs Sarkawag (a fixed
year with a sixth epagomenal day, from AD 1084) is not this calendar.

Years are continuous (year 0 precedes year 1, as in the tables of Reingold
& Dershowitz); the day is taken to run from midnight.

References
----------
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), sec. 1.9 (``fixed-from-egyptian``) and
1.10 (``fixed-from-armenian``: the Egyptian arithmetic with the Armenian epoch).
"""

from __future__ import annotations

import numpy as np

from calendra.daylib import RD_EPOCH_JDN

from .base import EpagomenalCalendar

#: Day number of 1 Nawasard 1 = Julian 552-07-11 (RD 201443).
ARMENIAN_EPOCH_JDN = 201443 + RD_EPOCH_JDN


class ArmenianCalendar(EpagomenalCalendar):
    """The Armenian vague year (365 days, no leap years), era from Julian 552-07-11.

    Day numbers are chronological JDNs; years continuous (year 0 exists);
    months 1 = Nawasard ... 12 = Hroticʿ, 13 = Aweleacʿ (5 epagomenal days);
    day begins at midnight here.
    """

    name = "armenian"
    aliases = ("armenian-vague",)
    description = ("Armenian calendar, vague year of 365 days (12 x 30 + 5 epagomenal, month 13), era "
                   "1 Nawasard 1 = Julian 552-07-11; Reingold & Dershowitz sec. 1.10")
    year_numbering = "Armenian era, continuous (year 0 precedes year 1 = AD 552/553)"
    epoch_jdn = ARMENIAN_EPOCH_JDN
    era_words = ("AE", "Armenian era")
    leap_rule_text = "the Armenian year has no leap years"
    month_names = ("Nawasard", "Hoṙi", "Sahmi", "Trē", "Kʿałocʿ", "Aracʿ", "Mehekan", "Areg", "Ahekan",
                   "Mareri", "Margacʿ", "Hroticʿ", "Aweleacʿ")
    month_variants = {"Navasard": 1, "Hori": 2, "Tre": 4, "Kaghots": 5, "Kaloc": 5, "Arats": 6,
                      "Margats": 11, "Hrotits": 12, "Aveleats": 13, "Aweleac": 13}

    def is_leap(self, year):
        """Always False: the vague year has 365 days."""
        return np.zeros(np.shape(year), dtype=bool)

    def leap_days_before(self, year):
        return np.zeros(np.shape(year), dtype=np.int64)

    def _days_before_year(self, year):
        return 365 * year

    def _days_in_year(self, year):
        return 365

    def _year_terms(self, year):
        return self.year_start_jdn(year), 0        # always the common row of the month table

    def year_length(self, year):
        return np.full(np.shape(year), 365, dtype=np.int64)

    def _length_note(self, year, month):
        return self.leap_rule_text if month == 13 else ""

    def _year_of_day(self, jdn):
        return (jdn - self.epoch_jdn) // 365 + 1
