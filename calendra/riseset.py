"""Rising, setting and transit of the Sun, the Moon and other bodies at a site, and twilight.

What an event is
----------------
A body *rises* or *sets* when the chosen point of its disc (upper limb by
default, or centre, or lower limb) meets the **visible horizon** as seen
through the air.  In terms of the airless (geometric) topocentric altitude
``h`` of the body's centre, the event happens when::

    h = H - R(H) - s * SD

* ``H`` is the apparent altitude of the visible horizon at the body's
  azimuth: the site's horizon profile (:meth:`calendra.sites.Site.horizon_altitude`),
  or ``-dip`` for a flat horizon ``eye_height_m`` below the eye, with
  ``dip = 1.76' sqrt(h / m)`` (:func:`calendra.sites.dip_deg`), or 0 for the
  astronomical horizon (``horizon="flat"``);
* ``R(H)`` is the refraction at the apparent altitude ``H``:

  - ``"standard"`` (default): 34' on the astronomical horizon, the almanacs'
    convention, scaled for other horizon altitudes in proportion to Bennett's
    formula at 10 C and 1010 mbar;
  - ``"bennett"``: Bennett's (1982) formula for the apparent altitude,
    ``R = cot(H + 7.31 / (H + 4.4))`` arcminutes (H in degrees; Meeus,
    *Astronomical Algorithms*, eq. 16.3) times the usual weather factor
    ``(P / 1010 mbar) (283 K / (273 K + T))`` (Meeus, ch. 16), with the
    site's temperature and pressure;
  - ``"none"``: no refraction;

* ``SD`` is the body's topocentric semi-diameter (Sun: radius 695 700 km;
  Moon: 1 737.4 km; planets are points) and ``s`` is +1 for the upper limb,
  0 for the centre, -1 for the lower limb.

The topocentric position is skyfield's apparent position (light time,
aberration, gravitational deflection, IAU 2006 precession and IAU 2000B
nutation, see below) from the WGS84 observer at the site's elevation, so the
Moon's parallax (about 1 degree) is included.  With ``altitude_deg`` the
whole right side is one fixed number, e.g. -0.8333 deg (34' + 16', the
sunrise convention of almanacs and of skyfield's ``find_risings``).

*Twilight* begins (dawn) and ends (dusk) when the airless altitude of the
Sun's centre is ``-depression``: 6 degrees civil, 12 nautical, 18
astronomical, or any angle (:data:`TWILIGHT_DEPRESSIONS`); no refraction.

*Transit* is the upper culmination: topocentric apparent hour angle 0.

How it is computed
------------------
All days of a span form one array job, never a loop over days (long
spans go in blocks of :data:`BLOCK` days, which keeps the arrays in the
CPU caches):

1. A *guide* model of the body: its geocentric apparent position (true
   equator and equinox of date) from skyfield on nodes one day apart (two
   for the Sun), only near the requested times, interpolated with 4-point
   cubic Lagrange polynomials (error below 0.002 deg for the Moon, far less
   for the Sun and planets); sidereal time from the Earth rotation angle plus
   the interpolated GAST - ERA; topocentric vectors from the WGS84 site.
2. For each requested civil day, the transit nearest local mean noon (days
   before and after are included, so that events near midnight are found),
   by Newton steps on the guide's hour angle.
3. For each transit, a first guess of the rising and setting from the hour
   angle ``H0`` at which the body reaches the event altitude
   (``cos H0 = (sin h - sin phi sin delta) / (cos phi cos delta)``), refined
   by Newton steps on the guide model.  ``|cos H0| > 1`` means the body stays
   above (circumpolar) or below the horizon that day: NaN and a flag.
4. Newton steps on the **topocentric apparent altitude from skyfield**, with
   the exact altitude rate of skyfield's ``frame_latlon_and_rates``.  After a
   step ``dt`` the remaining error is about ``|h''/(2 h')| dt^2``; an event
   is accepted when that estimate is below :data:`TOLERANCE_DAYS` (0.05 s),
   otherwise it is stepped again (at most :data:`MAX_FULL_STEPS` times; then
   it is flagged "not converged" and set to NaN).  Usually one skyfield
   evaluation per event suffices.

Nutation is skyfield's IAU 2000B series (77 terms; within about 1 mas of
IAU 2000A), evaluated on a 2-day grid and interpolated cubically (error
below 0.01"), and skyfield's apparent sidereal time is taken from the guide
grid (Earth rotation angle + interpolated GAST - ERA, error below 0.005");
both are set on skyfield's Time objects before it computes the position,
which makes each evaluation several times cheaper.  Rising times move by
far less than a millisecond.

Accuracy
--------
Against the same ephemeris the solution is good to better than 0.1 s.  The
real uncertainty is elsewhere: refraction at the horizon varies by several
arcminutes with the weather (temperature inversions, mirages), which moves
risings and settings by tens of seconds to minutes (more at high latitude),
and before 1600 delta T is uncertain by minutes to hours, which shifts every
UT time (and the Moon's position relative to the Earth's rotation).  Both are
stated in the provenance of every result.

Time scales: ``jd_ut`` arguments and results are Julian Days in UT1; the
delta-T model turns them into TT for the ephemeris.  Civil days are the
site's (its zone or local mean time).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .errors import ParameterError, UnknownNameError

#: Ephemeris segment of each body that can rise and set.
BODY_TARGETS = {
    "sun": "sun", "moon": "moon", "mercury": "mercury", "venus": "venus", "mars": "mars barycenter",
    "jupiter": "jupiter barycenter", "saturn": "saturn barycenter", "uranus": "uranus barycenter",
    "neptune": "neptune barycenter", "pluto": "pluto barycenter",
}
#: Radius used for the semi-diameter, km (IAU nominal solar radius; mean lunar radius).
BODY_RADIUS_KM = {"sun": 695700.0, "moon": 1737.4}
#: Standard refraction on the astronomical horizon, arcminutes (almanac convention).
STANDARD_REFRACTION_ARCMIN = 34.0
#: Twilight depressions of the Sun's centre below the horizon, degrees.
TWILIGHT_DEPRESSIONS = {"civil": 6.0, "nautical": 12.0, "astronomical": 18.0}
#: Accept an event when the estimated remaining error is below this (days; 0.05 s).
TOLERANCE_DAYS = 0.05 / 86400.0
#: Most skyfield Newton steps per event.
MAX_FULL_STEPS = 6
#: Days are solved in blocks of this many (arrays that stay in the CPU caches: about 30% faster
#: than one block for a century of days).
BLOCK = 4096

#: Event flags.
OK, ABOVE, BELOW, NOT_CONVERGED, NONE = 0, 1, 2, 3, 4
FLAG_NAMES = ("ok", "always above", "always below", "not converged", "none that day")

LIMBS = {"upper": 1.0, "centre": 0.0, "center": 0.0, "lower": -1.0}
REFRACTIONS = ("standard", "bennett", "none")

_ERA0, _ERA1 = 0.7790572732640, 1.00273781191135448   # IERS 2003 Earth rotation angle (turns)
_TAU = 2.0 * math.pi


# ---------------------------------------------------------------- refraction

def refraction_bennett(apparent_altitude_deg, temperature_C=10.0, pressure_mbar=1010.0):
    """Return the refraction of a body seen at ``apparent_altitude_deg``, arcminutes.

    Bennett (1982): ``R = cot(h0 + 7.31 / (h0 + 4.4))``, h0 the apparent
    (observed) altitude in degrees, times ``(P / 1010) (283 / (273 + T))``
    (Meeus, *Astronomical Algorithms*, 2nd ed., eq. 16.3 and p. 107).  Good
    to about 0.07' for 0..90 degrees in standard air; below the horizon the
    formula is used down to -1 degree (lower altitudes are taken as -1).
    Never negative.

    Parameters
    ----------
    apparent_altitude_deg : float or array_like
        Apparent altitude, degrees.
    temperature_C : float or array_like
        Air temperature, degrees Celsius.
    pressure_mbar : float or array_like
        Air pressure, millibar (hPa).
    """
    h = np.maximum(np.asarray(apparent_altitude_deg, dtype=float), -1.0)
    r = 1.0 / np.tan(np.radians(h + 7.31 / (h + 4.4)))
    factor = (np.asarray(pressure_mbar, dtype=float) / 1010.0) * (283.0 / (273.0 + np.asarray(temperature_C, dtype=float)))
    return (np.maximum(r, 0.0) * factor)[()]


def refraction_saemundsson(true_altitude_deg, temperature_C=10.0, pressure_mbar=1010.0):
    """Return the refraction of a body whose airless altitude is ``true_altitude_deg``, arcminutes.

    Saemundsson (1986): ``R = 1.02 cot(h + 10.3 / (h + 5.11))``, h the true
    (airless) altitude in degrees, with the same weather factor as
    :func:`refraction_bennett` (Meeus, eq. 16.4); consistent with Bennett's
    formula to a small fraction of an arcminute.  Altitudes below -1.5
    degrees are taken as -1.5.  Never negative.

    Parameters
    ----------
    true_altitude_deg : float or array_like
        Airless (geometric) altitude, degrees.
    temperature_C : float or array_like
        Air temperature, degrees Celsius.
    pressure_mbar : float or array_like
        Air pressure, millibar (hPa).
    """
    h = np.maximum(np.asarray(true_altitude_deg, dtype=float), -1.5)
    r = 1.02 / np.tan(np.radians(h + 10.3 / (h + 5.11)))
    factor = (np.asarray(pressure_mbar, dtype=float) / 1010.0) * (283.0 / (273.0 + np.asarray(temperature_C, dtype=float)))
    return (np.maximum(r, 0.0) * factor)[()]


_BENNETT_AT_ZERO = float(refraction_bennett(0.0))


@dataclass(frozen=True)
class Horizon:
    """What rising and setting mean: which point of the disc meets which horizon, through which air.

    Attributes
    ----------
    limb : str
        ``"upper"`` (default), ``"centre"`` or ``"lower"``.
    refraction : str
        ``"standard"`` (34' on the astronomical horizon), ``"bennett"``
        (Bennett 1982 with the site's temperature and pressure) or ``"none"``.
    horizon : str
        ``"site"`` (the site's profile, or its flat horizon with the dip for
        its eye height) or ``"flat"`` (the astronomical horizon, altitude 0).
    altitude_deg : float or None
        If set, the airless topocentric altitude of the body's centre at the
        event, degrees, overriding everything else (e.g. -0.8333 for the
        almanac sunrise, -6 for civil twilight).
    """

    limb: str = "upper"
    refraction: str = "standard"
    horizon: str = "site"
    altitude_deg: float | None = None

    def __post_init__(self):
        if self.limb not in LIMBS:
            raise ParameterError(f"limb must be one of upper, centre, lower; got {self.limb!r}")
        if self.refraction not in REFRACTIONS:
            raise ParameterError(f"refraction must be one of {', '.join(REFRACTIONS)}; got {self.refraction!r}")
        if self.horizon not in ("site", "flat"):
            raise ParameterError(f"horizon must be 'site' or 'flat'; got {self.horizon!r}")
        if self.altitude_deg is not None and not (math.isfinite(self.altitude_deg) and -90 < self.altitude_deg < 90):
            raise ParameterError(f"event altitude must lie within -90..90 degrees; got {self.altitude_deg!r}")

    @classmethod
    def twilight(cls, depression) -> "Horizon":
        """The Sun's centre ``depression`` degrees (or ``civil``/``nautical``/``astronomical``) below the horizon."""
        return cls(limb="centre", refraction="none", horizon="flat", altitude_deg=-twilight_depression(depression))

    def horizon_altitude(self, site, azimuth_deg):
        """Apparent altitude of the visible horizon at ``azimuth_deg`` (degrees)."""
        az = np.asarray(azimuth_deg, dtype=float)
        if self.horizon == "flat":
            return np.zeros(az.shape)
        return np.asarray(site.horizon_altitude(az), dtype=float)

    def refraction_deg(self, site, apparent_altitude_deg):
        """Refraction at the horizon's apparent altitude, degrees."""
        h = np.asarray(apparent_altitude_deg, dtype=float)
        if self.refraction == "none":
            return np.zeros(h.shape)
        if self.refraction == "bennett":
            return np.asarray(refraction_bennett(h, site.temperature_C, site.pressure_mbar)) / 60.0
        return STANDARD_REFRACTION_ARCMIN / 60.0 * np.asarray(refraction_bennett(h)) / _BENNETT_AT_ZERO

    def target(self, site, azimuth_deg, semidiameter_deg):
        """Airless topocentric altitude of the centre at the event, degrees (vectorized)."""
        sd = np.asarray(semidiameter_deg, dtype=float)
        az = np.asarray(azimuth_deg, dtype=float)
        if self.altitude_deg is not None:
            return np.full(np.broadcast(az, sd).shape, float(self.altitude_deg))
        hz = self.horizon_altitude(site, az)
        return hz - self.refraction_deg(site, hz) - LIMBS[self.limb] * sd

    @property
    def varies_with_azimuth(self) -> bool:
        return self.altitude_deg is None and self.horizon == "site"

    def describe(self, site=None) -> str:
        """One line for the provenance."""
        if self.altitude_deg is not None:
            return f"airless altitude of the centre {self.altitude_deg:+.4f} deg at the event"
        if self.horizon == "flat":
            hz = "astronomical horizon"
        elif site is not None and site.horizon:
            hz = f"horizon profile of {len(site.horizon)} points (linear, periodic in azimuth)"
        elif site is not None and site.eye_height_m > 0:
            hz = f"flat horizon {site.eye_height_m:g} m below the eye (dip 1.76' sqrt(h) = {site.dip_deg * 60:.1f}')"
        else:
            hz = "flat horizon (no dip)"
        if self.refraction == "standard":
            refr = "refraction 34' at altitude 0 (scaled by Bennett's formula elsewhere)"
        elif self.refraction == "bennett":
            t = p = "?"
            if site is not None:
                t, p = f"{site.temperature_C:g}", f"{site.pressure_mbar:g}"
            refr = f"Bennett (1982) refraction at {t} C, {p} mbar"
        else:
            refr = "no refraction"
        return f"{self.limb} limb on the {hz}; {refr}; topocentric (parallax included)"


def twilight_depression(depression) -> float:
    """Return a twilight depression in degrees from a number or ``civil``/``nautical``/``astronomical``.

    Parameters
    ----------
    depression : str or float
        A name of :data:`TWILIGHT_DEPRESSIONS` or degrees below the horizon (0..90).
    """
    if isinstance(depression, str):
        key = depression.strip().lower()
        if key in TWILIGHT_DEPRESSIONS:
            return TWILIGHT_DEPRESSIONS[key]
        try:
            depression = float(key)
        except ValueError:
            raise UnknownNameError("twilight", depression, TWILIGHT_DEPRESSIONS) from None
    d = float(depression)
    if not 0.0 <= d < 90.0:
        raise ParameterError(f"twilight depression must lie within 0..90 degrees; got {d}")
    return d


# ------------------------------------------------------------------- helpers

def _wrap180(x):
    return (np.asarray(x) + 180.0) % 360.0 - 180.0


def _wrap_pi(x):
    return (np.asarray(x) + math.pi) % _TAU - math.pi


def _era(jd_ut):
    """Earth rotation angle (IERS 2003), radians in [0, 2 pi)."""
    d = np.asarray(jd_ut, dtype=float) - 2451545.0
    return _TAU * ((_ERA0 + d % 1.0 + (_ERA1 - 1.0) * d) % 1.0)


def _lagrange_weights(u):
    """Cubic Lagrange weights for nodes at -1, 0, 1, 2 and 0 <= u < 1 (shape (4, n))."""
    return np.stack([-u * (u - 1.0) * (u - 2.0) / 6.0, (u + 1.0) * (u - 1.0) * (u - 2.0) / 2.0,
                     -(u + 1.0) * u * (u - 2.0) / 2.0, (u + 1.0) * u * (u - 1.0) / 6.0])


class _SparseGrid:
    """Values of ``fn`` on nodes ``k * step`` near the times asked for, cubically interpolated.

    Nodes are evaluated lazily (once each) with one call of ``fn`` per batch
    of missing nodes; ``fn(times) -> (n, m)`` array.
    """

    def __init__(self, step, fn, width):
        self.step, self.fn = float(step), fn
        self.k = np.zeros(0, dtype=np.int64)
        self.v = np.zeros((0, width))

    def __call__(self, t):
        t = np.asarray(t, dtype=float)
        x = t / self.step
        k0 = np.floor(x).astype(np.int64)
        if self.k.size:
            # Nodes are unique and sorted: k0-1 and k0+2 three places apart means all four are there.
            i = np.searchsorted(self.k, k0 - 1)
            j = np.minimum(i + 3, self.k.size - 1)
            have = (i + 3 < self.k.size) & (self.k[np.minimum(i, self.k.size - 1)] == k0 - 1) & (self.k[j] == k0 + 2)
        else:
            have = np.zeros(k0.shape, dtype=bool)
        if not have.all():
            need = np.unique((k0[~have][:, None] + np.arange(-1, 3)).ravel())
            missing = need[~np.isin(need, self.k, assume_unique=True)]
            if missing.size:
                vals = np.asarray(self.fn(missing * self.step), dtype=float).reshape(missing.size, -1)
                k = np.concatenate([self.k, missing])
                order = np.argsort(k, kind="stable")
                self.k = k[order]
                self.v = np.concatenate([self.v, vals])[order]
            i = np.searchsorted(self.k, k0 - 1)
        w = _lagrange_weights(x - k0)
        return sum(w[j][:, None] * self.v[i + j] for j in range(4))


# ------------------------------------------------------------------- engine

class _Engine:
    """One body seen from one site: the skyfield ("full") position and the interpolated guide."""

    def __init__(self, body: str, site, deltat=None):
        from skyfield.api import wgs84

        from .deltat import DEFAULT_MODEL, get_model, skyfield_timescale
        from .ephemeris import load_ephemeris

        key = body.strip().lower()
        if key not in BODY_TARGETS:
            raise UnknownNameError("body", body, BODY_TARGETS)
        self.body = key
        self.site = site
        self.deltat = deltat if deltat is not None and not isinstance(deltat, str) else get_model(deltat or DEFAULT_MODEL)
        self.eph = load_ephemeris()
        self.ts = skyfield_timescale(self.deltat)
        self.earth = self.eph["earth"]
        self.target_body = self.eph[BODY_TARGETS[key]]
        self.topos = wgs84.latlon(site.latitude_deg, site.longitude_deg, elevation_m=site.elevation_m)
        self.observer = self.earth + self.topos
        self.radius_km = BODY_RADIUS_KM.get(key, 0.0)
        self.lat = math.radians(site.latitude_deg)
        self.lon = math.radians(site.east_longitude_deg)
        itrs = self.topos.itrs_xyz.km
        self.rho_c, self.rho_s = float(math.hypot(itrs[0], itrs[1])), float(itrs[2])
        self.up = np.array([math.cos(self.lat), 0.0, math.sin(self.lat)])
        self.north = np.array([-math.sin(self.lat), 0.0, math.cos(self.lat)])
        self._nutation = _SparseGrid(2.0, self._nutation_nodes, 2)
        # Node spacing of the guide: 2 days for the Sun (its interpolation error is then ~0.0001",
        # that of the interpolated sidereal time ~0.004"), 1 day for the Moon and planets.
        self._guide = _SparseGrid(2.0 if key == "sun" else 1.0, self._guide_nodes, 4)
        #: Number of instants at which skyfield's topocentric position was computed (tests, benchmarks).
        self.full_evaluations = 0

    # -- skyfield times with interpolated IAU 2000B nutation
    def _nutation_nodes(self, jd_ut):
        from skyfield.nutationlib import iau2000b_radians

        dpsi, deps = iau2000b_radians(self.ts.ut1_jd(jd_ut))
        return np.column_stack([dpsi, deps])

    def time(self, jd_ut, sidereal=False):
        """A skyfield Time for UT1 Julian Days with interpolated nutation (and sidereal time).

        ``sidereal=True`` also sets GAST from the guide grid (Earth rotation
        angle + interpolated GAST - ERA, the same skyfield value to well
        under 0.001"), which spares skyfield a series evaluation per instant.
        """
        jd = np.asarray(jd_ut, dtype=float)
        t = self.ts.ut1_jd(jd)
        nut = self._nutation(jd)
        t._nutation_angles_radians = (nut[:, 0], nut[:, 1])   # skyfield's documented speed-up hook
        if sidereal:
            t.gast = ((_era(jd) + self._guide(jd)[:, 3]) * (24.0 / _TAU)) % 24.0
        return t

    def _guide_nodes(self, jd_ut):
        from skyfield.functions import mxv

        from .ephemeris import check_span

        t = self.time(jd_ut)
        check_span(t.tt)
        app = self.earth.at(t).observe(self.target_body).apparent()
        r = mxv(t.M, app.position.km)                        # true equator and equinox of date
        d = _wrap_pi(t.gast * (_TAU / 24.0) - _era(jd_ut))
        return np.column_stack([r[0], r[1], r[2], d])

    # -- the guide: interpolated geocentric position, topocentric by vectors
    def guide(self, jd_ut):
        """Return airless topocentric (alt, az, dist_km, ha_rad, dec_rad) of the guide model."""
        jd = np.asarray(jd_ut, dtype=float)
        g = self._guide(jd)
        theta = _era(jd) + g[:, 3] + self.lon
        c, s = np.cos(theta), np.sin(theta)
        xm = c * g[:, 0] + s * g[:, 1] - self.rho_c
        ye = -s * g[:, 0] + c * g[:, 1]
        z = g[:, 2] - self.rho_s
        dist = np.sqrt(xm * xm + ye * ye + z * z)
        up = xm * self.up[0] + z * self.up[2]
        north = xm * self.north[0] + z * self.north[2]
        alt = np.degrees(np.arcsin(np.clip(up / dist, -1.0, 1.0)))
        az = np.degrees(np.arctan2(ye, north)) % 360.0
        ha = np.arctan2(-ye, xm)
        dec = np.arcsin(np.clip(z / dist, -1.0, 1.0))
        return alt, az, dist, ha, dec

    def semidiameter_deg(self, dist_km):
        if not self.radius_km:
            return np.zeros(np.shape(dist_km))
        return np.degrees(np.arcsin(np.minimum(self.radius_km / np.asarray(dist_km), 1.0)))

    def full(self, jd_ut):
        """Return skyfield's airless topocentric (alt, az, dist_km, alt_rate, az_rate) (deg, deg/day)."""
        from .ephemeris import check_span

        self.full_evaluations += np.size(jd_ut)
        t = self.time(jd_ut, sidereal=True)
        check_span(t.tt)
        app = self.observer.at(t).observe(self.target_body).apparent()
        alt, az, dist, alt_rate, az_rate, _ = app.frame_latlon_and_rates(self.topos)
        return alt.degrees, az.degrees, dist.km, alt_rate.degrees.per_day, az_rate.degrees.per_day

    def full_hadec(self, jd_ut):
        """Return skyfield's topocentric apparent (hour angle, declination), degrees, and altitude."""
        self.full_evaluations += np.size(jd_ut)
        t = self.time(jd_ut, sidereal=True)
        app = self.observer.at(t).observe(self.target_body).apparent()
        ha, dec, _ = app.hadec()
        alt, _, _ = app.altaz()
        return _wrap180(ha.hours * 15.0), dec.degrees, alt.degrees

    # -- event functions (f = altitude - target, degrees)
    def _f_guide(self, t, horizon):
        alt, az, dist, _, _ = self.guide(t)
        return alt - horizon.target(self.site, az, self.semidiameter_deg(dist))

    # ---------------------------------------------------------------- transits
    def transits_guide(self, jd_ut_ref, iterations=6):
        """Transits (guide model) nearest each reference time, UT1 JD."""
        t = np.asarray(jd_ut_ref, dtype=float).copy()
        dt = 1e-3
        for _ in range(iterations):
            ha = self.guide(t)[3]
            rate = _wrap_pi(self.guide(t + dt)[3] - self.guide(t - dt)[3]) / (2 * dt)
            step = -_wrap_pi(ha) / rate
            t = t + step
            if np.all(np.abs(step) < 1e-7):
                break
        return t

    def transits_full(self, t_guess):
        """Refine transits with skyfield's topocentric hour angle; return (jd_ut, altitude_deg, flag)."""
        t = np.asarray(t_guess, dtype=float).ravel().copy()
        alt = np.full(t.shape, np.nan)
        flag = np.where(np.isfinite(t), OK, NOT_CONVERGED).astype(np.int8)
        active = np.isfinite(t)
        dt = 1e-3
        for _ in range(MAX_FULL_STEPS):
            if not active.any():
                break
            ta = t[active]
            ha, _, alt_a = self.full_hadec(ta)
            rate = np.degrees(_wrap_pi(self.guide(ta + dt)[3] - self.guide(ta - dt)[3])) / (2 * dt)
            step = -ha / rate
            t[active] = ta + step
            alt[active] = alt_a
            done = np.abs(step) < 1e-3           # hour angle is nearly linear: residual ~1e-4 |step|
            idx = np.flatnonzero(active)
            active[idx[done]] = False
        flag[active] = NOT_CONVERGED
        t[active] = np.nan
        return t, alt, flag

    # --------------------------------------------------------------- crossings
    def crossings(self, jd_ut_ref, sense, horizon, around="transit"):
        """The rising (``sense=-1``) or setting (``+1``) belonging to each reference time.

        ``around="transit"``: the references are upper transits; the rising
        is the last one before the transit, the setting the first one after
        it, within half a body-day.  ``around="nearest"``: the crossing of
        that sense nearest in hour angle to the reference (within half a
        body-day either way).  Returns (jd_ut, azimuth_deg, flag).
        """
        ref = np.asarray(jd_ut_ref, dtype=float).ravel()
        n = ref.size
        t_out = np.full(n, np.nan)
        az_out = np.full(n, np.nan)
        flag = np.full(n, NOT_CONVERGED, dtype=np.int8)
        ok = np.isfinite(ref)
        if not ok.any():
            return t_out, az_out, flag
        r = ref[ok]
        _, az0, dist0, ha0, dec0 = self.guide(r)
        h_target = horizon.target(self.site, az0, self.semidiameter_deg(dist0))
        # First guess from the hour angle at which the body reaches the event altitude.
        cos_h0 = ((np.sin(np.radians(h_target)) - math.sin(self.lat) * np.sin(dec0))
                  / (math.cos(self.lat) * np.cos(dec0)))
        dt = 1e-3
        rate = _wrap_pi(self.guide(r + dt)[3] - self.guide(r - dt)[3]) / (2 * dt)
        h0 = np.arccos(np.clip(cos_h0, -1.0, 1.0))
        t = r + _wrap_pi(sense * h0 - ha0) / rate
        status = np.full(r.shape, OK, dtype=np.int8)
        # Near the polar limits the declination at the reference does not decide: search instead.
        hard = np.abs(cos_h0) > 0.9
        live = ~hard
        for _ in range(8):          # Newton steps on the guide model (cheap)
            if not live.any():
                break
            idx = np.flatnonzero(live)
            tl = t[idx]
            f = self._f_guide(tl, horizon)
            fp = (self._f_guide(tl + dt, horizon) - self._f_guide(tl - dt, horizon)) / (2 * dt)
            with np.errstate(divide="ignore", invalid="ignore"):
                step = np.clip(-f / fp, -0.1, 0.1)
            bad = ~np.isfinite(step) | (np.sign(fp) != -sense)     # a rising has f' > 0, a setting f' < 0
            t[idx] = tl + np.nan_to_num(step)
            hard[idx[bad]] = True
            live[idx[bad | (np.abs(step) < 1e-6)]] = False
        half = math.pi / rate                          # half a body-day, days
        if around == "transit":
            wrong_side = (sense * (t - r) < -1e-6) | (np.abs(t - r) > half + 0.05)
        else:
            wrong_side = np.abs(t - r) > half + 0.05
        hard |= wrong_side
        if hard.any():
            idx = np.flatnonzero(hard)
            t[idx], status[idx] = self._bracket(r[idx], half[idx], sense, horizon, around)
        tt, az, st = self._refine(t, status, horizon, sense)
        t_out[ok], az_out[ok], flag[ok] = tt, az, st
        return t_out, az_out, flag

    def _bracket(self, r, half, sense, horizon, around, samples=49):
        """Find crossings by sampling the guide over the window (polar cases); return (t, status)."""
        if around == "transit":
            lo = np.where(sense > 0, 0.0, -1.0)
            hi = np.where(sense > 0, 1.0, 0.0)
        else:
            lo, hi = -1.0, 1.0
        u = np.linspace(0.0, 1.0, samples)
        width = (half + 0.05) * (hi - lo)
        grid = r[:, None] + (half[:, None] + 0.05) * lo + width[:, None] * u[None, :]
        f = self._f_guide(grid.ravel(), horizon).reshape(grid.shape)
        if sense > 0:
            cross = (f[:, :-1] > 0) & (f[:, 1:] <= 0)
        else:
            cross = (f[:, :-1] < 0) & (f[:, 1:] >= 0)
        mid = 0.5 * (grid[:, :-1] + grid[:, 1:])
        dist = np.where(cross, np.abs(mid - r[:, None]), np.inf)
        j = np.argmin(dist, axis=1)
        found = np.isfinite(dist[np.arange(r.size), j])
        status = np.where(found, OK, np.where(np.all(f > 0, axis=1), ABOVE,
                                              np.where(np.all(f < 0, axis=1), BELOW, NONE))).astype(np.int8)
        rows = np.arange(r.size)
        a, b = grid[rows, j], grid[rows, j + 1]
        fa = f[rows, j]
        for _ in range(14):         # bisection on the guide: to about 0.3 s
            c = 0.5 * (a + b)
            fc = self._f_guide(c, horizon)
            left = np.sign(fc) == np.sign(fa)
            a, fa = np.where(left, c, a), np.where(left, fc, fa)
            b = np.where(left, b, c)
        t = np.where(found, 0.5 * (a + b), np.nan)
        return t, status

    def _refine(self, t, status, horizon, sense):
        """Newton steps on skyfield's topocentric apparent altitude (see the module notes)."""
        t = t.copy()
        az_out = np.full(t.shape, np.nan)
        active = status == OK
        status = status.copy()
        for _ in range(MAX_FULL_STEPS):
            if not active.any():
                break
            idx = np.flatnonzero(active)
            ta = t[idx]
            alt, az, dist, alt_rate, az_rate = self.full(ta)
            sd = self.semidiameter_deg(dist)
            target = horizon.target(self.site, az, sd)
            f = alt - target
            fp = alt_rate
            if horizon.varies_with_azimuth:
                slope = (horizon.target(self.site, az + 0.05, sd) - horizon.target(self.site, az - 0.05, sd)) / 0.1
                fp = fp - slope * az_rate
            with np.errstate(divide="ignore", invalid="ignore"):
                step = -f / fp
                # Curvature from the guide: estimated error left after this step.
                d2 = 2e-3
                fpp = (self._f_guide(ta + d2, horizon) - 2 * self._f_guide(ta, horizon)
                       + self._f_guide(ta - d2, horizon)) / (d2 * d2)
                residual = np.abs(fpp / (2 * fp)) * step * step
            wrong = ~np.isfinite(step) | (np.abs(step) > 0.05) | (np.sign(fp) != -sense)
            t[idx] = ta + np.where(wrong, 0.0, step)
            az_out[idx] = az
            done = ~wrong & (residual < TOLERANCE_DAYS)
            status[idx[wrong]] = NOT_CONVERGED
            active[idx[wrong | done]] = False
        status[active] = NOT_CONVERGED
        bad = status != OK
        t[bad] = np.nan
        az_out[bad] = np.nan
        return t, az_out, status


# ---------------------------------------------------------------- public API

@dataclass
class DailyEvents:
    """Rising, transit and setting of one body on each requested civil day at a site.

    All times are Julian Days in UT1; NaN where the day has no such event.
    When a day holds two events of a kind (possible for the Moon near the
    day's ends at high latitude), the first is given and ``n_rise``/``n_set``
    say so.

    Attributes
    ----------
    day : int64 array
        Civil day numbers at the site (JDN of the site's civil date).
    rise_ut, transit_ut, set_ut : float arrays
        UT1 Julian Days.
    rise_azimuth_deg, set_azimuth_deg : float arrays
        Azimuth at the event, degrees from north through east.
    transit_altitude_deg : float array
        Airless topocentric altitude of the centre at transit, degrees.
    rise_flag, set_flag, transit_flag : int8 arrays
        :data:`OK`, :data:`ABOVE`, :data:`BELOW`, :data:`NOT_CONVERGED`, :data:`NONE`.
    n_rise, n_set : int arrays
        Number of such events in the day.
    extra : dict
        Other crossings by name (twilight: ``"civil_dawn"``, ``"civil_dusk"``, ...)
        as ``(jd_ut, flag)`` pairs.
    """

    body: str
    day: np.ndarray
    rise_ut: np.ndarray
    transit_ut: np.ndarray
    set_ut: np.ndarray
    rise_azimuth_deg: np.ndarray
    set_azimuth_deg: np.ndarray
    transit_altitude_deg: np.ndarray
    rise_flag: np.ndarray
    set_flag: np.ndarray
    transit_flag: np.ndarray
    n_rise: np.ndarray
    n_set: np.ndarray
    extra: dict = field(default_factory=dict)


def _local_noon_ut(days, site):
    """UT1 Julian Day of local mean noon on civil days ``days``."""
    return np.asarray(days, dtype=float) - site.east_longitude_deg / 360.0


def _civil_day(jd_ut, site):
    return np.floor(np.asarray(jd_ut, dtype=float) + site.offset_days + 0.5)


def _first_per_day(days, ev_t, ev_extra, site):
    """For each requested day: first event time in it, its extra values, and the count."""
    good = np.isfinite(ev_t)
    t = ev_t[good]
    extras = [e[good] for e in ev_extra]
    order = np.argsort(t, kind="stable")
    t = t[order]
    extras = [e[order] for e in extras]
    ev_day = _civil_day(t, site)
    lo = np.searchsorted(ev_day, days, "left")
    hi = np.searchsorted(ev_day, days, "right")
    count = hi - lo
    have = count > 0
    pick = np.minimum(lo, max(t.size - 1, 0))
    out_t = np.where(have, t[pick] if t.size else np.nan, np.nan)
    out_extra = [np.where(have, e[pick] if t.size else np.nan, np.nan) for e in extras]
    return out_t, out_extra, count


def _day_flags(days, count, transits, tr_flags, site):
    """Flag of each requested day without an event: the status of that day's transit, else NONE."""
    flags = np.where(count > 0, OK, NONE).astype(np.int8)
    tday = _civil_day(transits, site)
    order = np.argsort(tday, kind="stable")
    tday, tfl = tday[order], tr_flags[order]
    i = np.searchsorted(tday, days)
    i = np.minimum(i, max(tday.size - 1, 0))
    same = tday.size > 0
    if same:
        match = tday[i] == days
        polar = match & ((tfl[i] == ABOVE) | (tfl[i] == BELOW) | (tfl[i] == NOT_CONVERGED))
        flags = np.where((count == 0) & polar, tfl[i], flags).astype(np.int8)
    return flags


def _as_days(days):
    d = np.atleast_1d(np.asarray(days))
    if d.dtype.kind == "f":
        if not np.all(np.isfinite(d)) or np.any(d != np.floor(d)):
            raise ParameterError("civil day numbers must be whole numbers")
    return d.astype(np.int64)


def daily_events(body, site, days, *, deltat=None, horizon: Horizon | None = None, transit=True,
                 twilight=(), engine=None) -> DailyEvents:
    """Return the rising, transit and setting of ``body`` on each civil day ``days`` at ``site``.

    Parameters
    ----------
    body : str
        ``sun``, ``moon``, ``mercury``, ``venus``, ``mars``, ``jupiter``,
        ``saturn``, ``uranus``, ``neptune`` or ``pluto``.
    site : calendra.sites.Site
    days : int or array_like of int
        Civil day numbers (JDN of the date in the site's civil time).
    deltat : delta-T model or name, optional
        Turns UT1 into TT (default model when None).
    horizon : Horizon, optional
        Event definition (default: upper limb, standard refraction, the site's horizon).
    transit : bool
        Also refine the transits with skyfield (otherwise transit columns are
        the guide model's, good to about a second).
    twilight : iterable of str or float
        For the Sun: twilight depressions (``civil``, ``nautical``,
        ``astronomical`` or degrees) whose dawn and dusk go into ``extra``.

    Returns
    -------
    DailyEvents
    """
    horizon = horizon or Horizon()
    eng = engine or _Engine(body, site, deltat)
    days = _as_days(days)
    if days.size > BLOCK:
        parts = [daily_events(body, site, days[i:i + BLOCK], horizon=horizon, transit=transit, twilight=twilight,
                              engine=eng) for i in range(0, days.size, BLOCK)]
        return _concat_daily(parts)
    cand = np.unique(np.concatenate([days - 1, days, days + 1]))
    tr = eng.transits_guide(_local_noon_ut(cand, site))
    tr = np.sort(tr[np.isfinite(tr)])
    if tr.size:
        tr = tr[np.concatenate([[True], np.diff(tr) > 0.5])]
    t_rise, az_rise, f_rise = eng.crossings(tr, -1, horizon)
    t_set, az_set, f_set = eng.crossings(tr, +1, horizon)
    if transit:
        tr_full, tr_alt, _ = eng.transits_full(tr)
    else:
        tr_full, tr_alt = tr, eng.guide(tr)[0]
    rise, (raz,), n_rise = _first_per_day(days, t_rise, [az_rise], site)
    sett, (saz,), n_set = _first_per_day(days, t_set, [az_set], site)
    trans, (talt,), n_tr = _first_per_day(days, tr_full, [tr_alt], site)
    extra = {}
    for dep in twilight:
        d = twilight_depression(dep)
        name = next((k for k, v in TWILIGHT_DEPRESSIONS.items() if v == d), f"{d:g}deg")
        hz = Horizon.twilight(d)
        tdawn, _, fdawn = eng.crossings(tr, -1, hz)
        tdusk, _, fdusk = eng.crossings(tr, +1, hz)
        dawn, _, n_dawn = _first_per_day(days, tdawn, [], site)
        dusk, _, n_dusk = _first_per_day(days, tdusk, [], site)
        extra[f"{name}_dawn"] = (dawn, _day_flags(days, n_dawn, tr, fdawn, site))
        extra[f"{name}_dusk"] = (dusk, _day_flags(days, n_dusk, tr, fdusk, site))
    return DailyEvents(
        body=eng.body, day=days, rise_ut=rise, transit_ut=trans, set_ut=sett,
        rise_azimuth_deg=raz, set_azimuth_deg=saz, transit_altitude_deg=talt,
        rise_flag=_day_flags(days, n_rise, tr, f_rise, site),
        set_flag=_day_flags(days, n_set, tr, f_set, site),
        transit_flag=np.where(n_tr > 0, OK, NONE).astype(np.int8), n_rise=n_rise, n_set=n_set, extra=extra)


def _concat_daily(parts) -> DailyEvents:
    """Join the DailyEvents of consecutive blocks of days."""
    first = parts[0]
    arrays = {name: np.concatenate([getattr(p, name) for p in parts])
              for name in DailyEvents.__dataclass_fields__ if name not in ("body", "extra")}
    extra = {k: tuple(np.concatenate([p.extra[k][j] for p in parts]) for j in range(2)) for k in first.extra}
    return DailyEvents(body=first.body, extra=extra, **arrays)


@dataclass
class Crossings:
    """Events of one kind in a span, in time order.

    Attributes
    ----------
    jd_ut : float array
        UT1 Julian Days.
    azimuth_deg : float array
        Azimuth at the event (degrees from north through east); for transits NaN.
    altitude_deg : float array
        Airless topocentric altitude of the centre at the event, degrees.
    """

    jd_ut: np.ndarray
    azimuth_deg: np.ndarray
    altitude_deg: np.ndarray


def find_events(body, site, jd_ut_start, jd_ut_end, *, deltat=None, horizon: Horizon | None = None,
                kinds=("rise", "transit", "set"), engine=None) -> dict:
    """Return every rising, transit and setting of ``body`` between two UT1 Julian Days.

    Parameters
    ----------
    body : str
        See :func:`daily_events`.
    site : calendra.sites.Site
    jd_ut_start, jd_ut_end : float
        The span, Julian Days in UT1.
    deltat, horizon
        See :func:`daily_events`.
    kinds : iterable of str
        Which of ``rise``, ``transit``, ``set``, or twilight names such as
        ``civil_dawn``, ``nautical_dusk``, ``18_dawn`` (Sun only).

    Returns
    -------
    dict of str -> Crossings
    """
    horizon = horizon or Horizon()
    eng = engine or _Engine(body, site, deltat)
    if not jd_ut_end > jd_ut_start:
        raise ParameterError("the end of the span must come after its start")
    d0 = int(_civil_day(jd_ut_start, site)) - 1
    d1 = int(_civil_day(jd_ut_end, site)) + 1
    cand = np.arange(d0, d1 + 1)
    tr = eng.transits_guide(_local_noon_ut(cand, site))
    tr = np.sort(tr[np.isfinite(tr)])
    if tr.size:
        tr = tr[np.concatenate([[True], np.diff(tr) > 0.5])]
    out = {}
    for kind in kinds:
        if kind == "transit":
            t, alt, _ = eng.transits_full(tr)
            az = np.full(t.shape, np.nan)
        else:
            if kind in ("rise", "set"):
                hz, sense = horizon, (-1 if kind == "rise" else 1)
            else:
                name, _, which = kind.rpartition("_")
                if which not in ("dawn", "dusk") or eng.body != "sun":
                    raise ParameterError(f"unknown event kind {kind!r} (rise, transit, set; for the Sun "
                                         "also civil_dawn, nautical_dusk, 18_dawn, ...)")
                hz, sense = Horizon.twilight(name), (-1 if which == "dawn" else 1)
            t, az, _ = eng.crossings(tr, sense, hz)
            alt = np.full(t.shape, np.nan)
            good = np.isfinite(t)
            if good.any():      # the event altitude is the target itself
                alt[good] = hz.target(site, az[good], eng.semidiameter_deg(eng.guide(t[good])[2]))
        keep = np.isfinite(t) & (t >= jd_ut_start) & (t < jd_ut_end)
        order = np.argsort(t[keep], kind="stable")
        out[kind] = Crossings(t[keep][order], az[keep][order], alt[keep][order])
    return out


def crossing_near(body, site, jd_ut_ref, rising: bool, *, deltat=None, horizon: Horizon | None = None,
                  engine=None):
    """Return the rising (or setting) of ``body`` nearest in hour angle to each reference time.

    Used for pairs of events: the moonset after a sunset, the moonrise
    before a sunrise.  "Nearest in hour angle" means within half a turn of
    the body's hour angle from the reference (for the Moon about +-12.4 h).

    Parameters
    ----------
    body : str
    site : calendra.sites.Site
    jd_ut_ref : float or array_like
        Reference instants, UT1 Julian Days (NaN gives NaN).
    rising : bool
        True for risings, False for settings.
    deltat, horizon
        See :func:`daily_events`.

    Returns
    -------
    jd_ut : float array
        UT1 Julian Days, NaN where the body does not cross (flag says why).
    azimuth_deg : float array
    flag : int8 array
    """
    horizon = horizon or Horizon()
    eng = engine or _Engine(body, site, deltat)
    ref = np.atleast_1d(np.asarray(jd_ut_ref, dtype=float))
    return eng.crossings(ref, -1 if rising else 1, horizon, around="nearest")


def sun_crossing_on_days(days, site, deltat=None, rising=True, altitude_deg=None, horizon=None, engine=None):
    """Return the UT1 Julian Day of sunrise (or sunset) on each civil day, NaN if none.

    The core of day boundaries (:mod:`calendra.daybounds`).

    Parameters
    ----------
    days : int or array_like of int
        Civil day numbers at the site (JDN of the date in its civil time).
    site : calendra.sites.Site
    deltat : delta-T model or name, optional
        Turns UT1 into TT (default model when None).
    rising : bool
        True for sunrise, False for sunset.
    altitude_deg : float, optional
        The event is the airless topocentric altitude of the Sun's centre
        reaching this value (degrees); otherwise ``horizon`` decides.
    horizon : Horizon, optional
        Default: upper limb, standard refraction, the site's horizon.

    Returns
    -------
    float array of the shape of ``days``
        UT1 Julian Days; NaN on polar days and nights (and if the event
        strays into a neighbouring civil day).
    """
    if horizon is None:
        horizon = Horizon(altitude_deg=altitude_deg) if altitude_deg is not None else Horizon()
    eng = engine or _Engine("sun", site, deltat)
    shape = np.shape(days)
    days = _as_days(days).ravel()
    tr = eng.transits_guide(_local_noon_ut(days, site))
    t, _, flag = eng.crossings(tr, -1 if rising else 1, horizon)
    # The Sun's event belongs to the day of its transit unless it strays across midnight.
    same = _civil_day(t, site) == days
    return np.where(same, t, np.nan).reshape(shape)


def provenance_models(horizon: Horizon, site, what="rising and setting") -> dict:
    """Model descriptions for :func:`calendra.provenance.build`."""
    return {
        what: horizon.describe(site),
        "positions": "DE406 through skyfield: apparent topocentric place (light time, aberration, "
                     "deflection), IAU 2006 precession, IAU 2000B nutation, WGS84 observer",
    }


def provenance_warnings(horizon: Horizon) -> list[str]:
    """Warnings every rising/setting result carries."""
    out = []
    if horizon.refraction != "none" and (horizon.altitude_deg is None or horizon.altitude_deg > -3):
        out.append("refraction near the horizon varies with the weather by several arcminutes "
                   "(more with temperature inversions): rising and setting times are uncertain by "
                   "tens of seconds to minutes, more at high latitudes")
    return out
