"""Apparent places of stars, the Sun and the planets from -3000 to +3000.

The pipeline (all vectorized over arrays of instants):

1. **Space motion** of a star (straight-line motion in the barycentric frame,
   as in SOFA/ERFA ``starpm``): the catalogue position, parallax, proper motion
   and radial velocity at J1991.25 give a barycentric position and velocity;
   the position at TT instant ``t`` is ``r0 + v (t - t0)``.  Perspective
   acceleration (the change of proper motion as a star approaches) follows from
   the geometry.  Radial velocities are known only for a few bright nearby
   stars (:data:`calendra_stars.catalogue.RADIAL_VELOCITY_KM_S`); elsewhere 0.
   Stars without a positive parallax are put at 10 kpc (their direction is
   unaffected).
2. **Geocentric direction** with annual parallax: the star's barycentric
   position minus the Earth's (DE406).  For the Sun and planets: light-time
   iterated astrometric positions from DE406.  Light deflection by the Sun is
   neglected (below 0.05" more than 10 degrees from the Sun).
3. **Annual aberration** with the Earth's barycentric velocity (DE406),
   relativistic formula (as ERFA ``ab`` without the deflection term).
4. **Precession**: the long-term model of Vondrak, Capitaine & Wallace (2011,
   A&A 534, A22), valid over +-200 000 years, as implemented by ERFA
   ``ltpb`` (GCRS to mean equator and equinox of date, frame bias included).
   The IAU 2006 precession used by skyfield is a polynomial fitted to a few
   centuries; :func:`precession_difference_arcsec` measures how far the two
   models part: below 0.1" from 1000 to 3000, 0.4" at year 0, 2" at -1000,
   9" at -2000 and 30" at -3000 (measured; see the tests).  The long-term model
   is used over the whole span, so results do not jump where the two would be
   switched.
5. **Nutation**: IAU 2000B (ERFA ``nut00b``, about 1 mas accuracy in the
   modern era; its fundamental arguments are polynomials, so far from J2000
   it keeps only its ~20" amplitude right, which is harmless here), applied
   with the long-term mean obliquity (the angle between the Vondrak et al.
   ecliptic and equator poles).
6. **Sidereal time**: Greenwich apparent sidereal time = Earth rotation angle
   (UT1, from TT through the chosen delta-T model) minus the equation of the
   origins computed from the long-term precession-nutation matrix (ERFA
   ``eors``) and a CIO locator s integrated along the long-term pole path
   (:func:`cio_locator`; the IAU 2006 series for s diverges by degrees at
   -3000).  Polar motion is ignored.
7. **Horizon coordinates** at the site (geodetic latitude and longitude); the
   geocentric parallax of the Sun (8.8") and diurnal aberration are ignored.
8. **Refraction**: Saemundsson (1986, Sky & Telescope 72, 70) from true to
   apparent altitude and Bennett (1982, Journal of Navigation 35, 255) from
   apparent to true altitude, both scaled by ``(P / 1010 mbar) (283 K / T)``
   with the site's temperature and pressure; standard atmosphere, no
   inversions (refraction near the horizon is uncertain by several arcminutes).

Time scales: arguments named ``jd_tt`` are Julian Days in TT (used as TDB for
the ephemeris: the difference is below 2 ms); ``jd_ut`` are UT1.  Angles are
degrees unless the name says otherwise.
"""

from __future__ import annotations

import functools

import numpy as np

from .catalogue import HIP_EPOCH_JD, StarRecord

#: Astronomical unit, km (IAU 2012).
AU_KM = 149597870.7
#: Speed of light, AU per day.
C_AU_DAY = 299792.458 * 86400.0 / AU_KM
#: Sidereal rate: Earth rotation angle per UT1 day, radians (IERS 2003 ERA rate).
ERA_RATE = 2.0 * np.pi * 1.00273781191135448
#: Parsecs, AU.
PC_AU = 206264.80624709636
#: Distance given to stars without a positive parallax, AU (10 kpc).
FAR_AU = 1e4 * PC_AU
KM_S_TO_AU_DAY = 86400.0 / AU_KM

