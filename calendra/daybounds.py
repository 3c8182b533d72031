"""Which calendar day an instant falls on, for calendars whose day begins at
midnight, noon, sunset or sunrise.

The civil day at a site runs from local midnight to local midnight in the
site's civil time (its zone, or local mean time).  A calendar whose day
begins at sunset numbers the evening after sunset with the *next* civil day
(the day labelled N begins at sunset on civil day N-1, as in the Babylonian,
Hebrew and Islamic calendars); one whose day begins at sunrise counts the
hours before sunrise with the previous day; one whose day begins at noon
(the astronomers' day before 1925) starts day N at noon of civil day N.

Sunrise and sunset are those of the Sun's upper limb on the astronomical
horizon with standard refraction (altitude of the centre -0.8333 degrees,
the common practice of almanacs) unless the caller passes another altitude.
"""

from __future__ import annotations

import numpy as np

from .daylib import split_jd
from .errors import ParameterError

#: Altitude of the Sun's centre at rising and setting: refraction 34' + semi-diameter 16' (common practice).
STANDARD_SUN_ALTITUDE_DEG = -0.8333


def civil_day(jd_ut, site=None):
    """Return the civil day number at the site (UT day when no site) of instants ``jd_ut`` (UT1)."""
    offset = site.offset_days if site is not None else 0.0
    jdn, _ = split_jd(np.asarray(jd_ut, dtype=float) + offset)
    return jdn


def calendar_day(jd_ut, day_start, site=None, deltat=None, altitude_deg=STANDARD_SUN_ALTITUDE_DEG):
    """Return the day number (the label of the calendar day) on which instants fall.

    Parameters
    ----------
    jd_ut : float or array_like
        Instants, Julian Days in UT1.
    day_start : str
        ``midnight``, ``noon``, ``sunset`` or ``sunrise``.
    site : Site or None
        Needed for sunset and sunrise; gives the civil time otherwise.
    deltat : delta-T model or None
    altitude_deg : float
        Altitude of the Sun's centre defining sunset/sunrise, degrees.

    Returns
    -------
    int64 array
        Day number N such that the instant lies within the calendar day that
        the calendar labels with civil day N's date.
    """
    jd_ut = np.asarray(jd_ut, dtype=float)
    day = civil_day(jd_ut, site)
    if day_start == "midnight":
        return day
    offset = site.offset_days if site is not None else 0.0
    if day_start == "noon":
        return np.floor(jd_ut + offset).astype(np.int64)
    if day_start not in ("sunset", "sunrise"):
        raise ParameterError(f"unknown day start {day_start!r}")
    if site is None:
        raise ParameterError(f"a calendar whose day begins at {day_start} needs a site to place an instant on a day")
    from .deltat import DEFAULT_MODEL, get_model

    model = deltat or get_model(DEFAULT_MODEL)
    if day_start == "sunset":
        t_set = sun_crossing(day, site, model, rising=False, altitude_deg=altitude_deg)
        return day + (jd_ut >= t_set)
    t_rise = sun_crossing(day, site, model, rising=True, altitude_deg=altitude_deg)
    return day - (jd_ut < t_rise)


def sun_crossing(day, site, deltat, rising: bool, altitude_deg=STANDARD_SUN_ALTITUDE_DEG):
    """Return the UT1 Julian Day when the Sun's centre crosses ``altitude_deg`` on civil day ``day`` at the site.

    Vectorized over ``day``; computed by :func:`calendra.riseset.sun_crossing_on_days`
    (a guess per day from the hour angle, then Newton steps on the apparent
    topocentric altitude from DE406 through skyfield).  Polar days or nights
    give NaN.

    Parameters
    ----------
    day : int or array_like
        Civil day numbers at the site.
    site : Site
    deltat : delta-T model
    rising : bool
        True for the morning crossing, False for the evening.
    altitude_deg : float
        Airless altitude of the Sun's centre, degrees (refraction and
        semi-diameter included in the value).
    """
    from .riseset import sun_crossing_on_days

    return sun_crossing_on_days(np.asarray(day, dtype=np.int64), site, deltat, rising=rising,
                                altitude_deg=altitude_deg)
