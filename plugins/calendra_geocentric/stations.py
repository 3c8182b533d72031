"""Stations and retrograde arcs over any source of longitudes.

The position-source interface
-----------------------------
A *position source* is any callable

    longitude_deg(jd_tt: numpy.ndarray) -> numpy.ndarray

taking Julian Days in TT (a 1-D float array) and returning the geocentric
ecliptic longitude of one body in degrees (any branch: the finder unwraps
differences itself), elementwise and vectorized.  It may carry the
attributes ``name`` (short text for provenance) and ``body``.
:func:`model_source` (the Almagest models) and :func:`de406_source` (DE406,
apparent, ecliptic of date) build the two sources this package compares; a
station detector elsewhere can accept either, or any other source with the
same signature.

The finder
----------
:func:`find_stations` samples the source over the span as arrays (daily by
default), forms the longitude sense of motion from the differences of successive samples, finds where it
changes, and refines every bracket at once by bisection on the rate (central
differences).  A step must be under half the shortest retrograde
or direct run (Mercury retrogrades about three weeks), so one day is safe for
every planet; the Sun and the Moon give no stations.
"""

from __future__ import annotations

from typing import Callable, NamedTuple

import numpy as np

from ._common import wrap180

#: Kind of a station where direct motion turns retrograde (Ptolemy's first station).
STATION_RETROGRADE = "station-retrograde"
#: Kind of a station where retrograde motion turns direct (the second station).
STATION_DIRECT = "station-direct"

LongitudeSource = Callable[[np.ndarray], np.ndarray]

#: Samples evaluated per call of the source.
_BLOCK = 100_000


class Stations(NamedTuple):
    """Stations found: parallel arrays, in time order."""

    jd_tt: np.ndarray          #: Julian Days, TT
    kind: np.ndarray           #: STATION_RETROGRADE or STATION_DIRECT
    longitude_deg: np.ndarray  #: longitude of the station, degrees (the source's frame)


class RetrogradeArcs(NamedTuple):
    """Retrograde runs: from a retrograde station to the next direct station."""

    start_jd_tt: np.ndarray     #: the first station, TT
    end_jd_tt: np.ndarray       #: the second station, TT
    duration_days: np.ndarray
    arc_deg: np.ndarray         #: longitude travelled backwards, degrees (positive)
    start_longitude_deg: np.ndarray
    end_longitude_deg: np.ndarray


def model_source(body: str, deltat=None) -> LongitudeSource:
    """Return the Almagest model of ``body`` as a position source (see the module docstring)."""
    from .compare import _check_body, model_position

    body = _check_body(body)

    def longitude_deg(jd_tt):
        return model_position(body, jd_tt, deltat)[0]

    longitude_deg.name = f"Almagest model ({body})"
    longitude_deg.body = body
    return longitude_deg


def de406_source(body: str, deltat=None) -> LongitudeSource:
    """Return DE406 (apparent geocentric ecliptic longitude of date) of ``body`` as a position source."""
    from .compare import _check_body, de406_position

    body = _check_body(body)

    def longitude_deg(jd_tt):
        return de406_position(body, jd_tt, deltat)[0]

    longitude_deg.name = f"DE406 apparent ({body})"
    longitude_deg.body = body
    return longitude_deg


def _rate(source, jd, h):
    """Central-difference longitude rate, degrees per day, at ``jd`` (1-D)."""
    both = source(np.concatenate([jd - h, jd + h]))
    n = jd.size
    return wrap180(both[n:] - both[:n]) / (2.0 * h)


