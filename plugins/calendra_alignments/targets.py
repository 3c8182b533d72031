"""Sky targets of alignments at any epoch from -3000 to +3000, as declinations.

An *epoch* is a Julian epoch (astronomical years, year 0 = 1 BC):
``JD(TT) = 2451545 + (epoch - 2000) * 365.25``.  Every function here takes an
array of epochs and answers for all of them as one array job.

Obliquity of the ecliptic (:func:`obliquity`)
---------------------------------------------
``vondrak2011`` (default)
    The angle between the long-term ecliptic pole (ERFA ``ltpecl``) and the
    long-term equator pole (ERFA ``ltpequ``) of Vondrak, Capitaine & Wallace
    (2011, A&A 534, A22), valid over +-200 000 years.
``laskar1986``
    Laskar's polynomial in ``U = T / 100`` (T in Julian centuries from
    J2000), Meeus, *Astronomical Algorithms*, 2nd ed., eq. 22.3 (valid over
    +-10 000 years; within 0.002 degrees of Vondrak's over -3000..3000).
``iau2006``
    ERFA ``obl06`` (IAU 2006), for contrast: a polynomial fitted to a few
    centuries around 2000.

The Sun
-------
For each epoch the season year is the one whose solstice at apparent solar
longitude 90 (the Sun furthest north) lies nearest ``epoch + 0.5``; with it
come the preceding and following solstices at longitude 270, the equinoxes
and the cross-quarter crossings between them.  The instants are found on
DE406 (apparent geocentric longitude of date, Vondrak precession, as in
:mod:`calendra.solarterms`) by vectorized Newton steps to 0.1 s.  At the two
ends of the ephemeris (epochs -3000 and +3000) the season year is moved one
year inwards and the row says so.

``solstice-90``, ``solstice-270``
    Declination ``+eps`` and ``-eps`` with the mean obliquity of the chosen
    model.  (The apparent declination at the solstice instant differs by the
    nutation in obliquity, at most 9.2", and the Sun's latitude, under 1";
    it is given as ``dec_ephemeris``.)
``equinox-0:astronomical``, ``equinox-180:astronomical``
    Apparent longitude 0 and 180: the apparent declination then (DE406).
``equinox-*:declination-zero``
    The instant the Sun's apparent declination is 0 (within a minute of the
    astronomical equinox: the Sun's ecliptic latitude is below 1").
``equinox-*:midpoint``
    The temporal midpoint between the two solstices around the equinox
    (``(t1 + t2) / 2``); the Sun is then about a degree north of the equator
    in recent millennia, because it moves more slowly in the northern summer
    half of the year -- the amount depends on the epoch (perihelion).
``equinox-*:day-count``
    The civil day halfway between the days of the two solstices by day count
    (local mean time at the given longitude, Greenwich otherwise; UT through
    delta T); when the number of days between them is odd there are two
    middle days and the earlier is taken.  The declination is the Sun's at
    local mean noon of that day.
``cross-quarter-45/135/225/315:longitude``
    Apparent solar longitude 45, 135, 225, 315 (the declination at the instant).
``cross-quarter-*:midpoint``
    The temporal midpoint between the equinox and the solstice on either side.

The Moon
--------
``major-north/south``: ``+-(eps + i)``; ``minor-north/south``: ``+-(eps - i)``
with the mean inclination of the lunar orbit ``i = 5.145`` degrees (from
memory; see ../shared/reference/check_values.md section 7.3).  The
inclination oscillates by about +-0.15 degrees with a period of 173 days, so
the monthly extremes near a standstill scatter by up to about that much
around the limit: the targets carry a half-width of 0.15 degrees.  These are
geocentric declinations; the alignment side applies the parallax
(:class:`calendra_alignments.geometry.Body`), and :func:`rise_set_azimuths` shows
the declination of the skyline point where the Moon is seen.  With
``moon-de406`` the extremes are also measured on DE406: the monthly extremes
of the apparent geocentric declination over one nodal period (18.61 years)
centred on the epoch, every 6 hours with parabolic refinement.

Venus
-----
The northern and southern extremes of Venus' apparent geocentric declination
(DE406) over the 8 years centred on the epoch (1-day steps, parabolic
refinement, then the value at the refined instant), with the elongation from
the Sun at that instant (an extreme near inferior conjunction is not seen).

Stars
-----
Mean declination of date: linear space motion from the Hipparcos new
reduction at J1991.25 (:func:`calendra_stars.positions.star_barycentric`,
radial velocities of a few nearby stars) and the Vondrak et al. (2011)
long-term precession with frame bias (ERFA ``ltpb``).  Nutation (<= 9") and
annual aberration (<= 20"), which change through the year, are left out;
annual parallax is below 1".  The default list (:data:`DEFAULT_STARS`) holds
the stars to magnitude 1.5 and a few of the asterisms most often proposed as
targets (Pleiades, Orion's belt, Castor, Thuban).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np

from calendra.errors import ParameterError

#: Julian Day of J2000.0 (TT).
J2000 = 2451545.0
JULIAN_YEAR = 365.25
TROPICAL_YEAR = 365.24219
#: Mean inclination of the Moon's orbit to the ecliptic, degrees (from memory; check_values 7.3).
LUNAR_INCLINATION_DEG = 5.145
#: Amplitude of the oscillation of the inclination (period 173 days), degrees (from memory).
LUNAR_INCLINATION_WOBBLE_DEG = 0.15
#: Epochs served (DE406).
EPOCH_RANGE = (-3000.0, 3000.0)

OBLIQUITY_MODELS = {
    "vondrak2011": "Vondrak, Capitaine & Wallace (2011, A&A 534, A22) long-term model: angle between the "
                   "ecliptic pole (ERFA ltpecl) and the equator pole (ERFA ltpequ) of date",
    "laskar1986": "Laskar (1986) polynomial, Meeus, Astronomical Algorithms (1998) eq. 22.3",
    "iau2006": "IAU 2006 (ERFA obl06), accurate near 2000 only",
}
DEFAULT_OBLIQUITY = "vondrak2011"

#: Target groups that can be asked for.
GROUPS = ("sun", "moon", "stars", "venus", "moon-de406")
DEFAULT_GROUPS = ("sun", "moon", "stars", "venus")

#: Default stars: every named star to V 1.5 (alpha Centauri as one), and the Pleiades (Alcyone),
#: Orion's belt, Castor and Thuban.
DEFAULT_STARS = (
    "Sirius", "Canopus", "Arcturus", "Rigil Kentaurus", "Vega", "Capella", "Rigel", "Procyon", "Betelgeuse",
    "Achernar", "Hadar", "Altair", "Aldebaran", "Spica", "Antares", "Fomalhaut", "Pollux", "Mimosa",
    "Deneb", "Acrux", "Regulus", "Adhara", "Castor", "Alcyone", "Alnitak", "Alnilam", "Mintaka", "Thuban",
)

# Season events: name, target apparent longitude, offset from the solstice at 90 (degrees, unwrapped).
_SEASON = (
    ("solstice-270:before", 270.0, -180.0),
    ("cross-quarter-315:longitude", 315.0, -135.0),
    ("equinox-0:astronomical", 0.0, -90.0),
    ("cross-quarter-45:longitude", 45.0, -45.0),
    ("solstice-90", 90.0, 0.0),
    ("cross-quarter-135:longitude", 135.0, 45.0),
    ("equinox-180:astronomical", 180.0, 90.0),
    ("cross-quarter-225:longitude", 225.0, 135.0),
    ("solstice-270", 270.0, 180.0),
)
_SOLAR_RATE = 360.0 / TROPICAL_YEAR


def epochs_to_jd(epochs):
    """Return the TT Julian Days of Julian epochs: ``2451545 + (epoch - 2000) * 365.25``."""
    return J2000 + (np.asarray(epochs, dtype=float) - 2000.0) * JULIAN_YEAR


def check_epochs(epochs) -> np.ndarray:
    """Return epochs as a 1-D float array, raising ParameterError outside -3000..3000."""
    e = np.atleast_1d(np.asarray(epochs, dtype=float)).ravel()
    if e.size == 0 or not np.all(np.isfinite(e)):
        raise ParameterError("give at least one finite epoch (astronomical year)")
    if np.any(e < EPOCH_RANGE[0]) or np.any(e > EPOCH_RANGE[1]):
        bad = e[(e < EPOCH_RANGE[0]) | (e > EPOCH_RANGE[1])][0]
        raise ParameterError(f"epoch {bad:g} is outside {EPOCH_RANGE[0]:g}..{EPOCH_RANGE[1]:g} (the span of DE406)")
    return e


# ---------------------------------------------------------------- obliquity

def obliquity_laskar(epochs):
    """Mean obliquity of the ecliptic after Laskar (1986), Meeus eq. 22.3, degrees.

    Parameters
    ----------
    epochs : float or array_like
        Julian epochs (TT).

    References
    ----------
    Laskar, J. (1986), A&A 157, 59; Meeus (1998), *Astronomical Algorithms*, 2nd ed., eq. 22.3.
    """
    u = (np.asarray(epochs, dtype=float) - 2000.0) / 10000.0
    coef = (-4680.93, -1.55, 1999.25, -51.38, -249.67, -39.05, 7.12, 27.87, 5.79, 2.45)
    s = np.zeros_like(u)
    for c in reversed(coef):        # Horner: sum c_k U^k for k = 1..10
        s = (s + c) * u
    return (23.0 + 26.0 / 60.0 + 21.448 / 3600.0) + s / 3600.0


def obliquity_vondrak(epochs):
    """Mean obliquity of the ecliptic of the long-term precession of Vondrak et al. (2011), degrees.

    The angle between the ecliptic pole (ERFA ``ltpecl``) and the equator pole
    (ERFA ``ltpequ``) at the Julian epochs.
    """
    import erfa

    epj = np.asarray(epochs, dtype=float)
    pe = erfa.ltpecl(epj)
    pq = erfa.ltpequ(epj)
    c = np.clip(np.sum(pe * pq, axis=-1), -1.0, 1.0)
    # arctan2 of the cross and dot products keeps full precision near any angle.
    s = np.linalg.norm(np.cross(pe, pq), axis=-1)
    return np.degrees(np.arctan2(s, c))


def obliquity(epochs, model: str = DEFAULT_OBLIQUITY):
    """Return the mean obliquity of the ecliptic at Julian epochs, degrees.

    Parameters
    ----------
    epochs : float or array_like
        Julian epochs (astronomical years).
    model : {'vondrak2011', 'laskar1986', 'iau2006'}
        See :data:`OBLIQUITY_MODELS`.

    Examples
    --------
    >>> round(float(obliquity(2000.0)), 6)
    23.439279
    """
    if model == "vondrak2011":
        out = obliquity_vondrak(epochs)
    elif model == "laskar1986":
        out = obliquity_laskar(epochs)
    elif model == "iau2006":
        import erfa

        jd = epochs_to_jd(epochs)
        out = np.degrees(erfa.obl06(2400000.5, jd - 2400000.5))
    else:
        raise ParameterError(f"obliquity model {model!r} is not one of {', '.join(OBLIQUITY_MODELS)}")
    out = np.asarray(out, dtype=float)
    return out[()] if out.ndim == 0 else out


# ---------------------------------------------------------------- apparent places from DE406

_BLOCK = 100_000


def apparent_radec(body: str, jd_tt):
    """Apparent geocentric right ascension, declination and distance of a DE406 body.

    Light time, annual aberration (relativistic), the Vondrak et al. (2011)
    long-term precession with frame bias and IAU 2000B nutation (the pipeline
    of :mod:`calendra_stars.positions`).  Evaluated in blocks of 100 000 instants.

    Parameters
    ----------
    body : str
        ``sun``, ``moon``, ``venus`` (any body of :func:`calendra_stars.positions.barycentric`).
    jd_tt : array_like
        Julian Days, TT, within DE406.

    Returns
    -------
    ra_deg, dec_deg : ndarray
        True equator and equinox of date, degrees.
    distance_au : ndarray
        Geocentric distance, AU.
    """
    from calendra_stars import positions as P

    jd = np.asarray(jd_tt, dtype=float)
    flat = jd.reshape(-1)
    ra = np.empty(flat.size)
    dec = np.empty(flat.size)
    dist = np.empty(flat.size)
    for i in range(0, flat.size, _BLOCK):
        t = flat[i:i + _BLOCK]
        e_pos, e_vel = P.barycentric("earth", t, velocity=True)
        g = P.geocentric_astrometric(body, t, earth_pos=e_pos)
        r = np.linalg.norm(g, axis=-1)
        u = P.aberrate(g / r[:, None], e_vel)
        u = np.einsum("...ij,...j->...i", P.npb_matrix(t), u)
        a, d = P.tod_radec(u)
        ra[i:i + _BLOCK] = np.degrees(a) % 360.0
        dec[i:i + _BLOCK] = np.degrees(d)
        dist[i:i + _BLOCK] = r
    return ra.reshape(jd.shape), dec.reshape(jd.shape), dist.reshape(jd.shape)


def sun_declination(jd_tt):
    """Return the Sun's apparent geocentric declination at TT instants, degrees (DE406)."""
    out = apparent_radec("sun", jd_tt)[1]
    return out[()] if np.ndim(out) == 0 else out


