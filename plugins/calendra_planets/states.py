"""Apparent geocentric places of the planets, the Sun and the Moon from DE406, as array jobs.

Every function takes Julian Days in TT (1-D numpy arrays) and works on
vectors of shape ``(3, N)`` in the GCRS (ICRF axes, km and km/day), the
layout of :mod:`calendra.solarterms`.

Pipeline
--------
* **Ephemeris.**  The DE406 segments of :func:`calendra.ephemeris.load_ephemeris`
  are evaluated through jplephem at TDB (TT + the USNO Circular 179 series,
  :func:`calendra.solarterms.tdb_from_tt`), position and velocity together.
  The geocentre is ``(Earth-Moon barycentre) + (Earth from that barycentre)``.
  Mercury and Venus are their system barycentres (no moons); Mars, Jupiter
  and Saturn are their system barycentres, as the kernel carries them (the
  planet's centre is off its barycentre by up to ~200 km for Jupiter and
  ~300 km for Saturn, estimated from the masses and distances of their large
  moons: under 0.1" seen from the Earth; Mars' moons are negligible).
* **Light time and aberration** to first order, ``r - v |r|/c`` with the
  geocentric ``r, v`` (as :func:`calendra.solarterms.apparent`): the
  light-time term of the body's barycentric velocity and the annual
  aberration of the Earth's.  The neglected second-order terms are under
  0.01" for Mercury and smaller for the others.  The gravitational
  deflection of light by the Sun is neglected: 1.75" at the solar limb,
  0.4" at 5 degrees, 0.004" at 90 degrees.
* **Ecliptic of date.**  The mean ecliptic and equinox of the long-term
  precession of Vondrák, Capitaine & Wallace (2011) from
  :func:`calendra.solarterms.ecliptic_axes`, plus the nutation in
  longitude (IAU 2000A luni-solar series, 77 terms, with its rate from the
  same series: :func:`nutation_longitude_and_rate`).  Nutation turns the
  equinox about the ecliptic pole, so it changes every longitude by the
  same amount and no latitude.
* **Equator of date** (for right ascensions): the long-term
  precession-nutation matrix of the stars plugin,
  :func:`calendra_stars.positions.npb_matrix` (Vondrák 2011 via ERFA
  ``ltpb``, IAU 2000B nutation).
"""

from __future__ import annotations

import functools
import math

import numpy as np

from calendra.solarterms import C_KM_PER_DAY, CHUNK, DEFAULT_PRECESSION, J2000

#: The five naked-eye planets, in order from the Sun.
PLANETS = ("mercury", "venus", "mars", "jupiter", "saturn")
#: Bodies this module positions.
BODIES = PLANETS + ("sun", "moon")
#: Inferior planets (they have inferior and superior conjunctions, and elongations).
INFERIOR = ("mercury", "venus")
#: NAIF code of the barycentric DE406 segment of each planet and the Sun.
_SEGMENT = {"mercury": 1, "venus": 2, "mars": 4, "jupiter": 5, "saturn": 6, "sun": 10}
#: Astronomical unit, km (IAU 2012 Resolution B2).
AU_KM = 149597870.7
#: Luni-solar terms of the nutation series kept (the IAU 2000B selection of terms).
NUTATION_TERMS = 77
#: Gravitational parameters, km^3/day^2 (IAU 2009 / DE405 values: Sun 1.32712440018e11,
#: Earth 398600.4418, Moon 4902.8 km^3/s^2).
GM_SUN = 1.32712440018e11 * 86400.0 ** 2
GM_EARTH = 398600.4418 * 86400.0 ** 2
GM_MOON = 4902.8 * 86400.0 ** 2
#: Arcseconds to radians.
ARCSEC = math.pi / 648000.0


def check_body(name: str, allowed=BODIES) -> str:
    """Return the normalised body name or raise UnknownNameError."""
    from calendra.errors import UnknownNameError

    key = str(name).strip().lower()
    if key not in allowed:
        raise UnknownNameError("body", str(name), allowed)
    return key


def planet_list(text, allowed=PLANETS) -> list[str]:
    """Split a comma list of planet names (``"mars,venus"``; ``"all"`` for every allowed one)."""
    from calendra.errors import ParameterError

    if text is None or str(text).strip().lower() in ("", "all"):
        return list(allowed)
    out = []
    for part in str(text).split(","):
        if part.strip():
            key = check_body(part, allowed)
            if key not in out:
                out.append(key)
    if not out:
        raise ParameterError("give at least one planet")
    return out


