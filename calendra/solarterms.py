"""The apparent Sun and the moments it crosses given ecliptic longitudes.

Equinoxes and solstices (apparent geocentric longitude 0, 90, 180, 270
degrees), the 24 solar terms (every 15 degrees), the cross-quarter days (45,
135, 225, 315) or any list of longitudes, found over the whole span of DE406
(-3000 to +3000) as one array job.

Definition
----------
The longitude is the Sun's *apparent geocentric ecliptic longitude of date*:
the direction from the geocentre in which the Sun is seen (light time and
the annual aberration applied), measured along the ecliptic of date from
the true equinox of date (precession and nutation applied).  It is what
almanacs tabulate and what Meeus, *Astronomical Algorithms* (2nd ed., 1998)
ch. 27 uses for the equinoxes and solstices.

Pipeline (all numpy over arrays of instants)
--------------------------------------------
* **Ephemeris.** DE406 as loaded by :func:`calendra.ephemeris.load_ephemeris`
  (a skyfield ``SpiceKernel``); its Chebyshev segments are evaluated through
  jplephem at TDB (TT + the USNO Circular 179 eq. 2.6 series, via skyfield),
  positions and velocities together.  The geocentric Sun is
  ``Sun - (Earth-Moon barycentre) - (Earth from that barycentre)``; the last
  term is the geocentric Moon times ``-1/(1 + EMRAT)``, which the kernel's
  Earth segment is by construction, so one lunar segment serves both.
* **Light time and aberration.** ``r_app = r - v tau`` with ``r, v`` the
  geometric geocentric position and velocity and ``tau = |r|/c``: the
  light-time correction ``-v_body tau`` (barycentric velocity of the body)
  and the first-order aberration ``+v_earth tau`` (the part across the line
  of sight is what turns the direction) add up to the geocentric velocity.
  Second-order terms are ``(v/c)^2 ~ 1e-8`` rad (2 mas, 0.05 s of solar
  motion); gravitational deflection of sunlight by the Sun is zero for the
  Sun itself and under 0.1 mas for the Moon.
* **Precession.** The mean ecliptic and equinox of date come from the
  long-term precession of Vondrák, Capitaine & Wallace (2011, A&A 534, A22;
  corrigendum 2012, A&A 541, C1), ecliptic pole eq. 8-9 with Table 1 and
  equator pole Table 2 (polynomial plus periodic terms in P_A, Q_A and X, Y),
  with the IERS 2003 frame bias between the GCRS and the J2000 mean frame.
  The IAU 2006 (P03) polynomials are accurate for a few centuries around
  2000 only: as skyfield evaluates them (Capitaine et al. 2003 four-angle
  form), their equinox of date differs from Vondrák's by 1.3 arcsec at -1000
  (33 s in the moment of an equinox) and 12 arcsec at -3000 (5 min), their
  ecliptic pole by 1.4 and 28 arcsec.  ``precession="iau2006"`` selects that
  P03 form (with the IAU 2006 obliquity), to reproduce skyfield.
* **Nutation.** Nutation turns the equinox along the fixed ecliptic, so the
  true longitude is the mean one plus the nutation in longitude Δψ (exact
  for any latitude).  Δψ is the IAU 2000A series truncated to its 77 largest
  luni-solar terms (the IAU 2000B selection) with the full polynomial
  fundamental arguments of Simon et al. (1994); the dropped terms (the
  remaining luni-solar terms and all 687 planetary terms) amount to about
  1 mas, 0.025 s of solar time.  The full polynomials matter: linear
  fundamental arguments (skyfield's IAU 2000B) move the main term by 1.5
  arcsec at -3000.

Search
------
A predictor gives every crossing in the range as one array: the solar
mean longitude ``L0 = 280.46646 + 36000.76983 T + 0.0003032 T^2`` (Meeus
eq. 25.2) with the equation of centre (Meeus eq. 25.4) and the constant of
aberration, solved for each target longitude and revolution.  It is within
minutes of the truth near 2000 and 1.4 hours at the ends of the span.
Newton steps on the ephemeris longitude (its rate from the ephemeris
velocity) then run until the last correction of every crossing is under
``tolerance_s`` (default 0.1 s): about two ephemeris evaluations per
crossing (2.1 on average over the span).

Time scales: every ``jd_tt`` is a Julian Day in TT; the ephemeris is read at
TDB, which differs from TT by under 2 ms.
"""