def _span_shift(t_first, t_last, margin_days=5.0):
    """Whole tropical years to move windows [t_first, t_last] inside DE406 (arrays, days)."""
    from calendra.ephemeris import SPAN_JD

    lo, hi = SPAN_JD[0] + margin_days, SPAN_JD[1] - margin_days
    up = np.ceil(np.maximum(lo - t_first, 0.0) / TROPICAL_YEAR)
    down = np.ceil(np.maximum(t_last - hi, 0.0) / TROPICAL_YEAR)
    return up - down


def _sun_rate_rad(jd_tt):
    """Approximate rate of the Sun's longitude, radians per day (Meeus eq. 25.3-25.4 to first order in e)."""
    t = (np.asarray(jd_tt, dtype=float) - J2000) / 36525.0
    m = np.radians(357.52911 + 35999.05029 * t)
    e = 0.016708634 - 0.000042037 * t
    return np.radians(0.98564736) * (1.0 + 2.0 * e * np.cos(m))


def _refine_longitudes(t0, lon_deg):
    from calendra.solarterms import newton_refine, sun_apparent_longitude

    def evaluate(jd):
        return np.radians(sun_apparent_longitude(jd)), _sun_rate_rad(jd)

    t, _ = newton_refine(np.asarray(t0, float).ravel(), np.radians(np.asarray(lon_deg, float).ravel()),
                         evaluate, label="solar longitude")
    return t.reshape(np.shape(t0))


