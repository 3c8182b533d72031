"""Shared geometry of the eclipse plugin: apparent Sun and Moon, the Earth's orientation, constants.

Positions
---------
Geocentric Sun and Moon come from DE406 through
:func:`calendra.solarterms.geocentric_states` and are made *apparent*
(light time and annual aberration, ``r - v |r|/c``) by
:func:`calendra.solarterms.apparent`: the direction in which each body is
seen from the geocentre, and the direction along which sunlight travels in
the Earth's frame, so that the Earth's shadow points exactly away from the
apparent Sun.  Vectors are GCRS, km; velocities km/day.

The Earth's orientation
-----------------------
A GCRS vector is taken to the true equator and equinox of date with the
long-term precession of Vondrák, Capitaine & Wallace (2011) (the mean
ecliptic and equator poles as :mod:`calendra.solarterms` evaluates them)
and the IAU 2000B selection of the IAU 2000A nutation (77 luni-solar terms,
as skyfield tabulates it).  The Earth-fixed frame follows by the apparent
sidereal time

    GAST = ERA(UT1) + (GMST - ERA polynomial of IAU 2006, in TT) + Δψ cos ε,

with the Earth rotation angle ERA (IERS Conventions 2010 eq. 5.15), a
linear function of UT1.  Polar motion is ignored (at most 0.5" today, a
few metres on the ground).  The IAU 2006 polynomial assumes the P03
equinox: against the long-term equinox this mixes in the difference of the
two equinoxes, about 12" at -3000 (0.8 s of rotation), negligible beside
the uncertainty of delta T.

Because only ERA depends on UT1, a change of delta T by ``δ`` seconds turns
the Earth by ``-ω δ`` about the true pole and leaves every TT quantity
unchanged; the delta-T windows (:mod:`.windows`) rest on that.

Time scales: ``jd_tt`` arguments are Julian Days in TT; ``jd_ut`` in UT1.
"""

from __future__ import annotations

import math

import numpy as np

from calendra.solarterms import (ARCSEC, J2000, apparent, ecliptic_axes, geocentric_states,
                                 tdb_from_tt)

#: WGS84 equatorial radius (km) and flattening; the unit of the Besselian elements is this radius.
EARTH_RADIUS_KM = 6378.137
EARTH_FLATTENING = 1.0 / 298.257223563
EARTH_E2 = EARTH_FLATTENING * (2.0 - EARTH_FLATTENING)
#: Ratio of the Earth's radius at latitude 45 deg to its equatorial radius, used for the lunar shadow
#: (the radius of the Earth as it is projected on the shadow, Danjon's and Chauvenet's convention).
EARTH_MEAN_SHADOW_FACTOR = 0.998340
#: Lunar radius in Earth equatorial radii: the IAU mean radius for the penumbra (first and last
#: contacts) and the smaller value for the umbra (second and third contacts, which are made
#: through the valleys of the limb).
MOON_K_PENUMBRA = 0.2725076
MOON_K_UMBRA = 0.2722810
#: Solar semidiameter at 1 au (Auwers 1891), arcsec, and the astronomical unit (km).
SUN_SEMIDIAMETER_1AU_ARCSEC = 959.63
AU_KM = 149597870.7
SUN_RADIUS_KM = SUN_SEMIDIAMETER_1AU_ARCSEC * ARCSEC * AU_KM
#: Earth rotation rate, radians per UT1 day (IERS Conventions 2010 eq. 5.15).
ERA_RATE = 2.0 * math.pi * 1.00273781191135448
#: Standard refraction at the horizon, degrees (34').
HORIZON_REFRACTION_DEG = 34.0 / 60.0

_GMST_POLY_ARCSEC = (0.014506, 4612.156534, 1.3915817, -0.00000044, -0.000029956, -0.0000000368)


def _dot(a, b):
    return np.einsum("i...,i...->...", a, b)


def norm(v):
    """Euclidean norm over the first axis."""
    return np.sqrt(_dot(v, v))


def apparent_states(jd_tt):
    """Apparent geocentric Sun and Moon at TT instants.

    Parameters
    ----------
    jd_tt : array_like
        Julian Days, TT (1-d), within DE406.

    Returns
    -------
    moon, moon_v, sun, sun_v : ndarray, shape (3, N)
        Apparent positions (km, GCRS) and geocentric velocities (km/day).
    """
    jd = np.atleast_1d(np.asarray(jd_tt, dtype=np.float64))
    pm, vm, ps, vs = geocentric_states().moon_and_sun(tdb_from_tt(jd))
    return apparent(pm, vm), vm, apparent(ps, vs), vs


def era(jd_ut):
    """Earth rotation angle, radians in [0, 2 pi) (IERS Conventions 2010 eq. 5.15).

    Parameters
    ----------
    jd_ut : array_like
        Julian Days, UT1.
    """
    d = np.asarray(jd_ut, dtype=np.float64) - J2000
    frac = np.mod(d, 1.0)
    return np.mod(2.0 * math.pi * (frac + 0.7790572732640 + 0.00273781191135448 * d), 2.0 * math.pi)


def _mean_equator_pole(jd_tt):
    """Vondrák (2011) mean equator pole of date, GCRS unit vectors, shape (3, N)."""
    from calendra.solarterms import equator_pole

    return equator_pole(jd_tt)


def nutation(jd_tt, terms: int = 77):
    """Nutation in longitude and obliquity (radians) of the IAU 2000A series truncated to ``terms``."""
    from skyfield.nutationlib import iau2000a

    jd = np.atleast_1d(np.asarray(jd_tt, dtype=np.float64))
    dpsi, deps = iau2000a(jd, 5, int(terms), 0)
    return np.asarray(dpsi) * 1e-7 * ARCSEC, np.asarray(deps) * 1e-7 * ARCSEC


