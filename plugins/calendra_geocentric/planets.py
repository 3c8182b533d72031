"""Ptolemy's model of Venus, Mars, Jupiter and Saturn: eccentre, equant, epicycle (Almagest IX-XI, XIII).

Longitude
---------
The centre C of the epicycle moves on the deferent, a circle of radius
R = 60 whose centre D lies at the eccentricity e from the Earth O towards
the apogee A; C moves uniformly not about D but about the *equant* point E,
at 2e from O on the same line (the "bisected eccentricity").  The mean
longitude (the direction E -> C) grows uniformly; the planet moves
uniformly on the epicycle (radius r) with its mean anomaly, counted from
the mean epicyclic apogee, the point of the epicycle on the line E -> C.
For the outer planets mean longitude + mean anomaly = mean Sun; for Venus
the mean longitude *is* the mean Sun.  The apogees stay fixed with respect
to the fixed stars, so in Ptolemy's tropical frame they advance with his
precession, 1 degree in 100 Egyptian years (Almagest VII.2-3; IX.7, X.9).

The construction is computed exactly (plane geometry), not through
Ptolemy's tables of anomaly (XI.11), which reproduce it to a minute or two.

Latitude (the simplest form of Almagest XIII.1-3, stated precisely)
-----------------------------------------------------------------------
Outer planets: the deferent plane passes through the Earth inclined by
``i0`` to the ecliptic, its northern limit at a fixed distance from the
apogee (so it also moves with the precession); the latitude of C is
``asin(sin i0 cos u)``, u = longitude of C from the northern limit.  The
epicycle's apogee-perigee diameter is tilted out of the plane parallel to
the ecliptic by ``(i1 - i0) cos u`` (``i1`` is its inclination to the
deferent plane at the limits), the perigee lying on the same side as the
deferent; its transverse diameter stays parallel to the ecliptic, so at the
nodes the epicycle lies in the ecliptic (XIII.2).

Venus (and Mercury, :mod:`calendra_geocentric.mercury`): three components
(XIII.2-3): the *deviation* of the deferent, whose inclination oscillates as
``i0 cos k`` about a node line 90 deg from the apsides (k = longitude of C
from the apogee), which keeps Venus's deferent always north (Mercury's always
south) by up to ``i0``; the *inclination* of the epicycle's apogee-perigee
diameter, ``i_inc sin k``; and the *slant* of its transverse diameter,
``i_slant cos k``.  Ptolemy's variable tilts are otherwise simplified
(fixed amplitudes, small-angle composition of the three tilts); his tables
(XIII.5) and rules (XIII.6) are not reproduced.  Expect errors of a few
tenths of a degree from the simplification on top of the model's own.

Parameter sources are named beside each value: Toomer, *Ptolemy's
Almagest* (1984) by book and chapter; Pedersen, *A Survey of the Almagest*
(1974); Neugebauer, HAMA (1975).  Values marked "from memory" were recalled
without the source at hand; their cross-checks are stated.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._common import (ModelPosition, R, as_days, longitude_of, point_on_ray, sexagesimal as sx, unit,
                      wrap360)
from . import sun as _sun

#: Ptolemy's precession: 1 degree in 100 Egyptian years (Almagest VII.2-3;
#: also IX.7, X.1), applied to the planetary apogees and northern limits.
PRECESSION_DEG_PER_DAY = 1.0 / (100 * 365)


@dataclass(frozen=True)
class Planet:
    """The parameters of one planet's model (degrees, degrees per Egyptian day, units of R = 60)."""

    name: str
    motion_longitude: float     # mean motion in longitude, deg / Egyptian day
    motion_anomaly: float       # mean motion in anomaly, deg / Egyptian day
    epoch_longitude: float      # mean longitude at the epoch, deg
    epoch_anomaly: float        # mean anomaly at the epoch (from the mean epicyclic apogee), deg
    epoch_apogee: float         # longitude of the apogee at the epoch, deg
    eccentricity: float         # O -> D; the equant lies at twice it (Mercury: see its module)
    epicycle_radius: float
    inner: bool                 # Venus, Mercury: the latitude theory of the inner planets
    # outer planets' latitude
    deferent_inclination: float = 0.0        # i0
    epicycle_inclination: float = 0.0        # i1, to the deferent plane at the limits
    north_limit_from_apogee: float = 0.0     # longitude of the northern limit minus the apogee
    # inner planets' latitude
    deviation: float = 0.0                   # signed: + north (Venus), - south (Mercury)
    inclination: float = 0.0                 # signed amplitude of the apsidal-diameter tilt
    slant: float = 0.0                       # signed amplitude of the transverse-diameter tilt

    @property
    def synodic_period_days(self) -> float:
        """Mean period of the anomaly (one synodic period), Egyptian days."""
        return 360.0 / self.motion_anomaly

    def apogee(self, days):
        """Return the longitude of the apogee, degrees, at ``days`` after the epoch."""
        return wrap360(self.epoch_apogee + PRECESSION_DEG_PER_DAY * as_days(days))

    def mean_longitude(self, days):
        """Return the mean longitude (direction equant -> epicycle centre), degrees."""
        return wrap360(self.epoch_longitude + self.motion_longitude * as_days(days))

    def mean_anomaly(self, days):
        """Return the mean anomaly, degrees from the mean epicyclic apogee."""
        return wrap360(self.epoch_anomaly + self.motion_anomaly * as_days(days))


