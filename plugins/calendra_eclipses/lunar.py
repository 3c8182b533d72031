"""Lunar eclipses over the span of DE406 (-3000..3000), vectorised over lunations.

Geometry
--------
At each instant the apparent geocentric Moon and Sun (light time and
aberration, :mod:`.geometry`) give the angular distance ``D`` of the Moon's
centre from the centre of the Earth's shadow (the antisolar point) and,
from the distances, the angular radii

* of the Moon, ``s_M = asin(k R / r_M)`` with ``k = 0.2725076`` (IAU mean
  lunar radius in Earth equatorial radii ``R`` = 6378.137 km);
* of the Sun, ``s_S`` (959.63" at 1 au);
* of the shadows at the Moon's distance, from the parallaxes
  ``pi_M = asin(R' / r_M)``, ``pi_S = asin(R' / r_S)``: umbra
  ``pi_M + pi_S - s_S``, penumbra ``pi_M + pi_S + s_S``.  ``R'`` is the
  Earth's radius at latitude 45 deg (0.998340 R), the mean radius of the
  Earth's outline as the shadow sees it.

Shadow enlargement (``shadow=``)
--------------------------------
The shadow seen on the Moon is larger than geometry gives, because the
Earth's atmosphere is opaque near the ground.  Two classical rules:

``danjon`` (default)
    Danjon (1951): the Earth's radius enlarged by 1/85 (an opaque layer of
    about 75 km), ``R' -> R' (1 + 1/85)`` in both parallaxes.  This is the
    rule of the modern canons (which write it as ``1.01 pi_M``: 0.998340 x
    (1 + 1/85) = 1.01008).
``chauvenet``
    Chauvenet (1891): both shadow radii multiplied by 1 + 1/50 (the rule of
    many older almanacs).  Against Danjon's rule it makes the umbra about
    0.1' larger (umbral magnitudes larger by about 0.005) and the penumbra
    about 0.9' larger (penumbral magnitudes larger by about 0.03, and more
    faint penumbral eclipses).
``none``
    Geometric shadows.

Search
------
1. Every full moon of the range (:func:`calendra.lunations.lunar_phases`).
2. Those whose Moon lies within the penumbral radius + the Moon's radius +
   0.3 deg of the shadow axis are refined to the *greatest eclipse*, the
   minimum of ``D``: Gauss-Newton steps ``dt = -(w.w')/(w'.w')`` on the
   chord ``w`` between the unit vectors of the Moon and of the antisolar
   point (its rate from the ephemeris velocities), until every step is under
   0.01 s.
3. Contacts, for every eclipse at once and one contact type at a time:
   ``D = pi + s_M`` (P1, P4), ``D = umbra + s_M`` (U1, U4),
   ``D = umbra - s_M`` (U2, U3), from the linear-motion guess
   ``t_max -+ sqrt(R^2 - D_min^2) / |w'|`` by Newton steps on the ephemeris
   until every step is under 0.01 s.

Quantities
----------
``gamma`` is the distance of the Moon's centre from the shadow axis at
greatest eclipse, in Earth equatorial radii, positive when the Moon passes
north of the axis (north: towards the true celestial pole).  Magnitudes are
fractions of the Moon's diameter inside the shadow: umbral
``(umbra + s_M - D) / (2 s_M)``, penumbral ``(pen + s_M - D) / (2 s_M)``.
Type: ``total`` when umbral magnitude >= 1, ``partial`` when > 0, else
``penumbral``.  Durations are ``P4 - P1``, ``U4 - U1``, ``U3 - U2``.

Time scales: every ``jd_tt`` is a Julian Day in TT.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from calendra.errors import CalendraError, ParameterError

from .common import LUNAR_SAROS_ANCHOR, saros_numbers, span_tt
from .geometry import (EARTH_MEAN_SHADOW_FACTOR, EARTH_RADIUS_KM, MOON_K_PENUMBRA, SUN_RADIUS_KM,
                       Orientation, _dot, angle_between, apparent_states, norm)

DAY_S = 86400.0
#: Shadow-enlargement rules: name -> description (see the module docstring).
SHADOW_RULES = {
    "danjon": "Danjon (1951): Earth's radius (at latitude 45 deg) enlarged by 1/85 for the atmosphere",
    "chauvenet": "Chauvenet (1891): shadow radii enlarged by 1/50",
    "none": "geometric shadows, no enlargement",
}
DEFAULT_SHADOW = "danjon"
#: Type names, index = code.
LUNAR_TYPES = ("penumbral", "partial", "total")
#: Contact names and (shadow, sign of the Moon's radius, before/after greatest).
CONTACTS = {"P1": ("pen", +1, -1), "U1": ("umb", +1, -1), "U2": ("umb", -1, -1),
            "U3": ("umb", -1, +1), "U4": ("umb", +1, +1), "P4": ("pen", +1, +1)}
CONTACT_ORDER = ("P1", "U1", "U2", "U3", "U4", "P4")
TOLERANCE_S = 0.01
MAX_STEPS = 12


def check_shadow(shadow: str) -> str:
    if shadow not in SHADOW_RULES:
        raise ParameterError(f"shadow rule {shadow!r} is not one of {', '.join(SHADOW_RULES)}")
    return shadow


@dataclass
class ShadowGeometry:
    """The Moon against the Earth's shadow at some TT instants (angles in radians).

    Attributes
    ----------
    distance : ndarray
        Angular distance ``D`` of the Moon's centre from the shadow centre.
    chord, chord_rate : ndarray, shape (3, N)
        Chord between the unit vectors of the Moon and of the antisolar
        point, and its rate (per day).
    penumbra, umbra, moon : ndarray
        Angular radii of the shadows and of the Moon.
    moon_km, sun_km : ndarray, shape (3, N)
        Apparent geocentric positions (GCRS, km).
    """

    distance: np.ndarray
    chord: np.ndarray
    chord_rate: np.ndarray
    penumbra: np.ndarray
    umbra: np.ndarray
    moon: np.ndarray
    moon_km: np.ndarray
    sun_km: np.ndarray


def shadow_geometry(jd_tt, shadow: str = DEFAULT_SHADOW) -> ShadowGeometry:
    """Evaluate the Moon-shadow geometry at TT instants.

    Parameters
    ----------
    jd_tt : array_like
        Julian Days, TT (1-d).
    shadow : {'danjon', 'chauvenet', 'none'}
        Shadow-enlargement rule.

    Returns
    -------
    ShadowGeometry
    """
    m, vm, s, vs = apparent_states(jd_tt)
    rm, rs = norm(m), norm(s)
    mh, sh = m / rm, s / rs
    mdot = (vm - mh * _dot(mh, vm)) / rm
    sdot = (vs - sh * _dot(sh, vs)) / rs
    chord = mh + sh                      # Moon minus antisolar point (-sh)
    rate = mdot + sdot
    radius = EARTH_RADIUS_KM * EARTH_MEAN_SHADOW_FACTOR
    if shadow == "danjon":
        radius = radius * (1.0 + 1.0 / 85.0)
    pi_m, pi_s = np.arcsin(radius / rm), np.arcsin(radius / rs)
    s_s = np.arcsin(SUN_RADIUS_KM / rs)
    pen, umb = pi_m + pi_s + s_s, pi_m + pi_s - s_s
    if shadow == "chauvenet":
        pen, umb = pen * (1.0 + 1.0 / 50.0), umb * (1.0 + 1.0 / 50.0)
    moon = np.arcsin(MOON_K_PENUMBRA * EARTH_RADIUS_KM / rm)
    return ShadowGeometry(angle_between(m, -s), chord, rate, pen, umb, moon, m, s)


def _greatest(t, shadow):
    """Refine instants of minimum Moon-shadow distance by Gauss-Newton steps (TT Julian Days)."""
    t = np.array(t, dtype=np.float64)
    active = np.arange(t.size)
    for _ in range(MAX_STEPS):
        if active.size == 0:
            return t
        g = shadow_geometry(t[active], shadow)
        step = -_dot(g.chord, g.chord_rate) / _dot(g.chord_rate, g.chord_rate)
        t[active] += step
        active = active[np.abs(step) * DAY_S >= TOLERANCE_S]
    raise CalendraError(f"lunar eclipses: greatest eclipse did not converge near JD {t[active[0]]:.4f} TT")


def _contact(t_max, d_min, rate, radius_at_max, which, shadow):
    """Solve ``D(t) = radius(t)`` for one contact type by Newton steps; NaN where it does not occur."""
    kind, sign, side = CONTACTS[which]
    r0 = radius_at_max
    out = np.full(t_max.shape, np.nan)
    ok = d_min < r0
    if not ok.any():
        return out
    t = t_max[ok] + side * np.sqrt(r0[ok] ** 2 - d_min[ok] ** 2) / rate[ok]
    idx = np.flatnonzero(ok)
    active = np.arange(t.size)
    for _ in range(MAX_STEPS):
        if active.size == 0:
            break
        g = shadow_geometry(t[active], shadow)
        r = (g.penumbra if kind == "pen" else g.umbra) + sign * g.moon
        chord = norm(g.chord)
        drate = _dot(g.chord, g.chord_rate) / chord
        step = -(g.distance - r) / drate
        # keep each iterate on its own side of greatest eclipse
        step = np.clip(step, -0.1, 0.1)
        t[active] += step
        active = active[np.abs(step) * DAY_S >= TOLERANCE_S]
    if active.size:
        raise CalendraError(f"lunar eclipses: contact {which} did not converge near JD {t[active[0]]:.4f} TT")
    out[idx] = t
    return out


@dataclass
class LunarEclipses:
    """Lunar eclipses in time order (arrays of equal length).

    Attributes
    ----------
    jd_tt : ndarray
        Greatest eclipse, Julian Day TT.
    kind : ndarray of int
        0 penumbral, 1 partial, 2 total (:data:`LUNAR_TYPES`).
    lunation : ndarray of int
        Meeus' lunation number of the lunation of the full moon (canon "Luna Num";
        Brown's number is this + 953).
    saros : ndarray of int
        Saros series (the canon's numbering, see :mod:`.common`).
    gamma : ndarray
        Earth equatorial radii, positive north.
    penumbral_magnitude, umbral_magnitude : ndarray
        Fractions of the Moon's diameter.
    contacts : dict of str -> ndarray
        ``P1 U1 U2 U3 U4 P4`` as Julian Days TT, NaN where a contact does not occur.
    moon_ra_deg, moon_dec_deg : ndarray
        Apparent right ascension and declination of the Moon at greatest eclipse, true
        equator and equinox of date, degrees (the Moon is at the zenith of latitude = dec).
    moon_distance_km : ndarray
    shadow : str
        Enlargement rule.
    """

    jd_tt: np.ndarray
    kind: np.ndarray
    lunation: np.ndarray
    saros: np.ndarray
    gamma: np.ndarray
    penumbral_magnitude: np.ndarray
    umbral_magnitude: np.ndarray
    contacts: dict
    moon_ra_deg: np.ndarray
    moon_dec_deg: np.ndarray
    moon_distance_km: np.ndarray
    shadow: str = DEFAULT_SHADOW
    meta: dict = field(default_factory=dict)

    def __len__(self):
        return int(self.jd_tt.size)

    @property
    def type_names(self) -> np.ndarray:
        return np.array(LUNAR_TYPES)[self.kind]

    def durations_min(self) -> dict:
        """Penumbral, partial (umbral) and total durations in minutes (NaN where none)."""
        c = self.contacts
        return {"penumbral": (c["P4"] - c["P1"]) * 1440.0, "partial": (c["U4"] - c["U1"]) * 1440.0,
                "total": (c["U3"] - c["U2"]) * 1440.0}

    def select(self, mask) -> "LunarEclipses":
        return LunarEclipses(self.jd_tt[mask], self.kind[mask], self.lunation[mask], self.saros[mask],
                             self.gamma[mask], self.penumbral_magnitude[mask], self.umbral_magnitude[mask],
                             {k: v[mask] for k, v in self.contacts.items()}, self.moon_ra_deg[mask],
                             self.moon_dec_deg[mask], self.moon_distance_km[mask], self.shadow, dict(self.meta))


def lunar_eclipses(jd_tt_start, jd_tt_end, *, shadow: str = DEFAULT_SHADOW, progress=None) -> LunarEclipses:
    """Find every lunar eclipse whose greatest eclipse lies in ``[start, end)``.

    Parameters
    ----------
    jd_tt_start, jd_tt_end : float
        Julian Days, TT, within DE406.
    shadow : {'danjon', 'chauvenet', 'none'}
        Shadow-enlargement rule (module docstring).
    progress : callable or None
        ``progress(done, total, label)``.

    Returns
    -------
    LunarEclipses
        In time order.

    Examples
    --------
    >>> e = lunar_eclipses(2450700.5, 2450720.5)       # doctest: +SKIP
    >>> e.type_names[0], round(float(e.umbral_magnitude[0]), 3)   # doctest: +SKIP
    ('total', 1.19)
    """
    from calendra.lunations import lunar_phases

    check_shadow(shadow)
    lo, hi = span_tt()
    start, end = max(float(jd_tt_start), lo), min(float(jd_tt_end), hi)
    if not end > start:
        raise ParameterError("the end of the range must come after its start")
    if progress:
        progress(0, 4, "lunar eclipses: full moons")
    full = lunar_phases(max(start - 1.0, lo), min(end + 1.0, hi), "full")
    g = shadow_geometry(full.jd_tt, shadow)
    near = g.distance < g.penumbra + g.moon + math.radians(0.3)
    t = full.jd_tt[near]
    lunation = full.lunation[near]
    if progress:
        progress(1, 4, "lunar eclipses: greatest eclipse")
    t = _greatest(t, shadow)
    g = shadow_geometry(t, shadow)
    pen_mag = (g.penumbra + g.moon - g.distance) / (2.0 * g.moon)
    keep = (pen_mag > 0) & (t >= start) & (t < end)
    t, lunation = t[keep], lunation[keep]
    g = shadow_geometry(t, shadow)
    pen_mag = (g.penumbra + g.moon - g.distance) / (2.0 * g.moon)
    umb_mag = (g.umbra + g.moon - g.distance) / (2.0 * g.moon)
    kind = np.where(umb_mag >= 1.0, 2, np.where(umb_mag > 0.0, 1, 0))
    orient = Orientation(t)
    pole = orient.true[:, 2, :].T
    antisolar = -g.sun_km / norm(g.sun_km)
    north = pole - antisolar * _dot(pole, antisolar)
    rm = norm(g.moon_km)
    gamma = rm * np.sin(g.distance) / EARTH_RADIUS_KM * np.sign(_dot(g.chord, north))
    if progress:
        progress(2, 4, "lunar eclipses: contacts")
    rate = norm(g.chord_rate)
    contacts = {}
    for name in CONTACT_ORDER:
        kind_c, sign, _ = CONTACTS[name]
        r0 = (g.penumbra if kind_c == "pen" else g.umbra) + sign * g.moon
        contacts[name] = _contact(t, g.distance, rate, r0, name, shadow)
    true_m = np.einsum("nij,jn->in", orient.true, g.moon_km)
    ra = np.degrees(np.arctan2(true_m[1], true_m[0])) % 360.0
    dec = np.degrees(np.arcsin(true_m[2] / rm))
    saros, _ = saros_numbers(lunation, LUNAR_SAROS_ANCHOR)
    if progress:
        progress(4, 4, "lunar eclipses")
    order = np.argsort(t, kind="stable")
    out = LunarEclipses(t, kind, lunation, saros, gamma, pen_mag, umb_mag, contacts, ra, dec, rm, shadow)
    return out.select(order)


def nearest_lunar_eclipse(jd_tt, *, shadow: str = DEFAULT_SHADOW) -> LunarEclipses:
    """The lunar eclipse whose greatest eclipse is nearest ``jd_tt`` (a one-row table).

    Parameters
    ----------
    jd_tt : float
        Julian Day, TT.
    shadow : str
        Shadow-enlargement rule.
    """
    lo, hi = span_tt()
    for half in (200.0, 400.0):
        found = lunar_eclipses(max(jd_tt - half, lo), min(jd_tt + half, hi), shadow=shadow)
        if len(found):
            return found.select(np.array([int(np.argmin(np.abs(found.jd_tt - jd_tt)))]))
    raise CalendraError(f"no lunar eclipse found near JD {jd_tt:.1f} TT")
