"""Heliacal, acronychal and cosmical risings and settings of stars and planets.

Definitions
-----------
Each night is labelled by the civil day (local mean time at the site) on which
the object's rising or setting takes place.  For each night the engine takes
the object's rising (or setting) nearest local midnight, i.e. the one in the
noon-to-noon window, and asks a visibility method whether the object is seen
at that rising (setting).  The phases are the changes of that yes/no series:

``rising`` -- heliacal rising (also: first visibility in the east, first morning)
    The first morning on which the object is seen rising before sunrise, after
    a period in which its rising was lost in the dawn.
``setting`` -- heliacal setting (also: last visibility in the west, last evening)
    The last evening on which the object is seen setting after sunset, before
    its setting is lost in the dusk.
``acronychal`` -- acronychal rising
    The last evening on which the object is seen rising after sunset (its
    rising then moves into daylight).
``cosmical`` -- cosmical setting
    The first morning on which the object is seen setting before sunrise (its
    setting moves out of daylight into the dawn).
``first-east`` / ``last-east`` / ``first-west`` / ``last-west`` (planets)
    First and last morning on which the planet is seen rising (east), first and
    last evening on which it is seen setting (west).  ``first-east`` is
    ``rising`` and ``last-west`` is ``setting``; ``last-east`` and
    ``first-west`` are the phases of an inner planet around superior
    conjunction.

Visibility methods (registry :data:`METHODS`, extend with :func:`register_method`)
--------------------------------------------------------------------------------
``arcus`` -- arcus visionis
    The object is seen at its apparent rising (setting) -- apparent altitude
    equal to the horizon altitude plus an optional extra altitude -- if the
    Sun's centre is then at least the arcus visionis below the horizon (true,
    unrefracted altitude of the Sun <= -arcus).  Defaults: for stars the rule
    of Krauss (1985, *Sothis- und Monddaten*, pp. 40-41), arcus visionis
    = 10.5 + 1.4 V degrees; for planets the values of Ptolemy, *Almagest*
    XIII.7 (Venus 5 [verified in a translation], Mercury 10, Jupiter 10,
    Saturn 11, Mars 11.5 degrees [from memory]).  Any value can be given.
``physical`` -- a Schaefer-style visibility model
    The object is seen if, at some moment between its rising and the Sun's
    reaching the horizon (for risings; for settings between sunset and the
    object's setting), its magnitude dimmed by atmospheric extinction is
    brighter than the limiting magnitude set by the sky brightness at its
    place.  See :class:`PhysicalModel` for the formulas and their status.

Sweeps are array jobs: all nights of the whole range are evaluated together
on a coarse grid (every ``step`` nights), and the nights around each change
of visibility are evaluated again one by one, again as one batch.
"""

from __future__ import annotations

import numpy as np

from . import positions as P

#: Phase name -> (event kind, transition, side of the night at the visible end).
PHASES = {
    "rising": ("rise", "appear", "morning"),
    "acronychal": ("rise", "vanish", "evening"),
    "setting": ("set", "vanish", "evening"),
    "cosmical": ("set", "appear", "morning"),
    "first-east": ("rise", "appear", "morning"),
    "last-east": ("rise", "vanish", "morning"),
    "first-west": ("set", "appear", "evening"),
    "last-west": ("set", "vanish", "evening"),
}
PHASE_TITLES = {
    "rising": "heliacal rising (first morning seen rising before sunrise)",
    "acronychal": "acronychal rising (last evening seen rising after sunset)",
    "setting": "heliacal setting (last evening seen setting after sunset)",
    "cosmical": "cosmical setting (first morning seen setting before sunrise)",
    "first-east": "first visibility in the east (first morning seen rising)",
    "last-east": "last visibility in the east (last morning seen rising)",
    "first-west": "first visibility in the west (first evening seen setting)",
    "last-west": "last visibility in the west (last evening seen setting)",
}

#: Ptolemy, Almagest XIII.7: arcus visionis of the planets (degrees).
#: Venus 5 deg verified in a translation (XIII.8); the others from memory.
PTOLEMY_ARCUS = {"mercury": 10.0, "venus": 5.0, "mars": 11.5, "jupiter": 10.0, "saturn": 11.0}


def krauss_arcus(v_mag):
    """Arcus visionis (degrees) of a star of magnitude V: 10.5 + 1.4 V (Krauss 1985)."""
    return 10.5 + 1.4 * np.asarray(v_mag, dtype=float)


