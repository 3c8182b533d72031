"""Ptolemy's lunar model: first and second anomalies, prosneusis, latitude (Almagest IV-V).

Construction (Almagest V.2-V.5)
-------------------------------
* The epicycle centre C moves uniformly about the Earth O with the mean
  longitude: O -> C points at the mean Moon.
* C lies on an eccentre of radius 49;41 whose centre D is 10;19 from O
  (so the apogee distance is 60).  D revolves about O in the opposite sense:
  the eccentre's apogee is as far west of the mean Sun as the mean Moon is
  east of it, so the mean Moon is the *double elongation* 2 eta from the
  apogee.  At syzygy the epicycle is at the apogee, at quadrature near the
  perigee (distance 39;22), which produces the second anomaly.
* The Moon moves on the epicycle (radius 5;15) with the mean anomaly,
  counted from the *mean* epicyclic apogee, the point on the line from the
  prosneusis point N through C, where N lies 10;19 from O opposite D (V.5).
  The lunar epicycle turns the other way from the planets': at its apogee
  the Moon moves westward, so for anomalies 0-180 the equation is subtracted.

The greatest equation is 5;1 at syzygy (the first anomaly alone, IV.6) and
7;40 at quadrature (V.3: "about 7 2/3 deg").

Latitude (Almagest V.12, IV.9)
------------------------------
The Moon moves on a circle inclined 5 deg to the ecliptic whose nodes
regress; the argument of latitude is counted from the northern limit and
corrected by the same equation as the longitude (V.9), and the latitude is
``asin(sin 5 deg * cos(argument))``.  The longitude is not reduced from
the inclined circle to the ecliptic (at most about 0;7 deg), as Ptolemy
also neglects it.

Parallax is not applied: these are geocentric positions (Ptolemy's
parallax theory of V.13-19 belongs to topocentric positions).

Time: Egyptian days from the epoch, Alexandria mean solar time.
"""

from __future__ import annotations

import numpy as np

from ._common import ModelPosition, as_days, longitude_of, sexagesimal as sx, unit, wrap360, wrap180
from . import sun as _sun

#: Mean motion in longitude, degrees per Egyptian day: 13;10,34,58,33,30,30
#: (Almagest IV.4, the daily mean motions; from memory).
MOTION_LONGITUDE = sx(13, 10, 34, 58, 33, 30, 30)
#: Mean motion in anomaly: 13;3,53,56,17,51,59 (Almagest IV.4, as corrected in IV.7; from memory).
MOTION_ANOMALY = sx(13, 3, 53, 56, 17, 51, 59)
#: Mean motion in argument of latitude: 13;13,45,39,48,56,37 (Almagest IV.4, as corrected in IV.9; from memory).
MOTION_LATITUDE = sx(13, 13, 45, 39, 48, 56, 37)
#: Mean motion in elongation as tabulated: 12;11,26,41,20,17,59 (Almagest IV.4;
#: from memory).  The model uses longitude minus mean Sun, which equals it
#: to the last digit (checked by the tests).
TABLE_MOTION_ELONGATION = sx(12, 11, 26, 41, 20, 17, 59)

#: Mean longitude at the epoch: Taurus 11;22 = 41;22 (Almagest IV.7; from memory).
EPOCH_LONGITUDE = sx(41, 22)
#: Mean anomaly at the epoch: 268;49 (Almagest IV.7; from memory).
EPOCH_ANOMALY = sx(268, 49)
#: Mean argument of latitude at the epoch, from the northern limit: 354;15 (Almagest IV.9; from memory).
EPOCH_LATITUDE = sx(354, 15)
#: Mean elongation at the epoch: 70;37 = 41;22 - 330;45 (Almagest IV.7).
EPOCH_ELONGATION = sx(70, 37)

#: Epicycle radius, 5;15 in units where the eccentre's apogee distance is 60 (Almagest IV.6, V.4).
EPICYCLE_RADIUS = sx(5, 15)
#: Distance of the eccentre's centre (and of the prosneusis point) from the Earth: 10;19 (Almagest V.4, V.5).
ECCENTRICITY = sx(10, 19)
#: Radius of the eccentre: 49;41 = 60 - 10;19 (Almagest V.4).
ECCENTRE_RADIUS = sx(49, 41)
#: Inclination of the lunar circle to the ecliptic: 5 deg (Almagest V.12).
INCLINATION_DEG = 5.0
#: Mean synodic month implied by the mean motions, days.
SYNODIC_MONTH_DAYS = 360.0 / (MOTION_LONGITUDE - _sun.MEAN_MOTION_DEG_PER_DAY)