class _Segments:
    """The jplephem segments of the loaded kernel, by (center, target)."""

    def __init__(self, kernel):
        self.pairs = kernel.spk.pairs

    def state(self, key, jd_tdb):
        p, v = self.pairs[key].compute_and_differentiate(jd_tdb)
        return np.asarray(p).reshape(3, -1), np.asarray(v).reshape(3, -1)

    def earth(self, jd_tdb):
        """Barycentric position (km) and velocity (km/day) of the geocentre."""
        pb, vb = self.state((0, 3), jd_tdb)
        pe, ve = self.state((3, 399), jd_tdb)
        return pb + pe, vb + ve

    def geometric(self, body, jd_tdb, earth=None):
        """Geometric geocentric position and velocity of a body (km, km/day), shape (3, N)."""
        if body == "moon":
            pm, vm = self.state((3, 301), jd_tdb)
            pe, ve = self.state((3, 399), jd_tdb)
            return pm - pe, vm - ve
        pe, ve = self.earth(jd_tdb) if earth is None else earth
        pb, vb = self.state((0, _SEGMENT[body]), jd_tdb)
        return pb - pe, vb - ve

    def barycentric(self, body, jd_tdb):
        return self.state((0, _SEGMENT[body]), jd_tdb)


def segments() -> _Segments:
    """The segment helper of the loaded DE406 kernel (cached on the kernel object)."""
    from calendra.ephemeris import load_ephemeris

    kernel = load_ephemeris()
    helper = kernel.__dict__.get("_calendra_planet_segments")
    if helper is None:
        helper = _Segments(kernel)
        kernel._calendra_planet_segments = helper
    return helper


def _tdb(jd_tt):
    from calendra.solarterms import tdb_from_tt

    return tdb_from_tt(np.asarray(jd_tt, dtype=np.float64).reshape(-1))


def dot(a, b):
    """Row-wise dot product of (3, N) arrays."""
    return np.einsum("i...,i...->...", a, b)


def norm(a):
    return np.sqrt(dot(a, a))


def apparent(body: str, jd_tt, with_sun_vector: bool = False, exact_rate: bool = True):
    """Apparent geocentric position and velocity of a body.

    Parameters
    ----------
    body : str
        One of :data:`BODIES`.
    jd_tt : array_like
        Julian Days, TT, within DE406 (1-D).
    with_sun_vector : bool
        Also return the vector from the Sun to the body at the time the
        light left it (km), for phase angles and magnitudes.
    exact_rate : bool
        Return the rate of the apparent position (below); False returns the
        geometric geocentric velocity instead, which spares two ephemeris
        segments where the rate only steers Newton steps.

    Returns
    -------
    r : ndarray, shape (3, N)
        Apparent geocentric position (light time and annual aberration), km, GCRS.
    v : ndarray, shape (3, N)
        Its time derivative, km/day: the geocentric velocity less the change of
        the light-time correction, ``a tau + v dtau/dt``, with the relative
        acceleration ``a`` of point masses (the Sun on the planet, the Sun and
        the Moon on the geocentre; the Earth and Moon on each other for the
        Moon).  Without it the rate of an inner planet's apparent direction is
        wrong by up to 4"/day (Mercury's acceleration times its light time).
    sun_to_body : ndarray, shape (3, N)
        Only with ``with_sun_vector``.
    """
    from calendra.ephemeris import check_span

    jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
    check_span(jd)
    seg = segments()
    tdb = _tdb(jd)
    if not exact_rate and not with_sun_vector:
        p, v = seg.geometric(body, tdb)
        return p - v * (norm(p) / C_KM_PER_DAY), v
    pm, vm = seg.state((3, 301), tdb)
    pe_m, ve_m = seg.state((3, 399), tdb)
    moon = pm - pe_m                                     # geocentric Moon
    if body == "moon":
        p, v = moon, vm - ve_m
        accel = -(GM_EARTH + GM_MOON) * p / norm(p) ** 3
    else:
        pb3, vb3 = seg.state((0, 3), tdb)
        pe, ve = pb3 + pe_m, vb3 + ve_m
        ps, _ = seg.barycentric("sun", tdb)
        pb, vb = seg.barycentric(body, tdb)
        p, v = pb - pe, vb - ve
        to_sun = pe - ps
        a_earth = -GM_SUN * to_sun / norm(to_sun) ** 3 + GM_MOON * moon / norm(moon) ** 3
        helio = pb - ps
        a_body = 0.0 if body == "sun" else -GM_SUN * helio / norm(helio) ** 3
        accel = a_body - a_earth
    tau = norm(p) / C_KM_PER_DAY
    r = p - v * tau
    # d/dt of r - v tau: the velocity at the time the light left, less the change of tau
    v_app = v - accel * tau - v * (dot(p, v) / norm(p) / C_KM_PER_DAY)
    if not with_sun_vector:
        return r, v_app
    return r, v_app, pb - vb * tau - ps


def earth_barycentric(jd_tt):
    """Barycentric position (km) and velocity (km/day) of the geocentre, shape (3, N)."""
    return segments().earth(_tdb(jd_tt))


# ---------------------------------------------------------------- nutation with its rate

@functools.lru_cache(maxsize=4)
def _nutation_tables(terms):
    from skyfield import nutationlib as nl

    fa = np.array([np.ravel(a) for a in (nl.fa0, nl.fa1, nl.fa2, nl.fa3, nl.fa4)], dtype=np.float64)  # arcsec
    return (np.asarray(nl.nals_t[:terms], dtype=np.float64),
            np.asarray(nl.lunisolar_longitude_coefficients[:terms], dtype=np.float64), fa)