# ------------------------------------------------------------------ objects

class Target:
    """An object to observe: a star (catalogue record) or a planet.

    Attributes
    ----------
    kind : str
        ``star`` or ``planet``.
    label : str
    star : StarRecord or None
    planet : names.Planet or None
    """

    def __init__(self, kind, label, star=None, planet=None):
        self.kind = kind
        self.label = label
        self.star = star
        self.planet = planet

    @classmethod
    def from_name(cls, text):
        """Resolve a star or planet name (see :func:`calendra_stars.names.resolve`)."""
        from .catalogue import load_catalogue
        from .names import resolve

        kind, value, label = resolve(text)
        if kind == "planet":
            return cls("planet", label, planet=value)
        return cls("star", label, star=load_catalogue().star(value, name=label))

    def magnitude(self, jd_tt):
        """V magnitude at TT instants (constant for stars; Mallama & Hilton 2018 via skyfield for planets)."""
        jd = np.asarray(jd_tt, dtype=float)
        if self.kind == "star":
            return np.full(jd.shape, self.star.v)
        from skyfield.magnitudelib import planetary_magnitude

        from calendra.deltat import skyfield_timescale
        from calendra.ephemeris import load_ephemeris

        eph = load_ephemeris()
        ts = skyfield_timescale("constant:0")
        t = ts.tt_jd(np.atleast_1d(jd))
        astrometric = eph["earth"].at(t).observe(eph[self.planet.target])
        return np.asarray(planetary_magnitude(astrometric), dtype=float).reshape(jd.shape)

    def default_arcus(self, v_mag):
        if self.kind == "planet":
            return np.full(np.shape(v_mag), PTOLEMY_ARCUS[self.planet.name])
        return krauss_arcus(v_mag)

    def tod(self, sky, jd_tt, rnpb, earth):
        """Apparent direction (true equator/equinox of date unit vector) at TT instants."""
        if self.kind == "star":
            return sky.star_tod(self.star, jd_tt, rnpb=rnpb, earth=earth)
        u, _ = sky.body_tod(self.planet.target, jd_tt, rnpb=rnpb, earth=earth)
        return u


# ------------------------------------------------------------------ geometry

def _wrap(a):
    return (a + np.pi) % (2.0 * np.pi) - np.pi


class NightGeometry:
    """The object's rising or setting nearest local midnight, and the Sun then, for many nights.

    All attributes are arrays over the nights.

    Attributes
    ----------
    jdn : ndarray of int
        Civil day number (local mean time) of local midnight of the night;
        the event's own civil day is :attr:`event_jdn`.
    exists : ndarray of bool
        The object rises (sets) that night (not circumpolar / never rising).
    jd_ut, jd_tt : ndarray
        Instant of the apparent rising (setting), UT1 and TT.
    event_jdn : ndarray of int
        Civil day (local mean time) of the event.
    morning : ndarray of bool
        The event is between local midnight and noon.
    obj_alt, obj_az : ndarray
        Apparent altitude and azimuth of the object at the event, degrees.
    sun_alt, sun_az : ndarray
        True altitude and azimuth of the Sun's centre at the event, degrees.
    sun_obj_deg : ndarray
        Angular distance Sun-object, degrees.
    ra, dec, sun_ra, sun_dec : ndarray
        Apparent places (true equator of date) at the event, radians.
    eo : ndarray
        Equation of the origins of the night (radians).
    v_mag : ndarray
        V magnitude of the object.
    """