def mean_arguments(days):
    """Return the Moon's mean arguments at ``days`` Egyptian days after the epoch.

    Returns
    -------
    dict of ndarray
        ``longitude``, ``anomaly``, ``latitude`` (argument of latitude from
        the northern limit), ``elongation`` (mean Moon - mean Sun) and
        ``sun`` (mean Sun), degrees in [0, 360).
    """
    days = as_days(days)
    lam = wrap360(EPOCH_LONGITUDE + MOTION_LONGITUDE * days)
    lam_sun = _sun.mean_longitude(days)
    return {
        "longitude": lam,
        "anomaly": wrap360(EPOCH_ANOMALY + MOTION_ANOMALY * days),
        "latitude": wrap360(EPOCH_LATITUDE + MOTION_LATITUDE * days),
        "elongation": wrap360(lam - lam_sun),
        "sun": lam_sun,
    }


def position_from_mean(mean_longitude_deg, mean_anomaly_deg, mean_elongation_deg,
                       argument_of_latitude_deg=None) -> ModelPosition:
    """Return the Moon for given mean longitude, anomaly, elongation (and argument of latitude), degrees.

    This is the geometric step of Almagest V.9-10 without the time argument,
    so that Ptolemy's own mean positions can be entered.  Without the
    argument of latitude the latitude is NaN.
    """
    lam_mean = np.asarray(mean_longitude_deg, dtype=float)
    two_eta = 2.0 * np.asarray(mean_elongation_deg, dtype=float)
    e = ECCENTRICITY
    ax, ay = unit(lam_mean - two_eta)                 # towards the eccentre's apogee
    dx, dy = e * ax, e * ay                           # centre of the eccentre
    nx, ny = -dx, -dy                                 # prosneusis point, opposite D
    # C on the ray O -> mean Moon at ECCENTRE_RADIUS from D
    wx, wy = unit(lam_mean)
    b = -(dx * wx + dy * wy)
    s = -b + np.sqrt(b * b - (dx * dx + dy * dy) + ECCENTRE_RADIUS ** 2)
    cx, cy = s * wx, s * wy
    # mean epicyclic apogee: on the line N -> C; the anomaly is counted from it westwards
    gx, gy = cx - nx, cy - ny
    apo = longitude_of(gx, gy)
    qx, qy = unit(apo - np.asarray(mean_anomaly_deg, dtype=float))
    px, py = cx + EPICYCLE_RADIUS * qx, cy + EPICYCLE_RADIUS * qy
    lam = longitude_of(px, py)
    if argument_of_latitude_deg is None:
        lat = np.full_like(lam, np.nan)
    else:
        arg = np.asarray(argument_of_latitude_deg, dtype=float) + wrap180(lam - lam_mean)
        lat = np.degrees(np.arcsin(np.sin(np.radians(INCLINATION_DEG)) * np.cos(np.radians(arg))))
    return ModelPosition(lam, lat, (px, py), (cx, cy), (dx, dy), (nx, ny))


def position(days) -> ModelPosition:
    """Return the Moon of the Almagest at ``days`` Egyptian days after the epoch.

    Parameters
    ----------
    days : float or array_like
        Egyptian days since Nabonassar 1 Thoth 1, noon, Alexandria mean solar time.

    Returns
    -------
    ModelPosition
        Longitude and latitude, degrees (Ptolemy's frame); ``centre_xy`` is
        the epicycle centre, ``deferent_centre_xy`` the revolving centre of
        the eccentre and ``equant_xy`` the prosneusis point (units: the
        eccentre's apogee distance = 60).
    """
    m = mean_arguments(days)
    return position_from_mean(m["longitude"], m["anomaly"], m["elongation"], m["latitude"])


def greatest_equation(mean_elongation_deg, samples: int = 7201):
    """Return the greatest |true - mean longitude| over the anomaly, degrees, at fixed elongations.

    Parameters
    ----------
    mean_elongation_deg : float or array_like
        Mean elongation(s) of the Moon from the mean Sun.
    samples : int
        Anomalies sampled over a full turn.
    """
    eta = np.atleast_1d(np.asarray(mean_elongation_deg, dtype=float))
    anomaly = np.linspace(0.0, 360.0, samples)
    lam0 = 100.0
    pos = position_from_mean(lam0, anomaly[None, :], eta[:, None])
    return np.max(np.abs(wrap180(pos.longitude_deg - lam0)), axis=1)