def _refine_declination_zero(t0, northward):
    """Newton steps from the astronomical equinoxes ``t0`` to the instants of apparent declination 0.

    The rate ``d dec / dt = +-sin(eps) dlambda/dt`` (sign: Sun moving north or south) is taken as a
    constant per instant; the equinox is within a minute of the start, so three steps reach 0.1 s.
    """
    sgn = np.where(np.asarray(northward, bool), 1.0, -1.0)
    t = np.array(t0, dtype=float)
    rate = math.sin(math.radians(23.44)) * _sun_rate_rad(t) * sgn
    for _ in range(8):
        step = -np.radians(sun_declination(t)) / rate
        t = t + step
        if np.max(np.abs(step)) * 86400.0 < 0.1:
            return t
    from calendra.errors import CalendraError

    raise CalendraError("declination-zero equinox did not converge")  # pragma: no cover


@dataclass
class SeasonEvents:
    """Instants (TT Julian Days) and apparent solar declinations of the season events of epochs.

    Attributes
    ----------
    epochs : ndarray, shape (E,)
    shift_years : ndarray, shape (E,)
        Tropical years by which the season year was moved to stay inside DE406 (0 normally).
    jd_tt : dict of name -> ndarray (E,)
    dec : dict of name -> ndarray (E,)
        Apparent geocentric declination of the Sun at the instant, degrees.
    distance_au : dict of name -> ndarray (E,)
    odd_day_count : dict of name -> ndarray of bool (E,)
        For the day-count equinoxes: True when there were two middle days (the earlier is used).
    """

    epochs: np.ndarray
    shift_years: np.ndarray
    jd_tt: dict = field(default_factory=dict)
    dec: dict = field(default_factory=dict)
    distance_au: dict = field(default_factory=dict)
    odd_day_count: dict = field(default_factory=dict)


