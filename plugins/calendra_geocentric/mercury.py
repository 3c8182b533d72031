"""Ptolemy's model of Mercury: the deferent whose centre revolves (Almagest IX.8-9, XIII).

Mercury's mean longitude is the mean Sun.  The equant E lies at the
eccentricity e = 3 from the Earth O towards the apogee A; the epicycle centre
C moves uniformly about E (the direction E -> C is the mean longitude).  But
the deferent's centre D is not fixed: it turns on a small circle of radius e
about the point F at 2e from O (beyond E), in the opposite sense to the mean
motion and at the same rate, so that the angle A-F-D equals minus the mean
distance from the apogee.  At that distance 0, D lies 3e = 9 from O and the
epicycle is farthest (69); at 180 D coincides with E (57); the nearest
distances, about 55;34, fall near +-120 deg from the apogee, Mercury's "two
perigees" (IX.8-9; the figures from memory, also discussed by Pedersen, Survey,
and Neugebauer, HAMA, in their chapters on Mercury).

The planet moves on the epicycle (radius 22;30) with its mean anomaly,
counted from the mean epicyclic apogee on the line E -> C.

Latitude: the inner-planet scheme of :func:`calendra_geocentric.planets.latitude_inner`
(deviation always south, inclination, slant; XIII.2-3).

Time: Egyptian days from the epoch, Alexandria mean solar time.
"""

from __future__ import annotations

import numpy as np

from ._common import ModelPosition, R, as_days, longitude_of, point_on_ray, sexagesimal as sx, unit
from . import sun as _sun
from .planets import Planet, latitude_inner

MERCURY = Planet(
    "mercury",
    motion_longitude=_sun.MEAN_MOTION_DEG_PER_DAY,      # = mean Sun (Almagest IX.3)
    motion_anomaly=sx(3, 6, 24, 6, 59, 35, 50),          # IX.4, from memory; IX.3 period: 145
    #   returns in 46 years + 1;2 days (checked by the tests)
    epoch_longitude=sx(330, 45),                         # IX.11: the mean Sun's, Pisces 0;45 (read in
    #   a public Spanish rendering of Toomer's IX.11)
    epoch_anomaly=sx(21, 55),                            # IX.11 (read, as above)
    epoch_apogee=sx(181, 10),                            # IX.11: "about Libra 1 1/6" (read, as above)
    eccentricity=sx(3, 0),                               # IX.9: O -> E = E -> F = F -> D = 3
    epicycle_radius=sx(22, 30),                          # IX.9
    inner=True,
    deviation=-sx(0, 45),          # XIII.3: "Mercury always 3/4 deg south" (read, as above)
    inclination=-sx(6, 15),        # XIII.3, from memory; sign: the epicycle's apogee south when C is
    #                                90 deg past the apogee (from memory; agrees with the modern node of
    #                                Mercury's orbit, ~26 deg in AD 137)
    slant=-sx(7, 0),               # XIII.3, from memory; consistent with XIII.3's "about 5 deg"
    #                                difference between opposite greatest elongations
)


def position_from_mean(mean_longitude_deg, mean_anomaly_deg, apogee_deg, days=None) -> ModelPosition:
    """Return Mercury for given mean longitude, mean anomaly and apogee (degrees).

    The geometric step of Almagest IX.9 and XI.9 without the time argument.
    The latitude needs ``days`` (for the precessing apogee); without it the
    latitude is NaN.
    """
    lam_mean = np.asarray(mean_longitude_deg, dtype=float)
    apogee = np.asarray(apogee_deg, dtype=float)
    e = MERCURY.eccentricity
    ax, ay = unit(apogee)
    ex, ey = e * ax, e * ay                          # equant
    fx, fy = 2 * e * ax, 2 * e * ay                  # centre of the small circle
    ux, uy = unit(apogee - (lam_mean - apogee))      # angle A-F-D = -(mean distance from apogee)
    dx, dy = fx + e * ux, fy + e * uy                # the moving deferent centre
    cx, cy = point_on_ray(ex, ey, lam_mean, dx, dy, R)
    qx, qy = unit(lam_mean + np.asarray(mean_anomaly_deg, dtype=float))
    px, py = cx + MERCURY.epicycle_radius * qx, cy + MERCURY.epicycle_radius * qy
    lam = longitude_of(px, py)
    if days is None:
        lat = np.full_like(lam, np.nan)
    else:
        lat = latitude_inner(MERCURY, days, cx, cy, px, py)
    zero = np.zeros_like(lam)
    return ModelPosition(lam, lat, (px, py), (cx, cy), (dx, dy), (ex + zero, ey + zero))


def position(days) -> ModelPosition:
    """Return Mercury of the Almagest at ``days`` Egyptian days after the epoch.

    Parameters
    ----------
    days : float or array_like
        Egyptian days since Nabonassar 1 Thoth 1, noon, Alexandria mean solar time.

    Returns
    -------
    ModelPosition
        Longitude and latitude, degrees (Ptolemy's frame), and the construction
        (``deferent_centre_xy`` moves).
    """
    days = as_days(days)
    return position_from_mean(MERCURY.mean_longitude(days), MERCURY.mean_anomaly(days),
                              MERCURY.apogee(days), days)