def night_geometry(target: Target, sky, jdn, kind: str, extra_alt: float = 0.0) -> NightGeometry:
    """Compute the events of many nights as one array job.

    Parameters
    ----------
    target : Target
    sky : positions.Sky
    jdn : array_like of int
        Civil day numbers (local mean time); the night is the one that contains
        the local midnight starting that day.
    kind : str
        ``rise`` or ``set``.
    extra_alt : float
        Apparent altitude above the horizon at which the object counts as
        risen/set, degrees (0: apparent rising at the horizon).
    """
    jdn = np.asarray(jdn, dtype=np.int64)
    lon_days = sky.lon / (2.0 * np.pi)
    mid_ut = jdn - 0.5 - lon_days
    mid_tt = sky.tt(mid_ut)
    rnpb = P.npb_matrix(mid_tt)
    eo = P.equation_of_origins(mid_tt, rnpb)
    earth = P.barycentric("earth", mid_tt, velocity=True)
    u = target.tod(sky, mid_tt, rnpb, earth)
    sphi, cphi = np.sin(sky.lat), np.cos(sky.lat)
    sign = -1.0 if kind == "rise" else 1.0
    t_ut = mid_ut.astype(float)
    horizon = np.zeros(jdn.shape)
    exists = np.ones(jdn.shape, dtype=bool)
    n_iter = 3 if target.kind == "planet" else (2 if sky.horizon is not None else 1)
    for it in range(n_iter):
        if target.kind == "planet" and it > 0:
            t_tt = sky.tt(t_ut)
            u = target.tod(sky, t_tt, rnpb, P.barycentric("earth", t_tt, velocity=True))
        ra, dec = P.tod_radec(u)
        h_app = horizon + extra_alt
        h_true = np.radians(h_app - P.refraction_bennett(h_app, sky.T, sky.P))
        cos_h0 = (np.sin(h_true) - sphi * np.sin(dec)) / (cphi * np.cos(dec))
        exists = np.abs(cos_h0) <= 1.0
        h0 = np.arccos(np.clip(cos_h0, -1.0, 1.0))
        era = _era(t_ut)
        ha_now = era - eo + sky.lon - ra
        t_ut = t_ut + _wrap(sign * h0 - ha_now) / P.ERA_RATE
        if sky.horizon is not None:
            _, az = P.hadec_to_altaz(sign * h0, dec, sky.lat)
            horizon = sky.horizon_at(az)
    ra, dec = P.tod_radec(u)
    ha = _era(t_ut) - eo + sky.lon - ra
    obj_alt, obj_az = P.hadec_to_altaz(ha, dec, sky.lat)
    obj_alt = obj_alt + P.refraction_saemundsson(obj_alt, sky.T, sky.P)
    t_tt = sky.tt(t_ut)
    sun_u, _ = sky.body_tod("sun", t_tt, rnpb=rnpb, iterations=1)
    sun_ra, sun_dec = P.tod_radec(sun_u)
    sun_alt, sun_az = P.hadec_to_altaz(_era(t_ut) - eo + sky.lon - sun_ra, sun_dec, sky.lat)
    g = NightGeometry()
    g.jdn = jdn
    g.exists = exists
    g.jd_ut = t_ut
    g.jd_tt = t_tt
    local = t_ut + lon_days + 0.5
    g.event_jdn = np.floor(local).astype(np.int64)
    g.morning = (local - np.floor(local)) < 0.5
    g.obj_alt, g.obj_az = obj_alt, obj_az
    g.sun_alt, g.sun_az = sun_alt, sun_az
    g.sun_obj_deg = np.degrees(np.arccos(np.clip(np.sum(u * sun_u, axis=-1), -1.0, 1.0)))
    g.ra, g.dec, g.sun_ra, g.sun_dec = ra, dec, sun_ra, sun_dec
    g.eo = eo
    g.kind = kind
    g.v_mag = target.magnitude(mid_tt)
    g.lat = sky.lat
    g.lon = sky.lon
    g.sky = sky
    return g


def _era(jd_ut):
    import erfa

    jd = np.asarray(jd_ut, dtype=float)
    return erfa.era00(2400000.5, jd - 2400000.5)


# ------------------------------------------------------------------ methods

class VisibilityMethod:
    """Base class of visibility methods.

    A method decides, for each night of a :class:`NightGeometry`, whether the
    object is seen at its rising (setting), and gives a margin (positive:
    seen) in its own unit.
    """

    name = ""
    title = ""
    margin_unit = ""

    def evaluate(self, geom: NightGeometry, target: Target, **options):
        """Return (visible, margin, details) arrays over the nights."""
        raise NotImplementedError

    def describe(self, target=None, **options) -> str:
        return self.title


class ArcusVisionis(VisibilityMethod):
    """Seen when the Sun is at least the arcus visionis below the horizon at the apparent rising/setting."""

    name = "arcus"
    title = "arcus visionis"
    margin_unit = "deg"

    def evaluate(self, geom, target, arcus=None, **options):
        av = target.default_arcus(geom.v_mag) if arcus is None else np.full(geom.jdn.shape, float(arcus))
        depression = -geom.sun_alt
        margin = depression - av
        visible = geom.exists & (margin >= 0.0)
        return visible, margin, {"arcus_deg": av}

    def describe(self, target=None, arcus=None, **options):
        if arcus is not None:
            return f"arcus visionis {float(arcus):g} deg (given)"
        if target is not None and target.kind == "planet":
            return (f"arcus visionis {PTOLEMY_ARCUS[target.planet.name]:g} deg "
                    "(Ptolemy, Almagest XIII.7; Venus verified, other planets from memory)")
        v = target.star.v if target is not None else None
        val = f" = {float(krauss_arcus(v)):.2f} deg for V = {v:.2f}" if v is not None else ""
        return f"arcus visionis 10.5 + 1.4 V deg (Krauss 1985, Sothis- und Monddaten pp. 40-41){val}"