from __future__ import annotations

import math
from typing import Callable, NamedTuple

import numpy as np

from .errors import CalendraError, ParameterError

DAY_S = 86400.0
J2000 = 2451545.0
#: Speed of light in km per day.
C_KM_PER_DAY = 299792.458 * DAY_S
ARCSEC = math.pi / (180.0 * 3600.0)
TAU = 2.0 * math.pi

#: Precession models: name -> description.
PRECESSION_MODELS = {
    "vondrak2011": "Vondrák, Capitaine & Wallace (2011, A&A 534, A22; 2012 corrigendum) long-term "
                   "ecliptic and equator poles, IERS 2003 frame bias",
    "iau2006": "IAU 2006 (Capitaine et al. 2003, P03) precession and obliquity, IERS 2003 frame bias "
               "(as in skyfield; accurate near 2000 only)",
}
DEFAULT_PRECESSION = "vondrak2011"
#: Luni-solar terms of the IAU 2000A nutation series kept (the IAU 2000B selection).
NUTATION_TERMS = 77
#: Times evaluated at once (bounds the memory of the Chebyshev evaluation).
CHUNK = 100_000
#: Default bound on the last Newton correction, seconds.
TOLERANCE_S = 0.1
MAX_ITERATIONS = 8

SEASON_LONGITUDES = (0.0, 90.0, 180.0, 270.0)
#: Names of the crossings of 0/90/180/270 degrees (northern-hemisphere names).
SEASON_NAMES = ("vernal-equinox", "summer-solstice", "autumnal-equinox", "winter-solstice")
CROSS_QUARTER_LONGITUDES = (45.0, 135.0, 225.0, 315.0)

#: The 24 solar terms of the Chinese calendar (pinyin, modern order) by apparent longitude.
#: Multiples of 30 degrees are the principal terms (zhongqi), the others the sectional ones (jieqi).
SOLAR_TERM_NAMES = {
    0: "chunfen", 15: "qingming", 30: "guyu", 45: "lixia", 60: "xiaoman", 75: "mangzhong",
    90: "xiazhi", 105: "xiaoshu", 120: "dashu", 135: "liqiu", 150: "chushu", 165: "bailu",
    180: "qiufen", 195: "hanlu", 210: "shuangjiang", 225: "lidong", 240: "xiaoxue", 255: "daxue",
    270: "dongzhi", 285: "xiaohan", 300: "dahan", 315: "lichun", 330: "yushui", 345: "jingzhe",
}

ProgressFn = Callable[[int, int, str], None]


# ---------------------------------------------------------------------------
# Long-term precession: Vondrák, Capitaine & Wallace (2011), Tables 1 and 2
# ---------------------------------------------------------------------------

#: Obliquity at J2000.0 of the IAU 2006 precession, arcsec (the frame of P_A, Q_A).
_EPS0_ARCSEC = 84381.406

