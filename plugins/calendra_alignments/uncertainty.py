"""From the errors of a survey to an interval of declination.

Inputs
------
* a measured azimuth with its standard error ``sigma_A`` (degrees).  A
  compass bearing is a *magnetic* azimuth: the true azimuth is
  ``A_true = A_magnetic + D`` with ``D`` the magnetic declination (east
  positive) that the user gives for the place and date of the survey, with
  its own standard error ``sigma_D`` if known (:func:`true_azimuth`);
* the apparent altitude of the skyline with its standard error ``sigma_H``
  (degrees), or a horizon profile: then the altitude follows the azimuth and
  ``sigma_H`` is the error of the profile itself.

Two methods
-----------
``analytic`` (default)
    First-order propagation with the analytic partial derivatives of
    :func:`calendra_alignments.geometry.declination_partials`:
    ``sigma_dec^2 = (d dec/dA)^2 (sigma_A^2 + sigma_D^2) + (d dec/dH)^2 sigma_H^2``
    where ``d dec/dA`` is the total derivative along the profile
    (``d dec/dA + d dec/dH * dH/dA``).  The interval is ``dec +- k sigma``.
``montecarlo``
    ``n`` draws (default 20 000) of normal errors of azimuth, magnetic
    declination and altitude from ``numpy.random.default_rng(seed)`` with the
    fixed seed :data:`DEFAULT_SEED` (so results repeat exactly), each pushed
    through the full nonlinear transformation (the profile evaluated at the
    drawn azimuth).  The interval is the central quantile range of
    probability ``erf(k / sqrt 2)`` (95.45 % for ``k = 2``), the value its
    median and ``sigma`` the standard deviation of the draws.  It differs
    from the analytic interval where the transformation bends within the
    errors: near the north and south points and on steep profiles.

What the interval does not contain: the uncertainty of *intent* -- which
direction the builders meant, whether the structure was aligned at all,
which part of a disc or which moment of a rising they watched.  No
computation removes it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from calendra.errors import ParameterError

from . import geometry as G

#: Seed of the Monte Carlo draws (any fixed value; results repeat exactly from run to run).
DEFAULT_SEED = 8128
#: Default number of Monte Carlo draws per alignment.
DEFAULT_DRAWS = 20000
METHODS = ("analytic", "montecarlo")


def true_azimuth(azimuth_deg, magnetic_declination_deg=0.0):
    """Return the true azimuth of a compass bearing, degrees 0..360.

    Parameters
    ----------
    azimuth_deg : float or array_like
        Magnetic azimuth (a compass reading), degrees from magnetic north through east.
    magnetic_declination_deg : float or array_like
        Magnetic declination at the place and time of the reading, degrees,
        east positive (the angle from true north to magnetic north).
    """
    a = np.asarray(azimuth_deg, dtype=float) + np.asarray(magnetic_declination_deg, dtype=float)
    return G._out(a % 360.0)


def level_probability(k: float) -> float:
    """Probability of a normal variable within ``k`` standard deviations: ``erf(k / sqrt 2)``."""
    return math.erf(float(k) / math.sqrt(2.0))


@dataclass
class DeclinationInterval:
    """Declinations of alignments with their uncertainty (arrays of one shape).

    Attributes
    ----------
    dec : ndarray
        Declination, degrees (analytic: at the measured values; Monte Carlo: median).
    sigma : ndarray
        Standard error of the declination, degrees.
    lo, hi : ndarray
        The interval, degrees.
    d_dec_d_az, d_dec_d_alt : ndarray
        Partial derivatives (degrees per degree), total along a profile.
    method : str
    level : float
        ``k``: the interval covers ``k`` standard errors (probability ``erf(k/sqrt 2)``).
    """

    dec: np.ndarray
    sigma: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    d_dec_d_az: np.ndarray
    d_dec_d_alt: np.ndarray
    method: str
    level: float

    def describe(self) -> str:
        p = level_probability(self.level) * 100
        if self.method == "analytic":
            return (f"first-order propagation with analytic partial derivatives; interval +-{self.level:g} sigma "
                    f"({p:.2f} %)")
        return (f"Monte Carlo, normal errors, numpy default_rng seed {DEFAULT_SEED}; central {p:.2f} % "
                f"quantile interval ({self.level:g} sigma)")


def _check(sigma, what):
    s = np.asarray(sigma, dtype=float)
    if np.any(~np.isfinite(s)) or np.any(s < 0):
        raise ParameterError(f"{what} must be a finite number >= 0 (degrees)")
    return s


def declination_interval(azimuth_deg, latitude_deg, horizon=0.0, *, azimuth_sigma_deg=0.0,
                         altitude_sigma_deg=0.0, magnetic_declination_sigma_deg=0.0, altitude_deg=None,
                         slope=None, body: G.Body = G.STAR, level: float = 2.0, method: str = "analytic",
                         draws: int = DEFAULT_DRAWS, seed: int = DEFAULT_SEED, refraction_model="bennett",
                         temperature_C=G.STANDARD_TEMPERATURE_C, pressure_mbar=G.STANDARD_PRESSURE_MBAR
                         ) -> DeclinationInterval:
    """Return the declination of an alignment and its interval.

    Parameters
    ----------
    azimuth_deg : float or array_like, shape (N,)
        True azimuths, degrees (see :func:`true_azimuth` for compass readings).
    latitude_deg : float or array_like
        Latitudes, degrees north.
    horizon : Horizon, float or path
        The skyline: used for the altitude (and its slope) at the azimuth unless
        ``altitude_deg`` is given.
    azimuth_sigma_deg, altitude_sigma_deg, magnetic_declination_sigma_deg : float or array_like
        Standard errors, degrees.
    altitude_deg : float or array_like, optional
        Apparent skyline altitude at the azimuth, degrees (overrides ``horizon``).
    slope : float or array_like, optional
        Slope of the skyline at the azimuth (degrees per degree) when
        ``altitude_deg`` is given (default 0); the Monte Carlo draws then move
        the altitude along this slope with the drawn azimuth.
    body : Body
        Point, Sun or Moon.
    level : float
        ``k`` of the interval (default 2).
    method : {'analytic', 'montecarlo'}
        See the module notes.
    draws, seed : int
        Monte Carlo draws per alignment and the generator's seed.
    refraction_model, temperature_C, pressure_mbar
        As for :func:`calendra_alignments.geometry.declination`.

    Returns
    -------
    DeclinationInterval
    """
    if method not in METHODS:
        raise ParameterError(f"uncertainty method {method!r} is not one of {', '.join(METHODS)}")
    if not (0.0 < float(level) <= 5.0):
        raise ParameterError(f"interval level must lie in 0..5 sigma, got {level!r}")
    hz = G.as_horizon(horizon)
    az = np.asarray(azimuth_deg, dtype=float)
    sa = _check(azimuth_sigma_deg, "the azimuth error")
    sh = _check(altitude_sigma_deg, "the altitude error")
    sd = _check(magnetic_declination_sigma_deg, "the magnetic declination error")
    if altitude_deg is None:
        alt = hz.altitude(az)
        slope = hz.slope(az)
    else:
        alt = np.asarray(altitude_deg, dtype=float)
        slope = np.zeros(np.shape(alt)) if slope is None else np.asarray(slope, dtype=float)
    lat = np.asarray(latitude_deg, dtype=float)
    kw = dict(refraction_model=refraction_model, temperature_C=temperature_C, pressure_mbar=pressure_mbar)
    dec = np.asarray(G.declination(az, alt, lat, body, **kw), dtype=float)
    d_az, d_alt = G.declination_partials(az, alt, lat, body, slope=slope, **kw)
    d_az, d_alt = np.asarray(d_az, dtype=float), np.asarray(d_alt, dtype=float)
    sig_a2 = sa ** 2 + sd ** 2
    if method == "analytic":
        sigma = np.sqrt(d_az ** 2 * sig_a2 + d_alt ** 2 * sh ** 2)
        return DeclinationInterval(dec, sigma, dec - level * sigma, dec + level * sigma, d_az, d_alt,
                                   method, float(level))
    # Monte Carlo: draws along a new last axis.
    n = int(draws)
    if not 100 <= n <= 10_000_000:
        raise ParameterError(f"Monte Carlo draws must be 100..10 000 000, got {draws!r}")
    rng = np.random.default_rng(seed)
    shape = np.broadcast(az, lat, alt, sa, sh, sd).shape
    e_a = rng.standard_normal(shape + (n,)) * np.sqrt(np.broadcast_to(sig_a2, shape))[..., None]
    e_h = rng.standard_normal(shape + (n,)) * np.broadcast_to(sh, shape)[..., None]
    az_s = np.broadcast_to(az, shape)[..., None] + e_a
    if altitude_deg is None:
        alt_s = np.asarray(hz.altitude(az_s), dtype=float) + e_h
    else:
        alt_s = (np.broadcast_to(alt, shape)[..., None] + np.broadcast_to(slope, shape)[..., None] * e_a
                 + e_h)
    t = kw["temperature_C"], kw["pressure_mbar"]
    t = [np.asarray(v, dtype=float)[..., None] if np.ndim(v) else v for v in t]
    samples = np.asarray(G.declination(az_s, alt_s, np.broadcast_to(lat, shape)[..., None], body,
                                       refraction_model=refraction_model, temperature_C=t[0],
                                       pressure_mbar=t[1]), dtype=float)
    p = level_probability(level)
    lo, med, hi = np.quantile(samples, [(1 - p) / 2, 0.5, (1 + p) / 2], axis=-1)
    sigma = samples.std(axis=-1)
    return DeclinationInterval(med, sigma, lo, hi, d_az, d_alt, method, float(level))
