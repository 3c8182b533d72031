"""Integer arithmetic of the proleptic Julian and Gregorian calendars.

Years are astronomical (year 0 = 1 BC, year -1 = 2 BC).  Day numbers are
chronological Julian Day Numbers (see :mod:`calendra.daylib`).  The
algorithms count days in eras of whole leap cycles (400 Gregorian years =
146097 days, 4 Julian years = 1461 days) from a year that begins on March 1,
so that the leap day falls at the end of the counting year; they use only
integer ``//`` and ``%`` on int64 arrays, are branch free, and are exact for
any year whose day number fits in int64 (far beyond +-100000).

References
----------
H. Hinnant, "chrono-Compatible Low-Level Date Algorithms" (days_from_civil,
civil_from_days), public domain; the same era decomposition as Reingold &
Dershowitz, *Calendrical Calculations*, ch. 2-3.
"""

from __future__ import annotations

import numpy as np

from .daylib import as_int_array

#: Day number of Gregorian 0000-03-01 (the start of counting era 0).
_GREGORIAN_MARCH_EPOCH = 1721120
#: Day number of Julian 0000-03-01.
_JULIAN_MARCH_EPOCH = 1721118

#: Day number of the first Gregorian day, 1582-10-15 (follows Julian 1582-10-04).
GREGORIAN_REFORM_JDN = 2299161
#: Day number of the first Gregorian day in Great Britain and its colonies, 1752-09-14.
GREGORIAN_REFORM_BRITAIN_JDN = 2361222

_MONTH_DAYS = np.array([0, 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31], dtype=np.int64)
_CUMULATIVE = np.array([0, 0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334], dtype=np.int64)


def _march_day_of_year(month, day):
    # Days since March 1 of the counting year (March = 0 ... February = 11).
    mp = np.where(month > 2, month - 3, month + 9)
    return (153 * mp + 2) // 5 + day - 1


def _civil_from_march(doy, year_of_era, era_years):
    mp = (5 * doy + 2) // 153
    day = doy - (153 * mp + 2) // 5 + 1
    month = np.where(mp < 10, mp + 3, mp - 9)
    year = year_of_era + era_years + (month <= 2)
    return year, month, day


def gregorian_to_jdn(year, month, day):
    """Return the day number of a proleptic Gregorian date (no validation)."""
    y = as_int_array(year)
    m = as_int_array(month)
    d = as_int_array(day)
    y = y - (m <= 2)
    era = y // 400
    yoe = y - era * 400
    doe = yoe * 365 + yoe // 4 - yoe // 100 + _march_day_of_year(m, d)
    return era * 146097 + doe + _GREGORIAN_MARCH_EPOCH


def gregorian_from_jdn(jdn):
    """Return (year, month, day) int64 arrays of the proleptic Gregorian date of day ``jdn``."""
    z = as_int_array(jdn) - _GREGORIAN_MARCH_EPOCH
    era = z // 146097
    doe = z - era * 146097
    yoe = (doe - doe // 1460 + doe // 36524 - doe // 146096) // 365
    doy = doe - (365 * yoe + yoe // 4 - yoe // 100)
    return _civil_from_march(doy, yoe, era * 400)


def julian_to_jdn(year, month, day):
    """Return the day number of a proleptic Julian date (no validation)."""
    y = as_int_array(year)
    m = as_int_array(month)
    d = as_int_array(day)
    y = y - (m <= 2)
    era = y // 4
    yoe = y - era * 4
    doe = yoe * 365 + _march_day_of_year(m, d)
    return era * 1461 + doe + _JULIAN_MARCH_EPOCH


def julian_from_jdn(jdn):
    """Return (year, month, day) int64 arrays of the proleptic Julian date of day ``jdn``."""
    z = as_int_array(jdn) - _JULIAN_MARCH_EPOCH
    era = z // 1461
    doe = z - era * 1461
    yoe = (doe - doe // 1460) // 365
    doy = doe - 365 * yoe
    return _civil_from_march(doy, yoe, era * 4)


def gregorian_is_leap(year):
    """Return True where ``year`` (astronomical) is a Gregorian leap year."""
    y = as_int_array(year)
    return (y % 4 == 0) & ((y % 100 != 0) | (y % 400 == 0))


def julian_is_leap(year):
    """Return True where ``year`` (astronomical) is a Julian leap year."""
    return as_int_array(year) % 4 == 0


def month_length(year, month, leap_rule):
    """Return the number of days of ``month`` in ``year`` under ``leap_rule`` (a function like :func:`julian_is_leap`).

    Months outside 1..12 give 0.
    """
    y = as_int_array(year)
    m = as_int_array(month)
    ok = (m >= 1) & (m <= 12)
    mi = np.where(ok, m, 0)
    return np.where(ok, _MONTH_DAYS[mi] + ((mi == 2) & leap_rule(y)), 0)


def day_of_year(year, month, day, leap_rule):
    """Return the day of the year (1 = January 1) of a valid date."""
    m = as_int_array(month)
    mi = np.clip(m, 1, 12)
    return _CUMULATIVE[mi] + as_int_array(day) + ((mi > 2) & leap_rule(as_int_array(year)))