class PhysicalModel(VisibilityMethod):
    """A physical visibility model after Schaefer (1990, 1993, 1998).

    The object (V magnitude m) is seen at a moment if

        m + k X(z) < m_lim(B)

    with

    * X(z) = 1 / (cos z + 0.025 exp(-11 cos z)), the air mass at apparent
      zenith distance z [S98: the air mass of the sky-brightness routine];
    * k the total V-band extinction coefficient (mag per air mass), given, or
      from :func:`extinction_coefficient` (site height, humidity, temperature,
      latitude, season) [S98];
    * B the sky brightness at the object (nanolamberts), the sum of
      - night sky: ``B_N = B0 (0.4 + 0.6 / sqrt(1 - 0.96 sin^2 z)) 10^(-0.4 k X)``,
        B0 = 1.0e-13 erg s^-1 cm^-2 um^-1 arcsec^-2 in V [S98] (about 21.4 mag
        arcsec^-2 at the zenith); the solar-cycle factor
        ``1 + 0.3 cos(2 pi (year - 1992) / 11)`` of [S98] is taken at its mean
        (1), the phase of the cycle being unknown in antiquity;
      - twilight: ``B_T = 10^(-0.4 (M_S - M_M + 32.5 - h_S - z / (360 k)))
        (100 / r_S) (1 - 10^(-0.4 k X))`` with h_S the Sun's altitude and z
        the object's zenith distance, both in degrees, and r_S the Sun-object
        distance in degrees; M_S = -26.74 and M_M = -11.05 the V magnitudes of
        the Sun and of the Moon used as reference [S98];
      - daylight (only when darker than twilight) [S98]:
        ``B_D = 10^(-0.4 (M_S - M_M + 43.27)) (1 - 10^(-0.4 k X))
        (f(r_S) C + 440000 (1 - C))``, f(r) = 6.2e7 r^-2 + 10^(6.15 - r/40)
        + 10^5.36 (1.06 + cos^2 r), C = 10^(-0.4 k X_S), X_S = 40 for the Sun
        below the horizon;
      converted to nanolamberts by 1 nL = 1.11e-15 in those units [S98];
    * the threshold illuminance of Hecht (1947) in Schaefer's (1990) form:
      ``I = c1 (1 + sqrt(c2 B))^2 F`` foot-candles with
      (c1, c2) = (10^-9.8, 10^-1.9) for B <= 1500 nL (night vision) and
      (10^-8.35, 10^-5.9) above (day vision) [S90 eq. 2, S98], F the
      observer factor (1: Schaefer's typical observer; F = 1/S^2 is the
      program's Snellen-ratio term ``+ 5 log10 S``), and
      ``m_lim = -16.57 - 2.5 log10 I`` [S90, S98].

    Sources: [S90] Schaefer, PASP 102, 212 (1990), eq. 2 and the conversion
    m = -16.57 - 2.5 log10 I, as reproduced in an open implementation of that
    paper's equations; [S98] Schaefer, "To the visual limits", Sky & Telescope,
    May 1998 (the VISLIMIT program of the "Astronomical Computing" column), as
    transcribed in open listings (Schaefer's companion CCD-limit program of the
    same issue has the same extinction and sky subroutines).  Corrected against
    these (values that were held from memory before): the day-vision c2 was
    1.26e-4 and is 10^-5.9 = 1.26e-6 (the old value made the threshold jump by
    a factor of two at 1500 nL and the twilight limit about 2.4 mag too bright
    near the horizon); c1 = 1.58e-10 / 4.4e-9 are now the exact 10^-9.8 /
    10^-8.35; the aerosol coefficient of :func:`extinction_coefficient` was
    0.120 and is 0.1.  Confirmed as they were: the air mass, B0 and the
    night-sky law, the twilight zero point 32.5 (not a reconstruction: it is
    the published constant), the daylight law and 1.11e-15.

    Differences from [S98], by design: the program's extinction of the object
    uses one air mass per component (gas 1/(cos z + 0.0286 exp(-10.5 cos z)),
    aerosol 1/(cos z + 0.0123 exp(-24.5 cos z)), ozone with a layer at 20 km);
    here, with one total k given, the single air mass X(z) above is used
    (at 3 deg altitude X = 15.1 against 14.5 for gas and 18.0 for aerosol).
    The Moon is ignored (moonlight delays faint stars near full Moon), and the
    colour of the object is not taken into account (the colour factor of
    [S90] is not part of [S98]).

    Reported with the date: the dates for the smallest and largest k of
    ``k_range`` (default 0.15-0.40), i.e. how far the date moves across
    plausible extinction.
    """

    name = "physical"
    title = "physical visibility model (Schaefer-style)"
    margin_unit = "mag"
    #: Minutes between samples of the object's path through the twilight.
    SAMPLE_MIN = 4.0
    #: Number of samples after the rising (before the setting).
    SAMPLES = 24

    #: Dark-sky brightness at the zenith, V, erg s^-1 cm^-2 um^-1 arcsec^-2 [S98].
    B0 = 1.0e-13
    #: V magnitudes of the Sun and of the reference Moon in the sky-brightness laws [S98].
    M_SUN = -26.74
    M_MOON = -11.05
    #: One nanolambert in the units of B0 [S98].
    NL = 1.11e-15
    #: Twilight and daylight zero points (magnitudes) [S98].
    TWILIGHT_ZP = 32.5
    DAYLIGHT_ZP = 43.27
    #: Hecht's threshold constants (c1 foot-candles, c2 per nL), night and day vision,
    #: and the brightness between them (nL) [S90 eq. 2 (switch at log B = 3.17), S98 (1500 nL)].
    C_NIGHT = (10.0 ** -9.8, 10.0 ** -1.9)
    C_DAY = (10.0 ** -8.35, 10.0 ** -5.9)
    B_SWITCH = 1500.0
    #: Zero point of m_lim = ZP - 2.5 log10 I (I in foot-candles) [S90, S98].
    THRESHOLD_ZP = -16.57

    def evaluate(self, geom, target, k=0.25, observer_factor=1.0, **options):
        best, details = self.best_margin(geom, np.atleast_1d(np.asarray(k, dtype=float)), observer_factor)
        margin = best[0]
        visible = geom.exists & (margin > 0.0)
        return visible, margin, {key: val[0] for key, val in details.items()}

    def best_margin(self, geom, ks, observer_factor=1.0):
        """Best (largest) visibility margin over the night's twilight samples for each k.

        Returns
        -------
        margin : ndarray, shape (len(ks), nights)
            ``m_lim - (m + k X)`` at the best moment, magnitudes.
        details : dict of arrays (len(ks), nights)
            Object altitude/azimuth and Sun altitude at the best moment.
        """
        sign = 1.0 if geom.kind == "rise" else -1.0
        steps = np.arange(self.SAMPLES + 1) * self.SAMPLE_MIN / 1440.0      # days
        t = geom.jd_ut[:, None] + sign * steps[None, :]
        era = _era(t)
        lst = era - geom.eo[:, None] + geom.lon
        alt, az = P.hadec_to_altaz(lst - geom.ra[:, None], geom.dec[:, None], geom.lat)
        alt_app = alt + P.refraction_saemundsson(alt, geom.sky.T, geom.sky.P)
        sun_alt, sun_az = P.hadec_to_altaz(lst - geom.sun_ra[:, None], geom.sun_dec[:, None], geom.lat)
        horizon = geom.sky.horizon_at(az) if geom.sky.horizon is not None else 0.0
        ok = (alt_app >= horizon) & (sun_alt < 0.0) & geom.exists[:, None]
        z = np.radians(90.0 - np.clip(alt_app, 0.0, 90.0))
        rs = np.maximum(geom.sun_obj_deg[:, None], 0.5)
        m = geom.v_mag[:, None]
        out = np.full((len(ks), len(geom.jdn)), -np.inf)
        det = {n: np.full((len(ks), len(geom.jdn)), np.nan) for n in ("best_alt", "best_az", "best_sun_alt")}
        for i, k in enumerate(ks):
            mlim, ext = self.limiting_magnitude(z, np.radians(90.0 - sun_alt), rs, k, observer_factor)
            margin = np.where(ok, mlim - (m + ext), -np.inf)
            j = np.argmax(margin, axis=1)
            rows = np.arange(len(geom.jdn))
            out[i] = margin[rows, j]
            det["best_alt"][i] = alt_app[rows, j]
            det["best_az"][i] = az[rows, j]
            det["best_sun_alt"][i] = sun_alt[rows, j]
        return out, det

    @staticmethod
    def airmass(z_rad):
        """Air mass at zenith distance z (radians): 1 / (cos z + 0.025 exp(-11 cos z))."""
        c = np.cos(z_rad)
        return 1.0 / (c + 0.025 * np.exp(-11.0 * c))

    def sky_brightness_nl(self, z_rad, zs_rad, rs_deg, k):
        """Sky brightness (nanolamberts, V) at zenith distance z; Sun at zenith distance zs, r_S degrees away."""
        x = self.airmass(z_rad)
        ext = 1.0 - 10.0 ** (-0.4 * k * x)
        bn = self.B0 * (0.4 + 0.6 / np.sqrt(1.0 - 0.96 * np.sin(z_rad) ** 2)) * 10.0 ** (-0.4 * k * x)
        hs = 90.0 - np.degrees(zs_rad)
        zdeg = np.degrees(z_rad)
        dm = self.M_SUN - self.M_MOON
        bt = 10.0 ** (-0.4 * (dm + self.TWILIGHT_ZP - hs - zdeg / (360.0 * k))) * (100.0 / rs_deg) * ext
        xs = self.airmass(np.minimum(zs_rad, np.radians(90.0)))
        c4 = 10.0 ** (-0.4 * k * xs)
        rr = np.radians(rs_deg)
        fs = 6.2e7 * rs_deg ** -2 + 10.0 ** (6.15 - rs_deg / 40.0) + 10.0 ** 5.36 * (1.06 + np.cos(rr) ** 2)
        bd = 10.0 ** (-0.4 * (dm + self.DAYLIGHT_ZP)) * ext * (fs * c4 + 440000.0 * (1.0 - c4))
        return (bn + np.minimum(bd, bt)) / self.NL

    def limiting_magnitude(self, z_rad, zs_rad, rs_deg, k, observer_factor=1.0):
        """Threshold magnitude (below the atmosphere) and the object's extinction, magnitudes."""
        b = self.sky_brightness_nl(z_rad, zs_rad, rs_deg, k)
        th = self.threshold_fc(b) * observer_factor
        return self.THRESHOLD_ZP - 2.5 * np.log10(th), k * self.airmass(z_rad)

    def threshold_fc(self, b_nl):
        """Hecht's threshold illuminance of a point source (foot-candles) on a background of B nL [S90 eq. 2]."""
        b = np.asarray(b_nl, dtype=float)
        bright = b > self.B_SWITCH
        c1 = np.where(bright, self.C_DAY[0], self.C_NIGHT[0])
        c2 = np.where(bright, self.C_DAY[1], self.C_NIGHT[1])
        return c1 * (1.0 + np.sqrt(c2 * b)) ** 2

    def zenith_limiting_magnitude(self, k=0.2):
        """Dark-sky limiting magnitude at the zenith (Sun far below the horizon)."""
        mlim, ext = self.limiting_magnitude(np.array(0.0), np.radians(150.0), np.array(120.0), k)
        return float(mlim - ext)

    def describe(self, target=None, k=0.25, k_range=(0.15, 0.40), **options):
        return (f"{self.title}: extinction k = {k:g} mag/air mass (band {k_range[0]:g}-{k_range[1]:g}); "
                "night sky, twilight and daylight after Schaefer 1998, threshold after Hecht 1947/"
                "Schaefer 1990; coefficients checked against transcriptions of Schaefer's 1998 program; "
                "single air mass for the total k; Moon ignored")