MODELS = {
    "precession": "Vondrak, Capitaine & Wallace (2011) long-term precession (ERFA ltpb), frame bias included",
    "nutation": "IAU 2000B (ERFA nut00b) with the long-term mean obliquity",
    "aberration": "annual, relativistic, Earth velocity from DE406; light deflection neglected",
    "space_motion": "linear space motion from Hipparcos (van Leeuwen 2007) at J1991.25",
    "sidereal_time": "ERA(UT1) - equation of the origins from the long-term NPB matrix",
    "refraction": "Saemundsson (1986) true->apparent, Bennett (1982) apparent->true, scaled by P/1010 mbar and 283 K/T",
}


# ---------------------------------------------------------------- ephemeris

@functools.lru_cache(maxsize=1)
def _pairs():
    from calendra.ephemeris import load_ephemeris

    return load_ephemeris().spk.pairs


#: Chains of (center, target) segments from the solar-system barycentre.
_CHAINS = {
    "sun": [(0, 10)],
    "earth": [(0, 3), (3, 399)],
    "moon": [(0, 3), (3, 301)],
    "mercury": [(0, 1), (1, 199)],
    "venus": [(0, 2), (2, 299)],
    "mars barycenter": [(0, 4)],
    "jupiter barycenter": [(0, 5)],
    "saturn barycenter": [(0, 6)],
}


def barycentric(body: str, jd_tt, velocity: bool = False):
    """Barycentric position (and velocity) of a DE406 body.

    Parameters
    ----------
    body : str
        One of ``sun``, ``earth``, ``moon``, ``mercury``, ``venus``,
        ``mars barycenter``, ``jupiter barycenter``, ``saturn barycenter``.
    jd_tt : array_like
        Julian Days, TT (read as TDB).
    velocity : bool
        Also return the velocity.

    Returns
    -------
    pos : ndarray, shape (..., 3)
        AU, ICRF.
    vel : ndarray, shape (..., 3)
        AU per day (only when ``velocity``).
    """
    from calendra.ephemeris import check_span

    jd = np.asarray(jd_tt, dtype=float)
    check_span(jd)
    flat = jd.ravel()
    pairs = _pairs()
    pos = np.zeros((3, flat.size))
    vel = np.zeros((3, flat.size))
    for key in _CHAINS[body]:
        seg = pairs[key]
        if velocity:
            p, v = seg.compute_and_differentiate(flat)
            vel += np.asarray(v).reshape(3, -1)
        else:
            p = seg.compute(flat)
        pos += np.asarray(p).reshape(3, -1)
    pos = (pos / AU_KM).T.reshape(jd.shape + (3,))
    if velocity:
        return pos, (vel / AU_KM).T.reshape(jd.shape + (3,))
    return pos


def geocentric_astrometric(body: str, jd_tt, earth_pos=None, iterations: int = 2):
    """Astrometric geocentric position of a DE406 body, light-time corrected (AU, ICRF).

    Parameters
    ----------
    body : str
        See :func:`barycentric`.
    jd_tt : array_like
        Julian Days, TT.
    earth_pos : ndarray or None
        The Earth's barycentric position at ``jd_tt`` if already known (AU).

    Returns
    -------
    ndarray, shape (..., 3)
    """
    jd = np.asarray(jd_tt, dtype=float)
    e = barycentric("earth", jd) if earth_pos is None else earth_pos
    p = barycentric(body, jd)
    for _ in range(iterations):
        tau = np.linalg.norm(p - e, axis=-1) / C_AU_DAY
        p = barycentric(body, jd - tau)
    return p - e


# ---------------------------------------------------------------- stars

