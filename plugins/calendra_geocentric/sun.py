"""Ptolemy's solar model: the eccentric circle (Almagest III).

The Sun moves uniformly (its mean motion) on a circle of radius R = 60 whose
centre lies 2;30 from the Earth towards the apogee, fixed at Gemini 5;30
with respect to the equinoxes.  Seen from the Earth its longitude is the
mean longitude minus the equation of centre, which is greatest, 2;23, about
a quadrant from the apogee.

Sources (G. J. Toomer, *Ptolemy's Almagest*, 1984, cited by book and
chapter; O. Pedersen, *A Survey of the Almagest*, 1974; O. Neugebauer, *A
History of Ancient Mathematical Astronomy* (HAMA), 1975) are named beside
each parameter.  Time: Egyptian days from the epoch, Alexandria mean solar
time (see :mod:`calendra_geocentric._common`).
"""

from __future__ import annotations

import numpy as np

from ._common import ModelPosition, R, as_days, longitude_of, sexagesimal, unit, wrap360

#: Mean motion in longitude, degrees per Egyptian day: 0;59,8,17,13,12,31
#: (Almagest III.1; derived there from the tropical year of
#: 365;14,48 days = 365 1/4 - 1/300 days).
MEAN_MOTION_DEG_PER_DAY = sexagesimal(0, 59, 8, 17, 13, 12, 31)
#: Length of the tropical year, days: 365;14,48 (Almagest III.1).
TROPICAL_YEAR_DAYS = 365 + sexagesimal(0, 14, 48)
#: Mean longitude at the epoch (Nabonassar 1 Thoth 1, noon, Alexandria):
#: Pisces 0;45 = 330;45 (Almagest III.7; III.9 gives the same
#: as 265;15 from the apogee).
EPOCH_MEAN_LONGITUDE_DEG = sexagesimal(330, 45)
#: Longitude of the apogee, Gemini 5;30 = 65;30, fixed with respect to the
#: equinoxes (Almagest III.4).
APOGEE_DEG = sexagesimal(65, 30)
#: Eccentricity in units of R = 60: 2;30, i.e. 1/24 (Almagest III.4).
ECCENTRICITY = sexagesimal(2, 30)
#: Greatest equation of centre, as tabulated: 2;23 (Almagest III.6, the table
#: of the solar anomaly).  Kept for checks; the model
#: computes the equation from the geometry.
TABLE_GREATEST_EQUATION_DEG = sexagesimal(2, 23)


def mean_longitude(days):
    """Return the mean longitude of the Sun, degrees in [0, 360).

    Parameters
    ----------
    days : float or array_like
        Egyptian days since the Almagest epoch (Alexandria mean solar time).
    """
    return wrap360(EPOCH_MEAN_LONGITUDE_DEG + MEAN_MOTION_DEG_PER_DAY * as_days(days))


def equation_of_centre(mean_anomaly_deg):
    """Return true minus mean longitude, degrees, for a mean anomaly counted from the apogee.

    Negative (subtractive) for anomalies 0-180, as in Almagest III.6 and III.9:
    ``-atan(e sin a / (R + e cos a))``.
    """
    c, s = unit(mean_anomaly_deg)
    return -np.degrees(np.arctan2(ECCENTRICITY * s, R + ECCENTRICITY * c))


def position(days) -> ModelPosition:
    """Return the Sun of Almagest III at ``days`` Egyptian days after the epoch.

    Parameters
    ----------
    days : float or array_like
        Egyptian days since Nabonassar 1 Thoth 1, noon, Alexandria mean solar time.

    Returns
    -------
    ModelPosition
        Longitude (degrees, Ptolemy's tropical frame), latitude 0 by
        definition of the ecliptic, and the eccentric circle's geometry.
    """
    lam_mean = mean_longitude(days)
    ax, ay = unit(APOGEE_DEG)
    cx, cy = ECCENTRICITY * ax, ECCENTRICITY * ay      # centre of the eccentre
    mx, my = unit(lam_mean)
    sx, sy = cx + R * mx, cy + R * my                  # uniform motion about the centre
    lam = longitude_of(sx, sy)
    zero = np.zeros_like(lam)
    return ModelPosition(lam, zero, (sx, sy), (sx, sy), (cx + zero, cy + zero), (cx + zero, cy + zero))


#: Obliquity of the ecliptic used by Ptolemy: 23;51,20 (Almagest I.12,
#: "2 epsilon = 47;42,40"; from memory).
OBLIQUITY_DEG = sexagesimal(23, 51, 20)


def _mean_minus_right_ascension(days):
    """Mean longitude minus the right ascension of the true Sun, degrees (Almagest III.9)."""
    days = as_days(days)
    lam_mean = mean_longitude(days)
    lam = position(days).longitude_deg
    c, s = unit(lam)
    alpha = np.degrees(np.arctan2(np.cos(np.radians(OBLIQUITY_DEG)) * s, c))
    return np.mod(lam_mean - alpha + 180.0, 360.0) - 180.0


def equation_of_days_hours(days):
    """Return Ptolemy's equation of days, hours: apparent minus mean solar time since the epoch.

    Almagest III.9: the mean days are counted from the epoch; an apparent
    (sundial) time differs from them by the change, since the epoch, of the
    mean Sun minus the right ascension of the true Sun (his eccentric model,
    obliquity 23;51,20), at 15 degrees to the hour.

    Parameters
    ----------
    days : float or array_like
        Egyptian days since the epoch (either kind: the equation changes by
        under a second of time per minute).

    Returns
    -------
    ndarray
        Hours; mean time = apparent time - this value.
    """
    return (_mean_minus_right_ascension(days) - _mean_minus_right_ascension(0.0)) / 15.0


def mean_days_from_apparent(apparent_days):
    """Return mean solar days since the epoch for an apparent-time count ``apparent_days``.

    Use it for a time stated as Ptolemy states his observations ("3
    equinoctial hours before midnight" of a given Egyptian day, by the
    sundial or the astrolabe): :func:`calendra_geocentric._common.egyptian_days`
    gives the apparent count, this function the count the mean motions need.
    """
    apparent_days = as_days(apparent_days)
    days = apparent_days
    for _ in range(2):
        days = apparent_days - equation_of_days_hours(days) / 24.0
    return days