def extinction_coefficient(elevation_m=0.0, relative_humidity=50.0, temperature_C=20.0,
                           latitude_deg=30.0, month=7):
    """Total V-band extinction coefficient k (mag per air mass) from site conditions.

    Sum of Rayleigh, aerosol, ozone and water-vapour terms of Schaefer (1998,
    "To the visual limits", the V band of the VISLIMIT program, checked against
    transcribed listings):
    ``k_R = 0.1066 exp(-h/8200)``;
    ``k_A = 0.1 exp(-h/1500) (1 - 0.32 / ln(RH/100))^1.33 (1 + 0.33 sign(lat) sin(season))``;
    ``k_O = 0.031 (3 + 0.4 (lat cos(season) - cos(3 lat))) / 3``;
    ``k_W = 0.031 * 0.94 (RH/100) exp(T/15) exp(-h/8200)``;
    with h in metres, season = (month - 3) * 30 degrees and lat in radians.
    The aerosol coefficient was held as 0.120 from memory; the program has 0.1.
    The seasonal factor 0.33 is that of the visual-limit program; the CCD-limit
    program of the same article prints ``(1 + sign(lat) sin(season))`` without it.

    Returns
    -------
    float
    """
    h = float(elevation_m)
    rh = min(max(float(relative_humidity), 1.0), 99.0)
    lat = np.radians(float(latitude_deg))
    ra = np.radians((month - 3) * 30.0)
    kr = 0.1066 * np.exp(-h / 8200.0)
    ka = 0.1 * np.exp(-h / 1500.0) * (1.0 - 0.32 / np.log(rh / 100.0)) ** 1.33
    ka *= 1.0 + 0.33 * np.sign(lat) * np.sin(ra)
    ko = 0.031 * (3.0 + 0.4 * (lat * np.cos(ra) - np.cos(3.0 * lat))) / 3.0
    kw = 0.031 * 0.94 * (rh / 100.0) * np.exp(float(temperature_C) / 15.0) * np.exp(-h / 8200.0)
    return float(kr + ka + ko + kw)