class Orientation:
    """The true equator and equinox of date and the sidereal-time offset at TT instants.

    ``true`` (shape (N, 3, 3)) takes GCRS vectors to true-of-date equatorial
    coordinates.  ``gast_minus_era`` (radians) is the apparent sidereal time
    minus the Earth rotation angle, a function of TT only; GAST at UT1
    ``jd_ut`` is ``era(jd_ut) + gast_minus_era``.

    Parameters
    ----------
    jd_tt : array_like
        Julian Days, TT (1-d).
    """

    def __init__(self, jd_tt):
        jd = np.atleast_1d(np.asarray(jd_tt, dtype=np.float64))
        x, _, z = ecliptic_axes(jd)
        p = _mean_equator_pole(jd)
        eps = np.arccos(np.clip(_dot(p, z), -1.0, 1.0))
        y = np.cross(p, x, axis=0)
        mean = np.stack([x.T, y.T, p.T], axis=1)            # (N, 3, 3): rows = mean-of-date axes
        dpsi, deps = nutation(jd)
        n = _nutation_matrix(eps, dpsi, deps)
        self.jd_tt = jd
        self.true = n @ mean
        self.eps = eps + deps
        t = (jd - J2000) / 36525.0
        poly = sum(c * t ** i for i, c in enumerate(_GMST_POLY_ARCSEC)) * ARCSEC
        self.gast_minus_era = poly + dpsi * np.cos(eps)

    def gast(self, jd_ut):
        """Greenwich apparent sidereal time (radians) at UT1 ``jd_ut`` (broadcast with the TT instants)."""
        return era(jd_ut) + self.gast_minus_era


def _nutation_matrix(eps, dpsi, deps):
    """N = R1(-(eps + deps)) R3(-dpsi) R1(eps), shape (N, 3, 3) (SOFA rotation conventions)."""
    def r1(a):
        c, s = np.cos(a), np.sin(a)
        o, z = np.ones_like(a), np.zeros_like(a)
        return np.stack([np.stack([o, z, z], -1), np.stack([z, c, s], -1), np.stack([z, -s, c], -1)], -2)

    def r3(a):
        c, s = np.cos(a), np.sin(a)
        o, z = np.ones_like(a), np.zeros_like(a)
        return np.stack([np.stack([c, s, z], -1), np.stack([-s, c, z], -1), np.stack([z, z, o], -1)], -2)

    return r1(-(eps + deps)) @ r3(-dpsi) @ r1(eps)


def geodetic_to_geocentric(latitude_deg, elevation_m=0.0):
    """Return ``rho sin phi'`` and ``rho cos phi'`` (Earth equatorial radii) of a geodetic latitude.

    Parameters
    ----------
    latitude_deg : float or array_like
        Geodetic latitude (WGS84), degrees.
    elevation_m : float or array_like
        Height above the ellipsoid, metres.
    """
    phi = np.radians(latitude_deg)
    h = np.asarray(elevation_m, dtype=np.float64) / 1000.0 / EARTH_RADIUS_KM
    b_a = 1.0 - EARTH_FLATTENING
    u = np.arctan(b_a * np.tan(phi))
    return b_a * np.sin(u) + h * np.sin(phi), np.cos(u) + h * np.cos(phi)


def site_gcrs(orientation, jd_ut, latitude_deg, longitude_deg, elevation_m):
    """Geocentric GCRS position (km) of a site at UT1 instants, and its local east/north/up axes.

    Parameters
    ----------
    orientation : Orientation
        At the matching TT instants (its arrays broadcast with ``jd_ut``).
    jd_ut : ndarray
        Julian Days, UT1, shape (N,).
    latitude_deg, longitude_deg, elevation_m : float
        Geodetic latitude and east longitude (degrees), height (m).

    Returns
    -------
    position : ndarray, shape (3, N)
        km, GCRS.
    east, north, up : ndarray, shape (3, N)
        Unit vectors, GCRS (``up`` along the ellipsoid normal).
    """
    rs, rc = geodetic_to_geocentric(latitude_deg, elevation_m)
    theta = orientation.gast(jd_ut) + math.radians(longitude_deg)   # local sidereal time
    phi = math.radians(latitude_deg)
    ct, st = np.cos(theta), np.sin(theta)
    zeros = np.zeros_like(ct)
    pos_true = np.array([rc * ct, rc * st, np.full_like(ct, rs)]) * EARTH_RADIUS_KM
    east_true = np.array([-st, ct, zeros])
    north_true = np.array([-math.sin(phi) * ct, -math.sin(phi) * st, np.full_like(ct, math.cos(phi))])
    up_true = np.array([math.cos(phi) * ct, math.cos(phi) * st, np.full_like(ct, math.sin(phi))])
    back = np.swapaxes(orientation.true, -1, -2)          # true-of-date -> GCRS

    def to_gcrs(v):
        return np.einsum("nij,jn->in", back, v)

    return to_gcrs(pos_true), to_gcrs(east_true), to_gcrs(north_true), to_gcrs(up_true)


def altaz(vector, east, north, up):
    """Altitude and azimuth (degrees, azimuth from north through east) of GCRS vectors in local axes."""
    e, n, u = _dot(vector, east), _dot(vector, north), _dot(vector, up)
    alt = np.degrees(np.arctan2(u, np.hypot(e, n)))
    az = np.degrees(np.arctan2(e, n)) % 360.0
    return alt, az


def angle_between(a, b):
    """Angle between GCRS vectors (radians), stable for small angles."""
    cross = norm(np.cross(a, b, axis=0))
    return np.arctan2(cross, _dot(a, b))