def season_events(epochs, longitude_deg=None, deltat=None) -> SeasonEvents:
    """Return the solstices, equinoxes (four definitions) and cross-quarter days of each epoch.

    Parameters
    ----------
    epochs : array_like
        Julian epochs, -3000..3000.
    longitude_deg : float, optional
        East longitude for the civil days of the day-count equinoxes (default 0, Greenwich).
    deltat : delta-T model, optional
        For UT of the day-count equinoxes (default model).

    Returns
    -------
    SeasonEvents
        See the module notes for the definitions.
    """
    from calendra.deltat import DEFAULT_MODEL, get_model
    from calendra.solarterms import sun_apparent_longitude

    e = check_epochs(epochs)
    mid = epochs_to_jd(e) + 0.5 * JULIAN_YEAR
    # The solstice at longitude 90 nearest the middle of the epoch's year (first guess).
    from calendra.ephemeris import SPAN_JD

    mid = np.clip(mid, SPAN_JD[0] + 1.0, SPAN_JD[1] - 1.0)
    lam = sun_apparent_longitude(mid)
    t90 = mid + (((90.0 - lam + 180.0) % 360.0) - 180.0) / _SOLAR_RATE
    shift = _span_shift(t90 - 182.7 - 3.0, t90 + 182.7 + 3.0)
    t90 = t90 + shift * TROPICAL_YEAR
    names = [s[0] for s in _SEASON]
    lons = np.array([s[1] for s in _SEASON])
    offs = np.array([s[2] for s in _SEASON])
    t0 = t90[None, :] + offs[:, None] / _SOLAR_RATE
    t = _refine_longitudes(t0, np.broadcast_to(lons[:, None], t0.shape))
    ev = SeasonEvents(e, shift)
    for k, n in enumerate(names):
        ev.jd_tt[n] = t[k]
    jt = ev.jd_tt
    pairs = {
        "equinox-0:midpoint": ("solstice-270:before", "solstice-90"),
        "equinox-180:midpoint": ("solstice-90", "solstice-270"),
        "cross-quarter-315:midpoint": ("solstice-270:before", "equinox-0:astronomical"),
        "cross-quarter-45:midpoint": ("equinox-0:astronomical", "solstice-90"),
        "cross-quarter-135:midpoint": ("solstice-90", "equinox-180:astronomical"),
        "cross-quarter-225:midpoint": ("equinox-180:astronomical", "solstice-270"),
    }
    for n, (a, b) in pairs.items():
        jt[n] = 0.5 * (jt[a] + jt[b])
    z = _refine_declination_zero(np.stack([jt["equinox-0:astronomical"], jt["equinox-180:astronomical"]]),
                                 np.array([[True], [False]]) & np.ones((2, e.size), bool))
    jt["equinox-0:declination-zero"], jt["equinox-180:declination-zero"] = z[0], z[1]
    # Day count: civil days (local mean time at the longitude) of the solstices, the middle day, its noon.
    model = deltat if deltat is not None else get_model(DEFAULT_MODEL)
    lon = 0.0 if longitude_deg is None else float(longitude_deg)
    for n, (a, b) in (("equinox-0:day-count", pairs["equinox-0:midpoint"]),
                      ("equinox-180:day-count", pairs["equinox-180:midpoint"])):
        ja = np.floor(np.asarray(model.ut_from_tt(jt[a]), float) + 0.5 + lon / 360.0)
        jb = np.floor(np.asarray(model.ut_from_tt(jt[b]), float) + 0.5 + lon / 360.0)
        middle = np.floor((ja + jb) / 2.0)
        ev.odd_day_count[n] = ((jb - ja) % 2.0) == 1.0
        jt[n] = np.asarray(model.tt_from_ut(middle - lon / 360.0), float)   # local mean noon
    order = list(jt)
    stack = np.stack([jt[n] for n in order])
    _, dec, dist = apparent_radec("sun", stack)
    for k, n in enumerate(order):
        ev.dec[n] = dec[k]
        ev.distance_au[n] = dist[k]
    return ev


# ---------------------------------------------------------------- Moon and Venus scans

def _parabola(y_m, y_0, y_p):
    """Vertex offset (in steps) and value of the parabola through three equally spaced samples."""
    den = y_m - 2.0 * y_0 + y_p
    with np.errstate(invalid="ignore", divide="ignore"):
        off = np.where(den != 0.0, 0.5 * (y_m - y_p) / den, 0.0)
    off = np.clip(off, -1.0, 1.0)
    return off, y_0 - 0.25 * (y_m - y_p) * off


def _windows(epochs, half_days, step_days):
    """Sample grids (E, K) centred on the epochs, moved inside DE406 where needed."""
    c = epochs_to_jd(epochs)
    k = np.arange(-half_days, half_days + 0.5 * step_days, step_days)
    shift = _span_shift(c - half_days - 1.0, c + half_days + 1.0)
    c = c + shift * TROPICAL_YEAR
    return c[:, None] + k[None, :], shift


def venus_extremes(epochs, half_window_years: float = 4.0, step_days: float = 1.0):
    """Return the northern and southern extremes of Venus' apparent declination around epochs.

    Parameters
    ----------
    epochs : array_like
        Julian epochs, -3000..3000.
    half_window_years : float
        Half the scanned window (default 4 years: the 8-year cycle of Venus).
    step_days : float
        Sampling step, days (refined by a parabola and re-evaluated at the vertex).

    Returns
    -------
    dict
        ``north`` and ``south``: dicts with ``dec`` (degrees), ``jd_tt`` and
        ``elongation`` (degrees from the Sun) arrays of shape (E,), and
        ``shift_years`` (E,).
    """
    e = check_epochs(epochs)
    grid, shift = _windows(e, half_window_years * JULIAN_YEAR, step_days)
    _, dec, _ = apparent_radec("venus", grid)
    out = {"shift_years": shift}
    rows = np.arange(e.size)
    for name, sgn in (("north", 1.0), ("south", -1.0)):
        y = sgn * dec
        i = np.clip(np.argmax(y[:, 1:-1], axis=1) + 1, 1, y.shape[1] - 2)
        off, _ = _parabola(y[rows, i - 1], y[rows, i], y[rows, i + 1])
        t = grid[rows, i] + off * step_days
        ra_v, d_v, _ = apparent_radec("venus", t)
        ra_s, d_s, _ = apparent_radec("sun", t)
        out[name] = {"dec": d_v, "jd_tt": t, "elongation": _separation(ra_v, d_v, ra_s, d_s)}
    return out