#: Registry of visibility methods, by name.  Other plugins may add their own.
METHODS: dict = {}


def register_method(method: VisibilityMethod) -> None:
    """Add a visibility method to :data:`METHODS` (a name clash is an error)."""
    if method.name in METHODS and METHODS[method.name] is not method:
        raise ValueError(f"visibility method {method.name!r} is already registered")
    METHODS[method.name] = method


register_method(ArcusVisionis())
register_method(PhysicalModel())


def get_method(name: str) -> VisibilityMethod:
    from calendra.errors import UnknownNameError

    try:
        return METHODS[name]
    except KeyError:
        raise UnknownNameError("visibility method", name, list(METHODS)) from None


# ------------------------------------------------------------------ sweep

def _transitions(visible, morning, transition, side):
    """Indices of the nights where the phase happens (the visible night of each change)."""
    v = visible.astype(np.int8)
    d = np.diff(v)
    if transition == "appear":
        idx = np.nonzero(d == 1)[0] + 1
    else:
        idx = np.nonzero(d == -1)[0]
    want_morning = side == "morning"
    return idx[morning[idx] == want_morning]


def _nights(jd_tt_start, jd_tt_end, sky):
    lon_days = sky.lon / (2.0 * np.pi)
    ut0, ut1 = sky.ut(jd_tt_start), sky.ut(jd_tt_end)
    return int(np.floor(ut0 + lon_days + 0.5)), int(np.floor(ut1 + lon_days + 0.5))


