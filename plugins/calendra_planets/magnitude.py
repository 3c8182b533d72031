"""Apparent visual magnitudes of the planets.

The formulas of Mallama & Hilton (2018), "Computing apparent planetary
magnitudes for The Astronomical Almanac", *Astronomy and Computing* 25,
10-24 (arXiv:1808.01973), as used by the Almanac since 2020 and by
skyfield's ``planetary_magnitude``: ``V = 5 log10(r Delta) + V(1, alpha)``
with ``r`` the planet's distance from the Sun and ``Delta`` from the
observer (au), ``alpha`` the phase angle (degrees) and ``V(1, alpha)`` a
polynomial per planet (equations 2-10; the numbers are those of the
authors' Fortran code ``Ap_Mag_V3``).

* Mercury: one polynomial, fitted over phase angles 2-170 degrees; NaN beyond 170
  (Mercury within a few degrees of an inferior conjunction).
* Venus: two polynomials, split at 163.7 degrees; NaN beyond 179.
* Mars: two polynomials, split at 50 degrees; the corrections for the
  rotation and orbital position of Mars (up to +-0.06 mag) are left out, as in skyfield.
* Jupiter: two forms, split at 12 degrees.
* Saturn: globe and rings (equation 10) with the ring opening as the
  geometric mean of the saturnicentric latitudes of the Sun and the
  observer (zero when they have opposite signs); Saturn's pole is the IAU
  WGCCRE value (Archinal et al. 2011, *Celest. Mech. Dyn. Astr.* 109, 101:
  RA 40.589 - 0.036 T, Dec 83.537 - 0.004 T degrees, T in Julian centuries
  from J2000), where skyfield holds the J2000 pole fixed: the two poles
  part by at most 0.2 degree on the sky over -3000..3000, under 0.01 mag.
"""

from __future__ import annotations

import numpy as np

#: Phase angle beyond which the formula is not used, degrees.
PHASE_LIMIT_DEG = {"mercury": 170.0, "venus": 179.0}


def _poly(x, coefs):
    out = np.zeros_like(x)
    for c in reversed(coefs):
        out = out * x + c
    return out


def saturn_pole(jd_tt):
    """Saturn's north pole (IAU WGCCRE 2009), unit vectors in the ICRF, shape (3, N)."""
    t = (np.asarray(jd_tt, dtype=np.float64).reshape(-1) - 2451545.0) / 36525.0
    ra = np.radians(40.589 - 0.036 * t)
    dec = np.radians(83.537 - 0.004 * t)
    return np.array([np.cos(dec) * np.cos(ra), np.cos(dec) * np.sin(ra), np.sin(dec)])


def _angle(a, b):
    cross = np.cross(a, b, axis=0)
    return np.degrees(np.arctan2(np.sqrt(np.einsum("i...,i...->...", cross, cross)),
                                 np.einsum("i...,i...->...", a, b)))


def magnitude(body: str, sun_to_body_km, observer_to_body_km, jd_tt=None):
    """Apparent V magnitude of a planet.

    Parameters
    ----------
    body : str
        ``mercury`` ... ``saturn``.
    sun_to_body_km : ndarray, shape (3, N)
        Vector from the Sun to the planet (at the time the light left it), km.
    observer_to_body_km : ndarray, shape (3, N)
        Vector from the observer to the planet, km.
    jd_tt : array_like or None
        Julian Days (TT), needed for Saturn's pole.

    Returns
    -------
    v : ndarray
        Magnitudes; NaN outside the phase angles the formula was fitted to.
    phase_angle_deg : ndarray
        Sun-planet-observer angle, degrees.
    """
    from .states import AU_KM

    s = np.asarray(sun_to_body_km, dtype=np.float64)
    o = np.asarray(observer_to_body_km, dtype=np.float64)
    r = np.sqrt(np.einsum("i...,i...->...", s, s)) / AU_KM
    d = np.sqrt(np.einsum("i...,i...->...", o, o)) / AU_KM
    ph = _angle(s, o)
    dist = 5.0 * np.log10(r * d)
    if body == "mercury":
        v = -0.613 + _poly(ph, (0.0, 6.3280e-02, -1.6336e-03, 3.3644e-05, -3.4265e-07, 1.6893e-09,
                                -3.0334e-12))
    elif body == "venus":
        low = _poly(ph, (0.0, -1.044e-03, 3.687e-04, -2.814e-06, 8.938e-09))
        high = _poly(ph, (236.05828 + 4.384, -2.81914e+00, 8.39034e-03))
        v = -4.384 + np.where(ph < 163.7, low, high)
    elif body == "mars":
        v = np.where(ph <= 50.0, -1.601 + _poly(ph, (0.0, 2.267e-02, -1.302e-04)),
                     -0.367 + _poly(ph, (0.0, -0.02573, 0.0003445)))
    elif body == "jupiter":
        x = ph / 180.0
        with np.errstate(invalid="ignore", divide="ignore"):
            far = -9.428 - 2.5 * np.log10(_poly(x, (1.0, -1.507, -0.363, -0.062, 2.809, -1.876)))
        v = np.where(ph <= 12.0, -9.395 + _poly(ph, (0.0, -3.7e-04, 6.16e-04)), far)
    elif body == "saturn":
        if jd_tt is None:
            from calendra.errors import ParameterError
            raise ParameterError("Saturn's magnitude needs the instants (its ring opening)")
        pole = saturn_pole(jd_tt)
        sun_lat = _angle(pole, s) - 90.0
        obs_lat = _angle(pole, o) - 90.0
        prod = sun_lat * obs_lat
        b = np.where(prod >= 0.0, np.sqrt(np.abs(prod)), 0.0)
        sb = np.sin(np.radians(b))
        v = -8.914 - 1.825 * sb + 0.026 * ph - 0.378 * sb * np.exp(-2.25 * ph)
        v = np.where((ph <= 6.5) & (b <= 27.0), v, np.nan)
    else:
        from calendra.errors import UnknownNameError
        raise UnknownNameError("planet", body, ("mercury", "venus", "mars", "jupiter", "saturn"))
    v = v + dist
    limit = PHASE_LIMIT_DEG.get(body)
    if limit is not None:
        v = np.where(ph <= limit, v, np.nan)
    return v, ph


SOURCE = ("Mallama & Hilton (2018), Astronomy and Computing 25, 10 (the Astronomical Almanac's "
          "planetary magnitudes, as in skyfield's planetary_magnitude); Mars without its rotation "
          "and season terms; Saturn's pole IAU WGCCRE 2009")