def _separation(ra1, d1, ra2, d2):
    a1, b1, a2, b2 = (np.radians(np.asarray(x, float)) for x in (ra1, d1, ra2, d2))
    c = np.sin(b1) * np.sin(b2) + np.cos(b1) * np.cos(b2) * np.cos(a1 - a2)
    return np.degrees(np.arccos(np.clip(c, -1.0, 1.0)))


#: One nodal period of the Moon, Julian years (from memory: 18.61 years).
NODAL_PERIOD_YEARS = 18.61


def _monthly(grid, step_days):
    """Monthly extremes on sample grids (B, K): values and instants (B, K-2), NaN where not an extreme."""
    _, dec, _ = apparent_radec("moon", grid)
    out = {}
    for side, sgn in (("north", 1.0), ("south", -1.0)):
        y = sgn * dec
        inner = (y[:, 1:-1] > y[:, :-2]) & (y[:, 1:-1] >= y[:, 2:])
        off, val = _parabola(y[:, :-2], y[:, 1:-1], y[:, 2:])
        out[side] = (np.where(inner, sgn * val, np.nan), grid[:, 1:-1] + off * step_days)
    return out


def moon_monthly_extremes(jd_tt_start: float, jd_tt_end: float, step_days: float = 0.25) -> dict:
    """Return the Moon's monthly extremes of apparent geocentric declination in a range (DE406).

    Sampled every ``step_days`` and refined by a parabola through the
    largest (smallest) sample and its neighbours.

    Parameters
    ----------
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT), within DE406.
    step_days : float
        Sampling step, days.

    Returns
    -------
    dict
        ``north`` and ``south``: dicts of ``jd_tt`` and ``dec`` (degrees) arrays in time order.
    """
    if not jd_tt_end > jd_tt_start:
        raise ParameterError("the end of the range must come after its start")
    grid = np.arange(float(jd_tt_start), float(jd_tt_end) + step_days, step_days)[None, :]
    res = _monthly(grid, step_days)
    out = {}
    for side, (val, t) in res.items():
        keep = np.isfinite(val[0])
        out[side] = {"jd_tt": t[0][keep], "dec": val[0][keep]}
    return out


