"""The fixed (arithmetic) Hebrew calendar: molad, the four postponements, 19-year cycle.

Years are counted Anno Mundi from the epoch 1 Tishri AM 1 = Monday, Julian
-3760-10-07 (3761 BC), day number 347998.  A year has 12 months, or 13 in
years 3, 6, 8, 11, 14, 17 and 19 of the 19-year cycle (``(7 y + 1) mod 19 <
7``).  Months are numbered as in Reingold & Dershowitz: 1 = Nisan ... 6 =
Elul, 7 = Tishri (the first month of the year) ... 12 = Adar (Adar I in leap
years), 13 = Adar II; so month numbers do not increase through the year.

The year begins on 1 Tishri, fixed from the *molad* (mean conjunction) of
Tishri: the mean lunation is 29 d 12 h 793 parts (1 hour = 1080 parts), the
first molad (BaHaRaD) is day 2 (Monday), 5 h 204 p, hours counted from 6 pm
of the evening before.  Rosh Hashanah is the day of the molad unless one of
the four *dehiyyot* postpones it:

1. *molad zaken*: the molad is at or after noon (18 h) -> next day;
2. *lo ADU rosh*: the day would be Sunday, Wednesday or Friday -> next day;
3. *GaTaRaD*: in a common year, molad on Tuesday at or after 9 h 204 p ->
   Thursday (one day, then rule 2);
4. *BeTUTaKPaT*: in a year after a leap year, molad on Monday at or after
   15 h 589 p -> Tuesday.

Year lengths are then 353, 354, 355 (common) or 383, 384, 385 (leap):
deficient, regular or complete, by the lengths of Heshvan (29/30) and Kislev
(29/30).  The day begins at sunset: the date given for civil day N began at
sunset on the evening of day N-1.  The arithmetic holds for every year
(also before AM 1, counted 0, -1, ...).

References
----------
Maimonides, *Mishneh Torah*, Sanctification of the New Moon, chs. 6-8 (the
molad and the postponements).
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), ch. 7 (``hebrew-new-year``,
``fixed-from-hebrew``, ``molad``; their month numbering).
J. Meeus, *Astronomical Algorithms*, 2nd ed. (Willmann-Bell, 1998), ch. 9.
"""

from __future__ import annotations

import numpy as np

from calendra.daylib import RD_EPOCH_JDN, as_int_array
from calendra.errors import InvalidDateError

from .base import MONTH_COLUMNS, ArithmeticCalendar, floor_divmod, month_table

#: Day number of 1 Tishri AM 1 (RD -1373427), a Monday.
HEBREW_EPOCH_JDN = -1373427 + RD_EPOCH_JDN
#: Parts (halakim) per hour and per day.
PARTS_PER_HOUR = 1080
PARTS_PER_DAY = 24 * PARTS_PER_HOUR
#: The mean lunation: 29 d 12 h 793 p, in parts.
LUNATION_PARTS = 29 * PARTS_PER_DAY + 12 * PARTS_PER_HOUR + 793
#: Molad of Tishri AM 1 (BaHaRaD): day 1 of the count below (Monday), 5 h 204 p after 6 pm.
_MOLAD_BAHARAD = 1 * PARTS_PER_DAY + 5 * PARTS_PER_HOUR + 204
#: Day 0 of the molad count: the Sunday before the epoch, which began at 6 pm on the Saturday.
_COUNT_DAY0_JDN = HEBREW_EPOCH_JDN - 1

NISAN, IYYAR, SIVAN, TAMMUZ, AV, ELUL, TISHRI, HESHVAN, KISLEV, TEVET, SHEVAT, ADAR, ADAR_II = range(1, 14)

#: Month number at each position of the year (0 = Tishri), common and leap years (0: no month).
_MONTH_AT = np.array([[7, 8, 9, 10, 11, 12, 1, 2, 3, 4, 5, 6, 0],
                      [7, 8, 9, 10, 11, 12, 13, 1, 2, 3, 4, 5, 6]], dtype=np.int64)
#: The six kinds of year: (leap, days of Heshvan, days of Kislev) - deficient, regular, complete.
_YEAR_KINDS = [(leap, h, k) for leap in (0, 1) for h, k in ((29, 29), (29, 30), (30, 30))]
_KINDS = ("deficient", "regular", "complete")


def _lengths_by_month(leap: int, heshvan: int, kislev: int) -> list[int]:
    """Lengths of months 1..13 (month-number order; Adar II 0 in common years)."""
    return [30, 29, 30, 29, 30, 29, 30, heshvan, kislev, 29, 30, 30 if leap else 29, 29 if leap else 0]


def _position_starts(leap: int, heshvan: int, kislev: int) -> list[int]:
    """Day of the year (0 = 1 Tishri) of each position's first day, padded to 14 entries."""
    lengths = _lengths_by_month(leap, heshvan, kislev)
    starts = list(np.cumsum([0] + [lengths[m - 1] for m in _MONTH_AT[leap][: 12 + leap]]))
    return starts + [starts[-1] + 400] * (14 - len(starts))