# Ecliptic pole: P_A, Q_A = polynomial + sum of C cos(2 pi t / period) + S sin(2 pi t / period),
# t in Julian centuries from J2000, arcsec.  Columns: period (centuries), P_cos, Q_cos, P_sin, Q_sin.
_ECL_PERIODIC = np.array([
    [708.15, -5486.751211, -684.661560, 667.666730, -5523.863691],
    [2309.00, -17.127623, 2446.283880, -2354.886252, -549.747450],
    [1620.00, -617.517403, 399.671049, -428.152441, -310.998056],
    [492.20, 413.442940, -356.652376, 376.202861, 421.535876],
    [1183.00, 78.614193, -186.387003, 184.778874, -36.776172],
    [622.00, -180.732815, -316.800070, 335.321713, -145.278396],
    [882.00, -87.676083, 198.296701, -185.138669, -34.744450],
    [547.00, 46.140315, 101.135679, -120.972830, 22.885731],
])
_ECL_POLY = np.array([  # rows P_A, Q_A; columns t^0 .. t^3
    [5851.607687, -0.1189000, -0.00028913, 0.000000101],
    [-1600.886300, 1.1689818, -0.00000020, -0.000000437],
])
# Equator pole X, Y (direction cosines in arcsec).  Columns: period, X_cos, Y_cos, X_sin, Y_sin.
_EQU_PERIODIC = np.array([
    [256.75, -819.940624, 75004.344875, 81491.287984, 1558.515853],
    [708.15, -8444.676815, 624.033993, 787.163481, 7774.939698],
    [274.20, 2600.009459, 1251.136893, 1251.296102, -2219.534038],
    [241.45, 2755.175630, -1102.212834, -1257.950837, -2523.969396],
    [2309.00, -167.659835, -2660.664980, -2966.799730, 247.850422],
    [492.20, 871.855056, 699.291817, 639.744522, -846.485643],
    [396.10, 44.769698, 153.167220, 131.600209, -1393.124055],
    [288.90, -512.313065, -950.865637, -445.040117, 368.526116],
    [231.10, -819.415595, 499.754645, 584.522874, 749.045012],
    [1610.00, -538.071099, -145.188210, -89.756563, 444.704518],
    [620.00, -189.793622, 558.116553, 524.429630, 235.934465],
    [157.87, -402.922932, -23.923029, -13.549067, 374.049623],
    [220.30, 179.516345, -165.405086, -210.157124, -171.330180],
    [1200.00, -9.814756, 9.344131, -44.919798, -22.899655],
])
_EQU_POLY = np.array([
    [5453.282155, 0.4252841, -0.00037173, -0.000000152],
    [-73750.930350, -0.7675452, -0.00018725, 0.000000231],
])


def _series(t, periodic, poly):
    """Evaluate two Vondrák series (polynomial + periodic) at centuries ``t``; radians, shape (2, N)."""
    arg = (TAU * t)[:, None] / periodic[None, :, 0]
    c, s = np.cos(arg), np.sin(arg)
    a = c @ periodic[:, 1] + s @ periodic[:, 3]
    b = c @ periodic[:, 2] + s @ periodic[:, 4]
    powers = t[None, :] ** np.arange(4)[:, None]
    a = a + poly[0] @ powers
    b = b + poly[1] @ powers
    return a * ARCSEC, b * ARCSEC


def _frame_bias():
    from skyfield.framelib import ICRS_to_J2000

    return np.asarray(ICRS_to_J2000, dtype=np.float64)


def _unit(v):
    return v / np.sqrt(np.einsum("i...,i...->...", v, v))


def ecliptic_pole(jd_tt, precession: str = DEFAULT_PRECESSION):
    """Return the pole of the mean ecliptic of date as unit vectors in the GCRS.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT.
    precession : {'vondrak2011', 'iau2006'}
        Precession model, see :data:`PRECESSION_MODELS`.

    Returns
    -------
    ndarray, shape (3,) + shape of ``jd_tt``
        Unit vectors (dimensionless), GCRS axes.
    """
    _check_precession(precession)
    if precession != "vondrak2011":
        return ecliptic_axes(jd_tt, precession)[2]
    jd = np.asarray(jd_tt, dtype=np.float64)
    pole = _frame_bias().T @ _vondrak_pole(((jd.reshape(-1) - J2000) / 36525.0))
    return pole.reshape((3,) + jd.shape)


def equator_pole(jd_tt):
    """Return the mean equator pole of date (Vondrák et al. 2011) as unit vectors in the GCRS.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT.

    Returns
    -------
    ndarray, shape (3, N)
        Unit vectors (dimensionless), GCRS axes, one column per instant.
    """
    t = (np.atleast_1d(np.asarray(jd_tt, dtype=np.float64)).reshape(-1) - J2000) / 36525.0
    xe, ye = _series(t, _EQU_PERIODIC, _EQU_POLY)
    pole = np.array([xe, ye, np.sqrt(np.maximum(1.0 - xe * xe - ye * ye, 0.0))])
    return _frame_bias().T @ pole


