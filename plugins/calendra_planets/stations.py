"""Stations and retrograde loops of Mercury, Venus, Mars, Jupiter and Saturn, -3000..3000.

Definition
----------
A planet is *stationary* when its apparent geocentric ecliptic longitude of
date (light time, aberration, precession and nutation: the almanac
longitude) stops changing.  At the *retrograde station* (Ptolemy's first
station) the motion turns from direct (eastward) to retrograde; at the
*direct station* (the second) back to direct.  The retrograde loop runs from
one to the other; its *arc* is the longitude travelled backwards.

Method
------
The synodic cycle brackets every station: a superior planet moves direct
at its conjunction with the Sun and retrograde at opposition, an inferior
planet direct at its superior and retrograde at its inferior conjunction, so
the retrograde station lies between a conjunction and the following
opposition (inferior conjunction), the direct station between that and the
next conjunction -- exactly one in each (:func:`phenomena.alignment_times`
finds the brackets).

The first guess is the station offset of the synodic cycle on circular,
coplanar orbits (the classical result known since Apollonius): with the
planet at distance ``a`` (au) the heliocentric angle between the planet and
the Earth at a station is ``psi`` with ``cos psi = (a + sqrt a) / (a^1.5 + 1)``,
and the station lies ``psi`` divided by the mean relative heliocentric
motion before (retrograde) or after (direct) the opposition or inferior
conjunction: 11.5 days for Mercury, 21 for Venus, 36 for Mars, 60 for
Jupiter, 69 for Saturn.

Safeguarded Newton steps (:func:`solver.bracketed_newton`) then solve
``dlambda/dt = 0`` on DE406: the rate of the longitude of date is the
central difference of the mean-ecliptic longitude over +-``h`` (which holds
the motion of the equinox of date) plus the analytic rate of the nutation
in longitude; its derivative is the central difference of the geometric
rates from the ephemeris velocities.  Every step stays within its bracket.
(The nutation rate, the costliest term, is recomputed only while an iterate
still moves by more than 2e-3 day.)

Another position source
-----------------------
:func:`find_stations` also takes any *position source* in the sense of
:mod:`calendra_geocentric.stations`: a callable ``longitude_deg(jd_tt:
ndarray) -> ndarray`` (geocentric ecliptic longitude in degrees, any
branch, vectorised; optional attributes ``name`` and ``body``), e.g.
``calendra_geocentric.stations.model_source("mars")``.  Its rate and
acceleration are then central differences over +-``source_step_days``; the
brackets still come from DE406 (a model's stations must lie between the
real conjunction and opposition, which holds for any usable model), and a
bracket in which the source shows no change of sense gives no station.

Time scales: every ``jd_tt`` is a Julian Day in TT.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from calendra.solarterms import DEFAULT_PRECESSION

from . import kepler
from .phenomena import INFERIOR_CONJUNCTION, OPPOSITION, alignment_times
from .states import (INFERIOR, PLANETS, apparent, check_body, ecliptic_of_date, longitude_rate,
                     nutation_longitude_and_rate)

STATION_RETROGRADE = "station-retrograde"
STATION_DIRECT = "station-direct"
#: Half-width of the central differences on DE406, days.
_H = 0.02
#: The nutation rate of an iterate is reused while it moves less than this, days.
_NUTATION_REUSE_DAYS = 2e-3
#: Stop when the last step is under this, days (0.09 s).
TOLERANCE_DAYS = 1e-6


class Stations(NamedTuple):
    """Stations of planets, parallel arrays in time order.

    Attributes
    ----------
    body : ndarray of str
    jd_tt : ndarray of float
        Julian Days, TT.
    kind : ndarray of str
        :data:`STATION_RETROGRADE` or :data:`STATION_DIRECT`.
    longitude_deg, latitude_deg : ndarray
        Apparent geocentric ecliptic coordinates of date at the station, degrees
        (for another position source: its longitude, and NaN latitudes).
    """

    body: np.ndarray
    jd_tt: np.ndarray
    kind: np.ndarray
    longitude_deg: np.ndarray
    latitude_deg: np.ndarray


class RetrogradeLoops(NamedTuple):
    """Retrograde loops: from a retrograde station to the next direct station.

    Attributes
    ----------
    body : ndarray of str
    start_jd_tt, end_jd_tt : ndarray
        The two stations, TT.
    duration_days : ndarray
    arc_deg : ndarray
        Longitude travelled backwards, degrees (positive).
    start_longitude_deg, end_longitude_deg : ndarray
        Longitudes of the two stations, degrees.
    """

    body: np.ndarray
    start_jd_tt: np.ndarray
    end_jd_tt: np.ndarray
    duration_days: np.ndarray
    arc_deg: np.ndarray
    start_longitude_deg: np.ndarray
    end_longitude_deg: np.ndarray


def station_offset_days(body: str) -> float:
    """Days from a station to the opposition (inferior conjunction) on circular coplanar orbits.

    ``cos psi = (a + sqrt a) / (a^1.5 + 1)`` for the heliocentric angle
    ``psi`` between planet and Earth, divided by the mean relative motion.
    """
    a = kepler.ELEMENTS[body][0][0]
    psi = math.degrees(math.acos((a + math.sqrt(a)) / (a ** 1.5 + 1.0)))
    rel = abs(kepler.mean_motion_deg_per_day(body) - kepler.mean_motion_deg_per_day("earth"))
    return psi / rel


def _wrap(x):
    return (x + math.pi) % (2.0 * math.pi) - math.pi


def _de406_rate(body, precession, n_roots):
    """evaluate(t, k) -> (rate of the apparent longitude of date, its derivative), rad/day and rad/day^2.

    The nutation rate of root ``k`` is kept while its iterate moves by less than
    :data:`_NUTATION_REUSE_DAYS` (the rate then changes by under 1e-4"/day).
    """
    from calendra.solarterms import ecliptic_axes

    cache_t = np.full(n_roots, np.nan)
    cache_rate = np.zeros(n_roots)

    def evaluate(t, k):
        both = np.concatenate([t - _H, t + _H])
        r, v = apparent(body, both, exact_rate=False)      # v only steers the steps
        axes = ecliptic_axes(both, precession)
        lon, _ = ecliptic_of_date(r, both, precession, nutation=False, axes=axes)
        w = longitude_rate(r, v, axes)
        n = t.size
        stale = ~(np.abs(t - cache_t[k]) < _NUTATION_REUSE_DAYS)
        if np.any(stale):
            cache_rate[k[stale]] = nutation_longitude_and_rate(t[stale])[1]
            cache_t[k[stale]] = t[stale]
        rate = _wrap(lon[n:] - lon[:n]) / (2 * _H) + cache_rate[k]
        return rate, (w[n:] - w[:n]) / (2 * _H)
    return evaluate


def _source_rate(source, h):
    def evaluate(t):
        lam = np.radians(np.asarray(source(np.concatenate([t - h, t, t + h])), dtype=np.float64))
        n = t.size
        a, b, c = lam[:n], lam[n:2 * n], lam[2 * n:]
        return _wrap(c - a) / (2 * h), (_wrap(c - b) - _wrap(b - a)) / (h * h)
    return evaluate


def find_stations(body: str, jd_tt_start: float, jd_tt_end: float, *, source=None,
                  source_step_days: float = 0.05, precession: str = DEFAULT_PRECESSION,
                  progress=None) -> Stations:
    """Find every station of a planet in ``[start, end)``.

    Parameters
    ----------
    body : str
        ``mercury``, ``venus``, ``mars``, ``jupiter`` or ``saturn``.
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT), within DE406.
    source : callable or None
        Another position source ``longitude_deg(jd_tt) -> degrees`` (see the
        module docstring); None for DE406 (apparent, ecliptic of date).
    source_step_days : float
        Half-width of the central differences on ``source``, days.
    precession : {'vondrak2011', 'iau2006'}
    progress : callable or None
        ``progress(done, total, label)``.

    Returns
    -------
    Stations
        In time order.
    """
    from calendra.errors import ParameterError

    from .solver import bracketed_newton

    body = check_body(body, PLANETS)
    if source is not None and not callable(source):
        raise ParameterError("a position source must be callable: longitude_deg(jd_tt) -> degrees")
    if not source_step_days > 0:
        raise ParameterError("source_step_days must be positive")
    syn = kepler.SYNODIC_DAYS[body]
    t, kind = alignment_times(body, jd_tt_start, jd_tt_end, precession=precession, margin_days=0.6 * syn,
                              progress=progress)
    turning = OPPOSITION if body not in INFERIOR else INFERIOR_CONJUNCTION
    mid = np.nonzero(kind == turning)[0]
    mid = mid[(mid > 0) & (mid < t.size - 1)]
    centre = t[mid]
    off = station_offset_days(body)
    lo = np.concatenate([t[mid - 1], centre])
    hi = np.concatenate([centre, t[mid + 1]])
    guess = np.concatenate([np.maximum(centre - off, 0.5 * (t[mid - 1] + centre)),
                            np.minimum(centre + off, 0.5 * (centre + t[mid + 1]))])
    kinds = np.concatenate([np.full(mid.size, STATION_RETROGRADE, dtype=object),
                            np.full(mid.size, STATION_DIRECT, dtype=object)])
    if source is None:
        evaluate = _de406_rate(body, precession, lo.size)
        sign_lo = np.where(kinds == STATION_RETROGRADE, 1.0, -1.0)
        with_index = True
    else:
        evaluate = _source_rate(source, source_step_days)
        sign_lo, with_index = None, False
    root, ok = bracketed_newton(evaluate, lo, hi, guess, tolerance_days=TOLERANCE_DAYS, progress=progress,
                                label=f"{body} stations", sign_lo=sign_lo, with_index=with_index)
    keep = ok & (root >= jd_tt_start) & (root < jd_tt_end)
    root, kinds = root[keep], kinds[keep]
    order = np.argsort(root, kind="stable")
    root, kinds = root[order], kinds[order]
    if source is None:
        r, _ = apparent(body, root) if root.size else (np.empty((3, 0)), None)
        lon, lat = ecliptic_of_date(r, root, precession) if root.size else (np.empty(0), np.empty(0))
        lon, lat = np.degrees(lon) % 360.0, np.degrees(lat)
    else:
        lon = np.mod(np.asarray(source(root), dtype=np.float64), 360.0) if root.size else np.empty(0)
        lat = np.full(root.size, np.nan)
    return Stations(np.full(root.size, body, dtype=object), root, kinds, lon, lat)


def retrograde_loops(stations: Stations) -> RetrogradeLoops:
    """Pair each retrograde station with the next direct station of the same planet.

    A retrograde station without its direct station in the table (at the end
    of the range), or a direct station without its retrograde one, is left out.
    """
    parts = []
    for body in dict.fromkeys(np.asarray(stations.body).tolist()):
        sel = np.nonzero(np.asarray(stations.body) == body)[0]
        kind = np.asarray(stations.kind)[sel]
        first = np.nonzero(kind[:-1] == STATION_RETROGRADE)[0]
        first = first[kind[first + 1] == STATION_DIRECT]
        i, j = sel[first], sel[first + 1]
        t0, t1 = stations.jd_tt[i], stations.jd_tt[j]
        l0, l1 = stations.longitude_deg[i], stations.longitude_deg[j]
        parts.append((np.full(i.size, body, dtype=object), t0, t1, t1 - t0, np.mod(l0 - l1, 360.0), l0, l1))
    if not parts:
        e = np.empty(0)
        return RetrogradeLoops(np.empty(0, dtype=object), e, e, e, e, e, e)
    return RetrogradeLoops(*(np.concatenate(c) for c in zip(*parts)))


def concat_stations(tables) -> Stations:
    """Join station tables (several planets) in time order."""
    tables = [s for s in tables if s.jd_tt.size]
    if not tables:
        e = np.empty(0)
        return Stations(np.empty(0, dtype=object), e, np.empty(0, dtype=object), e, e)
    joined = Stations(*(np.concatenate(c) for c in zip(*tables)))
    order = np.argsort(joined.jd_tt, kind="stable")
    return Stations(*(c[order] for c in joined))
