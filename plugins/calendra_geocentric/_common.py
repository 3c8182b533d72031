"""Shared pieces of the geocentric models: the time argument, sexagesimal numbers, angles.

The time argument of the Almagest
---------------------------------
Every mean motion of the *Almagest* is counted in Egyptian days (exactly
365 to the year) from its epoch, **Nabonassar year 1, Thoth 1, noon, on the
meridian of Alexandria** (Almagest III.7; IX.11 for the planets; G. J.
Toomer, *Ptolemy's Almagest*, 1984).  That noon is the noon of Julian Day
number 1448638 (-746 February 26, Julian calendar, astronomical years;
calendra's reference table ``../shared/reference/check_values.md`` §8),
taken at Alexandria rather than at Greenwich.

Ptolemy reckons "with respect to the local time at Alexandria" (III.9) in
mean solar days: he converts apparent to mean time with his equation of
days (III.9).  Mean solar time at Alexandria is a form of Universal Time
shifted by the meridian, so this module maps

    days = JD(UT1) + ALEXANDRIA_LONGITUDE_DEG / 360 - EPOCH_JD

where JD(UT1) = JD(TT) - delta T / 86400 through a calendra delta-T model.
Delta T matters: about 2.5 h around AD 137 and 5.8 h around 700 BC, during
which the Moon moves 1.4 and 3.2 degrees.

Angles are in degrees throughout; lengths in the models are in Ptolemy's
units, the radius of the deferent R = 60.
"""

from __future__ import annotations

import numpy as np

#: Julian Day (UT, at Greenwich) of the noon of 1 Thoth, Nabonassar year 1.
#: The Almagest epoch is that noon at Alexandria (see :data:`EPOCH_JD_UT`).
EPOCH_JD = 1448638.0
#: Longitude of Alexandria, degrees east of Greenwich: 29 deg 55' E, the
#: modern position of the city (common practice; Ptolemy's own meridian
#: differences are used only for his observations, not here).
ALEXANDRIA_LONGITUDE_DEG = 29.9167
#: The Almagest epoch as a Julian Day in UT: mean noon at Alexandria.
EPOCH_JD_UT = EPOCH_JD - ALEXANDRIA_LONGITUDE_DEG / 360.0
#: Days in the Egyptian civil year (12 x 30 + 5 epagomenal days, no leap day).
EGYPTIAN_YEAR_DAYS = 365
#: Deferent radius in the Almagest's units.
R = 60.0


def sexagesimal(*digits) -> float:
    """Return the value of a sexagesimal number given as its digits.

    ``sexagesimal(0, 59, 8, 17)`` is 0;59,8,17 = 59/60 + 8/60**2 + 17/60**3.
    A negative number is written with every digit negative.

    Examples
    --------
    >>> round(sexagesimal(2, 30), 6)
    2.5
    """
    return float(sum(d / 60.0 ** i for i, d in enumerate(digits)))


def to_sexagesimal(value: float, places: int = 2) -> str:
    """Return ``value`` in the form ``D;MM,SS`` with ``places`` sexagesimal places (rounded)."""
    sign = "-" if value < 0 else ""
    units = round(abs(float(value)) * 60 ** places)
    digits = []
    for _ in range(places):
        units, d = divmod(units, 60)
        digits.append(d)
    return f"{sign}{units};" + ",".join(f"{d:02d}" for d in reversed(digits))


def wrap360(deg):
    """Return angles reduced to [0, 360) degrees (arrays in, arrays out)."""
    return np.mod(deg, 360.0)


def wrap180(deg):
    """Return angles reduced to [-180, 180) degrees (arrays in, arrays out)."""
    return np.mod(np.asarray(deg, dtype=float) + 180.0, 360.0) - 180.0


def as_days(days) -> np.ndarray:
    """Return ``days`` as a float64 array (any shape; lists accepted)."""
    return np.asarray(days, dtype=np.float64)


