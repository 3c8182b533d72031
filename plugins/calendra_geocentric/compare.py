"""The Almagest models at any instant (TT) and against the modern sky (DE406).

Frames, and the offset to remove
--------------------------------
The models give longitudes in Ptolemy's frame: tropical, counted from *his*
equinox, with the fixed stars (and the planetary apogees) advancing at his
1 degree per century.  The modern comparison is the DE406 apparent
geocentric ecliptic longitude of date (true equinox and ecliptic of date:
skyfield's ``earth.at(t).observe(body).apparent().frame_latlon(ecliptic_frame)``,
with skyfield's IAU 2000/2006 precession-nutation, whose error at 2000 years
from J2000 is of order arcseconds to an arcminute, far below the models'
errors).

Ptolemy's zero point is wrong: his equinoxes and solstice of AD 132-140
were each about a day late (from memory), so the longitudes of his own time are about 1 deg too small (Sun,
Moon, stars and planets alike, since he placed the planets by the stars and
the Moon); and his tropical year of 365;14,48 days, about 6 1/2 minutes too
long, moves that zero point by a further ~0.44 deg per century (later dates
more negative, earlier ones less).  See J. Evans, *The History and Practice
of Ancient Astronomy* (1998), ch. 5 on Ptolemy's equinoxes and solar tables;
R. R. Newton, *The Crime of Claudius Ptolemy* (1977); O. Pedersen, *A Survey
of the Almagest* (1974) on the tropical year (all from memory).

:func:`equinox_offset_deg` measures that zero-point error at every instant
as Ptolemy's mean Sun minus the modern mean Sun (mean equinox of date;
J. Meeus, *Astronomical Algorithms*, 2nd ed. 1998, eq. 25.2), so the offset
is computed, not assumed; it is about -1.0 deg around AD 137.
:func:`compare` reports the raw difference model - DE406 and the
difference with the offset removed, which is the error of the model itself.

Time
----
Instants are Julian Days in TT; the models run on mean solar time at
Alexandria, UT1 through the delta-T model (see :mod:`calendra_geocentric._common`).
"""

from __future__ import annotations

import numpy as np

from ._common import as_days, days_from_jd_tt, wrap180

#: The bodies that have an Almagest model, in the order of the command line.
BODIES = ("sun", "moon", "mercury", "venus", "mars", "jupiter", "saturn")
#: The planets (bodies with stations).
PLANET_NAMES = ("mercury", "venus", "mars", "jupiter", "saturn")

#: DE406 target of each body (the outer planets through their system barycentres).
_DE406_TARGETS = {"sun": "sun", "moon": "moon", "mercury": "mercury", "venus": "venus",
                  "mars": "mars barycenter", "jupiter": "jupiter barycenter",
                  "saturn": "saturn barycenter"}

#: Instants evaluated per skyfield call (memory: a few hundred bytes per instant).
_BLOCK = 50_000

MODEL_TITLE = ("Ptolemy, Almagest (tr. G. J. Toomer, 1984): Sun III, Moon IV-V, Mercury IX, Venus X, "
               "Mars X, Jupiter XI, Saturn XI; latitudes V.12, XIII (simplest form)")
TIME_NOTE = ("mean solar days at Alexandria (29.92 E) from Nabonassar 1 Thoth 1 noon "
             "(JD 1448638.0 at Alexandria); UT1 = TT - delta T")
OFFSET_NOTE = ("Ptolemy's mean Sun - modern mean Sun (Meeus eq. 25.2), about -1 deg "
               "around AD 137 (Evans 1998, ch. 5); corrected difference = difference - offset")


def _check_body(body: str) -> str:
    from calendra.errors import UnknownNameError

    name = str(body).lower()
    if name not in BODIES:
        raise UnknownNameError("Almagest model body", body, BODIES)
    return name


def synodic_period_days(body: str) -> float:
    """Return the model's mean synodic period of ``body``, days (the year for the Sun)."""
    from . import moon, sun
    from .mercury import MERCURY
    from .planets import PLANETS

    body = _check_body(body)
    if body == "sun":
        return sun.TROPICAL_YEAR_DAYS
    if body == "moon":
        return moon.SYNODIC_MONTH_DAYS
    return (MERCURY if body == "mercury" else PLANETS[body]).synodic_period_days


def model_position_days(body: str, days):
    """Return the :class:`~calendra_geocentric._common.ModelPosition` of ``body`` at ``days``.

    Parameters
    ----------
    body : str
        One of :data:`BODIES`.
    days : float or array_like
        Egyptian days since the Almagest epoch (Alexandria mean solar time).
    """
    from . import mercury, moon, planets, sun

    body = _check_body(body)
    days = as_days(days)
    if body == "sun":
        return sun.position(days)
    if body == "moon":
        return moon.position(days)
    if body == "mercury":
        return mercury.position(days)
    return planets.position(body, days)