def nutation_longitude_and_rate(jd_tt, terms: int = NUTATION_TERMS):
    """Nutation in longitude and its rate.

    The luni-solar part of the IAU 2000A series (Mathews, Herring & Buffett
    2002; coefficients as tabulated in skyfield) truncated to ``terms``
    terms, with the polynomial fundamental arguments of Simon et al. (1994),
    and the analytic time derivative of the same sum.  The value equals
    :func:`calendra.solarterms.nutation_in_longitude` with the same terms.

    Parameters
    ----------
    jd_tt : array_like
        Julian Days, TT.
    terms : int
        Luni-solar terms kept.

    Returns
    -------
    dpsi : ndarray
        Nutation in longitude, radians.
    rate : ndarray
        Its rate, radians per day.
    """
    nals, coef, fa = _nutation_tables(int(terms))
    t = (np.asarray(jd_tt, dtype=np.float64).reshape(-1) - J2000) / 36525.0
    powers = t[None, :] ** np.arange(5)[:, None]                       # (5, N)
    args = (fa.T @ powers) * ARCSEC                                    # (5 arguments, N)
    dpow = np.arange(1, 5)[:, None] * t[None, :] ** np.arange(4)[:, None]
    rates = (fa[1:].T @ dpow) * ARCSEC / 36525.0                       # rad/day
    arg = nals @ args                                                  # (terms, N)
    darg = nals @ rates
    s, c = np.sin(arg), np.cos(arg)
    amp = coef[:, 0:1] + coef[:, 1:2] * t[None, :]
    dpsi = np.sum(amp * s + coef[:, 2:3] * c, axis=0)
    rate = np.sum((amp * c - coef[:, 2:3] * s) * darg + coef[:, 1:2] * s / 36525.0, axis=0)
    scale = 1e-7 * ARCSEC                                              # 0.1 microarcsec units
    return dpsi * scale, rate * scale


# ---------------------------------------------------------------- coordinates

def ecliptic_of_date(r, jd_tt, precession: str = DEFAULT_PRECESSION, nutation: bool = True, axes=None):
    """Ecliptic longitude and latitude of date of GCRS vectors.

    Parameters
    ----------
    r : ndarray, shape (3, N)
        Vectors (any unit), GCRS.
    jd_tt : array_like
        Julian Days, TT.
    precession : {'vondrak2011', 'iau2006'}
        Model of the ecliptic of date.
    nutation : bool
        Add the nutation in longitude (true equinox; apparent longitude).
    axes : tuple or None
        Precomputed :func:`calendra.solarterms.ecliptic_axes` at ``jd_tt``.

    Returns
    -------
    lon, lat : ndarray
        Radians; longitude in (-pi, pi].
    """
    from calendra.solarterms import ecliptic_axes

    x, y, z = ecliptic_axes(jd_tt, precession) if axes is None else axes
    rx, ry, rz = dot(x, r), dot(y, r), dot(z, r)
    lon = np.arctan2(ry, rx)
    if nutation:
        lon = lon + nutation_longitude_and_rate(jd_tt)[0]
    lat = np.arctan2(rz, np.hypot(rx, ry))
    return lon, lat


def longitude_rate(r, v, axes):
    """Rate of the longitude of ``r`` in the fixed frame ``axes``, radians per day."""
    x, y, _ = axes
    rx, ry, vx, vy = dot(x, r), dot(y, r), dot(x, v), dot(y, v)
    return (rx * vy - ry * vx) / (rx * rx + ry * ry)


def equator_of_date(r, jd_tt):
    """Right ascension and declination of date (true equator and equinox) of GCRS vectors.

    Returns
    -------
    ra, dec : ndarray
        Radians; right ascension in (-pi, pi].
    """
    from calendra_stars.positions import npb_matrix

    m = npb_matrix(np.asarray(jd_tt, dtype=np.float64).reshape(-1))     # (N, 3, 3)
    u = np.einsum("nij,jn->in", m, r)
    return np.arctan2(u[1], u[0]), np.arctan2(u[2], np.hypot(u[0], u[1]))


def unit(r):
    return r / norm(r)


def unit_rate(r, v):
    """Time derivative of ``r/|r|`` (per day) from position ``r`` and velocity ``v``."""
    d = norm(r)
    u = r / d
    return (v - u * dot(u, v)) / d


def separation(u1, u2):
    """Angle between (3, N) direction arrays, radians (atan2 form, exact near 0 and pi)."""
    return np.arctan2(norm(np.cross(u1, u2, axis=0)), dot(u1, u2))


def in_chunks(fn, jd, chunk: int = CHUNK):
    """Apply ``fn(jd_chunk) -> tuple of arrays (..., n)`` over chunks and join the results."""
    jd = np.asarray(jd, dtype=np.float64).reshape(-1)
    if jd.size <= chunk:
        return fn(jd)
    parts = [fn(jd[i:i + chunk]) for i in range(0, jd.size, chunk)]
    return tuple(np.concatenate(p, axis=-1) for p in zip(*parts))
