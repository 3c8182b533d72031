"""Horizon geometry of an alignment: azimuth and horizon altitude <-> declination.

Conventions
-----------
* **Azimuth** ``A``: degrees from true (geographic) north through east,
  0..360.  A compass reading is turned into a true azimuth by adding the
  magnetic declination (east positive), see
  :func:`calendra_alignments.uncertainty.true_azimuth`.
* **Apparent altitude**: what a theodolite, a clinometer or a photograph
  measures, refraction included.  A surveyed horizon altitude is apparent.
* **True altitude**: the airless topocentric altitude.
* **Geocentric altitude**: the altitude of the direction from the Earth's
  centre (what declinations of the Sun, Moon and planets refer to).
* **Latitude** ``phi``: geodetic latitude, degrees north, taken as the
  astronomical latitude (the deflection of the vertical, a few arcseconds,
  is ignored).
* Every function is a numpy expression: arrays of any broadcastable shapes in,
  arrays out (numpy scalars for scalars).

From the horizon to the declination
-----------------------------------
For a target seen at the skyline at azimuth ``A`` whose *apparent* altitude
is ``H`` (plus an optional extinction angle ``e`` for stars, the altitude
at which a star first becomes visible):

1. the observed point of the target is at apparent altitude ``h_a = H + e``;
2. **refraction** (apparent -> true) after Bennett (1982, *Journal of
   Navigation* 35, 255; Meeus, *Astronomical Algorithms*, 2nd ed., eq. 16.3):
   ``R = cot(h_a + 7.31 / (h_a + 4.4))`` arcminutes (``h_a`` in degrees),
   times the weather factor ``(P / 1010 mbar) (283 K / (273 K + T))``
   (Meeus p. 107).  "Standard" refraction is this formula at 10 C and
   1010 mbar (34.5' on the astronomical horizon).  For apparent altitudes
   below 0 (a horizon below the eye: a sea horizon seen from a cliff, a
   valley floor) the value at 0 is used: the ray grazes the ground below the
   eye where it meets the full horizontal refraction; this is the practice of
   the nautical almanacs (true altitude at the sea horizon = -(dip + R0)).
   ``h_t = h_a - R``;
3. **limb**: the centre of a disc of topocentric semi-diameter ``SD`` is at
   ``h_c = h_t - s SD`` with ``s = +1`` when the upper limb touches the
   skyline (first or last gleam), 0 for the centre, -1 for the lower limb;
4. **parallax** (Moon, and the Sun's 8.8"): with the horizontal parallax
   ``pi = asin(R_earth / distance)``, the geocentric altitude is
   ``h_g = h_c + p`` with ``sin p = sin pi cos h_c`` (exact for a spherical
   Earth; the parallax lies in the vertical plane, so the azimuth is
   unchanged.  The ellipsoid's effects -- geocentric vs geodetic latitude,
   a radius 0.3 % shorter at the poles -- move a lunar declination by under
   0.005 degrees and are ignored);
5. **declination** (the spherical-astronomy transformation, Meeus eq. 13.5
   and 13.6 solved for declination): ``sin dec = sin phi sin h_g + cos phi
   cos h_g cos A``.

Back from a declination to an azimuth: on a constant horizon ``h_g`` does not
depend on the azimuth and ``cos A = (sin dec - sin phi sin h_g) / (cos phi
cos h_g)`` (rising east of the meridian, ``A`` in 0..180; setting at
``360 - A``).  On a horizon profile the altitude depends on the azimuth and
the equation is solved by vectorized bisection on the half circle
(:func:`azimuth_from_declination`).

The dip of a flat (sea or plain) horizon seen from ``h`` metres above it is
``1.76' sqrt(h / m)`` (the nautical almanacs' formula with terrestrial
refraction; :func:`calendra.sites.dip_deg`).

Horizon profiles
----------------
:class:`Horizon` holds a constant altitude or a profile of (azimuth, apparent
altitude) pairs.  A profile is read with :func:`calendra.sites.read_horizon_csv`
(two columns ``azimuth, altitude`` in degrees; a header line, blank lines and
``#`` comments skipped) and interpolated **linearly in azimuth, periodic over
360 degrees** by :meth:`calendra.sites.Site.horizon_altitude` -- the same rule
as everywhere in calendra.  Its slope (needed by the error propagation) is
that of the linear segment.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from calendra.errors import ParameterError

#: Standard weather for refraction: temperature (C) and pressure (mbar) of Meeus' formulas.
STANDARD_TEMPERATURE_C = 10.0
STANDARD_PRESSURE_MBAR = 1010.0
#: Equatorial radius of the Earth, km (WGS84).
EARTH_RADIUS_KM = 6378.137
#: Mean radius of the Moon, km (IAU).
MOON_RADIUS_KM = 1737.4
#: Nominal solar radius, km (IAU 2015 Resolution B3).
SUN_RADIUS_KM = 695700.0
#: Astronomical unit, km (IAU 2012).
AU_KM = 149597870.7
#: Geocentric distances of the Moon used for its parallax and semi-diameter, km.  ``mean``
#: is the semi-major axis of the orbit (the distance of the mean parallax: the time-average of
#: 1/distance); ``perigee`` and ``apogee`` the extreme distances.  From memory; the tests check
#: them against DE406 (harmonic mean within 0.2 %, extremes within 500 km over 2000-2020).
MOON_DISTANCE_KM = {"mean": 384400.0, "perigee": 356400.0, "apogee": 406700.0}
#: Limb at the skyline -> sign s (centre altitude = limb altitude - s * SD).
LIMBS = {"upper": 1.0, "centre": 0.0, "center": 0.0, "lower": -1.0}
#: Refraction models for apparent -> true altitude.
REFRACTION_MODELS = {
    "bennett": "Bennett (1982) apparent -> true, R = cot(h + 7.31/(h + 4.4)) arcmin x (P/1010)(283/(273+T)); "
               "at apparent altitudes below 0 the value at 0 (almanac practice)",
    "none": "no refraction (airless)",
}
#: Saemundsson (1986) true -> apparent, used where a true altitude must be turned into an apparent one.
SAEMUNDSSON = ("Saemundsson (1986, Sky & Telescope 72, 70) true -> apparent, "
               "R = 1.02 cot(h + 10.3/(h + 5.11)) arcmin x (P/1010)(283/(273+T))")

_D2R = math.pi / 180.0


def _out(x):
    a = np.asarray(x, dtype=float)
    return a[()] if a.ndim == 0 else a


# ---------------------------------------------------------------- refraction, dip, air

def weather_factor(temperature_C=STANDARD_TEMPERATURE_C, pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the refraction scale ``(P / 1010 mbar) (283 K / (273 K + T))`` (Meeus, p. 107).

    Parameters
    ----------
    temperature_C : float or array_like
        Air temperature, degrees Celsius.
    pressure_mbar : float or array_like
        Air pressure, millibar (hPa).
    """
    t = np.asarray(temperature_C, dtype=float)
    p = np.asarray(pressure_mbar, dtype=float)
    return _out((p / 1010.0) * (283.0 / (273.0 + t)))


