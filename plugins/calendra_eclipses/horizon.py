"""Altitudes of the Sun and Moon at a site, and when a body counts as above the horizon.

Altitudes are *airless* (no refraction) and topocentric: the apparent
geocentric position (:mod:`.geometry`) minus the site's geocentric
position, in the site's east/north/up axes (geodetic vertical, WGS84), with
the Earth's orientation of :class:`.geometry.Orientation` at UT1 = TT - ΔT.

A body is *above the horizon* when its upper limb is above the visible
horizon: airless altitude of the centre ``> h_hz - R(h_hz) - s``, with
``h_hz`` the apparent altitude of the visible horizon at the body's azimuth
(the site's horizon profile, or minus the dip of a flat horizon,
:meth:`calendra.sites.Site.horizon_altitude`), ``R`` the refraction at that
apparent altitude (Bennett 1982, 10 C and 1010 mbar, scaled by the site's
pressure and temperature: 34.5' at altitude 0) and ``s`` the body's
semidiameter.  Refraction near the horizon varies by several arcminutes
with the weather, so a limb within about 0.2 degrees of the horizon is
uncertain.
"""

from __future__ import annotations

import numpy as np

from .geometry import (EARTH_RADIUS_KM, MOON_K_PENUMBRA, SUN_RADIUS_KM, Orientation, apparent_states,
                       geodetic_to_geocentric)

DAY_S = 86400.0


def refraction_deg(apparent_altitude_deg, site=None):
    """Refraction (degrees) at an apparent altitude, Bennett (1982), scaled for the site's weather."""
    h = np.asarray(apparent_altitude_deg, dtype=float)
    r = 1.0 / np.tan(np.radians(h + 7.31 / (h + 4.4))) / 60.0
    if site is not None:
        r = r * (site.pressure_mbar / 1010.0) * (283.0 / (273.0 + site.temperature_C))
    return r


def threshold_deg(site, azimuth_deg, semidiameter_deg):
    """Airless altitude of a body's centre at which its upper limb is on the visible horizon."""
    h_hz = np.asarray(site.horizon_altitude(azimuth_deg), dtype=float)
    return h_hz - refraction_deg(h_hz, site) - semidiameter_deg


def topocentric_altaz(vec_true, theta, latitude_deg, elevation_m):
    """Airless topocentric altitude/azimuth from true-of-date geocentric vectors.

    Parameters
    ----------
    vec_true : ndarray, shape (3, ...)
        Geocentric vectors (km) in the true equator and equinox of date.
    theta : ndarray
        Local apparent sidereal time (radians), broadcast with ``vec_true[0]``
        (only this moves with ΔT).
    latitude_deg, elevation_m : float
        Geodetic latitude, height (m).

    Returns
    -------
    altitude_deg, azimuth_deg, distance_km : ndarray
    """
    rs, rc = geodetic_to_geocentric(latitude_deg, elevation_m)
    phi = np.radians(latitude_deg)
    ct, st = np.cos(theta), np.sin(theta)
    px, py, pz = vec_true[0] - rc * EARTH_RADIUS_KM * ct, vec_true[1] - rc * EARTH_RADIUS_KM * st, \
        vec_true[2] - rs * EARTH_RADIUS_KM
    east = -st * px + ct * py
    horiz = ct * px + st * py
    north = -np.sin(phi) * horiz + np.cos(phi) * pz
    up = np.cos(phi) * horiz + np.sin(phi) * pz
    alt = np.degrees(np.arctan2(up, np.hypot(east, north)))
    az = np.degrees(np.arctan2(east, north)) % 360.0
    return alt, az, np.sqrt(px * px + py * py + pz * pz)


def body_altaz(body, jd_tt, site, delta_t_s):
    """Topocentric airless altitude, azimuth and semidiameter of the Sun or Moon.

    Parameters
    ----------
    body : {'sun', 'moon'}
    jd_tt : ndarray
        Julian Days, TT (any shape).
    site : calendra.sites.Site
    delta_t_s : float or ndarray
        ΔT (seconds) for UT1 = TT - ΔT, broadcast with ``jd_tt``.

    Returns
    -------
    altitude_deg, azimuth_deg, semidiameter_deg, margin_deg : ndarray
        Shapes of ``jd_tt``; ``margin_deg`` is the altitude above
        :func:`threshold_deg` (positive: the upper limb is up).
    """
    jd = np.asarray(jd_tt, dtype=float)
    shape = jd.shape
    flat = jd.reshape(-1)
    dt = np.broadcast_to(np.asarray(delta_t_s, dtype=float), shape).reshape(-1)
    m, _, s, _ = apparent_states(flat)
    vec = m if body == "moon" else s
    orient = Orientation(flat)
    vec_true = np.einsum("nij,jn->in", orient.true, vec)
    theta = orient.gast(flat - dt / DAY_S) + np.radians(site.east_longitude_deg)
    alt, az, dist = topocentric_altaz(vec_true, theta, site.latitude_deg, site.elevation_m)
    radius = MOON_K_PENUMBRA * EARTH_RADIUS_KM if body == "moon" else SUN_RADIUS_KM
    sd = np.degrees(np.arcsin(radius / dist))
    margin = alt - threshold_deg(site, az, sd)
    return tuple(x.reshape(shape) for x in (alt, az, sd, margin))


def horizon_crossings(t, margin):
    """Instants where ``margin`` changes sign along the last axis, by linear interpolation.

    Parameters
    ----------
    t, margin : ndarray, shape (N, K)
        Sample instants (increasing along the last axis) and margins.

    Returns
    -------
    rise, set : ndarray, shape (N,)
        First upward and first downward crossing of each row, NaN where none.
    """
    a, b = margin[:, :-1], margin[:, 1:]
    frac = np.where(a != b, a / np.where(a != b, a - b, 1.0), 0.0)
    tc = t[:, :-1] + frac * (t[:, 1:] - t[:, :-1])
    up = (a <= 0) & (b > 0)
    down = (a > 0) & (b <= 0)

    def first(mask):
        idx = np.argmax(mask, axis=1)
        val = tc[np.arange(t.shape[0]), idx]
        return np.where(mask.any(axis=1), val, np.nan)

    return first(up), first(down)