def star_state(star: StarRecord):
    """Barycentric position (AU) and velocity (AU/day) of a star at the catalogue epoch J1991.25.

    Returns
    -------
    r0, v : ndarray, shape (3,)
    """
    ra = np.radians(star.ra_deg)
    dec = np.radians(star.dec_deg)
    plx = star.plx_mas
    dist = PC_AU * 1000.0 / plx if (plx is not None and np.isfinite(plx) and plx > 0) else FAR_AU
    u = np.array([np.cos(dec) * np.cos(ra), np.cos(dec) * np.sin(ra), np.sin(dec)])
    e_ra = np.array([-np.sin(ra), np.cos(ra), 0.0])
    e_dec = np.array([-np.sin(dec) * np.cos(ra), -np.sin(dec) * np.sin(ra), np.cos(dec)])
    mas_yr = np.radians(1.0 / 3.6e6) / 365.25          # rad/day per mas/yr
    v = dist * mas_yr * (star.pmra_mas_yr * e_ra + star.pmdec_mas_yr * e_dec)
    v = v + star.rv_km_s * KM_S_TO_AU_DAY * u
    return dist * u, v


def star_barycentric(star: StarRecord, jd_tt):
    """Barycentric position of a star at TT instants (AU, ICRF), linear space motion.

    Returns
    -------
    ndarray, shape (..., 3)
    """
    r0, v = star_state(star)
    dt = np.asarray(jd_tt, dtype=float)[..., None] - HIP_EPOCH_JD
    return r0 + v * dt


def star_astrometric_radec(star: StarRecord, jd_tt):
    """Barycentric (catalogue-like) ICRS RA and Dec of a star at TT instants (space motion only).

    Returns
    -------
    ra_deg, dec_deg : ndarray
    """
    p = star_barycentric(star, jd_tt)
    return _radec(p)


def _radec(p):
    ra = np.degrees(np.arctan2(p[..., 1], p[..., 0])) % 360.0
    dec = np.degrees(np.arctan2(p[..., 2], np.hypot(p[..., 0], p[..., 1])))
    return ra, dec


def _unit(p):
    return p / np.linalg.norm(p, axis=-1, keepdims=True)


def aberrate(u, v_au_day):
    """Apply annual aberration (relativistic) to unit vectors.

    Parameters
    ----------
    u : ndarray, shape (..., 3)
        Unit vectors of the geometric (natural) direction.
    v_au_day : ndarray, shape (..., 3)
        Observer's barycentric velocity, AU/day.

    Returns
    -------
    ndarray, shape (..., 3)
        Unit vectors of the proper (aberrated) direction.
    """
    beta = v_au_day / C_AU_DAY
    b2 = np.sum(beta * beta, axis=-1, keepdims=True)
    bm1 = np.sqrt(1.0 - b2)            # 1 / gamma
    pdv = np.sum(u * beta, axis=-1, keepdims=True)
    w1 = 1.0 + pdv / (1.0 + bm1)
    p = (bm1 * u + w1 * beta) / (1.0 + pdv)
    return _unit(p)


# ---------------------------------------------------------------- frames

def julian_epoch(jd_tt):
    """Julian epoch of TT Julian Days: 2000 + (jd - 2451545) / 365.25."""
    return 2000.0 + (np.asarray(jd_tt, dtype=float) - 2451545.0) / 365.25


def mean_obliquity(jd_tt):
    """Long-term mean obliquity of the ecliptic (Vondrak et al. 2011), radians.

    The angle between the ecliptic pole (ERFA ``ltpecl``) and the equator
    pole (ERFA ``ltpequ``) of date.
    """
    import erfa

    epj = julian_epoch(jd_tt)
    pe = erfa.ltpecl(epj)
    pq = erfa.ltpequ(epj)
    return np.arccos(np.clip(np.sum(pe * pq, axis=-1), -1.0, 1.0))


def npb_matrix(jd_tt):
    """GCRS -> true equator and equinox of date: IAU 2000B nutation x long-term precession-bias.

    Parameters
    ----------
    jd_tt : array_like
        Julian Days, TT.

    Returns
    -------
    ndarray, shape (..., 3, 3)
    """
    import erfa

    jd = np.asarray(jd_tt, dtype=float)
    pb = erfa.ltpb(julian_epoch(jd))
    dpsi, deps = erfa.nut00b(2400000.5, jd - 2400000.5)
    n = erfa.numat(mean_obliquity(jd), dpsi, deps)
    return n @ pb


