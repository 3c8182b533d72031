"""Oppositions, conjunctions with the Sun and greatest elongations, -3000..3000 as array jobs.

Definitions (Meeus, *Astronomical Algorithms*, 2nd ed., 1998, ch. 36; the almanac ones)
----------------------------------------------------------------------------------------
* **Opposition** of a superior planet: its apparent geocentric ecliptic
  longitude of date exceeds the Sun's by 180 degrees.
* **Conjunction** with the Sun: the two longitudes are equal.  For Mercury
  and Venus it is *inferior* when the planet is nearer than the Sun,
  *superior* when it is beyond.  Inferior planets are never in opposition.
* **Greatest elongation** (eastern: evening star; western: morning star) of
  Mercury and Venus: a maximum of the angular distance between the
  apparent planet and the apparent Sun (the angle itself, as in Meeus ch. 36,
  not its projection on the ecliptic).

Method
------
1. The cheap predictor (:mod:`calendra_planets.kepler`): the synodic cycle
   numbers the alignments, two-body orbits from mean elements place them
   (within a day or so).
2. Vectorised Newton steps on the DE406 elongation in longitude,
   ``atan2(n·(s×p), s·p - (n·s)(n·p))`` for the apparent Sun ``s``,
   planet ``p`` and ecliptic pole of date ``n`` (as for the lunar phases,
   :mod:`calendra.lunations`; nutation cancels in the difference), with its
   rate from the ephemeris velocities (:func:`calendra.solarterms.newton_refine`).
3. Greatest elongations are bracketed between consecutive conjunctions
   (the elongation grows after one and shrinks before the next) and found by
   safeguarded Newton steps (:mod:`calendra_planets.solver`) on the rate of
   the angle, with its derivative from rates half a minute either side.

Time scales: every ``jd_tt`` is a Julian Day in TT.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from calendra.solarterms import DEFAULT_PRECESSION

from . import kepler
from .states import INFERIOR, PLANETS, apparent, check_body, dot, unit, unit_rate

#: Kinds of the alignments with the Sun.
OPPOSITION = "opposition"
CONJUNCTION = "conjunction"
INFERIOR_CONJUNCTION = "inferior-conjunction"
SUPERIOR_CONJUNCTION = "superior-conjunction"
EASTERN = "greatest-eastern-elongation"
WESTERN = "greatest-western-elongation"
#: Newton tolerance on alignments, seconds.
TOLERANCE_S = 0.1
#: Half-width of the central difference of the elongation rate, days.
_H = 0.0003


class Phenomena(NamedTuple):
    """Phenomena of one planet, parallel arrays in time order.

    Attributes
    ----------
    body : ndarray of str
    jd_tt : ndarray of float
        Julian Days, TT.
    kind : ndarray of str
    longitude_deg, latitude_deg : ndarray
        Apparent geocentric ecliptic coordinates of date of the planet, degrees.
    elongation_deg : ndarray
        Angle between the planet and the Sun, degrees (0..180).
    distance_au : ndarray
        Geocentric distance, au.
    magnitude : ndarray
        V magnitude (Mallama & Hilton 2018); NaN where the formula does not apply.
    """

    body: np.ndarray
    jd_tt: np.ndarray
    kind: np.ndarray
    longitude_deg: np.ndarray
    latitude_deg: np.ndarray
    elongation_deg: np.ndarray
    distance_au: np.ndarray
    magnitude: np.ndarray


def _planet_and_sun(body, jd, with_sun_vector=False):
    return apparent(body, jd, with_sun_vector), apparent("sun", jd)


def elongation_in_longitude(body: str, jd_tt, precession: str = DEFAULT_PRECESSION):
    """Apparent longitude of the planet minus the Sun's (rad, in (-pi, pi]) and its rate (rad/day).

    Parameters
    ----------
    body : str
        A planet.
    jd_tt : ndarray
        Julian Days, TT (1-D).
    precession : {'vondrak2011', 'iau2006'}

    The rate is that of the geometric directions (it steers Newton steps; the
    rate of the apparent ones differs by up to 4"/day for Mercury).
    """
    from calendra.solarterms import ecliptic_pole

    (p, vp), (s, vs) = apparent(body, jd_tt, exact_rate=False), apparent("sun", jd_tt, exact_rate=False)
    n = ecliptic_pole(np.asarray(jd_tt, dtype=np.float64).reshape(-1), precession)
    np_, ns = dot(n, p), dot(n, s)
    elong = np.arctan2(dot(n, np.cross(s, p, axis=0)), dot(s, p) - ns * np_)
    rate_p = dot(n, np.cross(p, vp, axis=0)) / (dot(p, p) - np_ * np_)
    rate_s = dot(n, np.cross(s, vs, axis=0)) / (dot(s, s) - ns * ns)
    return elong, rate_p - rate_s


def _elongation_and_rate(body, jd):
    """Angle planet-Sun (rad) and its rate (rad/day)."""
    (p, vp), (s, vs) = _planet_and_sun(body, jd)
    up, us = unit(p), unit(s)
    c = dot(up, us)
    sn = np.sqrt(np.maximum(1.0 - c * c, 1e-30))
    dc = dot(unit_rate(p, vp), us) + dot(up, unit_rate(s, vs))
    return np.arctan2(sn, c), -dc / sn


def _elongation_rate_newton(body):
    def evaluate(t):
        _, a = _elongation_and_rate(body, t - _H)
        _, b = _elongation_and_rate(body, t + _H)
        return 0.5 * (a + b), (b - a) / (2 * _H)
    return evaluate


def describe(body: str, jd_tt, kind, precession: str = DEFAULT_PRECESSION) -> Phenomena:
    """Positions, elongation, distance and magnitude of a planet at given instants.

    Parameters
    ----------
    body : str
    jd_tt : ndarray
        Julian Days, TT.
    kind : ndarray of str
        Kind of each event (copied into the result).
    precession : {'vondrak2011', 'iau2006'}
    """
    from .magnitude import magnitude
    from .states import AU_KM, ecliptic_of_date, separation

    jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
    if jd.size == 0:
        e = np.empty(0)
        return Phenomena(np.empty(0, dtype=object), e, np.empty(0, dtype=object), e, e, e, e, e)
    (p, _, sun_to_p), (s, _) = _planet_and_sun(body, jd, with_sun_vector=True)
    lon, lat = ecliptic_of_date(p, jd, precession)
    mag, _ = magnitude(body, sun_to_p, p, jd)
    return Phenomena(np.full(jd.size, body, dtype=object), jd, np.asarray(kind, dtype=object),
                     np.degrees(lon) % 360.0, np.degrees(lat), np.degrees(separation(unit(p), unit(s))),
                     np.sqrt(dot(p, p)) / AU_KM, mag)


def _concat(parts) -> Phenomena:
    parts = [p for p in parts if p.jd_tt.size]
    if not parts:
        return describe("mars", np.empty(0), np.empty(0))
    joined = Phenomena(*(np.concatenate(cols) for cols in zip(*parts)))
    order = np.argsort(joined.jd_tt, kind="stable")
    return Phenomena(*(c[order] for c in joined))


def alignment_times(body: str, jd_tt_start: float, jd_tt_end: float, *, precession=DEFAULT_PRECESSION,
                    margin_days: float = 0.0, progress=None):
    """Instants of a planet's conjunctions and oppositions with the Sun.

    Parameters
    ----------
    body : str
        A planet.
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT); events up to ``margin_days`` outside are kept
        (where DE406 reaches).
    precession : {'vondrak2011', 'iau2006'}
    margin_days : float
    progress : callable or None

    Returns
    -------
    jd_tt : ndarray
        In time order.
    kind : ndarray of str
        :data:`OPPOSITION` / :data:`CONJUNCTION` (superior planets),
        :data:`INFERIOR_CONJUNCTION` / :data:`SUPERIOR_CONJUNCTION` (Mercury, Venus).
    """
    from calendra.errors import CalendraError
    from calendra.ephemeris import SPAN_JD
    from calendra.solarterms import newton_refine

    body = check_body(body, PLANETS)
    inferior = body in INFERIOR
    times, kinds, targets = [], [], []
    for helio, geo, kind in ((0.0, 0.0 if inferior else math.pi, INFERIOR_CONJUNCTION if inferior else OPPOSITION),
                             (180.0, 0.0, SUPERIOR_CONJUNCTION if inferior else CONJUNCTION)):
        t = kepler.predict_alignments(body, jd_tt_start, jd_tt_end, helio, margin_days + 5.0)
        t = t[(t > SPAN_JD[0]) & (t < SPAN_JD[1])]
        times.append(t)
        kinds.append(np.full(t.size, kind, dtype=object))
        targets.append(np.full(t.size, geo))
    t0, kind, target = (np.concatenate(x) for x in (times, kinds, targets))

    def evaluate(jd):
        return elongation_in_longitude(body, jd, precession)

    t, residual = newton_refine(t0, target, evaluate, tolerance_s=TOLERANCE_S, progress=progress,
                                label=f"{body} conjunctions", lo=SPAN_JD[0], hi=SPAN_JD[1])
    jump = np.isfinite(residual) & (np.abs(t - t0) > 10.0)
    if np.any(jump):
        raise CalendraError(f"{body} conjunctions: a Newton iteration left its event (first near JD "
                            f"{t0[jump][0]:.3f} TT)")
    keep = np.isfinite(residual) & (t >= jd_tt_start - margin_days) & (t < jd_tt_end + margin_days)
    order = np.argsort(t[keep], kind="stable")
    return t[keep][order], kind[keep][order]


def solar_alignments(body: str, jd_tt_start: float, jd_tt_end: float, *, precession=DEFAULT_PRECESSION,
                     progress=None) -> Phenomena:
    """Conjunctions and oppositions of a planet with the Sun in ``[start, end)``.

    Parameters
    ----------
    body : str
        A planet.
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT).
    precession : {'vondrak2011', 'iau2006'}
    progress : callable or None

    Returns
    -------
    Phenomena
    """
    t, kind = alignment_times(body, jd_tt_start, jd_tt_end, precession=precession, progress=progress)
    return describe(body, t, kind, precession)


def greatest_elongations(body: str, jd_tt_start: float, jd_tt_end: float, *,
                         precession=DEFAULT_PRECESSION, progress=None) -> Phenomena:
    """Greatest eastern and western elongations of Mercury or Venus in ``[start, end)``.

    Parameters
    ----------
    body : {'mercury', 'venus'}
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT).
    precession : {'vondrak2011', 'iau2006'}
    progress : callable or None

    Returns
    -------
    Phenomena
        ``elongation_deg`` is the greatest elongation.
    """
    from calendra.errors import CalendraError

    from .solver import bracketed_newton

    body = check_body(body, INFERIOR)
    syn = kepler.SYNODIC_DAYS[body]
    t, kind = alignment_times(body, jd_tt_start, jd_tt_end, precession=precession,
                              margin_days=0.6 * syn, progress=progress)
    a, b = t[:-1], t[1:]
    first = kind[:-1]
    length = b - a
    from_sup = first == SUPERIOR_CONJUNCTION
    # The elongation rises for a while after a conjunction and falls for a while before the next
    # (the long side is the one next to the superior conjunction).
    lo = a + np.where(from_sup, 0.15, 0.10) * length
    hi = b - np.where(from_sup, 0.10, 0.15) * length
    guess = np.where(from_sup, b - 0.38 * length, a + 0.38 * length)
    root, ok = bracketed_newton(_elongation_rate_newton(body), lo, hi, guess, tolerance_days=1e-5,
                                progress=progress, label=f"{body} elongations")
    if not np.all(ok):
        raise CalendraError(f"{body} elongations: no maximum bracketed near JD {a[~ok][0]:.2f} TT")
    kinds = np.where(from_sup, EASTERN, WESTERN).astype(object)
    keep = (root >= jd_tt_start) & (root < jd_tt_end)
    return describe(body, root[keep], kinds[keep], precession)
