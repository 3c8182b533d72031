"""The tabular (arithmetic) Islamic calendar, with a choice of leap-year scheme and epoch.

Twelve months alternate 30 and 29 days (Muharram 30, Safar 29, ...); in a
leap year the last month, Dhu al-Hijja, has 30 days.  Leap years recur in a
30-year cycle of 10631 days (11 leap years).  Which 11 years of the cycle
are leap differs between the astronomical tables; the option ``leap``
selects one of the schemes named in :data:`LEAP_SCHEMES`.  The epoch is 1
Muharram AH 1 = Julian 622-07-16 (Friday, the "civil" epoch, default) or the
day before (Thursday, the "astronomical" epoch of the tables).

The tabular calendar is not the calendar of observed crescents: actual
months could begin a day or two from it.  Years are continuous (year 0
precedes AH 1, as in Reingold & Dershowitz).  The day begins at sunset: the
date that this calendar gives for civil day N is the one that began at
sunset on the evening of day N-1.

References
----------
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), ch. 6 (``fixed-from-islamic``,
``islamic-from-fixed``; the ``base16`` scheme).
Leap-year schemes as documented for Noda Time's ``IslamicLeapYearPattern``
(Base15, Base16, Indian, HabashAlHasib) and Joda-Time's
``IslamicChronology.LeapYearPatternType``; the ``indian`` scheme is the
one historycal.org lists for the Fatimid (Misri) calendar of the Ismaili
and Dawoodi Bohra communities.
"""

from __future__ import annotations

import numpy as np

from calendra.daylib import RD_EPOCH_JDN

from .base import (_I30, MONTH_COLUMNS, ArithmeticCalendar, OptionsMixin, below, floor_divmod, month_table,
                   parse_choice_option, umax)

#: Leap years of the 30-year cycle (years 1..30 of the cycle), by scheme name.
LEAP_SCHEMES = {
    # The most common scheme (Kuwaiti algorithm, Reingold & Dershowitz, convertdate).
    "base16": (2, 5, 7, 10, 13, 16, 18, 21, 24, 26, 29),
    # Year 15 instead of 16 (leap when the accumulated fraction reaches one half).
    "base15": (2, 5, 7, 10, 13, 15, 18, 21, 24, 26, 29),
    # "Indian" pattern = the Fatimid (Misri) calendar of the Bohra community.
    "indian": (2, 5, 8, 10, 13, 16, 19, 21, 24, 27, 29),
    # The scheme attributed to Habash al-Hasib (and al-Biruni).
    "habash-al-hasib": (2, 5, 8, 11, 13, 16, 19, 21, 24, 27, 30),
}
_SCHEME_NAMES = {"base16": "base16", "16": "base16", "standard": "base16", "kuwaiti": "base16",
                 "base15": "base15", "15": "base15",
                 "indian": "indian", "fatimid": "indian", "bohra": "indian", "misri": "indian",
                 "habash-al-hasib": "habash-al-hasib", "habash": "habash-al-hasib", "habashalhasib": "habash-al-hasib"}

#: Day number of 1 Muharram AH 1 under each epoch: Friday Julian 622-07-16 (RD 227015) or Thursday 622-07-15.
EPOCHS = {"civil": 227015 + RD_EPOCH_JDN, "astronomical": 227014 + RD_EPOCH_JDN}
_EPOCH_NAMES = {"civil": "civil", "friday": "civil", "astronomical": "astronomical", "thursday": "astronomical"}

