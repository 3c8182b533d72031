"""The cheap predictor: two-body orbits from mean elements, and the synodic cycle.

Every phenomenon of :mod:`calendra_planets` is found in two steps: a
prediction from this module, then Newton steps on the DE406 positions.  The
prediction only has to land the iteration in the right basin; its errors
never reach a result.

Elements
--------
Mean Keplerian elements with linear rates, fitted by E. M. Standish to the
JPL ephemeris over 3000 BC - AD 3000 ("Keplerian
Elements for Approximate Positions of the Major Planets", JPL Solar System
Dynamics, Table 2a, with the extra mean-anomaly terms of Table 2b for
Jupiter and Saturn), J2000 ecliptic and equinox.  The numbers below are
reproduced from memory of that table; a test checks that the predictions
stay within a day or so of the DE406 events over the whole span, which is
all the method needs.

Synodic cycle
-------------
:data:`SYNODIC_DAYS` is the mean synodic period of each planet,
``1 / |1/P - 1/P_earth|`` from the mean motions below.  The *k*-th
conjunction or opposition is predicted from the mean longitudes (the
synodic cycle), then moved to the two-body solution by Newton steps on the
true heliocentric longitudes (equation of the centre from Kepler's
equation, solved exactly).
"""

from __future__ import annotations

import math

import numpy as np

J2000 = 2451545.0
DEG = math.pi / 180.0

#: Standish Table 2a (3000 BC - AD 3000): a (au), e, I, L, long. peri., long. node (deg) and
#: their rates per Julian century.  [from memory]
ELEMENTS = {
    "mercury": ((0.38709843, 0.20563661, 7.00559432, 252.25166724, 77.45771895, 48.33961819),
                (0.0, 0.00002123, -0.00590158, 149472.67486623, 0.15940013, -0.12214182)),
    "venus": ((0.72332102, 0.00676399, 3.39777545, 181.97970850, 131.76755713, 76.67261496),
              (-0.00000026, -0.00005107, 0.00043494, 58517.81560260, 0.05679648, -0.27274174)),
    "earth": ((1.00000018, 0.01673163, -0.00054346, 100.46691572, 102.93005885, -5.11260389),
              (-0.00000003, -0.00003661, -0.01337178, 35999.37306329, 0.31795260, -0.24123856)),
    "mars": ((1.52371243, 0.09336511, 1.85181869, -4.56813164, -23.91744784, 49.71320984),
             (0.00000097, 0.00009149, -0.00724757, 19140.29934243, 0.45223625, -0.26852431)),
    "jupiter": ((5.20248019, 0.04853590, 1.29861416, 34.33479152, 14.27495244, 100.29282654),
                (-0.00002864, 0.00018026, -0.00322699, 3034.90371757, 0.18199196, 0.13024619)),
    "saturn": ((9.54149883, 0.05550825, 2.49424102, 50.07571329, 92.86136063, 113.63998702),
               (-0.00003065, -0.00032044, 0.00451969, 1222.11494724, 0.54179478, -0.25015002)),
}
#: Standish Table 2b: b, c, s (deg) and f (deg/century) of M = L - peri + b T^2 + c cos fT + s sin fT.
#: [from memory]
EXTRA_TERMS = {
    "jupiter": (-0.00012452, 0.06064060, -0.35635438, 38.35125000),
    "saturn": (0.00025899, -0.13434469, 0.87320147, 38.35125000),
}


def mean_motion_deg_per_day(body: str) -> float:
    """Mean motion in longitude, degrees per day."""
    return ELEMENTS[body][1][3] / 36525.0


def synodic_days(body: str) -> float:
    """Mean synodic period, days: ``360 / |n - n_earth|``."""
    return 360.0 / abs(mean_motion_deg_per_day(body) - mean_motion_deg_per_day("earth"))


#: Mean synodic periods (days) of the five planets.
SYNODIC_DAYS = {b: synodic_days(b) for b in ("mercury", "venus", "mars", "jupiter", "saturn")}


def _solve_kepler(m, e):
    """Eccentric anomaly (rad) for mean anomaly ``m`` (rad) and eccentricity ``e`` (arrays)."""
    ecc = m + e * np.sin(m) / (1.0 - e * np.cos(m))
    for _ in range(6):
        ecc = ecc - (ecc - e * np.sin(ecc) - m) / (1.0 - e * np.cos(ecc))
    return ecc


