"""Lunar phases and lunation numbers over the whole span of DE406 (-3000 to +3000).

Definition
----------
New moon, first quarter, full moon and last quarter are the moments the
apparent geocentric ecliptic longitude of the Moon minus that of the Sun
is 0, 90, 180 and 270 degrees (Meeus, *Astronomical Algorithms*, 2nd ed.,
1998, ch. 49; the almanac definition).

Frame and corrections
---------------------
* **No nutation.**  Nutation turns the true equinox along the ecliptic of
  date, so it adds the same Δψ to both longitudes, for any latitude: the
  rotation from the mean to the true ecliptic frame of date is a rotation
  about the ecliptic pole.  The elongation in longitude is therefore
  computed without it, which saves the costliest step of an apparent
  position.
* **Ecliptic of date, not of J2000.**  The two longitudes are taken in the
  same frame, the mean ecliptic of date, from the long-term precession of
  Vondrák et al. (2011) (see :mod:`calendra.solarterms`).  Only its pole
  matters: the longitude origin cancels in the difference, but the plane
  does not, because the Moon is up to 5.3 degrees from the ecliptic.  The
  J2000 ecliptic is tilted from the ecliptic of date by 47 arcsec per
  century, 0.65 degree at -3000: measuring in it would move the phases of
  -2900 by up to 8 minutes.  The IAU 2006 polynomials (as skyfield
  evaluates them) tilt the pole of -3000 by 28 arcsec from Vondrák's, up
  to 5 s in a phase, and 1.4 arcsec at -1000, under 0.3 s
  (``precession="iau2006"`` reproduces skyfield).
* **Light time and aberration** are applied to both bodies as
  ``r - v |r|/c`` with geocentric ``r, v`` (see :mod:`calendra.solarterms`),
  which makes these positions apparent ones less nutation.

The elongation is the angle between the projections of the two apparent
vectors on the ecliptic plane of date, ``atan2(n·(s×m), s·m - (n·s)(n·m))``
with ``n`` the ecliptic pole, ``s`` the Sun and ``m`` the Moon.

Method
------
Meeus' mean phases (eq. 49.1) with the two largest periodic terms of the
true-phase corrections (ch. 49: the Moon's and the Sun's equations of
centre) predict every phase of the range as one array, within about an
hour.  Vectorised Newton steps on the DE406 elongation (its rate from the
ephemeris velocities) follow until the last correction of every phase is
under ``tolerance_s`` (default 0.1 s): two or three ephemeris evaluations
per phase (2.4 on average), in chunks of 100,000 instants.  The iteration
converges quadratically, so once the last correction (``residual_s``) is
under 0.1 s the error left after it is far smaller.

Lunation numbers
----------------
``lunation`` is Meeus' lunation number: the integer ``k`` of the new moon
that begins the lunation, ``k = 0`` for the new moon of 2000 January 6
(JDE 2451550.1); a phase has ``k = lunation + phase/4``.  Brown's lunation
number (Brown 1933; lunation 1 began with the new moon of 1923 January 17)
is ``lunation + 953`` (:data:`BROWN_OFFSET`).

Time scales: every ``jd_tt`` is a Julian Day in TT (Meeus' JDE).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from .errors import ParameterError
from .solarterms import (CHUNK, DEFAULT_PRECESSION, TOLERANCE_S, ProgressFn, _check_precession,
                         _validate_range, apparent, ecliptic_pole, geocentric_states, newton_refine,
                         tdb_from_tt)

#: Phase names, index = quarter (0 new, 1 first quarter, 2 full, 3 last quarter).
PHASE_NAMES = ("new", "first-quarter", "full", "last-quarter")
#: Elongation of each phase, degrees.
PHASE_ELONGATION_DEG = (0.0, 90.0, 180.0, 270.0)
#: Meeus eq. 49.1: JDE of mean new moon k = 0 (2000 January 6) and the mean synodic month, days.
MEEUS_EPOCH_JDE = 2451550.09766
MEAN_SYNODIC_MONTH = 29.530588861
#: Brown's lunation number = Meeus' lunation number + BROWN_OFFSET.
BROWN_OFFSET = 953


# Leading true-phase corrections of Meeus ch. 49 (days), by quarter: coefficients of sin M' and E sin M.
_CORRECTION_MP = np.array([-0.40720, -0.62801, -0.40614, -0.62801])
_CORRECTION_M = np.array([0.17241, 0.17172, 0.17302, 0.17172])


def mean_phase_jde(k):
    """Return Meeus' mean lunar phase, eq. 49.1.

    Parameters
    ----------
    k : float or array_like
        Lunation count from the new moon of 2000 January 6: an integer for a
        new moon, +0.25 first quarter, +0.50 full, +0.75 last quarter.

    Returns
    -------
    ndarray or numpy.float64
        Julian Ephemeris Day (TT) of the mean phase.

    References
    ----------
    Meeus, J. (1998), *Astronomical Algorithms*, 2nd ed., eq. 49.1.
    """
    k = np.asarray(k, dtype=np.float64)
    t = k / 1236.85
    return (MEEUS_EPOCH_JDE + MEAN_SYNODIC_MONTH * k
            + t * t * (0.00015437 + t * (-0.000000150 + t * 0.00000000073)))


def predicted_phase_jde(k):
    """Return a first guess at the true phase: the mean phase plus its two largest corrections.

    The corrections are the leading terms of Meeus' ch. 49 series, in
    the Moon's mean anomaly M' and (with the eccentricity factor E) the
    Sun's mean anomaly M; they bring the guess within about an hour
    of the truth, which the Newton steps of :func:`lunar_phases` refine.

    Parameters
    ----------
    k : float or array_like
        As for :func:`mean_phase_jde`.

    Returns
    -------
    ndarray or numpy.float64
        Julian Ephemeris Day (TT).
    """
    k = np.asarray(k, dtype=np.float64)
    t = k / 1236.85
    e = 1.0 - t * (0.002516 + 0.0000074 * t)
    m = np.radians(2.5534 + 29.10535670 * k - t * t * (0.0000014 + 0.00000011 * t))
    mp = np.radians(201.5643 + 385.81693528 * k
                    + t * t * (0.0107582 + t * (0.00001238 - 0.000000058 * t)))
    q = np.rint((k - np.floor(k)) * 4.0).astype(np.int64) % 4
    a_mp, a_m = _CORRECTION_MP[q], _CORRECTION_M[q]
    return mean_phase_jde(k) + a_mp * np.sin(mp) + a_m * e * np.sin(m)


def _elongation_rate(jd_tt, precession):
    """Moon-Sun apparent elongation in longitude (rad) and its rate (rad/day) at TT Julian Days."""
    states = geocentric_states()
    pm, vm, ps, vs = states.moon_and_sun(tdb_from_tt(jd_tt))
    m, s = apparent(pm, vm), apparent(ps, vs)
    n = ecliptic_pole(jd_tt, precession)

    def dot(a, b):
        return np.einsum("i...,i...->...", a, b)

    nm, ns = dot(n, m), dot(n, s)
    elong = np.arctan2(dot(n, np.cross(s, m, axis=0)), dot(s, m) - ns * nm)
    rate_m = dot(n, np.cross(m, vm, axis=0)) / (dot(m, m) - nm * nm)
    rate_s = dot(n, np.cross(s, vs, axis=0)) / (dot(s, s) - ns * ns)
    return elong, rate_m - rate_s


def moon_sun_elongation(jd_tt, *, precession: str = DEFAULT_PRECESSION, chunk: int = CHUNK):
    """Return the apparent geocentric ecliptic longitude of the Moon minus that of the Sun.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT, within the span of DE406.
    precession : {'vondrak2011', 'iau2006'}
        Model of the ecliptic of date.
    chunk : int
        Instants evaluated at once.

    Returns
    -------
    ndarray or numpy.float64
        Degrees in [0, 360): 0 new moon, 90 first quarter, 180 full, 270 last quarter.
    """
    from .ephemeris import check_span

    _check_precession(precession)
    jd = np.asarray(jd_tt, dtype=np.float64)
    check_span(jd)
    flat = jd.reshape(-1)
    out = np.empty_like(flat)
    for i in range(0, flat.size, chunk):
        out[i:i + chunk] = _elongation_rate(flat[i:i + chunk], precession)[0]
    out = np.degrees(out) % 360.0
    return out.reshape(jd.shape) if jd.ndim else out[0]


class LunarPhaseTable(NamedTuple):
    """Lunar phases in time order.

    Attributes
    ----------
    jd_tt : ndarray of float
        Julian Days, TT.
    phase : ndarray of int
        0 new, 1 first quarter, 2 full, 3 last quarter (:data:`PHASE_NAMES`).
    lunation : ndarray of int
        Meeus' lunation number (k of the new moon beginning the lunation;
        0 = 2000 January 6).  Brown's number is ``lunation + 953``.
    residual_s : ndarray of float
        Last Newton correction, seconds.
    """

    jd_tt: np.ndarray
    phase: np.ndarray
    lunation: np.ndarray
    residual_s: np.ndarray

    @property
    def k(self) -> np.ndarray:
        """Meeus' k of each phase: ``lunation + phase / 4``."""
        return self.lunation + self.phase / 4.0

    @property
    def brown_lunation(self) -> np.ndarray:
        """Brown's lunation number of each phase's lunation."""
        return self.lunation + BROWN_OFFSET