def moon_extremes(epochs, step_days: float = 0.25):
    """Return the Moon's declination extremes on DE406 over one nodal period centred on each epoch.

    The monthly northern and southern extremes of the apparent geocentric
    declination (:func:`moon_monthly_extremes`) are found on a grid of
    ``step_days``.  Of these, the largest northern (``major-north``) and the
    smallest northern (``minor-north``) extreme, and likewise in the south,
    are returned with their instants.

    Parameters
    ----------
    epochs : array_like
        Julian epochs, -3000..3000.
    step_days : float
        Sampling step, days.

    Returns
    -------
    dict
        ``major-north``, ``minor-north``, ``major-south``, ``minor-south``:
        dicts with ``dec`` (degrees) and ``jd_tt`` arrays (E,); ``shift_years`` (E,).
    """
    e = check_epochs(epochs)
    half = 0.5 * NODAL_PERIOD_YEARS * JULIAN_YEAR
    out: dict = {}
    grids, shift = _windows(e, half, step_days)
    out["shift_years"] = shift
    res = {k: {"dec": np.empty(e.size), "jd_tt": np.empty(e.size)}
           for k in ("major-north", "minor-north", "major-south", "minor-south")}
    block = max(1, 400_000 // grids.shape[1])
    for b in range(0, e.size, block):          # blocks of epochs bound the memory of the scan
        grid = grids[b:b + block]
        r = np.arange(grid.shape[0])
        for side, (val, t) in _monthly(grid, step_days).items():
            sgn = 1.0 if side == "north" else -1.0
            for kind, pick in (("major", np.nanargmax), ("minor", np.nanargmin)):
                j = pick(sgn * val, axis=1)
                res[f"{kind}-{side}"]["dec"][b:b + block] = val[r, j]
                res[f"{kind}-{side}"]["jd_tt"][b:b + block] = t[r, j]
    out.update(res)
    return out


# ---------------------------------------------------------------- stars

@functools.lru_cache(maxsize=64)
def _star(name: str):
    from calendra_stars.catalogue import load_catalogue
    from calendra_stars.names import resolve

    kind, value, label = resolve(name)
    if kind != "star":
        raise ParameterError(f"{name!r} is a planet; planets are targets of their own (venus)")
    return load_catalogue().star(value, name=label.split(" (HIP")[0])


def star_records(names):
    """Return catalogue records (:class:`calendra_stars.catalogue.StarRecord`) for star names."""
    return [_star(str(n).strip()) for n in names]


def star_mean_declinations(stars, epochs):
    """Return mean declinations of date of stars at epochs, degrees, shape (S, E).

    Linear space motion from J1991.25 (:func:`calendra_stars.positions.star_state`)
    and the long-term precession with frame bias (ERFA ``ltpb``), as one array job.

    Parameters
    ----------
    stars : list of StarRecord
    epochs : array_like
        Julian epochs.
    """
    import erfa

    from calendra_stars.catalogue import HIP_EPOCH_JD
    from calendra_stars.positions import star_state

    e = np.atleast_1d(np.asarray(epochs, dtype=float))
    states = [star_state(s) for s in stars]
    r0 = np.array([s[0] for s in states])            # (S, 3) AU
    v = np.array([s[1] for s in states])             # (S, 3) AU / day
    dt = epochs_to_jd(e) - HIP_EPOCH_JD              # (E,)
    p = r0[:, None, :] + v[:, None, :] * dt[None, :, None]
    m = erfa.ltpb(e)                                 # (E, 3, 3)
    u = np.einsum("eij,sej->sei", m, p)
    return np.degrees(np.arctan2(u[..., 2], np.hypot(u[..., 0], u[..., 1])))


def precess_radec(ra_deg, dec_deg, epochs):
    """Precess a J2000 mean direction to the mean equator and equinox of epochs (ERFA ``ltp``), degrees.

    Precession only (no proper motion).  Returns ``(ra, dec)`` of shape (E,).
    """
    import erfa

    a, d = np.radians(float(ra_deg)), np.radians(float(dec_deg))
    u = np.array([np.cos(d) * np.cos(a), np.cos(d) * np.sin(a), np.sin(d)])
    m = erfa.ltp(np.atleast_1d(np.asarray(epochs, dtype=float)))
    w = m @ u
    return np.degrees(np.arctan2(w[:, 1], w[:, 0])) % 360.0, np.degrees(np.arcsin(np.clip(w[:, 2], -1, 1)))


def fast_star_note(star) -> str:
    """A caution for stars whose linear space motion is extrapolated far ('' for distant slow stars)."""
    pm = math.hypot(star.pmra_mas_yr, star.pmdec_mas_yr)
    if pm > 500.0 or (star.plx_mas or 0.0) > 100.0:
        return (f"nearby star with a large proper motion ({pm / 1000:.2f}\"/yr): its motion is extrapolated "
                "linearly over millennia (orbital motion in a multiple system and galactic acceleration are "
                "ignored; expect errors of arcseconds to arcminutes at -3000)")
    return ""


# ---------------------------------------------------------------- the target table

@dataclass
class Targets:
    """Declinations of sky targets at epochs.

    Attributes
    ----------
    epochs : ndarray, shape (E,)
        Julian epochs.
    ids, labels : list of str, length T
        Identifiers (``sun:solstice-90``, ``moon:major-north``, ``star:Sirius``...) and readable names.
    kinds : ndarray of str, shape (T,)
        ``sun``, ``moon``, ``star`` or ``planet``: which declination of an
        alignment a target is compared with (disc and parallax or a point).
    dec : ndarray, shape (T, E)
        Geocentric declination, degrees.
    halfwidth : ndarray, shape (T, E)
        Intrinsic spread of the target's declination, degrees (0.15 for the lunar limits, else 0).
    jd_tt : ndarray, shape (T, E)
        Instant of the event, Julian Day TT (NaN for limits and stars).
    dec_ephemeris : ndarray, shape (T, E)
        DE406 apparent declination at the instant where there is one (NaN elsewhere).
    magnitude : ndarray, shape (T,)
        V magnitude of stars (NaN for others).
    notes : list of str
    models : dict
    warnings : list of str
    """

    epochs: np.ndarray
    ids: list
    labels: list
    kinds: np.ndarray
    dec: np.ndarray
    halfwidth: np.ndarray
    jd_tt: np.ndarray
    dec_ephemeris: np.ndarray
    magnitude: np.ndarray
    notes: list
    models: dict
    warnings: list

    def __len__(self):
        return len(self.ids)

    def index(self, target_id: str) -> int:
        """Row of a target id (or a star name)."""
        for k, t in enumerate(self.ids):
            if t == target_id or t.lower() == f"star:{target_id}".lower() or self.labels[k].lower() == target_id.lower():
                return k
        from calendra.errors import UnknownNameError

        raise UnknownNameError("target", target_id, self.ids)

    def select(self, mask) -> "Targets":
        """A copy with the targets where ``mask`` is True."""
        m = np.asarray(mask, dtype=bool)
        pick = [i for i in range(len(self.ids)) if m[i]]
        return Targets(self.epochs, [self.ids[i] for i in pick], [self.labels[i] for i in pick], self.kinds[m],
                       self.dec[m], self.halfwidth[m], self.jd_tt[m], self.dec_ephemeris[m], self.magnitude[m],
                       [self.notes[i] for i in pick], self.models, self.warnings)


_SUN_LABELS = {
    "solstice-90": "solstice, Sun furthest north (longitude 90)",
    "solstice-270": "solstice, Sun furthest south (longitude 270)",
    "equinox-0:astronomical": "equinox at longitude 0 (astronomical)",
    "equinox-180:astronomical": "equinox at longitude 180 (astronomical)",
    "equinox-0:declination-zero": "equinox, Sun's declination 0, moving north",
    "equinox-180:declination-zero": "equinox, Sun's declination 0, moving south",
    "equinox-0:midpoint": "equinox as the temporal midpoint of the solstices (before longitude 90)",
    "equinox-180:midpoint": "equinox as the temporal midpoint of the solstices (after longitude 90)",
    "equinox-0:day-count": "equinox as the middle day between the solstice days (before longitude 90)",
    "equinox-180:day-count": "equinox as the middle day between the solstice days (after longitude 90)",
    "cross-quarter-315:longitude": "cross-quarter at longitude 315",
    "cross-quarter-45:longitude": "cross-quarter at longitude 45",
    "cross-quarter-135:longitude": "cross-quarter at longitude 135",
    "cross-quarter-225:longitude": "cross-quarter at longitude 225",
    "cross-quarter-315:midpoint": "cross-quarter, midpoint of solstice 270 and equinox 0",
    "cross-quarter-45:midpoint": "cross-quarter, midpoint of equinox 0 and solstice 90",
    "cross-quarter-135:midpoint": "cross-quarter, midpoint of solstice 90 and equinox 180",
    "cross-quarter-225:midpoint": "cross-quarter, midpoint of equinox 180 and solstice 270",
}


def parse_groups(spec) -> tuple:
    """Read a target selection such as ``sun,moon,stars`` (also ``all``); returns group names and star names.

    Anything that is not a group name is taken as a star name (``sun,Sirius,Aldebaran``).
    """
    if spec is None:
        return DEFAULT_GROUPS, ()
    items = [s.strip() for s in (spec.split(",") if isinstance(spec, str) else spec) if str(s).strip()]
    groups, stars = [], []
    for it in items:
        key = it.lower()
        if key == "all":
            groups += list(GROUPS)
        elif key in GROUPS:
            groups.append(key)
        elif key in ("star",):
            groups.append("stars")
        else:
            stars.append(it)
    if not groups and not stars:
        raise ParameterError(f"no targets in {spec!r}: give some of {', '.join(GROUPS)} or star names")
    return tuple(dict.fromkeys(groups)), tuple(dict.fromkeys(stars))


def build_targets(epochs, groups=DEFAULT_GROUPS, stars=None, *, obliquity_model: str = DEFAULT_OBLIQUITY,
                  longitude_deg=None, deltat=None) -> Targets:
    """Return the declinations of the chosen targets at epochs.

    Parameters
    ----------
    epochs : array_like
        Julian epochs, -3000..3000.
    groups : iterable of str
        Some of :data:`GROUPS`: ``sun``, ``moon``, ``stars``, ``venus``, ``moon-de406``.
    stars : iterable of str, optional
        Star names (default :data:`DEFAULT_STARS` when ``stars`` is in ``groups``;
        names given here are added even without the group).
    obliquity_model : str
        See :data:`OBLIQUITY_MODELS`.
    longitude_deg : float, optional
        East longitude for the day-count equinoxes.
    deltat : delta-T model, optional
        For the day-count equinoxes.

    Returns
    -------
    Targets
    """
    e = check_epochs(epochs)
    groups = tuple(groups)
    for g in groups:
        if g not in GROUPS:
            raise ParameterError(f"target group {g!r} is not one of {', '.join(GROUPS)}")
    ids, labels, kinds, decs, hws, jds, deph, mags, notes = [], [], [], [], [], [], [], [], []
    nan = np.full(e.size, np.nan)
    zero = np.zeros(e.size)
    models = {"epochs": "Julian epochs: JD(TT) = 2451545 + (epoch - 2000) x 365.25; astronomical years",
              "obliquity": OBLIQUITY_MODELS[obliquity_model]}
    warnings = []
    eps = np.atleast_1d(obliquity(e, obliquity_model))

    def add(tid, label, kind, dec, hw=zero, jd=nan, de=nan, mag=np.nan, note=""):
        ids.append(tid)
        labels.append(label)
        kinds.append(kind)
        decs.append(np.asarray(dec, float))
        hws.append(np.asarray(hw, float))
        jds.append(np.asarray(jd, float))
        deph.append(np.asarray(de, float))
        mags.append(float(mag))
        notes.append(note)

    if "sun" in groups:
        ev = season_events(e, longitude_deg=longitude_deg, deltat=deltat)
        shifted = np.any(ev.shift_years != 0)
        for key, label in _SUN_LABELS.items():
            jd, de = ev.jd_tt[key], ev.dec[key]
            note = ""
            if key.startswith("solstice"):
                dec = eps if key == "solstice-90" else -eps
                note = f"+-obliquity ({obliquity_model}); dec_ephemeris: DE406 apparent at the solstice instant"
            else:
                dec = de
            if key in ev.odd_day_count:
                n_odd = int(np.sum(ev.odd_day_count[key]))
                note = ("local mean noon of the middle day" + (f"; {n_odd} epoch(s) with two middle days, the "
                                                                "earlier taken" if n_odd else ""))
            if shifted:
                note = (note + "; " if note else "") + "season year moved inside DE406 at the span's ends"
            add(f"sun:{key}", label, "sun", dec, jd=jd, de=de, note=note)
        models["sun"] = ("season instants on DE406 (apparent longitude of date, Vondrak 2011 precession, "
                         "Newton to 0.1 s); apparent declination with IAU 2000B nutation")
        models["delta_t"] = (f"{(deltat.name if deltat is not None else 'default model')} "
                             "(only for the civil days of the day-count equinoxes)")
    if "moon" in groups:
        i = LUNAR_INCLINATION_DEG
        hw = np.full(e.size, LUNAR_INCLINATION_WOBBLE_DEG)
        note = (f"eps +- i with i = {i} deg; the inclination oscillates by +-{LUNAR_INCLINATION_WOBBLE_DEG} deg "
                "(173 d), so monthly extremes near a standstill scatter by about that much (half-width)")
        add("moon:major-north", "Moon, major standstill, north (eps + i)", "moon", eps + i, hw, note=note)
        add("moon:minor-north", "Moon, minor standstill, north (eps - i)", "moon", eps - i, hw, note=note)
        add("moon:minor-south", "Moon, minor standstill, south -(eps - i)", "moon", -(eps - i), hw, note=note)
        add("moon:major-south", "Moon, major standstill, south -(eps + i)", "moon", -(eps + i), hw, note=note)
        models["moon"] = f"standstill limits +-(eps +- {i}), mean inclination of the lunar orbit (from memory)"
    if "moon-de406" in groups:
        mx = moon_extremes(e)
        for key, label in (("major-north", "Moon, largest northern monthly extreme (DE406)"),
                           ("minor-north", "Moon, smallest northern monthly extreme (DE406)"),
                           ("minor-south", "Moon, smallest southern monthly extreme (DE406)"),
                           ("major-south", "Moon, largest southern monthly extreme (DE406)")):
            add(f"moon:{key}:de406", label, "moon", mx[key]["dec"], jd=mx[key]["jd_tt"], de=mx[key]["dec"],
                note=f"apparent geocentric declination over {NODAL_PERIOD_YEARS} years centred on the epoch")
        models["moon_de406"] = ("monthly extremes of the Moon's apparent geocentric declination on DE406, "
                                "6-hour grid with parabolic refinement")
    if "venus" in groups:
        vx = venus_extremes(e)
        for key, label in (("north", "Venus, northern extreme of declination"),
                           ("south", "Venus, southern extreme of declination")):
            el = vx[key]["elongation"]
            note = (f"over 8 years centred on the epoch; elongation from the Sun at the extreme "
                    f"{np.nanmin(el):.0f}..{np.nanmax(el):.0f} deg (near inferior conjunction it is not seen)")
            add(f"venus:{key}", label, "planet", vx[key]["dec"], jd=vx[key]["jd_tt"], de=vx[key]["dec"], note=note)
        models["venus"] = "extremes of the apparent geocentric declination on DE406 over the 8-year cycle"
    star_names = list(stars or ())
    if "stars" in groups and not star_names:
        star_names = list(DEFAULT_STARS)
    if star_names:
        recs = star_records(star_names)
        seen = set()
        recs = [r for r in recs if not (r.hip in seen or seen.add(r.hip))]
        sd = star_mean_declinations(recs, e)
        fast = []
        for k, r in enumerate(recs):
            note = fast_star_note(r)
            if note:
                fast.append(r.name)
            add(f"star:{r.name}", f"{r.name} (HIP {r.hip}, V {r.v:.2f})", "star", sd[k], mag=r.v, note=note)
        models["stars"] = ("Hipparcos new reduction (van Leeuwen 2007) at J1991.25, linear space motion, "
                           "Vondrak et al. (2011) precession with frame bias (ERFA ltpb); mean place of date "
                           "(nutation <= 9\" and aberration <= 20\" left out)")
        if fast:
            warnings.append("proper motion extrapolated linearly over millennia for nearby fast stars: "
                            + ", ".join(fast))
    if not ids:
        raise ParameterError("no targets selected")
    return Targets(e, ids, labels, np.array(kinds), np.array(decs), np.array(hws), np.array(jds),
                   np.array(deph), np.array(mags), notes, models, warnings)


# ---------------------------------------------------------------- at a site

def rise_set_azimuths(targets: Targets, latitude_deg: float, horizon=0.0, *, limb: str = "upper",
                      moon_distance="mean", extinction_deg: float = 0.0, refraction_model: str = "bennett",
                      temperature_C: float = 10.0, pressure_mbar: float = 1010.0) -> dict:
    """Return where the targets rise and set on a skyline at a latitude, for every epoch.

    Parameters
    ----------
    targets : Targets
    latitude_deg : float
        Latitude, degrees north.
    horizon : Horizon, float or path
        The skyline.
    limb : str
        Sun's and Moon's limb at the skyline.
    moon_distance : str or float
        Moon distance for its parallax and semi-diameter (``mean``, ``perigee``, ``apogee``, km).
    extinction_deg : float
        Extinction angle of stars and planets, degrees.
    refraction_model, temperature_C, pressure_mbar
        As for :func:`calendra_alignments.geometry.declination`.

    Returns
    -------
    dict of ndarray, shape (T, E)
        ``az_rise``, ``az_set`` (degrees; NaN: does not rise or set there),
        ``alt_rise``, ``alt_set`` (skyline altitude there) and
        ``point_dec_rise``, ``point_dec_set``: the declination of the skyline
        point where the target is seen, as for a star (for the Moon it
        differs from the geocentric declination by the parallax: the
        topocentric view of the lunar limits).
    """
    from . import geometry as G
    from .matching import bodies

    hz = G.as_horizon(horizon)
    body = bodies(limb, moon_distance, extinction_deg)
    out = {k: np.full(targets.dec.shape, np.nan) for k in ("az_rise", "az_set", "alt_rise", "alt_set",
                                                           "point_dec_rise", "point_dec_set")}
    kw = dict(refraction_model=refraction_model, temperature_C=temperature_C, pressure_mbar=pressure_mbar)
    for kind in np.unique(targets.kinds):
        sel = targets.kinds == kind
        b = body[str(kind)]
        for side, rising in (("rise", True), ("set", False)):
            az = np.asarray(G.azimuth_from_declination(targets.dec[sel], latitude_deg, hz, b, rising=rising, **kw))
            alt = np.asarray(hz.altitude(np.nan_to_num(az)))
            out[f"az_{side}"][sel] = az
            out[f"alt_{side}"][sel] = np.where(np.isnan(az), np.nan, alt)
            pd = G.declination(np.nan_to_num(az), alt + b.extinction_deg, latitude_deg, G.STAR, **kw)
            out[f"point_dec_{side}"][sel] = np.where(np.isnan(az), np.nan, pd)
    return out