#: Month tables (by month number, rows = the six kinds), for conversion to day numbers.
_OFFSETS, _LENGTHS = month_table(*((_lengths_by_month(*kind), _MONTH_AT[kind[0]][: 12 + kind[0]])
                                   for kind in _YEAR_KINDS))
#: By position, for conversion from day numbers: row = kind, 14 entries (13 positions and sentinels).
_STARTS_FLAT = np.array([_position_starts(*kind) for kind in _YEAR_KINDS], dtype=np.int64).ravel()


def is_leap(year) -> np.ndarray:
    """Return True where AM ``year`` has 13 months (years 3, 6, 8, 11, 14, 17, 19 of the cycle)."""
    _, r = floor_divmod(7 * as_int_array(year) + 1, 19)
    return r < 7


def months_elapsed(year) -> np.ndarray:
    """Return the number of months from the molad of Tishri AM 1 to that of Tishri of ``year``."""
    return (235 * as_int_array(year) - 234) // 19


def _molad_count(months) -> tuple[np.ndarray, np.ndarray]:
    """Return (day of the molad count, parts since 6 pm) of the molad ``months`` lunations after BaHaRaD."""
    return floor_divmod(_MOLAD_BAHARAD + LUNATION_PARTS * months, PARTS_PER_DAY)


def new_year_jdn(year) -> np.ndarray:
    """Return the day number of 1 Tishri (Rosh Hashanah) of AM ``year``.

    The molad of Tishri with the four postponements (see the module
    docstring).  The day is the civil day (midnight to midnight) whose
    daylight hours are 1 Tishri; 1 Tishri itself began at sunset before it.
    """
    y = as_int_array(year)
    day, parts = _molad_count(months_elapsed(y))
    _, weekday = floor_divmod(day, 7)                      # 0 = Sunday
    postpone = parts >= 18 * PARTS_PER_HOUR                 # molad zaken
    postpone |= (weekday == 2) & (parts >= 9 * PARTS_PER_HOUR + 204) & ~is_leap(y)        # GaTaRaD
    postpone |= (weekday == 1) & (parts >= 15 * PARTS_PER_HOUR + 589) & is_leap(y - 1)    # BeTUTaKPaT
    day = day + postpone
    weekday = weekday + postpone
    day += (weekday == 0) | (weekday == 3) | (weekday == 5) | (weekday == 7)             # lo ADU rosh
    return day + _COUNT_DAY0_JDN


def year_length(year) -> np.ndarray:
    """Return the number of days of AM ``year``: 353, 354, 355, 383, 384 or 385."""
    y = as_int_array(year)
    return new_year_jdn(y + 1) - new_year_jdn(y)


def molad_parts(year, month) -> tuple[np.ndarray, np.ndarray]:
    """Return the molad of ``month`` of AM ``year`` exactly, as (day number N, parts p).

    The molad falls ``p`` parts (1/1080 hour) after 6 pm of civil day N - 1,
    in local mean time of Jerusalem: within the Hebrew day that begins then
    and whose daylight hours are civil day N.

    Raises
    ------
    InvalidDateError
        For a month outside 1..13, or Adar II (13) in a common year.
    """
    y = as_int_array(year)
    m = as_int_array(month)
    bad = (m < 1) | (m > 13) | ((m == ADAR_II) & ~is_leap(y))
    if np.any(bad):
        raise InvalidDateError("molad: months are 1..12, and 13 (Adar II) in leap years only", "hebrew", bad)
    # Months before Tishri (1..6) belong to the end of the year: count back from Tishri of y + 1.
    after = m < TISHRI
    months = months_elapsed(y + after) + (m - TISHRI)
    day, parts = _molad_count(months)
    return day + _COUNT_DAY0_JDN, parts


def molad(year, month) -> np.ndarray:
    """Return the molad (mean conjunction) of ``month`` of AM ``year`` as a Julian Day.

    The time is local mean time of Jerusalem, as the rule reckons it (not
    UT: subtract about 2 h 21 min for the meridian of Jerusalem, 35.2 deg E).
    """
    day, parts = molad_parts(year, month)
    return day - 0.75 + parts / PARTS_PER_DAY


def _kind_row(length):
    """Row of the year kind (0..5: deficient, regular, complete; common then leap) for year lengths."""
    leap = length > 360
    return 3 * leap + (length - 353 - 30 * leap)