def precession_difference_arcsec(jd_tt):
    """Angle between the IAU 2006 (skyfield) and the long-term (Vondrak 2011) precession, arcsec.

    The largest displacement of a point on the sky between the two
    GCRS -> mean-of-date rotations (bias included in both), i.e. the rotation
    angle of ``P_ltp P_iau^T``.
    """
    import erfa
    from skyfield.framelib import ICRS_to_J2000
    from skyfield.precessionlib import compute_precession

    jd = np.atleast_1d(np.asarray(jd_tt, dtype=float))
    p_iau = np.moveaxis(compute_precession(jd), -1, 0) @ ICRS_to_J2000
    p_ltp = erfa.ltpb(julian_epoch(jd))
    r = p_ltp @ np.swapaxes(p_iau, -1, -2)
    tr = np.trace(r, axis1=-2, axis2=-1)
    axis = 0.5 * np.stack([r[..., 2, 1] - r[..., 1, 2], r[..., 0, 2] - r[..., 2, 0],
                           r[..., 1, 0] - r[..., 0, 1]], axis=-1)
    ang = np.arctan2(np.linalg.norm(axis, axis=-1), (tr - 1.0) / 2.0)
    return np.degrees(ang) * 3600.0


@functools.lru_cache(maxsize=1)
def _s_mean_table():
    """CIO locator s of the long-term mean pole on a half-year grid of Julian epochs (radians).

    s = -integral (X dY - Y dX) / (1 + Z) from J2000, with X, Y, Z the
    pole of the Vondrak et al. (2011) bias-precession matrix (ERFA ``ltpb``);
    trapezoidal rule on a 0.5-year grid from -3600 to +3600.
    """
    import erfa

    ep = np.arange(-3600.0, 3600.01, 0.5)
    m = erfa.ltpb(ep)
    x, y, z = m[:, 2, 0], m[:, 2, 1], m[:, 2, 2]
    dx = np.gradient(x, ep)
    dy = np.gradient(y, ep)
    f = -(x * dy - y * dx) / (1.0 + z)
    s = np.concatenate([[0.0], np.cumsum(0.5 * (f[1:] + f[:-1]) * np.diff(ep))])
    s -= s[np.searchsorted(ep, 2000.0)]
    return ep, s


def cio_locator(jd_tt, rnpb):
    """CIO locator s (radians) consistent with the long-term precession.

    The IAU 2006 series (ERFA ``s06``) is a polynomial whose T^3 term alone
    reaches 70" at year 1000 and degrees at -3000; the true s follows from
    integrating the motion of the pole.  Here s of the mean (precessing) pole is
    integrated numerically (:func:`_s_mean_table`) and nutation's contribution
    is added to first order, ``-(X_m Y_n - Y_m X_n) / 2``.  Agrees with
    ``s06`` to 0.01" from 1800 to 2200 and 0.05" at 1000 (see the tests).

    Parameters
    ----------
    jd_tt : array_like
        Julian Days, TT.
    rnpb : ndarray, shape (..., 3, 3)
        The matrix of :func:`npb_matrix` at ``jd_tt``.
    """
    import erfa

    epj = julian_epoch(jd_tt)
    ep, tab = _s_mean_table()
    sm = np.interp(epj, ep, tab)
    pb = erfa.ltpb(epj)
    xm, ym = pb[..., 2, 0], pb[..., 2, 1]
    xf, yf = rnpb[..., 2, 0], rnpb[..., 2, 1]
    return sm - 0.5 * (xm * (yf - ym) - ym * (xf - xm))


def equation_of_origins(jd_tt, rnpb):
    """Equation of the origins (radians, ERA - GAST) for the long-term NPB matrix."""
    import erfa

    return erfa.eors(rnpb, cio_locator(jd_tt, rnpb))