def _vondrak_pole(t):
    """Vondrák (2011) ecliptic pole in J2000 mean axes at Julian centuries ``t`` from J2000."""
    p, q = _series(t, _ECL_PERIODIC, _ECL_POLY)
    w = np.sqrt(np.maximum(1.0 - p * p - q * q, 0.0))
    se, ce = math.sin(_EPS0_ARCSEC * ARCSEC), math.cos(_EPS0_ARCSEC * ARCSEC)
    return np.array([p, -q * ce - w * se, -q * se + w * ce])


def ecliptic_axes(jd_tt, precession: str = DEFAULT_PRECESSION):
    """Return the axes of the mean ecliptic and equinox of date in the GCRS.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT.
    precession : {'vondrak2011', 'iau2006'}
        Precession model, see :data:`PRECESSION_MODELS`.

    Returns
    -------
    x, y, z : ndarray, each of shape (3,) + shape of ``jd_tt``
        Unit vectors in GCRS axes: ``x`` toward the mean equinox of date,
        ``z`` the ecliptic pole, ``y = z × x``.  A GCRS vector ``r`` has
        ecliptic longitude ``atan2(y·r, x·r)``.

    References
    ----------
    Vondrák, J., Capitaine, N., Wallace, P. (2011), A&A 534, A22, and
    (2012) A&A 541, C1.  Capitaine, N., Wallace, P., Chapront, J. (2003),
    A&A 412, 567 (P03, for ``iau2006``).
    """
    _check_precession(precession)
    jd = np.asarray(jd_tt, dtype=np.float64)
    shape = jd.shape
    jd = jd.reshape(-1)
    bias = _frame_bias()
    if precession == "vondrak2011":
        t = (jd - J2000) / 36525.0
        z = _vondrak_pole(t)
        xe, ye = _series(t, _EQU_PERIODIC, _EQU_POLY)
        equator = np.array([xe, ye, np.sqrt(np.maximum(1.0 - xe * xe - ye * ye, 0.0))])
        x = _unit(np.cross(equator, z, axis=0))
        y = np.cross(z, x, axis=0)
    else:
        from skyfield.nutationlib import mean_obliquity
        from skyfield.precessionlib import compute_precession
        from skyfield.timelib import tdb_minus_tt

        jd_tdb = jd + tdb_minus_tt(jd) / DAY_S
        prec = compute_precession(jd_tdb)          # (3, 3, N): J2000 mean -> mean of date
        eps = mean_obliquity(jd_tdb) * ARCSEC
        ce, se = np.cos(eps), np.sin(eps)
        x = prec[0]
        y = ce * prec[1] + se * prec[2]
        z = -se * prec[1] + ce * prec[2]
    # Rows of (ecliptic matrix in J2000 axes) @ bias are the axes in GCRS coordinates.
    x, y, z = (bias.T @ v for v in (x, y, z))
    return tuple(v.reshape((3,) + shape) for v in (x, y, z))


# ---------------------------------------------------------------------------
# Nutation in longitude
# ---------------------------------------------------------------------------

def nutation_in_longitude(jd_tt, terms: int = NUTATION_TERMS):
    """Return the nutation in longitude Δψ in radians.

    The IAU 2000A luni-solar series (Mathews et al. 2002, as tabulated in
    skyfield) truncated to its ``terms`` largest terms, planetary terms
    omitted, with the full polynomial fundamental arguments of Simon et al.
    (1994).  With the default 77 terms the omitted part is about 1 mas.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT.
    terms : int
        Luni-solar terms kept, 1..687.

    Returns
    -------
    ndarray
        Δψ, radians, shape of ``jd_tt``.
    """
    from skyfield.nutationlib import iau2000a

    if not 1 <= int(terms) <= 687:
        raise ParameterError(f"nutation terms must be 1..687, got {terms!r}")
    jd = np.asarray(jd_tt, dtype=np.float64)
    dpsi, _ = iau2000a(jd.reshape(-1), 5, int(terms), 0)
    return (np.asarray(dpsi) * 1e-7 * ARCSEC).reshape(jd.shape)