class HebrewCalendar(ArithmeticCalendar):
    """The fixed Hebrew calendar (molad and dehiyyot), years Anno Mundi.

    Fields (year, month, day); months 1 = Nisan ... 7 = Tishri ... 12 = Adar
    (Adar I in leap years), 13 = Adar II; the year begins on 1 Tishri.  Day
    numbers are chronological JDNs; the day begins at sunset.
    """

    name = "hebrew"
    aliases = ("jewish",)
    description = ("Hebrew calendar, fixed arithmetic (molad, 4 dehiyyot, 19-year cycle); months 1 = Nisan, "
                   "7 = Tishri (new year), 12 = Adar/Adar I, 13 = Adar II; Reingold & Dershowitz ch. 7")
    year_numbering = "Anno Mundi (AM 1 began 3761 BC); continuous before AM 1"
    day_start = "sunset"
    epoch_jdn = HEBREW_EPOCH_JDN
    era = "AM"
    era_words = ("AM", "A.M.", "Anno Mundi")
    month_names = ("Nisan", "Iyyar", "Sivan", "Tammuz", "Av", "Elul", "Tishri", "Heshvan", "Kislev",
                   "Tevet", "Shevat", "Adar", "Adar II")
    month_variants = {"Nissan": 1, "Iyar": 2, "Tamuz": 4, "Ab": 5, "Tishrei": 7, "Tishre": 7,
                      "Marheshvan": 8, "Marcheshvan": 8, "Cheshvan": 8, "Heshwan": 8, "Chislev": 9,
                      "Kislew": 9, "Teveth": 10, "Tebet": 10, "Shvat": 11, "Shebat": 11, "Sebat": 11,
                      "Adar I": 12, "Adar Rishon": 12, "Adar Aleph": 12, "Adar 1": 12,
                      "Adar Sheni": 13, "Adar Bet": 13, "Veadar": 13, "Ve-Adar": 13, "Adar 2": 13}

    # --------------------------------------------------------- year rules
    _offsets, _lengths = _OFFSETS, _LENGTHS

    def is_leap(self, year):
        """Return True where ``year`` has 13 months."""
        return is_leap(year)

    def months_in_year(self, year):
        return 12 + is_leap(year).astype(np.int64)

    def year_length(self, year):
        """Return the number of days of ``year`` (353-355 common, 383-385 leap)."""
        return year_length(year)

    def _year_terms(self, year):
        start = new_year_jdn(year)
        return start, _kind_row(new_year_jdn(year + 1) - start) * MONTH_COLUMNS

    def year_kind(self, year) -> str:
        """Return "deficient", "regular" or "complete" for one year (Heshvan and Kislev 29/29, 29/30, 30/30)."""
        length = int(year_length(year))
        return _KINDS[length - 353 - 30 * (length > 360)]

    def new_year_jdn(self, year):
        """Return the day number of 1 Tishri of ``year`` (see :func:`new_year_jdn`)."""
        return new_year_jdn(year)

    def year_start_jdn(self, year):
        """Return the day number of 1 Tishri, the first day of ``year``."""
        return new_year_jdn(year)

    def molad(self, year, month):
        """Return the molad of ``month`` of ``year`` as a Julian Day, Jerusalem mean time (see :func:`molad`)."""
        return molad(year, month)

    def month_name(self, month, year=None):
        if month == ADAR and year is not None and bool(is_leap(year)):
            return "Adar I"
        return super().month_name(month, year)

    def _invalid_reason(self, year, month, day):
        if not 1 <= month <= 13:
            return (f"month {month} does not exist in hebrew: months are 1 = Nisan ... 6 = Elul, 7 = Tishri "
                    "... 12 = Adar (Adar I), 13 = Adar II")
        leap = bool(is_leap(year))
        if month == ADAR_II and not leap:
            return (f"Adar II does not exist in hebrew {year}: it is a common year (leap years are years 3, 6, 8, "
                    f"11, 14, 17, 19 of the 19-year cycle; {year} is year {(year - 1) % 19 + 1})")
        length = int(self.month_length(year, month))
        if not 1 <= day <= length:
            name = self.month_name(month, year)
            why = f"{name} has {length} days"
            if month in (HESHVAN, KISLEV):
                why += (f" in a {self.year_kind(year)} {'leap' if leap else 'common'} year "
                        f"({int(year_length(year))} days)")
            return f"{name} {day} does not exist in hebrew {year}: {why}"
        return None

    def _from_jdn(self, jdn):
        # First guess of the year from the mean year of 35975351/98496 days (Reingold & Dershowitz).
        # 1 Tishri falls between 27 days before and 3.4 days after the mean new year, so a guess
        # made 4 days early is the year itself or the one before.
        guess = ((jdn - HEBREW_EPOCH_JDN - 4) * 98496) // 35975351 + 1
        ny_guess, ny_next, ny_after = new_year_jdn(guess), new_year_jdn(guess + 1), new_year_jdn(guess + 2)
        later = ny_next <= jdn
        year = guess + later
        start = ny_guess + later * (ny_next - ny_guess)
        end = ny_next + later * (ny_after - ny_next)
        length = end - start
        leap = length > 360
        base = _kind_row(length) * 14
        doy = jdn - start
        # Months have 29 or 30 days: the position is doy // 30 or one more.
        pos = doy // 30
        pos += doy >= _STARTS_FLAT[base + pos + 1]
        day = doy - _STARTS_FLAT[base + pos] + 1
        return year, _MONTH_AT.ravel()[13 * leap + pos], day
