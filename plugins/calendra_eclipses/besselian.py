"""Besselian elements of solar eclipses from DE406, as polynomials in time, vectorised over eclipses.

Definition (Explanatory Supplement to the Astronomical Almanac, 1961 and
1992 eds., ch. on eclipses; Meeus, *Elements of Solar Eclipses 1951-2200*)
--------------------------------------------------------------------------
The *fundamental plane* passes through the Earth's centre perpendicular to
the axis of the Moon's shadow, the line from the Sun through the Moon.  With
the apparent geocentric Sun ``S`` and Moon ``M`` (:mod:`.geometry`) in the
true equator and equinox of date, ``g = (S - M) / |S - M|`` has declination
``d`` and right ascension ``a``; the plane's axes are ``x`` east
``(-sin a, cos a, 0)``, ``y`` north ``(-sin d cos a, -sin d sin a, cos d)``
and ``z = g``.  In Earth equatorial radii (6378.137 km):

* ``x, y`` - the shadow axis on the plane (the Moon's centre projected),
  ``z`` the Moon's height above it;
* ``f1, f2`` - half-angles of the penumbral and umbral cones,
  ``sin f1 = (R_S + k1) / |S - M|``, ``sin f2 = (R_S - k2) / |S - M|``
  (``R_S`` the Sun's radius, 959.63" at 1 au; ``k1 = 0.2725076``,
  ``k2 = 0.2722810`` the Moon's radius for the penumbra and the umbra);
* ``l1 = (z + k1 / sin f1) tan f1``, ``l2 = (z - k2 / sin f2) tan f2`` -
  the radii of the penumbra and umbra on the plane (``l2 < 0``: the umbral
  cone's vertex lies beyond the plane, a total eclipse there);
* ``mu = GAST - a`` - the Greenwich hour angle of the axis.

``mu`` is the only element that depends on UT1.  It is stored as
``mu(t) = ERA(t - ΔT) + h(t)`` with ``h = (GAST - ERA) - a`` a function of
TT alone (:class:`.geometry.Orientation`), so the elements for another ΔT
differ only by the constant ``-ω δΔT`` in ``mu`` (:meth:`BesselianElements.shifted`).

Polynomials
-----------
For every eclipse the elements are sampled from the ephemeris at 19
instants, ``t0 - 4.5 h .. t0 + 4.5 h`` every 30 minutes (``t0`` the new
moon), and fitted by least squares with polynomials of degree 6 in
``tau = (t - t0)`` hours (the frame is the true equator and equinox of
``t0``: it turns by under 0.1" in 4.5 hours).  The fit reproduces the
ephemeris to better than 1e-8 Earth radii (0.1 m) over the interval
(checked by the tests), far better than the cubic polynomials of printed
tables.

Time scales: ``t0`` and ``jd_tt`` are TT; ``tau`` is in TT hours.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from .geometry import (EARTH_E2, EARTH_RADIUS_KM, ERA_RATE, MOON_K_PENUMBRA, MOON_K_UMBRA, SUN_RADIUS_KM,
                       Orientation, apparent_states, era)

DAY_S = 86400.0
#: Sample instants (hours from t0) and degree of the fitted polynomials.
SAMPLE_HOURS = np.arange(-4.5, 4.5001, 0.5)
DEGREE = 6
#: Valid interval of the polynomials, hours from t0.
VALID_HOURS = 4.5
ELEMENT_NAMES = ("x", "y", "d", "h", "l1", "l2", "tan_f1", "tan_f2", "z")


def sample_elements(t0, tau_hours):
    """Besselian elements straight from the ephemeris.

    Parameters
    ----------
    t0 : ndarray, shape (N,)
        Reference instants, Julian Days TT (the frame is the true equator and equinox of these).
    tau_hours : ndarray, shape (K,) or (N, K)
        Hours from ``t0`` (TT).

    Returns
    -------
    dict of str -> ndarray, shape (N, K)
        ``x y z l1 l2`` (Earth radii), ``d`` (rad), ``h`` (rad, ``mu - ERA``),
        ``tan_f1 tan_f2``.
    """
    t0 = np.atleast_1d(np.asarray(t0, dtype=float))
    tau = np.broadcast_to(np.asarray(tau_hours, dtype=float), (t0.size,) + np.shape(tau_hours)[-1:])
    t = t0[:, None] + tau / 24.0
    n, k = t.shape
    m, _, s, _ = apparent_states(t.reshape(-1))
    orient = Orientation(t0)
    m = np.einsum("nij,jnk->ink", orient.true, m.reshape(3, n, k)) / EARTH_RADIUS_KM
    s = np.einsum("nij,jnk->ink", orient.true, s.reshape(3, n, k)) / EARTH_RADIUS_KM
    big_g = s - m
    dist = np.sqrt(np.einsum("ink,ink->nk", big_g, big_g))
    g = big_g / dist
    d = np.arcsin(g[2])
    a = np.arctan2(g[1], g[0])
    sa, ca, sd, cd = np.sin(a), np.cos(a), np.sin(d), np.cos(d)
    x = -m[0] * sa + m[1] * ca
    y = -m[0] * sd * ca - m[1] * sd * sa + m[2] * cd
    z = m[0] * cd * ca + m[1] * cd * sa + m[2] * sd
    r_sun = SUN_RADIUS_KM / EARTH_RADIUS_KM
    sf1 = (r_sun + MOON_K_PENUMBRA) / dist
    sf2 = (r_sun - MOON_K_UMBRA) / dist
    tf1, tf2 = sf1 / np.sqrt(1 - sf1 ** 2), sf2 / np.sqrt(1 - sf2 ** 2)
    l1 = (z + MOON_K_PENUMBRA / sf1) * tf1
    l2 = (z - MOON_K_UMBRA / sf2) * tf2
    h = np.unwrap(orient.gast_minus_era[:, None] - a, axis=1)
    return {"x": x, "y": y, "z": z, "d": d, "h": h, "l1": l1, "l2": l2, "tan_f1": tf1, "tan_f2": tf2}


def _fit_matrix():
    v = (SAMPLE_HOURS[:, None] / VALID_HOURS) ** np.arange(DEGREE + 1)[None, :]
    return np.linalg.pinv(v)            # (DEGREE+1, K): coefficients in the scaled variable


@dataclass
class BesselianElements:
    """Polynomial Besselian elements of N eclipses.

    Attributes
    ----------
    t0 : ndarray, shape (N,)
        Reference instants, Julian Days TT.
    coef : dict of str -> ndarray, shape (N, DEGREE + 1)
        Coefficients in ``u = tau / VALID_HOURS`` (``tau`` hours from ``t0``).
    delta_t_s : ndarray, shape (N,)
        ΔT (seconds) behind ``era0``.
    era0 : ndarray, shape (N,)
        Earth rotation angle at UT1 = t0 - ΔT, radians.
    """

    t0: np.ndarray
    coef: dict
    delta_t_s: np.ndarray
    era0: np.ndarray

    def __len__(self):
        return int(self.t0.size)

    def select(self, mask) -> "BesselianElements":
        return BesselianElements(self.t0[mask], {k: v[mask] for k, v in self.coef.items()},
                                 self.delta_t_s[mask], self.era0[mask])

    def shifted(self, offset_s) -> "BesselianElements":
        """The same elements with ΔT larger by ``offset_s`` seconds (scalar or one per eclipse)."""
        off = np.broadcast_to(np.asarray(offset_s, dtype=float), self.t0.shape)
        return replace(self, delta_t_s=self.delta_t_s + off, era0=self.era0 - ERA_RATE * off / DAY_S)

    def at(self, tau_hours, names=ELEMENT_NAMES, derivative: bool = False, rows=None):
        """Evaluate elements at hours ``tau`` from ``t0``.

        Parameters
        ----------
        tau_hours : ndarray, shape (N,) or (N, K) (or broadcastable)
            TT hours from each eclipse's ``t0``.
        names : sequence of str
            Elements wanted (``mu`` too: radians).
        derivative : bool
            Also return the time derivatives (per hour).
        rows : ndarray of int or None
            Evaluate for these eclipses only (``tau`` then matches them).

        Returns
        -------
        dict of str -> ndarray
            Values (and ``name + '_dot'`` with ``derivative``).
        """
        tau = np.asarray(tau_hours, dtype=float)
        sel = slice(None) if rows is None else rows
        extra = (None,) * (tau.ndim - 1) if tau.ndim else ()
        u = tau / VALID_HOURS
        out = {}
        for name in names:
            key = "h" if name == "mu" else name
            c = self.coef[key][sel]
            val = np.zeros(np.broadcast(u, c[(slice(None), 0) + extra]).shape)
            dval = np.zeros_like(val)
            for j in range(DEGREE, -1, -1):
                val = val * u + c[(slice(None), j) + extra]
            if derivative:
                for j in range(DEGREE, 0, -1):
                    cj = c[(slice(None), j) + extra]
                    dval = dval * u + j * cj
                dval = dval / VALID_HOURS
            if name == "mu":
                e0 = self.era0[sel][(slice(None),) + extra]
                val = val + e0 + ERA_RATE * tau / 24.0
                dval = dval + ERA_RATE / 24.0
            out[name] = val
            if derivative:
                out[name + "_dot"] = dval
        return out


def fit_elements(t0, delta_t_s) -> BesselianElements:
    """Sample and fit the Besselian elements of eclipses near ``t0`` (TT).

    Parameters
    ----------
    t0 : array_like, shape (N,)
        Julian Days, TT (new moons).
    delta_t_s : array_like, shape (N,)
        ΔT in seconds for ``mu`` (changeable later with :meth:`BesselianElements.shifted`).

    Returns
    -------
    BesselianElements
    """
    t0 = np.atleast_1d(np.asarray(t0, dtype=float))
    dt = np.broadcast_to(np.asarray(delta_t_s, dtype=float), t0.shape).astype(float)
    pinv = _fit_matrix()
    coef = {k: np.zeros((t0.size, DEGREE + 1)) for k in ELEMENT_NAMES}
    step = 8000
    for i in range(0, t0.size, step):
        samples = sample_elements(t0[i:i + step], SAMPLE_HOURS)
        for k in ELEMENT_NAMES:
            coef[k][i:i + step] = samples[k] @ pinv.T
    return BesselianElements(t0, coef, dt, era(t0 - dt / DAY_S))


# ---------------------------------------------------------------- geometry on the Earth

B2 = 1.0 - EARTH_E2          # (polar / equatorial radius)^2


def limb_radius(psi, d):
    """Distance from the axis origin to the Earth's outline on the fundamental plane.

    The outline is the projection of the WGS84 ellipsoid along ``z``; ``psi``
    is the position angle on the plane (``atan2(y, x)``), ``d`` the
    declination of the axis (radians).  Returns ``(r, zeta)``: the radius
    (Earth equatorial radii) and the ``z`` of the limb point.
    """
    sd, cd = np.sin(d), np.cos(d)
    cp, sp = np.cos(psi), np.sin(psi)
    a = cd * cd + sd * sd / B2
    k = cp * cp + sp * sp * (sd * sd + cd * cd / B2)
    q = sp * sd * cd * (1.0 / B2 - 1.0)
    r = np.sqrt(a / (a * k - q * q))
    zeta = -r * q / a
    return r, zeta


def surface_zeta(x, y, d):
    """``z`` of the sunward point of the ellipsoid on the line through (x, y) along the axis.

    Returns NaN where the line misses the Earth.
    """
    sd, cd = np.sin(d), np.cos(d)
    a = cd * cd + sd * sd / B2
    b = 2.0 * y * sd * cd * (1.0 / B2 - 1.0)
    c = x * x + y * y * (sd * sd + cd * cd / B2) - 1.0
    disc = b * b - 4.0 * a * c
    with np.errstate(invalid="ignore"):
        return np.where(disc >= 0, (-b + np.sqrt(np.maximum(disc, 0.0))) / (2.0 * a), np.nan)


def plane_to_geographic(x, y, zeta, d, mu):
    """Geodetic latitude and east longitude (degrees) of the point (x, y, zeta) of the fundamental plane.

    Also returns the Sun's airless altitude and azimuth there (degrees; the
    Sun taken along the axis) as the third and fourth values.
    """
    sd, cd = np.sin(d), np.cos(d)
    q1 = zeta * cd - y * sd
    q2 = x
    q3 = y * cd + zeta * sd
    lam = np.arctan2(q2, q1)
    lat = np.arctan2(q3, B2 * np.hypot(q1, q2))
    lon = np.degrees(lam - mu)
    lon = (lon + 180.0) % 360.0 - 180.0
    sl, cl, sp, cp = np.sin(lam), np.cos(lam), np.sin(lat), np.cos(lat)
    up = cp * cl * cd + sp * sd
    east = -sl * cd
    north = -sp * cl * cd + cp * sd
    alt = np.degrees(np.arcsin(np.clip(up, -1, 1)))
    az = np.degrees(np.arctan2(east, north)) % 360.0
    return np.degrees(lat), lon, alt, az


def observer_plane(lat_deg, lon_deg, elev_m, d, mu):
    """Coordinates (xi, eta, zeta) of a site on the fundamental plane (Earth radii).

    ``lat_deg, lon_deg`` geodetic latitude and east longitude, ``elev_m``
    height (m); ``d, mu`` elements (radians), broadcast together.
    """
    from .geometry import geodetic_to_geocentric

    rs, rc = geodetic_to_geocentric(lat_deg, elev_m)
    theta = mu + np.radians(lon_deg)
    sd, cd = np.sin(d), np.cos(d)
    xi = rc * np.sin(theta)
    eta = rs * cd - rc * np.cos(theta) * sd
    zeta = rs * sd + rc * np.cos(theta) * cd
    return xi, eta, zeta
