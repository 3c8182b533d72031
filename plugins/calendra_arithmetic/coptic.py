"""The Coptic and Ethiopic calendars (Alexandrian year: 12 x 30 days + 5 or 6 epagomenal days).

Both have a leap year every fourth year, without exception: year ``y`` is
leap when ``y mod 4 = 3``; its sixth epagomenal day is Julian 29 August of
the year before a Julian leap year, so the Coptic year keeps step with the
Julian one.  They differ only in their
epochs (the Ethiopic count is 276 years ahead).  Month 13 holds the
epagomenal days.

Years are counted continuously: year 0 precedes year 1 (the tables of
Reingold & Dershowitz number them the same way).  The civil day is taken to
run from midnight; the liturgical reckoning from sunset is not modelled.

References
----------
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), ch. 4 (``fixed-from-coptic``,
``coptic-from-fixed``, ``fixed-from-ethiopic``).
"""

from __future__ import annotations

import numpy as np

from calendra.daylib import RD_EPOCH_JDN, as_int_array

from .base import MONTH_COLUMNS, EpagomenalCalendar

#: Day number of 1 Thout AM 1 = Julian 284-08-29 (RD 103605, the Era of the Martyrs).
COPTIC_EPOCH_JDN = 103605 + RD_EPOCH_JDN
#: Day number of 1 Maskaram 1 = Julian 8-08-29 (RD 2796).
ETHIOPIC_EPOCH_JDN = 2796 + RD_EPOCH_JDN
#: Month-table row by year mod 4 (year mod 4 = 3 is leap).
_ROW_BY_YEAR_MOD_4 = np.array([0, 0, 0, MONTH_COLUMNS], dtype=np.int64)


class _AlexandrianCalendar(EpagomenalCalendar):
    leap_rule_text = "leap years are those with year mod 4 = 3"

    def is_leap(self, year):
        """Return True where ``year mod 4 = 3`` (a sixth epagomenal day)."""
        return (as_int_array(year) & 3) == 3          # two's complement: also for negative years

    def leap_days_before(self, year):
        """Leap years among 1 .. year-1: ``floor(year / 4)``."""
        return as_int_array(year) // 4

    def _days_before_year(self, year):
        # 365 y + floor(y / 4) = floor(1461 y / 4), a right shift also for negative years.
        return (1461 * year) >> 2

    def _year_terms(self, year):
        return self._jdn_offset + ((1461 * year) >> 2), _ROW_BY_YEAR_MOD_4[year & 3]

    def _year_of_day(self, jdn):
        # Reingold & Dershowitz, coptic-from-fixed: year = floor((4 (date - epoch) + 1463) / 1461).
        return (4 * (jdn - self.epoch_jdn) + 1463) // 1461


class CopticCalendar(_AlexandrianCalendar):
    """The Coptic calendar, years of the Era of the Martyrs (Anno Martyrum, from AD 284).

    Day numbers are chronological JDNs; years continuous (year 0 exists);
    months 1 = Thout ... 12 = Mesore, 13 = the epagomenal days; day begins at
    midnight here (the liturgical day begins at sunset, not modelled).
    """

    name = "coptic"
    aliases = ("alexandrian",)
    description = ("Coptic calendar (Era of the Martyrs, 1 Thout 1 = Julian 284-08-29): 12 x 30 days + 5/6 "
                   "epagomenal (month 13), leap when year mod 4 = 3; Reingold & Dershowitz ch. 4")
    year_numbering = "Anno Martyrum, continuous (year 0 precedes AM 1); long form 'AM' for years >= 1"
    epoch_jdn = COPTIC_EPOCH_JDN
    era = "AM"
    era_words = ("AM", "A.M.", "Anno Martyrum")
    month_names = ("Thout", "Paopi", "Hathor", "Koiak", "Tobi", "Meshir", "Paremhat", "Parmouti",
                   "Pashons", "Paoni", "Epip", "Mesori", "Epagomene")
    month_variants = {"Thoout": 1, "Tut": 1, "Paope": 2, "Baba": 2, "Athor": 3, "Hatur": 3, "Kiahk": 4,
                      "Choiak": 4, "Tobe": 5, "Tuba": 5, "Mechir": 6, "Amshir": 6, "Paremotep": 7,
                      "Baramhat": 7, "Parmoute": 8, "Baramouda": 8, "Bashans": 9, "Paone": 10, "Ba'una": 10,
                      "Epep": 11, "Abib": 11, "Mesore": 12, "Misra": 12, "Pi Kogi Enavot": 13, "Nasie": 13,
                      "Epagomenal": 13}


class EthiopicCalendar(_AlexandrianCalendar):
    """The Ethiopic calendar (Amete Mihret, "year of mercy", from AD 8).

    Same arithmetic as :class:`CopticCalendar`, epoch 1 Maskaram 1 = Julian
    8-08-29.  Years continuous (year 0 exists); months 1 = Maskaram ... 12 =
    Nahase, 13 = Paguemen; day begins at midnight here (the traditional
    reckoning of hours from dawn is not modelled).
    """

    name = "ethiopic"
    aliases = ("ethiopian", "geez")
    description = ("Ethiopic calendar (Amete Mihret, 1 Maskaram 1 = Julian 8-08-29): Coptic arithmetic, "
                   "months of 30 days + Paguemen (month 13); Reingold & Dershowitz ch. 4")
    year_numbering = "Amete Mihret, continuous (year 0 precedes year 1)"
    epoch_jdn = ETHIOPIC_EPOCH_JDN
    era_words = ("EE", "E.E.", "AMM", "Amete Mihret")
    month_names = ("Maskaram", "Teqemt", "Hedar", "Takhsas", "Ter", "Yakatit", "Magabit", "Miyazya",
                   "Genbot", "Sane", "Hamle", "Nahase", "Paguemen")
    month_variants = {"Meskerem": 1, "Tikimt": 2, "Tekemt": 2, "Hidar": 3, "Tahsas": 4, "Tir": 5,
                      "Yekatit": 6, "Megabit": 7, "Miazia": 8, "Ginbot": 9, "Sene": 10, "Hamle": 11,
                      "Nehase": 12, "Pagume": 13, "Pagumen": 13}