def egyptian_days(year, month, day, hours_after_noon=0.0):
    """Return Egyptian days from the Almagest epoch to a Nabonassar date and hour.

    Parameters
    ----------
    year : int or array_like
        Year of the Era of Nabonassar (year 1 is the first year).
    month : int or array_like
        1 (Thoth) to 12 (Mesore); 13 for the five epagomenal days.
    day : int or array_like
        Day of the month, 1-30 (1-5 for the epagomenal days).
    hours_after_noon : float or array_like
        Equinoctial hours after noon of that day at Alexandria (negative
        before noon), mean solar time.

    Returns
    -------
    ndarray
        Days (mean solar days at Alexandria) since 1 Thoth of year 1, noon.

    Examples
    --------
    Ptolemy's Saturn observation of Antoninus 2 (Nabonassar 886), Mecchir 6,
    4 equinoctial hours before midnight (Almagest XI.6):

    >>> float(egyptian_days(886, 6, 6, 8))
    323180.3333333333
    """
    year = np.asarray(year)
    month = np.asarray(month)
    day = np.asarray(day)
    return ((year - 1) * EGYPTIAN_YEAR_DAYS + (month - 1) * 30 + (day - 1)
            + np.asarray(hours_after_noon, dtype=float) / 24.0)


def days_from_jd_ut(jd_ut):
    """Return Egyptian days from the Almagest epoch at Julian Day(s) ``jd_ut`` (UT1)."""
    return as_days(jd_ut) - EPOCH_JD_UT


def jd_ut_from_days(days):
    """Return the Julian Day (UT1) of ``days`` Egyptian days after the Almagest epoch."""
    return as_days(days) + EPOCH_JD_UT


def _model(deltat):
    from calendra.deltat import DEFAULT_MODEL, get_model

    return get_model(deltat if deltat is not None else DEFAULT_MODEL)


def days_from_jd_tt(jd_tt, deltat=None):
    """Return Egyptian days from the Almagest epoch at Julian Day(s) ``jd_tt`` (TT).

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT.
    deltat : str, DeltaTModel or None
        Delta-T model (see :func:`calendra.deltat.get_model`), default model if None.

    Returns
    -------
    ndarray
        Mean solar days at Alexandria since Nabonassar 1 Thoth 1, noon.
    """
    jd_tt = as_days(jd_tt)
    return days_from_jd_ut(_model(deltat).ut_from_tt(jd_tt))


def jd_tt_from_days(days, deltat=None):
    """Return the Julian Day (TT) of ``days`` Egyptian days after the Almagest epoch."""
    return np.asarray(_model(deltat).tt_from_ut(jd_ut_from_days(days)), dtype=float)


def unit(angle_deg):
    """Return (cos, sin) of ``angle_deg`` as a pair of arrays."""
    a = np.radians(angle_deg)
    return np.cos(a), np.sin(a)


def longitude_of(x, y):
    """Return the direction of the vector (x, y) as a longitude in [0, 360) degrees."""
    return wrap360(np.degrees(np.arctan2(y, x)))


def point_on_ray(ox, oy, direction_deg, cx, cy, radius):
    """Return where a ray from (ox, oy) in ``direction_deg`` meets a circle.

    The ray starts inside the circle of centre (cx, cy) and ``radius``; the
    single forward intersection is returned as (x, y).  This is the step
    "the epicycle centre lies on the deferent, seen from the equant in the
    direction of the mean motion" of every Almagest model.
    """
    wx, wy = unit(direction_deg)
    vx, vy = ox - cx, oy - cy
    b = vx * wx + vy * wy
    s = -b + np.sqrt(b * b - (vx * vx + vy * vy) + radius * radius)
    return ox + s * wx, oy + s * wy


class ModelPosition:
    """Where an Almagest model puts a body, with the construction behind it.

    Attributes
    ----------
    longitude_deg, latitude_deg : ndarray
        Ecliptic longitude and latitude, degrees, in Ptolemy's frame (the
        tropical frame of his equinox; see :mod:`calendra_geocentric.compare`).
    body_xy : tuple of ndarray
        The body in the ecliptic plane, geocentric, x towards longitude 0,
        in units of the deferent radius R = 60.
    centre_xy : tuple of ndarray
        Centre of the epicycle (the body itself for the Sun).
    deferent_centre_xy, equant_xy : tuple of ndarray
        Centre of the deferent and the point of uniform motion.
    """

    __slots__ = ("longitude_deg", "latitude_deg", "body_xy", "centre_xy", "deferent_centre_xy", "equant_xy")

    def __init__(self, longitude_deg, latitude_deg, body_xy, centre_xy, deferent_centre_xy, equant_xy):
        self.longitude_deg = longitude_deg
        self.latitude_deg = latitude_deg
        self.body_xy = body_xy
        self.centre_xy = centre_xy
        self.deferent_centre_xy = deferent_centre_xy
        self.equant_xy = equant_xy

    def __repr__(self) -> str:
        return f"ModelPosition(longitude_deg={self.longitude_deg!r}, latitude_deg={self.latitude_deg!r})"