def heliocentric(body: str, jd_tt):
    """Two-body heliocentric position and velocity, J2000 ecliptic, au and au/day.

    Parameters
    ----------
    body : str
        ``mercury`` ... ``saturn`` or ``earth`` (the Earth-Moon barycentre).
    jd_tt : array_like
        Julian Days, TT.

    Returns
    -------
    r, v : ndarray, shape (3, N)
    """
    jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
    t = (jd - J2000) / 36525.0
    (a0, e0, i0, l0, w0, o0), (da, de, di, dl, dw, do) = ELEMENTS[body]
    a, e = a0 + da * t, e0 + de * t
    inc, node, peri = (i0 + di * t) * DEG, (o0 + do * t) * DEG, (w0 + dw * t) * DEG
    lon = l0 + dl * t
    m_deg = lon - (w0 + dw * t)
    rate = dl - dw                                        # deg per century
    if body in EXTRA_TERMS:
        b, c, s, f = EXTRA_TERMS[body]
        ft = f * t * DEG
        m_deg = m_deg + b * t * t + c * np.cos(ft) + s * np.sin(ft)
        rate = rate + 2 * b * t - c * np.sin(ft) * f * DEG + s * np.cos(ft) * f * DEG
    m = np.remainder(m_deg * DEG + math.pi, 2 * math.pi) - math.pi
    n = rate * DEG / 36525.0                              # rad/day
    ecc = _solve_kepler(m, e)
    ce, se = np.cos(ecc), np.sin(ecc)
    q = np.sqrt(1.0 - e * e)
    x, y = a * (ce - e), a * q * se
    edot = n / (1.0 - e * ce)
    vx, vy = -a * se * edot, a * q * ce * edot
    w = peri - node
    cw, sw, co, so, ci, si = np.cos(w), np.sin(w), np.cos(node), np.sin(node), np.cos(inc), np.sin(inc)
    m11, m12 = cw * co - sw * so * ci, -sw * co - cw * so * ci
    m21, m22 = cw * so + sw * co * ci, -sw * so + cw * co * ci
    m31, m32 = sw * si, cw * si
    r = np.array([m11 * x + m12 * y, m21 * x + m22 * y, m31 * x + m32 * y])
    v = np.array([m11 * vx + m12 * vy, m21 * vx + m22 * vy, m31 * vx + m32 * vy])
    return r, v


def _lon_rate(r, v):
    return np.arctan2(r[1], r[0]), (r[0] * v[1] - r[1] * v[0]) / (r[0] ** 2 + r[1] ** 2)


def relative_longitude(body: str, jd_tt):
    """Heliocentric longitude of the planet minus that of the Earth (rad, wrapped) and its rate (rad/day)."""
    lp, wp = _lon_rate(*heliocentric(body, jd_tt))
    le, we = _lon_rate(*heliocentric("earth", jd_tt))
    return np.remainder(lp - le + math.pi, 2 * math.pi) - math.pi, wp - we


def geocentric_longitude(body: str, jd_tt):
    """Two-body geocentric ecliptic longitude (J2000, rad) and its rate (rad/day)."""
    rp, vp = heliocentric(body, jd_tt)
    re, ve = heliocentric("earth", jd_tt)
    return _lon_rate(rp - re, vp - ve)


def predict_alignments(body: str, jd_tt_start: float, jd_tt_end: float, target_deg: float,
                       margin_days: float = 0.0):
    """Predict every heliocentric alignment of a planet with the Earth in a range.

    ``target_deg`` 0 is an opposition (superior planet) or inferior
    conjunction (inferior planet); 180 a conjunction with the Sun (superior
    planet) or superior conjunction.

    Parameters
    ----------
    body : str
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT); predictions up to ``margin_days`` outside are kept.
    target_deg : float
        Heliocentric longitude of the planet minus the Earth's, degrees.
    margin_days : float

    Returns
    -------
    jd_tt : ndarray
        Two-body instants of the alignments, TT, in time order.
    """
    rel0 = (ELEMENTS[body][0][3] - ELEMENTS["earth"][0][3])
    rate = mean_motion_deg_per_day(body) - mean_motion_deg_per_day("earth")      # deg/day
    lo, hi = jd_tt_start - margin_days - 30.0, jd_tt_end + margin_days + 30.0
    k_a = (rel0 + rate * (lo - J2000) - target_deg) / 360.0
    k_b = (rel0 + rate * (hi - J2000) - target_deg) / 360.0
    k = np.arange(math.floor(min(k_a, k_b)) - 1, math.ceil(max(k_a, k_b)) + 2)
    t = J2000 + (target_deg + 360.0 * k - rel0) / rate
    goal = math.radians(target_deg)
    for _ in range(8):
        d, w = relative_longitude(body, t)
        step = -(np.remainder(d - goal + math.pi, 2 * math.pi) - math.pi) / w
        t = t + np.clip(step, -0.25 * SYNODIC_DAYS[body], 0.25 * SYNODIC_DAYS[body])
    t = np.unique(np.round(t, 6))
    keep = (t >= jd_tt_start - margin_days) & (t <= jd_tt_end + margin_days)
    return t[keep]