# Mean motions: the tables of Almagest IX.4, per Egyptian
# day to six sexagesimal places, as derived in IX.3 from the periods of return
# "corrected by us" (Ptolemy's words).  Each outer planet's two motions add up
# to the Sun's 0;59,8,17,13,12,31 exactly, which the tests check.
# Epochs (Nabonassar 1 Thoth 1 noon): Almagest IX.11 (Mercury), and the
# epoch chapters of Books X (Venus, Mars) and XI (Jupiter, Saturn), Toomer;
# chapter numbers below from memory except where a rendering was read.  The Jupiter epoch (Libra 4;41, 146;4, apogee Virgo
# 2;9) and the Mars epoch (Aries 3;32, 327;13, apogee Cancer 16;40) were read
# in public Spanish/English renderings of Toomer's XI.4 and X.9.
VENUS = Planet(
    "venus",
    motion_longitude=_sun.MEAN_MOTION_DEG_PER_DAY,      # = mean Sun (Almagest IX.3, X.1)
    motion_anomaly=sx(0, 36, 59, 25, 53, 11, 28),        # IX.4, from memory;
    #   IX.3 period: 5 returns in 8 years - 2;18 days (checked by the tests)
    epoch_longitude=sx(330, 45),                         # X.4: the mean Sun's, Pisces 0;45
    epoch_anomaly=sx(71, 7),                             # X.4, from memory
    epoch_apogee=sx(46, 10),                             # X.4: Taurus 16;10 (= Taurus 25 at AD 138
    #   less 8;50 of precession, X.1-2), from memory
    eccentricity=sx(1, 15),                              # X.2; equant at 2;30 (X.3)
    epicycle_radius=sx(43, 10),                          # X.2
    inner=True,
    deviation=+sx(0, 10),          # XIII.3: "Venus always about 1/6 deg north" (read in a public
    #                                Spanish rendering of Toomer's XIII.3)
    inclination=+sx(2, 30),        # XIII.3, from memory; sign: the epicycle's apogee
    #                                north when C is 90 deg past the apogee (from memory; agrees with
    #                                the modern node of Venus's orbit, ~60 deg in AD 137)
    slant=+sx(3, 30),              # XIII.3, from memory; consistent with the "about 5 deg" difference
    #                                between opposite greatest elongations that XIII.3 states
)