CYCLE_DAYS = 30 * 354 + 11
_IM30, _ICYCLE = np.int64(-30), np.int64(CYCLE_DAYS)
#: Days from 1 Muharram to the first of each month (ceil(29.5 (m - 1))).
MONTH_STARTS = np.array([(59 * k + 1) // 2 for k in range(12)], dtype=np.int64)
#: Month tables: months alternate 30 and 29 days; Dhu al-Hijja has 30 in leap years.
_COMMON = [30 - (k % 2) for k in range(12)]
_TABLE = month_table((_COMMON, range(1, 13)), (_COMMON[:11] + [30], range(1, 13)))


def _cycle_tables(leap_years):
    """Return the leap flags of cycle years 1..30 (index 0..29) and their first days in the cycle (0..30)."""
    leap = np.zeros(30, dtype=np.int64)
    leap[[y - 1 for y in leap_years]] = 1
    starts = np.concatenate([[0], np.cumsum(354 + leap)])
    return leap, starts


class IslamicTabularCalendar(OptionsMixin, ArithmeticCalendar):
    """The arithmetic Islamic calendar (30-year cycle), years of the Hijra.

    Options: ``leap`` (one of :data:`LEAP_SCHEMES`, default ``base16``) and
    ``epoch`` (``civil`` = Friday 622-07-16 Julian, default; ``astronomical``
    = Thursday 622-07-15).  Day numbers are chronological JDNs; years
    continuous (year 0 precedes AH 1); months 1 = Muharram ... 12 = Dhu
    al-Hijja; the day begins at sunset.
    """

    name = "islamic-tabular"
    aliases = ("islamic", "hijri", "islamic-arithmetic")
    day_start = "sunset"
    year_numbering = "Anno Hegirae, continuous (year 0 precedes AH 1); long form 'AH' for years >= 1"
    era = "AH"
    era_words = ("AH", "A.H.", "H", "Anno Hegirae")
    option_defaults = {"leap": "base16", "epoch": "civil"}
    option_help = {"leap": "leap years of the 30-year cycle: " + "; ".join(
                       f"{k} ({', '.join(map(str, v))})" for k, v in LEAP_SCHEMES.items()),
                   "epoch": "civil (1 Muharram 1 = Friday Julian 622-07-16) or astronomical (Thursday 622-07-15)"}
    month_names = ("Muharram", "Safar", "Rabi' al-Awwal", "Rabi' al-Thani", "Jumada al-Ula",
                   "Jumada al-Akhira", "Rajab", "Sha'ban", "Ramadan", "Shawwal", "Dhu al-Qa'da", "Dhu al-Hijja")
    month_variants = {"Rabi I": 3, "Rabi al-Awwal": 3, "Rabi' I": 3, "Rabi II": 4, "Rabi' II": 4,
                      "Rabi al-Akhir": 4, "Rabi' al-Akhir": 4, "Jumada I": 5, "Jumada al-Awwal": 5,
                      "Jumada II": 6, "Jumada al-Thani": 6, "Jumada al-Akhirah": 6, "Shaaban": 8,
                      "Ramazan": 9, "Ramadhan": 9, "Dhu al-Qadah": 11, "Dhu'l-Qa'da": 11, "Zulqadah": 11,
                      "Dhu al-Qi'da": 11, "Dhu al-Hijjah": 12, "Dhu'l-Hijja": 12, "Zulhijjah": 12}

    _offsets, _lengths = _TABLE

    def __init__(self, leap="base16", epoch="civil"):
        scheme = parse_choice_option("leap", leap, _SCHEME_NAMES, self.name)
        epoch_name = parse_choice_option("epoch", epoch, _EPOCH_NAMES, self.name)
        self.options = {"leap": scheme, "epoch": epoch_name}
        self.leap_years = LEAP_SCHEMES[scheme]
        self.epoch_jdn = EPOCHS[epoch_name]
        leap_flags, self._starts = _cycle_tables(self.leap_years)
        # By y mod 30 (year y = 30 q + k is year k of cycle q, year 30 of cycle q - 1 when k = 0):
        # day number of 1 Muharram for q = 0, and month-table row.
        self._first_day = self.epoch_jdn + np.roll(self._starts[:30], 1)
        self._first_day[0] -= CYCLE_DAYS
        self._row = np.roll(leap_flags, 1) * MONTH_COLUMNS
        # One table by (y mod 30, month): day number of the first of the month for q = 0, and length.
        index = self._row[:, None] + np.arange(MONTH_COLUMNS)[None, :]
        self._month_first_day = (self._first_day[:, None] + self._offsets[index]).ravel()
        self._month_days = self._lengths[index].ravel()
        # The same tables month-major, by 30 * month + (y mod 30) for months 0..12, and with the
        # first day less one, for the block writer.
        self._day0_by_month = (self._month_first_day.reshape(30, MONTH_COLUMNS)[:, :13].T.ravel() - 1).copy()
        self._days_by_month = self._month_days.reshape(30, MONTH_COLUMNS)[:, :13].T.ravel().copy()

    @property
    def description(self):  # type: ignore[override]
        return (f"Tabular Islamic calendar, 30-year cycle with leap years {', '.join(map(str, self.leap_years))} "
                f"({self.options['leap']}), {self.options['epoch']} epoch; Reingold & Dershowitz ch. 6")

    # ------------------------------------------------------------ arithmetic
    def _year_terms(self, year):
        cycles, k = floor_divmod(year, 30)
        return CYCLE_DAYS * cycles + self._first_day[k], self._row[k]

    def year_length(self, year):
        return 354 + self.is_leap(year)

    def _checked_to_jdn(self, year, month, day):
        # The generic year terms and month table fused into one lookup by (y mod 30, month);
        # written with in-place operations, which spare numpy an allocation per step.
        cycles = year // 30
        index = cycles * (-30 * MONTH_COLUMNS)
        index += MONTH_COLUMNS * year                   # (y mod 30) * MONTH_COLUMNS
        index += np.clip(month, 0, MONTH_COLUMNS - 1)
        day0 = day - 1
        jdn = cycles
        jdn *= CYCLE_DAYS
        jdn += self._month_first_day[index]
        jdn += day0
        return jdn, below(day0, self._month_days[index])

    def _to_jdn_block(self, out, year, month, day):
        # Months 1..12 and days 1..30 checked by four reductions; only days 30 need the month
        # length (29 or 30), looked up for those few dates alone.
        # (Each check runs just before its field is used, while the field is in cache.)
        if day.size == 0:
            return True
        index = np.floor_divide(year, _I30)               # 30-year cycles ...
        np.multiply(index, _ICYCLE, out=out)
        if month.min() < 1 or umax(month) > 12:
            return False
        index -= month
        index *= _IM30
        index += year                                     # ... turned into 30 month + (y mod 30)
        out += self._day0_by_month.take(index, mode="clip")     # clip: no crash on absurd years
        if day.min() < 1 or umax(day) > 30:
            return False
        out += day
        thirtieth = np.flatnonzero(day == 30)
        return bool(np.all(self._days_by_month.take(index[thirtieth], mode="clip") == 30))

    def _length_note(self, year, month):
        if month == 12:
            kind = "leap" if bool(self.is_leap(year)) else "common"
            q, r = divmod(year - 1, 30)
            return (f"{year} is a {kind} year, year {r + 1} of its 30-year cycle; leap years of the "
                    f"{self.options['leap']} scheme: {', '.join(map(str, self.leap_years))}")
        return ""

    def _from_jdn(self, jdn):
        cycles, r = floor_divmod(jdn - self.epoch_jdn, CYCLE_DAYS)
        # Year of the cycle: r // 355 or one more (years have 354 or 355 days).
        k = r // 355
        k += r >= self._starts[k + 1]
        doy = r - self._starts[k]
        m = np.minimum((2 * doy) // 59, 11)
        day = doy - MONTH_STARTS[m] + 1
        return 30 * cycles + k + 1, m + 1, day