def find_phases(target: Target, site, jd_tt_start, jd_tt_end, phase="rising", method="arcus",
                deltat=None, step=None, extra_alt=0.0, progress=None, **options):
    """All occurrences of a phase between two instants, as arrays.

    Parameters
    ----------
    target : Target
    site : calendra.sites.Site
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT).
    phase : str
        One of :data:`PHASES`.
    method : str or VisibilityMethod
        ``arcus`` or ``physical`` (or any registered method).
    deltat : delta-T model or None
    step : int or None
        Coarse step in nights (default 4 for stars, 1 for planets).
    extra_alt : float
        Apparent altitude above the horizon at which the object counts as risen (degrees).
    **options
        Passed to the method (``arcus``, ``k``, ``observer_factor``).

    Returns
    -------
    dict of ndarray
        ``event_jdn`` (civil day, local mean time), ``jd_ut``, ``jd_tt`` (the
        object's apparent rising/setting that night), ``sun_alt``, ``obj_alt``,
        ``obj_az``, ``margin``, ``v_mag`` and the method's details.
    """
    from calendra.deltat import DEFAULT_MODEL, get_model

    if phase not in PHASES:
        from calendra.errors import ParameterError

        raise ParameterError(f"phase must be one of {', '.join(PHASES)}")
    deltat = deltat or get_model(DEFAULT_MODEL)
    meth = get_method(method) if isinstance(method, str) else method
    sky = P.Sky(site, deltat)
    kind, transition, side = PHASES[phase]
    if step is None:
        step = 1 if target.kind == "planet" else 4
    from calendra.ephemeris import SPAN_JD

    # stay inside DE406 (with two days to spare for light time and the night's events)
    jd_tt_start = max(float(jd_tt_start), SPAN_JD[0] + 2.0)
    jd_tt_end = min(float(jd_tt_end), SPAN_JD[1] - 2.0)
    if jd_tt_end <= jd_tt_start:
        return _empty()
    n0, n1 = _nights(jd_tt_start, jd_tt_end, sky)
    lo, hi = _nights(SPAN_JD[0] + 2.0, SPAN_JD[1] - 2.0, sky)
    coarse = np.arange(n0 - step, n1 + step + 1, step, dtype=np.int64)
    coarse = coarse[(coarse >= lo) & (coarse <= hi)]
    total = 2
    if progress:
        progress(0, total, f"{target.label}: coarse sweep")
    geo = night_geometry(target, sky, coarse, kind, extra_alt)
    vis, _, det0 = meth.evaluate(geo, target, **options)
    v = vis.astype(np.int8)
    ch = np.nonzero(np.diff(v) != 0)[0]
    if progress:
        progress(1, total, f"{target.label}: refining {len(ch)} changes")
    if len(ch) == 0:
        out = _empty()
        out.update({key: np.zeros(0) for key in det0})    # the method's own columns, empty
    else:
        fine = (coarse[ch][:, None] + np.arange(step + 1)[None, :]).ravel()
        fine = np.unique(fine)
        fine = fine[(fine >= lo) & (fine <= hi)]
        g2 = night_geometry(target, sky, fine, kind, extra_alt)
        vis2, margin2, det2 = meth.evaluate(g2, target, **options)
        # a change of visibility only counts across consecutive nights
        idx = _transitions(vis2, g2.morning, transition, side)
        if transition == "appear":
            idx = idx[(idx >= 1) & (fine[np.maximum(idx - 1, 0)] == fine[idx] - 1)]
        else:
            idx = idx[(idx + 1 < len(fine)) & (fine[np.minimum(idx + 1, len(fine) - 1)] == fine[idx] + 1)]
        out = {
            "event_jdn": g2.event_jdn[idx], "jd_ut": g2.jd_ut[idx], "jd_tt": g2.jd_tt[idx],
            "sun_alt": g2.sun_alt[idx], "sun_az": g2.sun_az[idx], "obj_alt": g2.obj_alt[idx],
            "obj_az": g2.obj_az[idx], "margin": margin2[idx], "v_mag": g2.v_mag[idx],
        }
        for key, val in det2.items():
            out[key] = np.asarray(val)[idx]
    keep = (out["jd_tt"] >= jd_tt_start) & (out["jd_tt"] <= jd_tt_end)
    out = {k: np.asarray(v)[keep] for k, v in out.items()}
    if progress:
        progress(total, total, f"{target.label}: done")
    return out


