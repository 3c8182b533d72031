"""Day numbers and Julian Days.

Conventions used throughout calendra:

* A *Julian Day* (``jd``) is a float count of days from -4712 January 1,
  12:00 (Julian proleptic calendar), in whatever time scale the caller names
  (TT for instants, UT for civil days).
* A *day number* (``jdn``) is the integer chronological Julian Day Number of
  a civil day running from midnight to midnight: ``jdn = floor(jd + 0.5)``.
  The civil day ``jdn`` starts at ``jd = jdn - 0.5``.
* *RD* (Rata Die, fixed day number of Reingold & Dershowitz) is
  ``jdn - 1721425``, so RD 1 is Gregorian 0001-01-01.
* *MJD* is ``jd - 2400000.5``.
* Weekdays are numbered 0 = Sunday ... 6 = Saturday (the convention of
  Calendrical Calculations, RD mod 7).

All functions accept scalars, lists or numpy arrays; array input gives array
output of the same shape, scalar input gives a numpy scalar.
"""

from __future__ import annotations

import numpy as np

#: Offset between the chronological Julian Day Number and Rata Die.
RD_EPOCH_JDN = 1721425
#: Offset between JD and MJD.
MJD_OFFSET = 2400000.5
#: J2000.0 as a Julian Day (TT).
J2000 = 2451545.0
#: Seconds per day.
DAY_S = 86400.0

WEEKDAY_NAMES = ("Sunday", "Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday")


def as_int_array(values) -> np.ndarray:
    """Return ``values`` as an int64 array, rejecting non-integral floats.

    Raises
    ------
    ValueError
        If a value is not a whole number.
    """
    arr = np.asarray(values)
    if arr.dtype.kind in "iu":
        return arr.astype(np.int64, copy=False)
    if arr.dtype.kind == "b":
        return arr.astype(np.int64)
    farr = arr.astype(np.float64)
    if not np.all(np.isfinite(farr)) or np.any(farr != np.floor(farr)):
        raise ValueError(f"expected whole numbers, got {values!r}")
    return farr.astype(np.int64)


def split_jd(jd):
    """Split a Julian Day into a civil day number and the fraction of that day.

    Parameters
    ----------
    jd : float or array_like
        Julian Day (any time scale).

    Returns
    -------
    jdn : int64 array
        Chronological day number, ``floor(jd + 0.5)``.
    fraction : float array
        Fraction of the civil day elapsed since midnight, in [0, 1).
    """
    jd = np.asarray(jd, dtype=np.float64)
    shifted = jd + 0.5
    jdn = np.floor(shifted)
    return jdn.astype(np.int64), shifted - jdn


def jdn_to_jd(jdn, fraction=0.0):
    """Return the Julian Day of a moment ``fraction`` of a day after the midnight that starts day ``jdn``."""
    return np.asarray(jdn, dtype=np.float64) - 0.5 + np.asarray(fraction, dtype=np.float64)


def weekday(jdn):
    """Return the weekday of day number ``jdn``: 0 = Sunday ... 6 = Saturday."""
    return (as_int_array(jdn) + 1) % 7


def jdn_to_rd(jdn):
    """Return the Rata Die fixed day number of day number ``jdn``."""
    return as_int_array(jdn) - RD_EPOCH_JDN


def rd_to_jdn(rd):
    """Return the day number of Rata Die ``rd``."""
    return as_int_array(rd) + RD_EPOCH_JDN


def jd_to_mjd(jd):
    """Return the Modified Julian Day of Julian Day ``jd``."""
    return np.asarray(jd, dtype=np.float64) - MJD_OFFSET


def mjd_to_jd(mjd):
    """Return the Julian Day of Modified Julian Day ``mjd``."""
    return np.asarray(mjd, dtype=np.float64) + MJD_OFFSET