def standard_pressure(elevation_m):
    """Return the air pressure at an elevation in the standard atmosphere, mbar.

    ``P = 1010 mbar (1 - 2.25577e-5 h / m) ** 5.25588``: the pressure ratio of
    the ICAO standard atmosphere's troposphere (lapse rate 6.5 K/km from
    288.15 K) applied to the 1010 mbar of the standard refraction.  At 300 m
    it is 975 mbar and refraction is 3.5 % smaller than at sea level.

    Parameters
    ----------
    elevation_m : float or array_like
        Height above sea level, metres (-500..9000).
    """
    h = np.clip(np.asarray(elevation_m, dtype=float), -500.0, 11000.0)
    return _out(STANDARD_PRESSURE_MBAR * (1.0 - 2.25577e-5 * h) ** 5.25588)


def refraction_bennett_deg(apparent_altitude_deg, temperature_C=STANDARD_TEMPERATURE_C,
                           pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the refraction at an apparent altitude after Bennett (1982), degrees.

    ``R = cot(h + 7.31 / (h + 4.4))`` arcminutes with ``h`` the apparent
    altitude in degrees (Meeus eq. 16.3, accurate to 0.07' for 0..90 degrees
    in standard air), times :func:`weather_factor`.  Below 0 the value at 0
    is used (see the module notes).  Subtract it from an apparent altitude to
    get the true one.

    Parameters
    ----------
    apparent_altitude_deg : float or array_like
        Apparent altitude, degrees.
    temperature_C, pressure_mbar : float or array_like
        Weather (degrees Celsius, millibar).

    Returns
    -------
    numpy.ndarray or numpy.float64
        Refraction, degrees (>= 0).

    References
    ----------
    Bennett, G. G. (1982), J. Navigation 35, 255.  Meeus (1998), *Astronomical
    Algorithms*, 2nd ed., ch. 16 (Ex. 16.a: 0.5 degrees -> 28.754').
    """
    h = np.maximum(np.asarray(apparent_altitude_deg, dtype=float), 0.0)
    r = 1.0 / np.tan(_D2R * (h + 7.31 / (h + 4.4))) / 60.0
    return _out(np.maximum(r, 0.0) * weather_factor(temperature_C, pressure_mbar))


def _bennett_slope(apparent_altitude_deg, temperature_C, pressure_mbar):
    """d R / d h of :func:`refraction_bennett_deg` (degrees per degree; 0 below 0)."""
    h = np.asarray(apparent_altitude_deg, dtype=float)
    hc = np.maximum(h, 0.0)
    x = _D2R * (hc + 7.31 / (hc + 4.4))
    d = -(1.0 / np.sin(x) ** 2) * _D2R * (1.0 - 7.31 / (hc + 4.4) ** 2) / 60.0
    return np.where(h > 0.0, d, 0.0) * weather_factor(temperature_C, pressure_mbar)


def refraction_saemundsson_deg(true_altitude_deg, temperature_C=STANDARD_TEMPERATURE_C,
                               pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the refraction of a body at a true altitude after Saemundsson (1986), degrees.

    ``R = 1.02 cot(h + 10.3 / (h + 5.11))`` arcminutes with ``h`` the true
    (airless) altitude in degrees (Meeus eq. 16.4), times
    :func:`weather_factor`; add it to a true altitude to get the apparent one.
    Consistent with Bennett's formula to about 0.1'.  Below the true altitude
    at which the apparent altitude is 0 (about -0.575 degrees in standard
    air) the refraction is held at Bennett's value at 0, as in
    :func:`refraction_bennett_deg`.

    Parameters
    ----------
    true_altitude_deg : float or array_like
        True altitude, degrees.
    temperature_C, pressure_mbar : float or array_like
        Weather (degrees Celsius, millibar).

    References
    ----------
    Saemundsson, T. (1986), Sky & Telescope 72, 70; Meeus (1998) eq. 16.4.
    """
    h = np.asarray(true_altitude_deg, dtype=float)
    r0 = refraction_bennett_deg(0.0, temperature_C, pressure_mbar)
    hs = np.maximum(h, -r0)
    r = 1.02 / np.tan(_D2R * (hs + 10.3 / (hs + 5.11))) / 60.0 * weather_factor(temperature_C, pressure_mbar)
    return _out(np.where(h + r0 < 0.0, r0, np.maximum(r, 0.0)))


def refraction(apparent_altitude_deg, model="bennett", temperature_C=STANDARD_TEMPERATURE_C,
               pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the refraction (degrees) to subtract from an apparent altitude.

    Parameters
    ----------
    apparent_altitude_deg : float or array_like
        Apparent altitude, degrees.
    model : {'bennett', 'none'}
        See :data:`REFRACTION_MODELS`.
    temperature_C, pressure_mbar : float or array_like
        Weather (degrees Celsius, millibar).
    """
    _check_refraction(model)
    if model == "none":
        return _out(np.zeros(np.shape(apparent_altitude_deg)))
    return refraction_bennett_deg(apparent_altitude_deg, temperature_C, pressure_mbar)


def _check_refraction(model):
    if model not in REFRACTION_MODELS:
        raise ParameterError(f"refraction model {model!r} is not one of {', '.join(REFRACTION_MODELS)}")


def apparent_to_true(apparent_altitude_deg, model="bennett", temperature_C=STANDARD_TEMPERATURE_C,
                     pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the true altitude of a point seen at an apparent altitude (degrees; Bennett 1982)."""
    h = np.asarray(apparent_altitude_deg, dtype=float)
    return _out(h - refraction(h, model, temperature_C, pressure_mbar))


def true_to_apparent(true_altitude_deg, model="bennett", temperature_C=STANDARD_TEMPERATURE_C,
                     pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the apparent altitude of a point at a true altitude (degrees; Saemundsson 1986).

    With ``model='none'`` the altitude is returned unchanged.
    """
    _check_refraction(model)
    h = np.asarray(true_altitude_deg, dtype=float)
    if model == "none":
        return _out(h)
    return _out(h + refraction_saemundsson_deg(h, temperature_C, pressure_mbar))


def dip(eye_height_m):
    """Return the dip of a flat (sea) horizon seen from ``eye_height_m`` above it, degrees.

    ``1.76' sqrt(h / m)`` (nautical almanacs; terrestrial refraction included),
    from :func:`calendra.sites.dip_deg`.
    """
    from calendra.sites import dip_deg

    return _out(dip_deg(eye_height_m))


# ---------------------------------------------------------------- discs and parallax

def horizontal_parallax(distance_km):
    """Return the equatorial horizontal parallax ``asin(R_earth / distance)``, degrees.

    Parameters
    ----------
    distance_km : float or array_like
        Geocentric distance of the body, km.
    """
    d = np.asarray(distance_km, dtype=float)
    return _out(np.degrees(np.arcsin(EARTH_RADIUS_KM / d)))


def semidiameter(radius_km, distance_km):
    """Return the angular semi-diameter ``asin(radius / distance)`` of a sphere, degrees."""
    return _out(np.degrees(np.arcsin(np.asarray(radius_km, float) / np.asarray(distance_km, float))))


def moon_distance_km(mode="mean"):
    """Return the Moon's distance for a parallax mode (``mean``, ``perigee``, ``apogee``) or km as given."""
    if isinstance(mode, str):
        try:
            return MOON_DISTANCE_KM[mode]
        except KeyError:
            raise ParameterError(f"Moon distance {mode!r}: give one of {', '.join(MOON_DISTANCE_KM)} or km") from None
    d = float(mode)
    if not 300000.0 <= d <= 420000.0:
        raise ParameterError(f"Moon distance {d} km is outside 300000..420000 km")
    return d


@dataclass(frozen=True)
class Body:
    """What is seen at the skyline: a point, or a disc with a semi-diameter and a parallax.

    Attributes
    ----------
    kind : str
        ``star`` (a point at infinity: stars, planets), ``sun`` or ``moon``.
    semidiameter_deg : float
        Topocentric semi-diameter, degrees (0 for a point).
    parallax_deg : float
        Equatorial horizontal parallax, degrees (0 for a star).
    limb : str
        Which point of the disc is at the skyline: ``upper``, ``centre``, ``lower``.
    extinction_deg : float
        Apparent altitude above the skyline at which the target is first (last)
        seen, degrees (stars and planets; 0 by default).
    """

    kind: str = "star"
    semidiameter_deg: float = 0.0
    parallax_deg: float = 0.0
    limb: str = "centre"
    extinction_deg: float = 0.0

    def __post_init__(self):
        if self.limb not in LIMBS:
            raise ParameterError(f"limb must be one of upper, centre, lower; got {self.limb!r}")
        if not (0.0 <= self.extinction_deg < 20.0):
            raise ParameterError(f"extinction angle must lie in 0..20 degrees; got {self.extinction_deg!r}")

    @classmethod
    def star(cls, extinction_deg: float = 0.0) -> "Body":
        """A star or planet (a point; no parallax)."""
        return cls("star", 0.0, 0.0, "centre", float(extinction_deg))

    @classmethod
    def sun(cls, limb: str = "upper", distance_au: float = 1.0) -> "Body":
        """The Sun at ``distance_au`` (semi-diameter 16.0' and parallax 8.8" at 1 AU)."""
        d = float(distance_au) * AU_KM
        return cls("sun", float(semidiameter(SUN_RADIUS_KM, d)), float(horizontal_parallax(d)), limb, 0.0)

    @classmethod
    def moon(cls, limb: str = "upper", distance="mean") -> "Body":
        """The Moon at a distance (``mean``, ``perigee``, ``apogee`` or km; see :data:`MOON_DISTANCE_KM`)."""
        d = moon_distance_km(distance)
        return cls("moon", float(semidiameter(MOON_RADIUS_KM, d)), float(horizontal_parallax(d)), limb, 0.0)

    @property
    def sign(self) -> float:
        return LIMBS[self.limb]

    def describe(self) -> str:
        if self.kind == "star":
            return "point source" + (f", seen {self.extinction_deg:g} deg above the skyline"
                                     if self.extinction_deg else " at the skyline")
        return (f"{self.kind}: {self.limb} limb at the skyline, semi-diameter {self.semidiameter_deg * 60:.2f}', "
                f"horizontal parallax {self.parallax_deg * 60:.2f}'")


STAR = Body.star()


# ---------------------------------------------------------------- horizons

@dataclass(frozen=True)
class Horizon:
    """The apparent altitude of the skyline as a function of azimuth.

    Build one with :meth:`constant`, :meth:`sea`, :meth:`from_csv`,
    :meth:`from_points` or :meth:`from_site`.

    Attributes
    ----------
    points : tuple of (float, float)
        Profile (azimuth, apparent altitude) pairs in degrees, sorted by
        azimuth; empty for a constant horizon.
    constant_deg : float
        The altitude of a constant horizon, degrees.
    label : str
        Description for output.
    """

    points: tuple = ()
    constant_deg: float = 0.0
    label: str = "flat horizon, altitude 0"
    _xp: np.ndarray = field(default=None, repr=False, compare=False)
    _fp: np.ndarray = field(default=None, repr=False, compare=False)

    def __post_init__(self):
        if not math.isfinite(self.constant_deg) or abs(self.constant_deg) > 60.0:
            raise ParameterError(f"horizon altitude {self.constant_deg!r} must lie within -60..60 degrees")
        if self.points:
            xp = np.array([p[0] for p in self.points], dtype=float)
            fp = np.array([p[1] for p in self.points], dtype=float)
            # Periodic closure, the rule of calendra.sites.Site.horizon_altitude.
            object.__setattr__(self, "_xp", np.concatenate([[xp[-1] - 360.0], xp, [xp[0] + 360.0]]))
            object.__setattr__(self, "_fp", np.concatenate([[fp[-1]], fp, [fp[0]]]))

    # -- construction
    @classmethod
    def constant(cls, altitude_deg: float) -> "Horizon":
        """A skyline at the same apparent altitude in every direction (degrees)."""
        a = float(altitude_deg)
        return cls((), a, f"constant altitude {a:+.3f} deg")

    @classmethod
    def sea(cls, eye_height_m: float) -> "Horizon":
        """A sea (or level plain) horizon seen from ``eye_height_m`` above it: altitude -dip."""
        d = float(dip(eye_height_m))
        return cls((), -d, f"sea horizon from {float(eye_height_m):g} m (dip 1.76' sqrt(h) = {d * 60:.1f}')")

    @classmethod
    def from_points(cls, points, label: str = "") -> "Horizon":
        """A profile from (azimuth, apparent altitude) pairs in degrees (checked by calendra.sites)."""
        from calendra.sites import Site

        pts = Site("profile", 0.0, 0.0, horizon=tuple(points)).horizon     # validation and sorting
        if not pts:
            raise ParameterError("a horizon profile needs at least one (azimuth, altitude) point")
        if len(pts) == 1:
            return cls.constant(pts[0][1])
        alts = [p[1] for p in pts]
        return cls(pts, 0.0, label or f"profile of {len(pts)} points, {min(alts):+.2f}..{max(alts):+.2f} deg "
                                       "(linear in azimuth, periodic)")

    @classmethod
    def from_csv(cls, path) -> "Horizon":
        """A profile read from a CSV file of ``azimuth, altitude`` (degrees), see :func:`calendra.sites.read_horizon_csv`."""
        from pathlib import Path

        from calendra.sites import read_horizon_csv

        pts = read_horizon_csv(path)
        h = cls.from_points(pts)
        if h.points:
            return cls(h.points, 0.0, f"{h.label} from {Path(path).name}")
        return h

    @classmethod
    def from_site(cls, site) -> "Horizon":
        """The site's horizon: its surveyed profile, or its flat horizon (``-dip`` for its eye height)."""
        if site.horizon:
            return cls.from_points(site.horizon, f"profile of site {site.name} ({len(site.horizon)} points)")
        if site.eye_height_m > 0:
            return cls.sea(site.eye_height_m)
        return cls.constant(0.0)

    # -- evaluation
    @property
    def is_constant(self) -> bool:
        return not self.points

    def altitude(self, azimuth_deg):
        """Apparent altitude of the skyline at ``azimuth_deg`` (degrees; linear, periodic interpolation)."""
        az = np.asarray(azimuth_deg, dtype=float)
        if self.is_constant:
            return _out(np.full(az.shape, self.constant_deg))
        return _out(np.interp(az % 360.0, self._xp, self._fp))

    def slope(self, azimuth_deg):
        """Slope of the skyline d(altitude)/d(azimuth) at ``azimuth_deg`` (degrees per degree)."""
        az = np.asarray(azimuth_deg, dtype=float)
        if self.is_constant:
            return _out(np.zeros(az.shape))
        a = az % 360.0
        i = np.clip(np.searchsorted(self._xp, a, side="right") - 1, 0, len(self._xp) - 2)
        return _out((self._fp[i + 1] - self._fp[i]) / (self._xp[i + 1] - self._xp[i]))

    def describe(self) -> str:
        return self.label


def as_horizon(horizon) -> Horizon:
    """Return a :class:`Horizon` from a Horizon, a number (constant altitude) or a CSV path."""
    if isinstance(horizon, Horizon):
        return horizon
    if horizon is None:
        return Horizon.constant(0.0)
    if isinstance(horizon, (int, float, np.floating, np.integer)):
        return Horizon.constant(float(horizon))
    return Horizon.from_csv(horizon)


# ---------------------------------------------------------------- the transformation

def _geocentric_altitude(h_apparent, body: Body, refraction_model, temperature_C, pressure_mbar):
    """Apparent altitude of the observed point -> geocentric altitude of the centre, and pieces (degrees)."""
    h_a = np.asarray(h_apparent, dtype=float) + body.extinction_deg
    h_t = h_a - refraction(h_a, refraction_model, temperature_C, pressure_mbar)
    h_c = h_t - body.sign * body.semidiameter_deg
    if body.parallax_deg:
        p = np.degrees(np.arcsin(math.sin(body.parallax_deg * _D2R) * np.cos(h_c * _D2R)))
    else:
        p = np.zeros(np.shape(h_c))
    return h_c + p, h_a, h_c, p


def declination(azimuth_deg, altitude_deg, latitude_deg, body: Body = STAR, *, refraction_model="bennett",
                temperature_C=STANDARD_TEMPERATURE_C, pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the declination of a target seen at the skyline at an azimuth, degrees.

    Parameters
    ----------
    azimuth_deg : float or array_like
        True azimuth of the alignment, degrees from north through east.
    altitude_deg : float or array_like
        Apparent altitude of the skyline there, degrees (as measured).
    latitude_deg : float or array_like
        Geodetic latitude of the observer, degrees north.
    body : Body
        A point (default), the Sun or the Moon with its limb, semi-diameter
        and parallax (see :class:`Body`).
    refraction_model : {'bennett', 'none'}
        Apparent -> true altitude (see the module notes).
    temperature_C, pressure_mbar : float or array_like
        Weather for the refraction (degrees Celsius, millibar).

    Returns
    -------
    numpy.ndarray or numpy.float64
        Geocentric declination of the target's centre, degrees.

    Examples
    --------
    >>> round(float(declination(90.0, 0.0, 0.0, refraction_model="none")), 9)
    0.0
    """
    h_g, *_ = _geocentric_altitude(altitude_deg, body, refraction_model, temperature_C, pressure_mbar)
    return _spherical_declination(azimuth_deg, h_g, latitude_deg)


def _spherical_declination(azimuth_deg, altitude_deg, latitude_deg):
    a = np.asarray(azimuth_deg, dtype=float) * _D2R
    h = np.asarray(altitude_deg, dtype=float) * _D2R
    f = np.asarray(latitude_deg, dtype=float) * _D2R
    s = np.sin(f) * np.sin(h) + np.cos(f) * np.cos(h) * np.cos(a)
    return _out(np.degrees(np.arcsin(np.clip(s, -1.0, 1.0))))


def hour_angle(azimuth_deg, altitude_deg, latitude_deg):
    """Return the local hour angle of a direction given by true altitude and azimuth, degrees (-180..180).

    Meeus eq. 13.5-13.6 inverted: ``tan H = sin A' / (cos A' sin phi + tan h cos phi)``
    with ``A' = A - 180`` (Meeus' azimuth counted from the south).
    """
    a = np.asarray(azimuth_deg, dtype=float) * _D2R
    h = np.asarray(altitude_deg, dtype=float) * _D2R
    f = np.asarray(latitude_deg, dtype=float) * _D2R
    y = -np.sin(a) * np.cos(h)
    x = np.sin(h) * np.cos(f) - np.cos(h) * np.cos(a) * np.sin(f)
    return _out(np.degrees(np.arctan2(y, x)))


def altaz_from_hadec(hour_angle_deg, declination_deg, latitude_deg):
    """Return (true altitude, azimuth from north) of an hour angle and declination, degrees (Meeus eq. 13.5-13.6)."""
    hh = np.asarray(hour_angle_deg, dtype=float) * _D2R
    d = np.asarray(declination_deg, dtype=float) * _D2R
    f = np.asarray(latitude_deg, dtype=float) * _D2R
    alt = np.arcsin(np.clip(np.sin(f) * np.sin(d) + np.cos(f) * np.cos(d) * np.cos(hh), -1.0, 1.0))
    az = np.arctan2(-np.cos(d) * np.sin(hh), np.cos(f) * np.sin(d) - np.sin(f) * np.cos(d) * np.cos(hh))
    return _out(np.degrees(alt)), _out(np.degrees(az) % 360.0)


def declination_partials(azimuth_deg, altitude_deg, latitude_deg, body: Body = STAR, *, slope=0.0,
                         refraction_model="bennett", temperature_C=STANDARD_TEMPERATURE_C,
                         pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the partial derivatives of :func:`declination` (degrees per degree).

    Analytic: with ``h_g`` the geocentric altitude,
    ``d dec / d A = -cos phi cos h_g sin A / cos dec`` and
    ``d dec / d h_g = (sin phi cos h_g - cos phi sin h_g cos A) / cos dec``;
    ``d h_g / d H = (1 - dR/dH)(1 - sin pi sin h_c / cos p)`` through Bennett's
    refraction and the parallax.  When the skyline altitude follows a profile
    of slope ``dH/dA``, the total azimuth derivative adds
    ``d dec / d H * dH/dA``.

    Parameters
    ----------
    azimuth_deg, altitude_deg, latitude_deg : float or array_like
        As for :func:`declination`.
    body : Body
    slope : float or array_like
        Slope of the skyline at the azimuth, degrees of altitude per degree of azimuth.
    refraction_model, temperature_C, pressure_mbar
        As for :func:`declination`.

    Returns
    -------
    d_dec_d_azimuth, d_dec_d_altitude : numpy.ndarray
        Degrees of declination per degree of (true) azimuth -- the total
        derivative along the profile -- and per degree of apparent skyline altitude.
    """
    h_g, h_a, h_c, p = _geocentric_altitude(altitude_deg, body, refraction_model, temperature_C, pressure_mbar)
    a = np.asarray(azimuth_deg, dtype=float) * _D2R
    f = np.asarray(latitude_deg, dtype=float) * _D2R
    hg = h_g * _D2R
    dec = np.arcsin(np.clip(np.sin(f) * np.sin(hg) + np.cos(f) * np.cos(hg) * np.cos(a), -1.0, 1.0))
    cd = np.maximum(np.cos(dec), 1e-12)
    d_a = -np.cos(f) * np.cos(hg) * np.sin(a) / cd
    d_hg = (np.sin(f) * np.cos(hg) - np.cos(f) * np.sin(hg) * np.cos(a)) / cd
    if refraction_model == "none":
        dr = 0.0
    else:
        dr = _bennett_slope(h_a, temperature_C, pressure_mbar)
    dp = (-math.sin(body.parallax_deg * _D2R) * np.sin(h_c * _D2R) / np.cos(p * _D2R)) if body.parallax_deg else 0.0
    d_h = d_hg * (1.0 - dr) * (1.0 + dp)
    return _out(d_a + d_h * np.asarray(slope, dtype=float)), _out(d_h)


def azimuth_from_declination(declination_deg, latitude_deg, horizon=0.0, body: Body = STAR, *, rising=True,
                             refraction_model="bennett", temperature_C=STANDARD_TEMPERATURE_C,
                             pressure_mbar=STANDARD_PRESSURE_MBAR, iterations: int = 48):
    """Return the azimuth at which a target of given declination rises or sets on a skyline, degrees.

    Parameters
    ----------
    declination_deg : float or array_like
        Geocentric declination of the target's centre, degrees.
    latitude_deg : float or array_like
        Geodetic latitude, degrees north.
    horizon : Horizon, float or path
        The skyline (a constant apparent altitude in degrees, a profile CSV, or a :class:`Horizon`).
    body : Body
        Point, Sun or Moon (limb, semi-diameter, parallax, extinction angle).
    rising : bool
        Rising (azimuth 0..180, east of the meridian) or setting (180..360).
    refraction_model, temperature_C, pressure_mbar
        As for :func:`declination`.
    iterations : int
        Bisection steps on a profile (48 give 180 / 2**48 degrees).

    Returns
    -------
    numpy.ndarray or numpy.float64
        True azimuth, degrees; NaN where the target never reaches the
        skyline on that side (it stays above it or below it all day).

    Notes
    -----
    On a profile, the declination of the skyline point decreases from the
    north point to the south point on the eastern half (and increases on the
    western half) unless the skyline is steeper than the diurnal circles;
    the bisection returns the crossing found between the north and south
    points, which is unique for any real skyline of moderate slope.
    """
    hz = as_horizon(horizon)
    dec = np.asarray(declination_deg, dtype=float)
    lat = np.asarray(latitude_deg, dtype=float)
    shape = np.broadcast(dec, lat).shape
    dec = np.broadcast_to(dec, shape)
    lat = np.broadcast_to(lat, shape)
    kw = dict(refraction_model=refraction_model, temperature_C=temperature_C, pressure_mbar=pressure_mbar)
    if hz.is_constant:
        h_g, *_ = _geocentric_altitude(np.full(shape, hz.constant_deg), body, refraction_model,
                                       temperature_C, pressure_mbar)
        f, d, hgr = lat * _D2R, dec * _D2R, h_g * _D2R
        with np.errstate(invalid="ignore", divide="ignore"):
            c = (np.sin(d) - np.sin(f) * np.sin(hgr)) / (np.cos(f) * np.cos(hgr))
        a = np.where(np.abs(c) <= 1.0, np.degrees(np.arccos(np.clip(c, -1.0, 1.0))), np.nan)
        return _out(a if rising else np.where(np.isnan(a), np.nan, (360.0 - a) % 360.0))
    # Bisection on the half circle: g(A) = dec(A, H(A)) - dec is >= 0 at the north end, <= 0 at the south end
    # (rising side) or the reverse (setting side).
    lo = np.zeros(shape) if rising else np.full(shape, 180.0)
    hi = lo + 180.0

    def g(az):
        return declination(az, hz.altitude(az), lat, body, **kw) - dec

    g_lo, g_hi = g(lo), g(hi)
    if not rising:
        g_lo, g_hi = -g_lo, -g_hi
    ok = (g_lo >= 0.0) & (g_hi <= 0.0)
    for _ in range(int(iterations)):
        mid = 0.5 * (lo + hi)
        gm = g(mid)
        if not rising:
            gm = -gm
        right = gm > 0.0
        lo = np.where(right, mid, lo)
        hi = np.where(right, hi, mid)
    a = 0.5 * (lo + hi)
    return _out(np.where(ok, a % 360.0, np.nan))


def rising_setting_track(declination_deg, latitude_deg, body: Body = STAR, *, hour_angles_deg=None,
                         refraction_model="bennett", temperature_C=STANDARD_TEMPERATURE_C,
                         pressure_mbar=STANDARD_PRESSURE_MBAR):
    """Return the apparent path (azimuth, apparent altitude of the limb point) of a target through the day.

    The geocentric direction at hour angle H gives the geocentric altitude;
    the parallax (``sin p = sin pi cos h``, solved for the topocentric
    altitude by two fixed-point steps) and the limb give the observed point,
    and Saemundsson's refraction its apparent altitude.

    Parameters
    ----------
    declination_deg : float or array_like, shape (T,)
        Declinations of the targets, degrees.
    latitude_deg : float
        Latitude, degrees north.
    body : Body
    hour_angles_deg : array_like, shape (K,), optional
        Hour angles, degrees (default -180..180 every 0.25 degree).

    Returns
    -------
    azimuth, altitude : ndarray, shape (T, K)
        Degrees.
    """
    hh = np.arange(-180.0, 180.0001, 0.25) if hour_angles_deg is None else np.asarray(hour_angles_deg, float)
    d = np.atleast_1d(np.asarray(declination_deg, dtype=float))[:, None]
    h_g, az = altaz_from_hadec(hh[None, :], d, latitude_deg)
    h_c = np.asarray(h_g, dtype=float)
    if body.parallax_deg:
        sp = math.sin(body.parallax_deg * _D2R)
        for _ in range(3):
            h_c = h_g - np.degrees(np.arcsin(sp * np.cos(h_c * _D2R)))
    h_point = h_c + body.sign * body.semidiameter_deg
    h_app = true_to_apparent(h_point, refraction_model, temperature_C, pressure_mbar) - body.extinction_deg
    return np.asarray(az), np.asarray(h_app)


# ---------------------------------------------------------------- ecliptic <-> equator

def ecliptic_to_equatorial(longitude_deg, latitude_deg, obliquity_deg):
    """Return (right ascension, declination) of ecliptic coordinates, degrees (Meeus eq. 13.3, 13.4).

    Parameters
    ----------
    longitude_deg, latitude_deg : float or array_like
        Ecliptic longitude and latitude, degrees.
    obliquity_deg : float or array_like
        Obliquity of the ecliptic, degrees.
    """
    lam = np.asarray(longitude_deg, dtype=float) * _D2R
    bet = np.asarray(latitude_deg, dtype=float) * _D2R
    eps = np.asarray(obliquity_deg, dtype=float) * _D2R
    ra = np.arctan2(np.sin(lam) * np.cos(eps) - np.tan(bet) * np.sin(eps), np.cos(lam))
    dec = np.arcsin(np.clip(np.sin(bet) * np.cos(eps) + np.cos(bet) * np.sin(eps) * np.sin(lam), -1.0, 1.0))
    return _out(np.degrees(ra) % 360.0), _out(np.degrees(dec))


def equatorial_to_ecliptic(ra_deg, dec_deg, obliquity_deg):
    """Return (ecliptic longitude, latitude) of equatorial coordinates, degrees (Meeus eq. 13.1, 13.2)."""
    a = np.asarray(ra_deg, dtype=float) * _D2R
    d = np.asarray(dec_deg, dtype=float) * _D2R
    eps = np.asarray(obliquity_deg, dtype=float) * _D2R
    lam = np.arctan2(np.sin(a) * np.cos(eps) + np.tan(d) * np.sin(eps), np.cos(a))
    bet = np.arcsin(np.clip(np.sin(d) * np.cos(eps) - np.cos(d) * np.sin(eps) * np.sin(a), -1.0, 1.0))
    return _out(np.degrees(lam) % 360.0), _out(np.degrees(bet))