MARS = Planet(
    "mars",
    motion_longitude=sx(0, 31, 26, 36, 53, 51, 33),      # IX.4
    motion_anomaly=sx(0, 27, 41, 40, 19, 20, 58),        # IX.4
    epoch_longitude=sx(3, 32),                           # X.9: Aries 3;32
    epoch_anomaly=sx(327, 13),                           # X.9
    epoch_apogee=sx(106, 40),                            # X.9: Cancer 16;40 (115;30 at AD 138, X.7)
    eccentricity=sx(6, 0),                               # X.7; equant at 12
    epicycle_radius=sx(39, 30),                          # X.8
    inner=False,
    deferent_inclination=sx(1, 0),       # XIII.3, from memory
    epicycle_inclination=sx(2, 15),      # XIII.3, from memory; with i0 gives ~4;20 N and ~7 S at
    #                                      opposition at the limits, as XIII.3 reports (from memory)
    north_limit_from_apogee=0.0,         # XIII.1: "near the apogee" (end of Cancer), from memory
)

JUPITER = Planet(
    "jupiter",
    motion_longitude=sx(0, 4, 59, 14, 26, 46, 31),       # IX.4
    motion_anomaly=sx(0, 54, 9, 2, 46, 26, 0),           # IX.4
    epoch_longitude=sx(184, 41),                         # XI.4: Libra 4;41
    epoch_anomaly=sx(146, 4),                            # XI.4
    epoch_apogee=sx(152, 9),                             # XI.4: Virgo 2;9 (161 at AD 138, XI.1)
    eccentricity=sx(2, 45),                              # XI.1; equant at 5;30
    epicycle_radius=sx(11, 30),                          # XI.2
    inner=False,
    deferent_inclination=sx(1, 30),      # XIII.3, from memory
    epicycle_inclination=sx(2, 30),      # XIII.3, from memory
    north_limit_from_apogee=+20.0,       # XIII.1: 20 deg "to the rear" of the apogee, about the
    #                                      beginning of Libra (from memory; the modern northern limit
    #                                      of Jupiter's orbit was ~172 deg in AD 137)
)

SATURN = Planet(
    "saturn",
    motion_longitude=sx(0, 2, 0, 33, 31, 28, 51),        # IX.4
    motion_anomaly=sx(0, 57, 7, 43, 41, 43, 40),         # IX.4
    epoch_longitude=sx(296, 43),                         # XI.8, from memory
    epoch_anomaly=sx(34, 2),                             # XI.8, from memory
    epoch_apogee=sx(224, 10),                            # XI.8: Scorpio 14;10 (Scorpio 23 at AD 138,
    #                                                      XI.5), from memory
    eccentricity=sx(3, 25),                              # XI.5; equant at 6;50
    epicycle_radius=sx(6, 30),                           # XI.6
    inner=False,
    deferent_inclination=sx(2, 30),      # XIII.3, from memory
    epicycle_inclination=sx(4, 30),      # XIII.3, from memory
    north_limit_from_apogee=-50.0,       # XIII.1: 50 deg "in advance" of the apogee, about the
    #                                      beginning of Libra (from memory; modern: ~187 deg in AD 137)
)

PLANETS = {p.name: p for p in (VENUS, MARS, JUPITER, SATURN)}


def _latitude_outer(planet: Planet, days, cx, cy, px, py):
    """Latitude (degrees) of an outer planet, Almagest XIII.1-3 in the form stated in the module."""
    rho_c = np.hypot(cx, cy)
    north = planet.apogee(days) + planet.north_limit_from_apogee
    cu, _ = unit(longitude_of(cx, cy) - north)
    i0 = np.radians(planet.deferent_inclination)
    beta_c = np.arcsin(np.sin(i0) * cu)
    z_c = rho_c * np.tan(beta_c)
    # component of C -> P along O -> C (positive towards the epicycle's apogee)
    p_radial = ((px - cx) * cx + (py - cy) * cy) / rho_c
    tilt = np.radians(planet.epicycle_inclination - planet.deferent_inclination) * cu
    z_p = z_c - p_radial * np.tan(tilt)
    return np.degrees(np.arctan2(z_p, np.hypot(px, py)))