# ---------------------------------------------------------------------------
# Geocentric states from the kernel
# ---------------------------------------------------------------------------

class _GeocentricStates:
    """Geocentric Sun and Moon, position (km) and velocity (km/day), from the loaded kernel."""

    def __init__(self, kernel):
        segs = {(s.center, s.target): s.spk_segment for s in kernel.segments}
        try:
            self.sun = segs[(0, 10)]
            self.emb = segs[(0, 3)]
            self.moon = segs[(3, 301)]
            earth = segs[(3, 399)]
        except KeyError as exc:
            from .errors import EphemerisError
            raise EphemerisError(f"the kernel lacks segment {exc.args[0]} (center, target)") from None
        # The Earth segment is the Moon segment times -1/EMRAT (see calendra.ephemeris); check it.
        probe = np.array([700000.5, 1800000.5, J2000, 2800000.5])
        m, e = self.moon.compute(probe), earth.compute(probe)
        ratio = -m / e
        self.emrat = float(np.median(ratio))
        self.earth = None if np.allclose(ratio, self.emrat, rtol=1e-12, atol=0) else earth

    def moon_and_sun(self, jd_tdb, want_moon=True):
        """Return (moon_pos, moon_vel, sun_pos, sun_vel), geocentric, geometric, shapes (3, N)."""
        pm, vm = self.moon.compute_and_differentiate(jd_tdb)      # Moon from the barycentre E-M
        ps, vs = self.sun.compute_and_differentiate(jd_tdb)
        pb, vb = self.emb.compute_and_differentiate(jd_tdb)
        if self.earth is None:
            pe, ve = -pm / self.emrat, -vm / self.emrat
        else:
            pe, ve = self.earth.compute_and_differentiate(jd_tdb)
        sun_p, sun_v = ps - pb - pe, vs - vb - ve
        if not want_moon:
            return None, None, sun_p, sun_v
        return pm - pe, vm - ve, sun_p, sun_v


def geocentric_states():
    """Return the geocentric-state helper for the loaded DE406 kernel (cached on the kernel)."""
    from .ephemeris import load_ephemeris

    kernel = load_ephemeris()
    helper = kernel.__dict__.get("_calendra_states")
    if helper is None:
        helper = _GeocentricStates(kernel)
        kernel._calendra_states = helper
    return helper


def tdb_from_tt(jd_tt):
    """Return TDB Julian Days for TT Julian Days (USNO Circular 179 eq. 2.6, via skyfield)."""
    from skyfield.timelib import tdb_minus_tt

    jd = np.asarray(jd_tt, dtype=np.float64)
    return jd + tdb_minus_tt(jd) / DAY_S


def apparent(position, velocity):
    """Apply light time and annual aberration: ``r - v |r|/c`` (see the module docstring).

    Parameters
    ----------
    position : ndarray, shape (3, N)
        Geometric geocentric position, km.
    velocity : ndarray, shape (3, N)
        Geocentric velocity, km/day.

    Returns
    -------
    ndarray, shape (3, N)
        Apparent geocentric position, km.
    """
    tau = np.sqrt(np.einsum("i...,i...->...", position, position)) / C_KM_PER_DAY
    return position - velocity * tau


def _longitude_and_rate(r, v, axes):
    """Longitude (rad) of ``r`` in the frame ``axes`` and its rate (rad/day) from ``v``."""
    x, y, z = axes
    rx = np.einsum("i...,i...->...", x, r)
    ry = np.einsum("i...,i...->...", y, r)
    vx = np.einsum("i...,i...->...", x, v)
    vy = np.einsum("i...,i...->...", y, v)
    return np.arctan2(ry, rx), (rx * vy - ry * vx) / (rx * rx + ry * ry)


