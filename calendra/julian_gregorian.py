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

_CUMULATIVE = np.array([0, 0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334], dtype=np.int64)


#: Elements per block: the temporaries of one block stay in the processor cache.
_BLOCK = 1 << 15
#: Day numbers and years within this bound are computed in int32 (exact, faster).
_INT32_SAFE = 400_000_000


def _blocked(func, arrays):
    """Apply ``func`` to broadcast int arrays block by block, in int32 where exact; return int64 arrays.

    Each block is cast to int32 (and range-checked) while it sits in the processor cache; a block
    holding a value beyond :data:`_INT32_SAFE` is computed in int64 instead.
    """
    arrays = np.broadcast_arrays(*arrays)
    shape = arrays[0].shape
    flat = [a.reshape(-1) for a in arrays]
    n = flat[0].size
    outs = None
    for start in range(0, max(n, 1), _BLOCK):
        parts = [a[start:start + _BLOCK] for a in flat]
        if all(p.size == 0 or (p.min() > -_INT32_SAFE and p.max() < _INT32_SAFE) for p in parts):
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


def _civil_from_march(doy, year):
    # Month and day from the day of the March-based year (modifies its arguments, both temporaries).
    mp = doy * 5
    mp += 2
    mp //= 153                               # March = 0 ... February = 11
    start = mp * 153
    start += 2
    start //= 5
    doy -= start
    doy += 1                                 # day of the month
    late = mp >= 10                          # January or February of the next civil year
    mp += 3
    mp -= 12 * late
    year += late
    return year, mp, doy


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


def _month_ok(y, m, d, leap):
    # 1 <= m <= 12 and 1 <= d <= length, with unsigned views folding each pair of bounds into one test.
    idx = m & 15
    idx |= leap.view(np.uint8).astype(idx.dtype) << 4
    unsigned = np.uint32 if m.dtype == np.int32 else np.uint64
    ok = (m - 1).view(unsigned) < 12
    ok &= (d - 1).view(unsigned) < _LENGTHS.take(idx)
    return ok


def _jul_to(y, m, d):
    # Days counted in 4-year eras from a March-based year; in-place steps keep one temporary in cache.
    yy = y - (m <= 2)
    doy = m + 9
    doy %= 12
    doy *= 153
    doy += 2
    doy //= 5
    doy += d
    jdn = yy >> 2
    jdn *= 1461
    yy &= 3
    yy *= 365
    jdn += yy
    jdn += doy
    jdn += _JULIAN_MARCH_EPOCH - 1
    return jdn


def _greg_to(y, m, d):
    # Days counted in 400-year eras from a March-based year; in-place steps keep one temporary in cache.
    yy = y - (m <= 2)
    era = yy // 400
    yy -= era * 400                          # year of era, 0..399
    doe = yy * 365
    doe += yy >> 2
    doe -= yy // 100
    doy = m + 9
    doy %= 12
    doy *= 153
    doy += 2
    doy //= 5
    doy += d
    doe += doy
    era *= 146097
    era += doe
    era += _GREGORIAN_MARCH_EPOCH - 1
    return era


def _greg_to_checked(y, m, d):
    # Validate as if every fourth year were leap (the Julian rule), then reject February 29 of the
    # century years that are not multiples of 400: a handful of dates, looked at on their own.
    ok = _month_ok(y, m, d, (y & 3) == 0)
    feb29 = ok & (d == 29) & (m == 2)
    if feb29.any():
        idx = np.flatnonzero(feb29)
        yf = y[idx]
        ok[idx] = (yf % 100 != 0) | (yf % 400 == 0)
    return _greg_to(y, m, d), ok


def _jul_to_checked(y, m, d):
    return _jul_to(y, m, d), _month_ok(y, m, d, (y & 3) == 0)


def gregorian_to_jdn_checked(year, month, day):
    """Return (day numbers, validity mask) of proleptic Gregorian dates in one pass."""
    jdn, ok = _blocked(_greg_to_checked, (as_int_array(year), as_int_array(month), as_int_array(day)))
    return jdn, ok.astype(bool)


def julian_to_jdn_checked(year, month, day):
    """Return (day numbers, validity mask) of proleptic Julian dates in one pass."""
    jdn, ok = _blocked(_jul_to_checked, (as_int_array(year), as_int_array(month), as_int_array(day)))
    return jdn, ok.astype(bool)


def gregorian_to_jdn(year, month, day):
    """Return the day number of a proleptic Gregorian date (no validation)."""
    return _blocked(lambda *f: (_greg_to(*f),), (as_int_array(year), as_int_array(month), as_int_array(day)))[0]


def gregorian_from_jdn(jdn):
    """Return (year, month, day) int64 arrays of the proleptic Gregorian date of day ``jdn``."""
    return _blocked(_greg_from, (as_int_array(jdn),))


def julian_to_jdn(year, month, day):
    """Return the day number of a proleptic Julian date (no validation)."""
    return _blocked(lambda *f: (_jul_to(*f),), (as_int_array(year), as_int_array(month), as_int_array(day)))[0]


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