def gast_rad(jd_ut, jd_tt, rnpb):
    """Greenwich apparent sidereal time (radians) = ERA(UT1) - equation of the origins.

    Parameters
    ----------
    jd_ut : array_like
        Julian Days, UT1.
    jd_tt : array_like
        The same instants in TT.
    rnpb : ndarray, shape (..., 3, 3)
        The matrix of :func:`npb_matrix` at these instants (or within a day of them).
    """
    import erfa

    jd = np.asarray(jd_ut, dtype=float)
    era = erfa.era00(2400000.5, jd - 2400000.5)
    eo = erfa.eors(rnpb, cio_locator(jd_tt, rnpb))
    return era - eo


# ---------------------------------------------------------------- horizon

def refraction_saemundsson(alt_true_deg, temperature_C=10.0, pressure_mbar=1010.0):
    """Refraction (degrees) to add to a true altitude, Saemundsson (1986).

    ``R = 1.02' / tan(h + 10.3 / (h + 5.11))`` with h the true altitude in
    degrees, times ``(P / 1010)(283 / (273 + T))``.  Below -1 degree the value
    at -1 degree is used (the formula is meaningless there; no object is seen).
    """
    h = np.maximum(np.asarray(alt_true_deg, dtype=float), -1.0)
    r = 1.02 / np.tan(np.radians(h + 10.3 / (h + 5.11))) / 60.0
    return r * (pressure_mbar / 1010.0) * (283.0 / (273.0 + temperature_C))


def refraction_bennett(alt_apparent_deg, temperature_C=10.0, pressure_mbar=1010.0):
    """Refraction (degrees) to subtract from an apparent altitude, Bennett (1982).

    ``R = 1' / tan(h0 + 7.31 / (h0 + 4.4))`` with h0 the apparent altitude in
    degrees, times ``(P / 1010)(283 / (273 + T))``; clamped below -1 degree.
    """
    h = np.maximum(np.asarray(alt_apparent_deg, dtype=float), -1.0)
    r = 1.0 / np.tan(np.radians(h + 7.31 / (h + 4.4))) / 60.0
    return r * (pressure_mbar / 1010.0) * (283.0 / (273.0 + temperature_C))


def horizon_altitude_function(site):
    """The site's horizon altitude as a function of azimuth (degrees), or None for a flat horizon.

    Uses ``site.horizon_altitude(azimuth_deg)`` when the Site provides it.
    """
    fn = getattr(site, "horizon_altitude", None)
    if not callable(fn):
        return None

    def horizon(az):
        try:
            return np.asarray(fn(np.asarray(az, dtype=float)), dtype=float)
        except (TypeError, ValueError):
            return np.vectorize(lambda a: float(fn(float(a))), otypes=[float])(az)
    return horizon


def hadec_to_altaz(ha_rad, dec_rad, lat_rad):
    """Hour angle and declination to true altitude and azimuth (degrees; azimuth from north through east)."""
    sd, cd = np.sin(dec_rad), np.cos(dec_rad)
    sl, cl = np.sin(lat_rad), np.cos(lat_rad)
    ch, sh = np.cos(ha_rad), np.sin(ha_rad)
    alt = np.arcsin(np.clip(sl * sd + cl * cd * ch, -1.0, 1.0))
    az = np.arctan2(-cd * sh, cl * sd - sl * cd * ch)
    return np.degrees(alt), np.degrees(az) % 360.0


def tod_radec(u_tod):
    """Right ascension and declination (radians) of true-of-date unit vectors."""
    ra = np.arctan2(u_tod[..., 1], u_tod[..., 0])
    dec = np.arcsin(np.clip(u_tod[..., 2], -1.0, 1.0))
    return ra, dec