def _check_precession(precession):
    if precession not in PRECESSION_MODELS:
        raise ParameterError(f"precession model {precession!r} is not one of "
                             f"{', '.join(PRECESSION_MODELS)}")


def _sun_longitude_rate(jd_tt, precession, nutation_terms):
    """Apparent longitude of date (rad) and its rate (rad/day) of the Sun at TT Julian Days."""
    states = geocentric_states()
    _, _, ps, vs = states.moon_and_sun(tdb_from_tt(jd_tt), want_moon=False)
    lon, rate = _longitude_and_rate(apparent(ps, vs), vs, ecliptic_axes(jd_tt, precession))
    if nutation_terms:
        lon = lon + nutation_in_longitude(jd_tt, nutation_terms)
    return lon, rate


def sun_apparent_longitude(jd_tt, *, precession: str = DEFAULT_PRECESSION,
                           nutation_terms: int = NUTATION_TERMS, chunk: int = CHUNK):
    """Return the Sun's apparent geocentric ecliptic longitude of date, degrees.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT, within the span of DE406.
    precession : {'vondrak2011', 'iau2006'}
        Precession model.
    nutation_terms : int
        Luni-solar nutation terms (0: longitude from the mean equinox of date).
    chunk : int
        Instants evaluated at once.

    Returns
    -------
    ndarray or numpy.float64
        Degrees in [0, 360), shape of ``jd_tt``.
    """
    from .ephemeris import check_span

    _check_precession(precession)
    jd = np.asarray(jd_tt, dtype=np.float64)
    check_span(jd)
    flat = jd.reshape(-1)
    out = np.empty_like(flat)
    for i in range(0, flat.size, chunk):
        lon, _ = _sun_longitude_rate(flat[i:i + chunk], precession, nutation_terms)
        out[i:i + chunk] = lon
    out = np.degrees(out) % 360.0
    return out.reshape(jd.shape) if jd.ndim else out[0]


# ---------------------------------------------------------------------------
# Generic vectorised Newton iteration
# ---------------------------------------------------------------------------

def newton_refine(t0, target_rad, evaluate, *, tolerance_s=TOLERANCE_S, chunk=CHUNK,
                  progress=None, label="refining", lo=None, hi=None):
    """Refine roots of ``angle(t) = target (mod 2 pi)`` by vectorised Newton steps.

    Parameters
    ----------
    t0 : ndarray
        First guesses, Julian Days (TT).
    target_rad : ndarray
        Target angles, radians, same shape as ``t0``.
    evaluate : callable
        ``evaluate(jd_tt) -> (angle_rad, rate_rad_per_day)`` for a 1-D chunk.
    tolerance_s : float
        Stop when every last correction is under this, seconds.
    chunk : int
        Instants evaluated at once.
    progress : callable or None
        ``progress(done, total, label)`` in evaluated instants.
    lo, hi : float or None
        Bounds the iterates are clipped to (the ephemeris span).

    Returns
    -------
    t : ndarray
        Refined Julian Days (TT), the last correction applied.
    residual_s : ndarray
        Size of the last correction, seconds; NaN for a root beyond ``lo``
        or ``hi`` (its iterate is left on the bound).

    Raises
    ------
    CalendraError
        If some root has not converged after :data:`MAX_ITERATIONS` steps.
    """
    t = np.array(t0, dtype=np.float64)
    target = np.asarray(target_rad, dtype=np.float64)
    residual = np.full(t.shape, np.inf)
    active = np.arange(t.size)
    done, total = 0, 2 * t.size
    for _ in range(MAX_ITERATIONS):
        if active.size == 0:
            break
        total = max(total, done + active.size)
        step = np.empty(active.size)
        for i in range(0, active.size, chunk):
            idx = active[i:i + chunk]
            angle, rate = evaluate(t[idx])
            diff = (angle - target[idx] + math.pi) % TAU - math.pi
            step[i:i + chunk] = -diff / rate
            done += idx.size
            if progress is not None:
                progress(done, total, label)
        moved = t[active] + step
        residual[active] = np.abs(step) * DAY_S
        if lo is not None or hi is not None:
            clipped = np.clip(moved, lo, hi)
            # A root beyond the bound: the iterate sits on the bound and is dropped.
            outside = (clipped != moved) & (t[active] == clipped)
            residual[active[outside]] = np.nan
            moved = clipped
        t[active] = moved
        active = active[residual[active] >= tolerance_s]
    if active.size:
        raise CalendraError(f"{label}: {active.size} of {t.size} roots did not converge to "
                            f"{tolerance_s} s in {MAX_ITERATIONS} Newton steps "
                            f"(first near JD {t[active[0]]:.5f} TT)")
    if progress is not None:
        progress(total, total, label)
    return t, residual