def model_position(body: str, jd_tt, deltat=None):
    """Return the model's ecliptic longitude and latitude of ``body`` at TT instants.

    Parameters
    ----------
    body : str
        One of :data:`BODIES`.
    jd_tt : float or array_like
        Julian Days, TT (any shape).
    deltat : str, DeltaTModel or None
        Delta-T model mapping TT to the model's UT-based time (default model if None).

    Returns
    -------
    (ndarray, ndarray)
        Longitude and latitude, degrees, Ptolemy's frame.
    """
    pos = model_position_days(body, days_from_jd_tt(jd_tt, deltat))
    return pos.longitude_deg, pos.latitude_deg


def de406_position(body: str, jd_tt, deltat=None):
    """Return the DE406 apparent geocentric ecliptic longitude and latitude of date, degrees.

    Parameters
    ----------
    body : str
        One of :data:`BODIES`.
    jd_tt : float or array_like
        Julian Days, TT, within the span of DE406 (any shape).
    deltat : str, DeltaTModel or None
        Delta-T model of the skyfield timescale (it does not change geocentric
        positions at a TT instant).

    Returns
    -------
    (ndarray, ndarray)
        Longitude in [0, 360) and latitude, degrees.

    Raises
    ------
    calendra.errors.EphemerisRangeError
        For an instant outside DE406.
    """
    from skyfield.framelib import ecliptic_frame

    from calendra.deltat import skyfield_timescale
    from calendra.ephemeris import check_span, load_ephemeris

    from ._common import _model

    body = _check_body(body)
    jd = as_days(jd_tt)
    check_span(jd)
    flat = jd.reshape(-1)
    eph = load_ephemeris()
    earth, target = eph["earth"], eph[_DE406_TARGETS[body]]
    ts = skyfield_timescale(_model(deltat))
    lon = np.empty(flat.shape)
    lat = np.empty(flat.shape)
    for lo in range(0, flat.size, _BLOCK):
        part = flat[lo:lo + _BLOCK]
        t = ts.tt_jd(part)
        b, l_, _ = earth.at(t).observe(target).apparent().frame_latlon(ecliptic_frame)
        lon[lo:lo + _BLOCK] = l_.degrees
        lat[lo:lo + _BLOCK] = b.degrees
    return lon.reshape(jd.shape), lat.reshape(jd.shape)


def modern_mean_sun(jd_tt):
    """Return the modern geometric mean longitude of the Sun, mean equinox of date, degrees.

    J. Meeus, *Astronomical Algorithms*, 2nd ed. (1998), eq. 25.2:
    L0 = 280.46646 + 36000.76983 T + 0.0003032 T**2, T in Julian centuries
    of TT from J2000.
    """
    t = (as_days(jd_tt) - 2451545.0) / 36525.0
    return np.mod(280.46646 + 36000.76983 * t + 0.0003032 * t * t, 360.0)


def equinox_offset_deg(jd_tt, deltat=None):
    """Return the error of Ptolemy's zero point of longitude at TT instants, degrees.

    Ptolemy's mean Sun (Almagest III) minus the modern mean Sun, both
    referred to their equinox of date; about -1 deg around AD 137 and
    changing by about -0.44 deg per century (see the module docstring).
    """
    from . import sun

    days = days_from_jd_tt(jd_tt, deltat)
    return wrap180(sun.mean_longitude(days) - modern_mean_sun(jd_tt))


def compare(body: str, jd_tt, deltat=None) -> dict:
    """Return the model and DE406 positions of ``body`` and their differences, degrees.

    Parameters
    ----------
    body : str
        One of :data:`BODIES`.
    jd_tt : float or array_like
        Julian Days, TT, within DE406.
    deltat : str, DeltaTModel or None
        Delta-T model (default model if None).

    Returns
    -------
    dict of ndarray
        ``model_longitude``, ``model_latitude``, ``de406_longitude``,
        ``de406_latitude``, ``difference`` (model - DE406 longitude, in
        [-180, 180)), ``equinox_offset``, ``corrected_difference``
        (difference - offset) and ``latitude_difference``; all degrees.
    """
    jd = as_days(jd_tt)
    mlon, mlat = model_position(body, jd, deltat)
    rlon, rlat = de406_position(body, jd, deltat)
    diff = wrap180(mlon - rlon)
    offset = equinox_offset_deg(jd, deltat)
    return {
        "model_longitude": mlon, "model_latitude": mlat,
        "de406_longitude": rlon, "de406_latitude": rlat,
        "difference": diff, "equinox_offset": offset,
        "corrected_difference": wrap180(diff - offset),
        "latitude_difference": mlat - rlat,
    }