class Sky:
    """Apparent places at one site, with the delta-T model for UT1.

    Parameters
    ----------
    site : calendra.sites.Site
    deltat : delta-T model (see :mod:`calendra.deltat`)
    """

    def __init__(self, site, deltat):
        self.site = site
        self.deltat = deltat
        self.lat = np.radians(site.latitude_deg)
        lon = site.longitude_deg - 360.0 if site.longitude_deg > 180.0 else site.longitude_deg
        self.lon = np.radians(lon)
        self.T = float(site.temperature_C)
        self.P = float(site.pressure_mbar)
        self.horizon = horizon_altitude_function(site)

    # -- directions (true equator and equinox of date, unit vectors)
    def star_tod(self, star: StarRecord, jd_tt, rnpb=None, earth=None):
        """Apparent direction of a star in the true equator and equinox of date.

        Returns
        -------
        ndarray, shape (..., 3)
        """
        jd = np.asarray(jd_tt, dtype=float)
        e_pos, e_vel = barycentric("earth", jd, velocity=True) if earth is None else earth
        u = _unit(star_barycentric(star, jd) - e_pos)
        u = aberrate(u, e_vel)
        m = npb_matrix(jd) if rnpb is None else rnpb
        return np.einsum("...ij,...j->...i", m, u)

    def body_tod(self, body: str, jd_tt, rnpb=None, earth=None, iterations: int = 2):
        """Apparent geocentric direction of the Sun or a planet, true equator and equinox of date.

        Returns
        -------
        u : ndarray, shape (..., 3)
            Unit vectors.
        dist : ndarray
            Geocentric distance, AU.
        """
        jd = np.asarray(jd_tt, dtype=float)
        e_pos, e_vel = barycentric("earth", jd, velocity=True) if earth is None else earth
        g = geocentric_astrometric(body, jd, earth_pos=e_pos, iterations=iterations)
        dist = np.linalg.norm(g, axis=-1)
        u = aberrate(g / dist[..., None], e_vel)
        m = npb_matrix(jd) if rnpb is None else rnpb
        return np.einsum("...ij,...j->...i", m, u), dist

    # -- time
    def ut(self, jd_tt):
        return np.asarray(self.deltat.ut_from_tt(jd_tt), dtype=float)

    def tt(self, jd_ut):
        return np.asarray(self.deltat.tt_from_ut(jd_ut), dtype=float)

    def local_hour_angle(self, u_tod, jd_ut, jd_tt, rnpb):
        ra, dec = tod_radec(u_tod)
        return gast_rad(jd_ut, jd_tt, rnpb) + self.lon - ra, dec

    def altaz(self, u_tod, jd_ut, jd_tt, rnpb, refract: bool = False):
        """True (or apparent, with ``refract``) altitude and azimuth, degrees."""
        ha, dec = self.local_hour_angle(u_tod, jd_ut, jd_tt, rnpb)
        alt, az = hadec_to_altaz(ha, dec, self.lat)
        if refract:
            alt = alt + refraction_saemundsson(alt, self.T, self.P)
        return alt, az

    def horizon_at(self, az_deg):
        """Horizon altitude (degrees, apparent) at azimuths; 0 for a flat horizon."""
        if self.horizon is None:
            return np.zeros(np.shape(az_deg))
        return np.asarray(self.horizon(az_deg), dtype=float)


def apparent_altaz_star(star: StarRecord, site, jd_tt, deltat=None, refract: bool = True):
    """Apparent altitude and azimuth (degrees) of a star at a site at TT instants.

    Parameters
    ----------
    star : StarRecord
    site : calendra.sites.Site
    jd_tt : array_like
        Julian Days, TT.
    deltat : delta-T model or None (default model)
    refract : bool
        Add refraction (Saemundsson) to the true altitude.
    """
    from calendra.deltat import DEFAULT_MODEL, get_model

    sky = Sky(site, deltat or get_model(DEFAULT_MODEL))
    jd = np.asarray(jd_tt, dtype=float)
    m = npb_matrix(jd)
    u = sky.star_tod(star, jd, rnpb=m)
    return sky.altaz(u, sky.ut(jd), jd, m, refract=refract)


def apparent_radec_star(star: StarRecord, jd_tt):
    """Geocentric apparent RA and Dec (degrees, true equator and equinox of date) of a star."""
    jd = np.asarray(jd_tt, dtype=float)
    e = barycentric("earth", jd, velocity=True)
    u = _unit(star_barycentric(star, jd) - e[0])
    u = aberrate(u, e[1])
    u = np.einsum("...ij,...j->...i", npb_matrix(jd), u)
    ra, dec = tod_radec(u)
    return np.degrees(ra) % 360.0, np.degrees(dec)