# ---------------------------------------------------------------------------
# Crossings of given longitudes
# ---------------------------------------------------------------------------

class SolarCrossings(NamedTuple):
    """Moments the apparent Sun crosses given longitudes, in time order.

    Attributes
    ----------
    jd_tt : ndarray of float
        Julian Days, TT.
    longitude_deg : ndarray of float
        The longitude crossed, degrees in [0, 360).
    residual_s : ndarray of float
        Last Newton correction, seconds (the error after it is smaller still).
    """

    jd_tt: np.ndarray
    longitude_deg: np.ndarray
    residual_s: np.ndarray


def _mean_solar_model(jd_tt):
    """Approximate apparent solar longitude (deg) from Meeus ch. 25 (eq. 25.2-25.4, aberration)."""
    t = (jd_tt - J2000) / 36525.0
    l0 = 280.46646 + 36000.76983 * t + 0.0003032 * t * t
    m = np.radians(357.52911 + 35999.05029 * t - 0.0001537 * t * t)
    c = ((1.914602 - 0.004817 * t - 0.000014 * t * t) * np.sin(m)
         + (0.019993 - 0.000101 * t) * np.sin(2 * m) + 0.000289 * np.sin(3 * m))
    return l0 + c - 0.00569


def predict_crossings(jd_tt_start, jd_tt_end, longitudes_deg, margin_days=3.0):
    """Predict every crossing of the given longitudes in a range from Meeus' low-precision Sun.

    Parameters
    ----------
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT); predictions up to ``margin_days`` outside it are kept.
    longitudes_deg : array_like
        Target apparent longitudes, degrees.
    margin_days : float
        Extra days kept on each side.

    Returns
    -------
    jd_tt : ndarray
        Predicted Julian Days (TT), within minutes of the truth near 2000 and
        1.4 hours at the ends of DE406.
    longitude_deg : ndarray
        The target of each prediction, degrees in [0, 360).
    """
    targets = np.unique(np.mod(np.asarray(longitudes_deg, dtype=np.float64).reshape(-1), 360.0))
    mean_rate = 36000.76983 / 36525.0          # degrees per day
    lo, hi = jd_tt_start - margin_days - 5.0, jd_tt_end + margin_days + 5.0
    l_lo, l_hi = _mean_solar_model(np.array([lo, hi]))
    first = np.floor((l_lo - targets) / 360.0).astype(np.int64)
    last = np.ceil((l_hi - targets) / 360.0).astype(np.int64)
    counts = last - first + 1
    which = np.repeat(np.arange(targets.size), counts)
    offsets = np.repeat(np.cumsum(counts) - counts, counts)
    revolution = first[which] + (np.arange(which.size) - offsets)
    goal = targets[which] + 360.0 * revolution
    t = J2000 + (goal - 280.46646) / mean_rate
    for _ in range(4):      # Newton on the analytic model, rate taken constant
        t = t + (goal - _mean_solar_model(t)) / mean_rate
    keep = (t >= jd_tt_start - margin_days) & (t <= jd_tt_end + margin_days)
    return t[keep], targets[which][keep]


def _validate_range(jd_tt_start, jd_tt_end):
    from .ephemeris import check_span

    start, end = float(jd_tt_start), float(jd_tt_end)
    check_span([start, end])
    if not end > start:
        raise ParameterError(f"the end of the range (JD {end}) must come after its start (JD {start})")
    return start, end