def find_stations(longitude_deg: LongitudeSource, jd_tt_start: float, jd_tt_end: float,
                  step_days: float = 1.0, tolerance_days: float = 1e-4,
                  rate_step_days: float = 0.01, progress=None) -> Stations:
    """Find the stations of a position source between two instants.

    Parameters
    ----------
    longitude_deg : callable
        ``longitude_deg(jd_tt: ndarray) -> ndarray`` (degrees), see the module docstring.
    jd_tt_start, jd_tt_end : float
        The span, Julian Days in TT.
    step_days : float
        Sampling step, days (under half the shortest retrograde run).
    tolerance_days : float
        Width of the final bracket of each station, days.
    rate_step_days : float
        Half-width of the central difference giving the rate, days.
    progress : callable(done, total, label) or None
        Called after each block of samples.

    Returns
    -------
    Stations
        In time order; empty arrays if the body never stops.
    """
    from calendra.errors import ParameterError

    if not step_days > 0 or not tolerance_days > 0 or not rate_step_days > 0:
        raise ParameterError("station search: step_days, tolerance_days and rate_step_days must be positive")
    if not jd_tt_end > jd_tt_start:
        raise ParameterError("station search: the end of the range must come after its start")
    n = int(np.floor((jd_tt_end - jd_tt_start) / step_days)) + 1
    jd = jd_tt_start + step_days * np.arange(n)
    lam = np.empty(n)
    for lo in range(0, n, _BLOCK):
        lam[lo:lo + _BLOCK] = longitude_deg(jd[lo:lo + _BLOCK])
        if progress is not None:
            progress(min(lo + _BLOCK, n), n, "sampling")
    # the sense of motion over each step, taken as the rate at the step's middle
    forward = wrap180(np.diff(lam)) > 0
    middle = jd[:-1] + 0.5 * step_days
    idx = np.nonzero(forward[:-1] != forward[1:])[0]
    a, b = middle[idx], middle[idx + 1]
    turns_back = forward[idx]                 # direct before the bracket: motion turns retrograde
    if a.size:
        # a chord's sign can differ from the rate at its middle when a station lies
        # right there: widen such brackets by one step so both ends hold the right sense
        a = np.where((_rate(longitude_deg, a, rate_step_days) > 0) != turns_back, a - step_days, a)
        b = np.where((_rate(longitude_deg, b, rate_step_days) > 0) == turns_back, b + step_days, b)
    while a.size and np.max(b - a) > tolerance_days:
        mid = 0.5 * (a + b)
        fwd_mid = _rate(longitude_deg, mid, rate_step_days) > 0
        # the station lies in [a, mid] if the motion at mid already has the later sense
        left = fwd_mid != turns_back
        b = np.where(left, mid, b)
        a = np.where(left, a, mid)
    t = 0.5 * (a + b)
    kinds = np.where(turns_back, STATION_RETROGRADE, STATION_DIRECT)
    lon = np.mod(longitude_deg(t), 360.0) if t.size else np.empty(0)
    return Stations(t, kinds.astype(object), lon)


def retrograde_arcs(stations: Stations) -> RetrogradeArcs:
    """Pair each retrograde station with the next direct station.

    A retrograde station at the end of the span without its direct station
    (or a direct station at the start) is left out.
    """
    kind = np.asarray(stations.kind)
    first = np.nonzero(kind[:-1] == STATION_RETROGRADE)[0]
    first = first[kind[first + 1] == STATION_DIRECT]
    second = first + 1
    t0, t1 = stations.jd_tt[first], stations.jd_tt[second]
    l0, l1 = stations.longitude_deg[first], stations.longitude_deg[second]
    return RetrogradeArcs(t0, t1, t1 - t0, np.mod(l0 - l1, 360.0), l0, l1)


def match_stations(reference: Stations, other: Stations, max_days: float | None = None):
    """For each station of ``reference``, the nearest station of the same kind in ``other``.

    Parameters
    ----------
    reference, other : Stations
    max_days : float or None
        Matches farther than this are reported as missing.

    Returns
    -------
    ndarray of int
        Index into ``other`` for each reference station, -1 where none matches.
    """
    out = np.full(reference.jd_tt.size, -1, dtype=np.int64)
    for kind in (STATION_RETROGRADE, STATION_DIRECT):
        ref = np.nonzero(np.asarray(reference.kind) == kind)[0]
        cand = np.nonzero(np.asarray(other.kind) == kind)[0]
        if not ref.size or not cand.size:
            continue
        tc = other.jd_tt[cand]
        pos = np.clip(np.searchsorted(tc, reference.jd_tt[ref]), 1, tc.size - 1) if tc.size > 1 \
            else np.zeros(ref.size, dtype=np.int64)
        if tc.size > 1:
            left = pos - 1
            nearer_left = np.abs(tc[left] - reference.jd_tt[ref]) <= np.abs(tc[pos] - reference.jd_tt[ref])
            pos = np.where(nearer_left, left, pos)
        chosen = cand[pos]
        if max_days is not None:
            chosen = np.where(np.abs(other.jd_tt[chosen] - reference.jd_tt[ref]) <= max_days, chosen, -1)
        out[ref] = chosen
    return out