def _phase_indices(phases):
    if phases is None:
        return np.arange(4)
    if isinstance(phases, (str, int, np.integer)):
        phases = [phases]
    out = []
    for p in phases:
        if isinstance(p, str):
            if p not in PHASE_NAMES:
                raise ParameterError(f"unknown lunar phase {p!r} (one of {', '.join(PHASE_NAMES)})")
            out.append(PHASE_NAMES.index(p))
        elif int(p) in (0, 1, 2, 3) and int(p) == p:
            out.append(int(p))
        else:
            raise ParameterError(f"lunar phase index must be 0..3, got {p!r}")
    if not out:
        raise ParameterError("no lunar phase selected")
    return np.unique(out)


def lunar_phases(jd_tt_start, jd_tt_end, phases=None, *, precession: str = DEFAULT_PRECESSION,
                 tolerance_s: float = TOLERANCE_S, chunk: int = CHUNK,
                 progress: ProgressFn | None = None) -> LunarPhaseTable:
    """Find every lunar phase in a range.

    Parameters
    ----------
    jd_tt_start, jd_tt_end : float
        Range ``[start, end)``, Julian Days (TT), within DE406.
    phases : None, str, int or sequence
        Phases wanted, as names of :data:`PHASE_NAMES` or indices 0..3; None for all four.
    precession : {'vondrak2011', 'iau2006'}
        Model of the ecliptic of date (see the module docstring).
    tolerance_s : float
        Newton stops when every last correction is under this, seconds.
    chunk : int
        Instants evaluated at once.
    progress : callable or None
        ``progress(done, total, label)`` in evaluated instants.

    Returns
    -------
    LunarPhaseTable
        In time order.

    Raises
    ------
    EphemerisRangeError
        If the range leaves DE406.
    ParameterError
        For an empty range, an unknown phase or model, or a tolerance <= 0.

    Examples
    --------
    >>> p = lunar_phases(2443180.5, 2443200.5, "new")   # doctest: +SKIP
    >>> float(p.jd_tt[0]), int(p.lunation[0])           # doctest: +SKIP
    (2443192.65..., -283)
    """
    from .ephemeris import SPAN_JD

    start, end = _validate_range(jd_tt_start, jd_tt_end)
    _check_precession(precession)
    if not tolerance_s > 0:
        raise ParameterError(f"tolerance must be positive, got {tolerance_s!r} s")
    wanted = _phase_indices(phases)
    first = math.floor((start - MEEUS_EPOCH_JDE) / MEAN_SYNODIC_MONTH) - 2
    last = math.ceil((end - MEEUS_EPOCH_JDE) / MEAN_SYNODIC_MONTH) + 2
    lunation = np.repeat(np.arange(first, last + 1, dtype=np.int64), wanted.size)
    phase = np.tile(wanted, last - first + 1)
    t0 = predicted_phase_jde(lunation + phase / 4.0)
    keep = (t0 > start - 2.0) & (t0 < end + 2.0)
    lunation, phase, t0 = lunation[keep], phase[keep], np.clip(t0[keep], *SPAN_JD)

    def evaluate(jd):
        return _elongation_rate(jd, precession)

    t, residual = newton_refine(t0, np.radians(phase * 90.0), evaluate, tolerance_s=tolerance_s,
                                chunk=chunk, progress=progress, label="lunar phases",
                                lo=SPAN_JD[0], hi=SPAN_JD[1])
    jump = (np.abs(t - t0) > 1.0) & np.isfinite(residual)
    if np.any(jump):
        from .errors import CalendraError
        raise CalendraError(f"lunar phases: a Newton iteration left its phase (first near JD "
                            f"{t0[jump][0]:.3f} TT)")
    inside = (t >= start) & (t < end) & np.isfinite(residual)
    order = np.argsort(t[inside], kind="stable")
    return LunarPhaseTable(t[inside][order], phase[inside][order], lunation[inside][order],
                           residual[inside][order])