def solar_longitude_crossings(jd_tt_start, jd_tt_end, longitudes_deg, *,
                              precession: str = DEFAULT_PRECESSION,
                              nutation_terms: int = NUTATION_TERMS,
                              tolerance_s: float = TOLERANCE_S, chunk: int = CHUNK,
                              progress: ProgressFn | None = None) -> SolarCrossings:
    """Find every moment in a range the Sun's apparent longitude crosses given values.

    Parameters
    ----------
    jd_tt_start, jd_tt_end : float
        Range ``[start, end)``, Julian Days (TT), within DE406.
    longitudes_deg : float or array_like
        Apparent geocentric ecliptic longitudes of date, degrees (taken mod 360).
    precession : {'vondrak2011', 'iau2006'}
        Precession model (see the module docstring).
    nutation_terms : int
        Luni-solar nutation terms kept; 0 measures from the mean equinox.
    tolerance_s : float
        Newton stops when every last correction is under this, seconds.
    chunk : int
        Instants evaluated at once.
    progress : callable or None
        ``progress(done, total, label)``.

    Returns
    -------
    SolarCrossings
        In time order.

    Raises
    ------
    EphemerisRangeError
        If the range leaves DE406.
    ParameterError
        For an empty range, an unknown model or no longitude.

    Examples
    --------
    >>> c = solar_longitude_crossings(2437800.5, 2437900.5, 90.0)   # doctest: +SKIP
    >>> round(float(c.jd_tt[0]), 4)                                 # doctest: +SKIP
    2437837.3921
    """
    from .ephemeris import SPAN_JD

    start, end = _validate_range(jd_tt_start, jd_tt_end)
    _check_precession(precession)
    lons = np.asarray(longitudes_deg, dtype=np.float64).reshape(-1)
    if lons.size == 0 or not np.all(np.isfinite(lons)):
        raise ParameterError("give at least one finite longitude in degrees")
    if not tolerance_s > 0:
        raise ParameterError(f"tolerance must be positive, got {tolerance_s!r} s")
    t0, target = predict_crossings(start, end, lons)
    t0 = np.clip(t0, *SPAN_JD)

    def evaluate(jd):
        return _sun_longitude_rate(jd, precession, nutation_terms)

    t, residual = newton_refine(t0, np.radians(target), evaluate, tolerance_s=tolerance_s,
                                chunk=chunk, progress=progress, label="solar longitude",
                                lo=SPAN_JD[0], hi=SPAN_JD[1])
    keep = (t >= start) & (t < end) & np.isfinite(residual)
    order = np.argsort(t[keep], kind="stable")
    return SolarCrossings(t[keep][order], target[keep][order], residual[keep][order])


def equinoxes_solstices(jd_tt_start, jd_tt_end, **options) -> SolarCrossings:
    """Find the equinoxes and solstices (apparent longitude 0/90/180/270 degrees) in a range.

    Parameters
    ----------
    jd_tt_start, jd_tt_end : float
        Range ``[start, end)``, Julian Days (TT).
    **options
        As for :func:`solar_longitude_crossings`.

    Returns
    -------
    SolarCrossings
        ``longitude_deg // 90`` indexes :data:`SEASON_NAMES`.
    """
    return solar_longitude_crossings(jd_tt_start, jd_tt_end, SEASON_LONGITUDES, **options)


def solar_term_names(longitude_deg):
    """Return the solar-term name of each longitude (multiples of 15 degrees), else ''.

    Parameters
    ----------
    longitude_deg : array_like
        Apparent longitudes, degrees.

    Returns
    -------
    ndarray of str
    """
    lon = np.mod(np.asarray(longitude_deg, dtype=np.float64), 360.0)
    names = np.array([SOLAR_TERM_NAMES[15 * i] for i in range(24)] + [""])
    step = np.rint(lon / 15.0)
    exact = np.abs(lon - 15.0 * step) < 1e-9
    idx = np.where(exact, step.astype(np.int64) % 24, 24)
    return names[idx]