def latitude_inner(planet: Planet, days, cx, cy, px, py):
    """Latitude (degrees) of Venus or Mercury: deviation, inclination and slant (Almagest XIII.2-3).

    Parameters
    ----------
    planet : Planet
        With signed ``deviation``, ``inclination`` and ``slant`` amplitudes, degrees.
    days : ndarray
        Egyptian days since the epoch (for the apogee's precession).
    cx, cy, px, py : ndarray
        Epicycle centre and planet in the ecliptic plane (units of R = 60).
    """
    rho_c = np.hypot(cx, cy)
    ck, sk = unit(longitude_of(cx, cy) - planet.apogee(days))
    # deviation: deferent inclined by dev * cos k about a node line 90 deg from the apsides
    beta_c = np.radians(planet.deviation) * ck * ck
    z_c = rho_c * np.tan(beta_c)
    ux, uy = cx / rho_c, cy / rho_c                    # towards the epicycle's true apogee
    dx, dy = px - cx, py - cy
    p_radial = dx * ux + dy * uy
    p_trans = -dx * uy + dy * ux                        # towards increasing longitude
    inc = np.radians(planet.inclination) * sk
    slant = np.radians(planet.slant) * ck
    z_p = z_c + p_radial * np.tan(inc) + p_trans * np.tan(slant)
    return np.degrees(np.arctan2(z_p, np.hypot(px, py)))


def position_from_mean(planet: Planet, mean_longitude_deg, mean_anomaly_deg, apogee_deg, days=None) -> ModelPosition:
    """Return the planet for given mean longitude, mean anomaly and apogee (degrees).

    This is the geometric step of Almagest XI.9-11 without the time
    argument, so that Ptolemy's own mean positions can be entered.  The
    latitude needs ``days`` (for the precessing northern limit / apogee);
    without it the latitude is NaN.
    """
    lam_mean = np.asarray(mean_longitude_deg, dtype=float)
    ax, ay = unit(apogee_deg)
    e = planet.eccentricity
    dx, dy = e * ax, e * ay                  # deferent centre
    ex, ey = 2 * e * ax, 2 * e * ay          # equant
    cx, cy = point_on_ray(ex, ey, lam_mean, dx, dy, R)
    # the mean epicyclic apogee lies on the line equant -> C; the anomaly is counted from it
    qx, qy = unit(lam_mean + np.asarray(mean_anomaly_deg, dtype=float))
    px, py = cx + planet.epicycle_radius * qx, cy + planet.epicycle_radius * qy
    lam = longitude_of(px, py)
    if days is None:
        lat = np.full_like(lam, np.nan)
    elif planet.inner:
        lat = latitude_inner(planet, days, cx, cy, px, py)
    else:
        lat = _latitude_outer(planet, days, cx, cy, px, py)
    zero = np.zeros_like(lam)
    return ModelPosition(lam, lat, (px, py), (cx, cy), (dx + zero, dy + zero), (ex + zero, ey + zero))


def position(name_or_planet, days) -> ModelPosition:
    """Return Venus, Mars, Jupiter or Saturn of the Almagest at ``days`` after the epoch.

    Parameters
    ----------
    name_or_planet : str or Planet
        ``'venus'``, ``'mars'``, ``'jupiter'``, ``'saturn'`` or a :class:`Planet`.
    days : float or array_like
        Egyptian days since Nabonassar 1 Thoth 1, noon, Alexandria mean solar time.

    Returns
    -------
    ModelPosition
        Longitude and latitude, degrees (Ptolemy's frame), and the construction.
    """
    planet = PLANETS[name_or_planet] if isinstance(name_or_planet, str) else name_or_planet
    days = as_days(days)
    return position_from_mean(planet, planet.mean_longitude(days), planet.mean_anomaly(days),
                              planet.apogee(days), days)