def _empty():
    e = np.zeros(0)
    return {"event_jdn": np.zeros(0, dtype=np.int64), "jd_ut": e, "jd_tt": e, "sun_alt": e, "sun_az": e,
            "obj_alt": e, "obj_az": e, "margin": e, "v_mag": e}


def k_band(target, site, jd_tt_start, jd_tt_end, phase, events, k_range=(0.15, 0.40), deltat=None,
           extra_alt=0.0, observer_factor=1.0, step=None):
    """Dates of a phase for the extremes of a range of extinction coefficients (physical model).

    For each event of ``events`` (the nominal k), the nearest occurrence
    (within 60 days) under ``k_range[0]`` and under ``k_range[1]``.

    Returns
    -------
    jd_lo, jd_hi : ndarray
        TT instants of the phase for the smallest and the largest k (NaN where
        the phase does not occur under that k, e.g. a star never seen).
    """
    res = []
    for k in k_range:
        ev = find_phases(target, site, jd_tt_start - 90.0, jd_tt_end + 90.0, phase, "physical", deltat=deltat,
                         step=step, extra_alt=extra_alt, k=k, observer_factor=observer_factor)
        jd = ev["jd_tt"]
        near = np.full(len(events["jd_tt"]), np.nan)
        if len(jd):
            pos = np.clip(np.searchsorted(jd, events["jd_tt"]), 0, len(jd) - 1)
            best = np.where(np.abs(jd[np.maximum(pos - 1, 0)] - events["jd_tt"]) < np.abs(jd[pos] - events["jd_tt"]),
                            jd[np.maximum(pos - 1, 0)], jd[pos])
            near = np.where(np.abs(best - events["jd_tt"]) <= 60.0, best, np.nan)
        res.append(near)
    return res[0], res[1]
