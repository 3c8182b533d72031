"""Integer arithmetic of the proleptic Julian and Gregorian calendars.

Years are astronomical (year 0 = 1 BC, year -1 = 2 BC).  Day numbers are
chronological Julian Day Numbers (see :mod:`calendra.daylib`).  The
algorithms count days in eras of whole leap cycles (400 Gregorian years =
146097 days, 4 Julian years = 1461 days) from a year that begins on March 1,
so that the leap day falls at the end of the counting year; they use only
integer arithmetic and a month table, are branch free, and are exact for
any year whose day number fits in int64 (far beyond +-100000).  Blocks of
moderate values are computed in int32, others in int64.

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

_CUMULATIVE = np.array([0, 0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334], dtype=np.int64)


#: Elements per block: the temporaries of one block stay in the processor cache.
_BLOCK = 1 << 15
#: Day numbers within this bound are turned into dates in int32 (exact, faster).
_INT32_SAFE = 400_000_000
#: Years (and month and day fields) within this bound are turned into day numbers in int32: the
#: day number of year 10**6 is about 3.7e8, inside int32 with room to spare.
_INT32_SAFE_FIELDS = 1_000_000


def _blocked(func, arrays, bound=_INT32_SAFE):
    """Apply ``func`` to broadcast int arrays block by block, in int32 where exact; return int64 arrays.

    Each block is cast to int32 (and range-checked) while it sits in the processor cache; a block
    holding a value beyond ``bound`` (in absolute value) is computed in int64 instead.
    """
    arrays = np.broadcast_arrays(*arrays)
    shape = arrays[0].shape
    flat = [a.reshape(-1) for a in arrays]
    n = flat[0].size
    outs = None
    for start in range(0, max(n, 1), _BLOCK):
        parts = [a[start:start + _BLOCK] for a in flat]
        if all(p.size == 0 or (p.min() > -bound and p.max() < bound) for p in parts):
            parts = [p.astype(np.int32) for p in parts]
        block = func(*parts)
        if outs is None:
            outs = [np.empty(n, dtype=bool if b.dtype == bool else np.int64) for b in block]
        for o, b in zip(outs, block):
            o[start:start + _BLOCK] = b
    result = tuple(o.reshape(shape) for o in outs)
    if shape == ():
        result = tuple(np.int64(r[()]) for r in result)
    return result


def _march_table():
    # Day of the March-based year (0..365) -> month | day << 4 | (1 if January/February) << 9.
    rows = []
    for doy in range(366):
        mp = (5 * doy + 2) // 153            # March = 0 ... February = 11
        day = doy - (153 * mp + 2) // 5 + 1
        late = int(mp >= 10)                 # January or February of the next civil year
        rows.append((mp + 3 - 12 * late) | day << 4 | late << 9)
    return np.array(rows, dtype=np.int32)


_FROM_MARCH = _march_table()


def _civil_from_march(doy, year):
    # Month and day from the day of the March-based year by one table lookup (modifies ``year``).
    packed = _FROM_MARCH.take(doy, mode="clip")
    month = packed & 15
    day = packed >> 4
    day &= 31
    packed >>= 9
    year += packed
    return year, month, day


def _greg_from(jdn):
    z = jdn - _GREGORIAN_MARCH_EPOCH
    era = z // 146097
    doe = z - era * 146097
    yoe = (doe - doe // 1460 + doe // 36524 - doe // 146096) // 365
    doy = doe - (365 * yoe + yoe // 4 - yoe // 100)
    return _civil_from_march(doy, yoe + era * 400)


def _jul_from(jdn):
    z = jdn - _JULIAN_MARCH_EPOCH
    era = z // 1461
    z -= era * 1461                          # day of the 4-year era
    yoe = z - z // 1460
    yoe //= 365
    z -= 365 * yoe                           # day of the March-based year
    era *= 4
    era += yoe
    return _civil_from_march(z, era)


#: Month lengths indexed by ``month | 16 * leap`` (months 0 and 13..15 have none, so they fail).
_LENGTHS = np.array([0, 31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31, 0, 0, 0] * 2, dtype=np.int32)
_LENGTHS[16 + 2] = 29


def _month_ok_each(m, d, leap):
    # 1 <= m <= 12 and 1 <= d <= length, with unsigned views folding each pair of bounds into one test.
    idx = m & 15
    idx |= leap.view(np.uint8).astype(idx.dtype) << 4
    unsigned = np.uint32 if m.dtype == np.int32 else np.uint64
    ok = (m - 1).view(unsigned) < 12
    ok &= (d - 1).view(unsigned) < _LENGTHS.take(idx)
    return ok


#: Whether day d of month m exists, indexed by ``m << 5 | d`` (February 29 counted; the leap rule
#: is applied to those dates alone).
_EXISTS = np.zeros(13 << 5, dtype=bool)
for _m in range(1, 13):
    _EXISTS[(_m << 5) + 1:(_m << 5) + 1 + int(_LENGTHS[16 + _m])] = True
del _m


def _month_ok(y, m, d, is_leap):
    """Validity mask of (y, m, d); ``is_leap(y)`` gives the leap mask of an array of years.

    The ranges of months (1..12) and days (1..31) are checked by reductions, then one table
    lookup by month and day decides every date but February 29, which is looked at on its own.
    """
    if m.size == 0 or m.min() < 1 or m.max() > 12 or d.min() < 1 or d.max() > 31:
        return _month_ok_each(m, d, is_leap(y))
    key = m << 5
    key |= d
    ok = _EXISTS.take(key)
    feb29 = np.flatnonzero(key == (2 << 5 | 29))
    if feb29.size:
        ok[feb29] = is_leap(y[feb29])
    return ok


#: Days from March 1 to the first of month m (index m; months 0 and 13..15 give 0, for invalid input).
_MARCH_DAYS = np.array([0] + [(153 * ((k + 9) % 12) + 2) // 5 for k in range(1, 13)] + [0] * 3, dtype=np.int32)


def _march_year(y, m):
    # The March-based year (January and February count with the year before), a new array.
    return np.subtract(y, m <= 2, dtype=y.dtype)


def _jul_to(y, m, d):
    # Days counted in 4-year eras from a March-based year; in-place steps keep one temporary in cache.
    yy = _march_year(y, m)
    jdn = yy >> 2
    jdn *= 1461
    yy &= 3
    yy *= 365
    jdn += yy
    jdn += _MARCH_DAYS.take(m, mode="clip")
    jdn += d
    jdn += _JULIAN_MARCH_EPOCH - 1
    return jdn


def _greg_to(y, m, d):
    # Days counted in 400-year eras from a March-based year; in-place steps keep one temporary in cache.
    yy = _march_year(y, m)
    era = yy // 400
    yy -= era * 400                          # year of era, 0..399
    doe = yy * 365
    doe += yy >> 2
    doe -= yy // 100
    doe += _MARCH_DAYS.take(m, mode="clip")
    doe += d
    era *= 146097
    era += doe
    era += _GREGORIAN_MARCH_EPOCH - 1
    return era


def _greg_to_checked(y, m, d):
    return _greg_to(y, m, d), _month_ok(y, m, d, gregorian_is_leap)


def _jul_to_checked(y, m, d):
    return _jul_to(y, m, d), _month_ok(y, m, d, julian_is_leap)


def gregorian_to_jdn_checked(year, month, day):
    """Return (day numbers, validity mask) of proleptic Gregorian dates in one pass."""
    jdn, ok = _blocked(_greg_to_checked, (as_int_array(year), as_int_array(month), as_int_array(day)),
                       _INT32_SAFE_FIELDS)
    return jdn, ok.astype(bool)


def julian_to_jdn_checked(year, month, day):
    """Return (day numbers, validity mask) of proleptic Julian dates in one pass."""
    jdn, ok = _blocked(_jul_to_checked, (as_int_array(year), as_int_array(month), as_int_array(day)),
                       _INT32_SAFE_FIELDS)
    return jdn, ok.astype(bool)


def gregorian_to_jdn(year, month, day):
    """Return the day number of a proleptic Gregorian date (no validation)."""
    return _blocked(lambda *f: (_greg_to(*f),), (as_int_array(year), as_int_array(month), as_int_array(day)),
                    _INT32_SAFE_FIELDS)[0]


def gregorian_from_jdn(jdn):
    """Return (year, month, day) int64 arrays of the proleptic Gregorian date of day ``jdn``."""
    return _blocked(_greg_from, (as_int_array(jdn),))


def julian_to_jdn(year, month, day):
    """Return the day number of a proleptic Julian date (no validation)."""
    return _blocked(lambda *f: (_jul_to(*f),), (as_int_array(year), as_int_array(month), as_int_array(day)),
                    _INT32_SAFE_FIELDS)[0]


def julian_from_jdn(jdn):
    """Return (year, month, day) int64 arrays of the proleptic Julian date of day ``jdn``."""
    return _blocked(_jul_from, (as_int_array(jdn),))


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
    mi = np.where((m >= 1) & (m <= 12), m, 0)            # month 0 has length 0 in the table
    return _LENGTHS.take(mi | (np.asarray(leap_rule(y), dtype=np.int64) << 4)).astype(np.int64)


def day_of_year(year, month, day, leap_rule):
    """Return the day of the year (1 = January 1) of a valid date."""
    m = as_int_array(month)
    mi = np.clip(m, 1, 12)
    return _CUMULATIVE[mi] + as_int_array(day) + ((mi > 2) & leap_rule(as_int_array(year)))
