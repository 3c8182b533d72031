"""Delta T models: the link between Terrestrial Time and Universal Time.

Time scales
-----------
Every instant in calendra is a Julian Day in **TT** (Terrestrial Time), the
uniform time scale of the ephemerides: planets and the Moon move in TT.
Anything tied to the *rotation of the Earth* -- local solar time, sunrise,
the horizon a sighting was made from, the longitude of an eclipse track, the
hour written on a tablet -- is in **UT** (UT1, Universal Time), a time scale
that follows the Earth's actual rotation angle.  The difference

    ΔT = TT - UT  (seconds)

is not predictable from theory.  The day lengthens by about 1.8 ms per
century on average (tidal friction alone would give 2.3 ms; Stephenson,
Morrison & Hohenkerk 2016), and core-mantle coupling, glacial rebound and
sea level add fluctuations on time scales of decades to millennia.  The small daily lag
accumulates quadratically: ΔT is about a minute today, about three hours at
the start of the era and about a day at -3000.

Why ΔT dominates the uncertainty before 1600
---------------------------------------------
Since 1955 ΔT is measured with atomic clocks; from about 1600 to 1955 it is
derived from telescopic timings of lunar occultations, to tens of seconds in
the 17th century and a second or better from about 1800.
Before 1600 it rests on a few hundred timed or located eclipses and
occultations in Babylonian, Chinese, Arab and European records, and before
-720 on none at all.  Its standard error grows roughly as the square of the
distance from the present: about 20 s in 1300-1600, 265 s at year 0, about
640 s at -1000 (Morrison & Stephenson 2004), and the extrapolation to -3000
is uncertain by about half an hour.  The positions of the Sun, Moon
and planets in TT from a modern ephemeris are far better known than that, so
for an ancient record the error budget of any UT-dependent result (the local
time of an eclipse, whether the Moon had risen, which night a crescent was
first seen) is usually set by ΔT.  Use :func:`sweep` to see how a result
moves across the ΔT uncertainty.

Conventions of this module
--------------------------
* Arguments named ``jd_tt`` are Julian Days in TT; ``jd_ut`` are Julian
  Days in UT1.  ΔT and its uncertainty are in SI seconds.
* All functions are vectorised: they accept a float or any array-like and
  return a ``numpy.float64`` for scalar input, an array of the same shape for
  array input.  Non-finite input gives NaN.
* The *decimal year* of this module (:func:`decimal_year`) is the calendar
  one: ``year + (jd - JD of January 1.0) / days in that year``, in the
  Julian calendar before 1582 October 15 and the Gregorian after, counting
  astronomical years (year 0 = 1 BC).  It is how the Espenak & Meeus canon
  reads the year of its polynomials (``y = year + (month - 0.5)/12`` is the
  middle of a month on this scale), so the polynomial, parabola and table
  models reproduce the canon's ΔT values to their last printed digit.
  The simpler Julian epoch ``2000 + (jd - 2451545)/365.25``
  (:func:`julian_epoch`) runs about 12.5 days ahead of it for Julian-calendar
  dates, which would change ΔT by up to about 1 s before 1600; it is used
  only where skyfield uses it, inside the ``smh2016`` model.
* ΔT is taken as a function of TT.  The published models are functions of a
  "year" without saying in which scale; the two readings differ by ΔT itself
  (at most a day), which again is far below the models' uncertainty.

Models
------
Select a model by name with :func:`get_model`:

``smh2016`` (default)
    Stephenson, Morrison & Hohenkerk (2016) with the 2021 addendum spline
    table, as bundled and implemented by skyfield, joined to the IERS daily
    ΔT since 1973 and to the SMH long-term parabola outside the splines.
``espenak-meeus-2006``
    The piecewise polynomials of the *Five Millennium Canon of Solar
    Eclipses*, NASA/TP-2006-214141.
``espenak-meeus-2006-nd``
    The same plus the canon's correction for the lunar secular acceleration
    ṅ = -25.858"/cy² (the ΔT values the canons actually use).
``ms2004``
    The long-term parabola of Morrison & Stephenson (2004).
``constant:SECONDS``
    A constant ΔT, optionally ``constant:SECONDS+-SIGMA``.
``table:PATH``
    A user CSV table of ``year, seconds[, sigma]``.

Uncertainty rule
----------------
:func:`standard_sigma` combines published estimates of the 1-sigma error of
ΔT; see its docstring.
"""

from __future__ import annotations

import functools
import math
import os
from typing import NamedTuple

import numpy as np

from .daylib import DAY_S, J2000
from .errors import ParameterError, UnknownNameError

__all__ = [
    "DEFAULT_MODEL",
    "DeltaTModel",
    "SkyfieldSMH2016",
    "EspenakMeeus2006",
    "MorrisonStephenson2004",
    "ConstantDeltaT",
    "TableDeltaT",
    "DeltaTSweep",
    "get_model",
    "available_models",
    "delta_t",
    "sigma",
    "provenance",
    "ut_from_tt",
    "tt_from_ut",
    "sweep",
    "skyfield_timescale",
    "builtin_timescale",
    "decimal_year",
    "jd_from_decimal_year",
    "julian_epoch",
    "jd_from_julian_epoch",
    "ms2004_parabola",
    "ms2004_sigma",
    "standard_sigma",
]

#: Name of the model used when none is given.
DEFAULT_MODEL = "smh2016"

#: Days per Julian year, the unit of :func:`julian_epoch`.
JULIAN_YEAR = 365.25

#: Year after which the generic uncertainty rule treats ΔT as a forecast,
#: for models that carry no data of their own (parabola, constant, tables
#: without a sigma column).  It is the last whole year of measured ΔT at the
#: time of writing.
PRESENT_DATA_END = 2025.0

#: Epoch of Morrison & Stephenson's (2004) parabolas, years.
MS2004_EPOCH = 1820.0

#: Standard error of ΔT from decade fluctuations of the Earth's rotation in
#: 1300-1600, seconds: "approximately 20 seconds for the period 1300 CE to
#: 1600 CE" (Espenak & Meeus, Five Millennium Canon, uncertainty section,
#: after Morrison & Stephenson 2004, who also give about 20 s at 1600).
SIGMA_MEDIEVAL_FLOOR = 20.0

#: Standard errors of ΔT in the telescopic era, (year, seconds): 1600 from
#: Morrison & Stephenson (2004); 1700, 1800, 1900 from Stephenson & Houlden
#: (1986) as tabulated in the Espenak & Meeus canon.  Interpolated
#: logarithmically; 0.1 s is kept from 1900 to the end of the data (UT1 has
#: been measured far better than that since 1955; 0.1 s is a deliberately
#: conservative floor).
SIGMA_TELESCOPIC = ((1600.0, 20.0), (1700.0, 5.0), (1800.0, 1.0), (1900.0, 0.1))

#: Assumed persistent error in the length of day when ΔT is forecast, in
#: milliseconds.  Decade fluctuations of the length of day are of a few ms
#: (from memory); a 1 ms error accumulates 0.365 s per year.  Cross-check:
#: the Espenak & Meeus extrapolation made with data to 2005 gives about 75 s
#: for 2026, against about 69 s measured, a 6 s miss after 21 years, which
#: this term (7.7 s at 21 years) covers at 1 sigma.
FORECAST_LOD_ERROR_MS = 1.0

#: Assumed uncertainty of the secular rate of change of the length of day
#: when ΔT is forecast, ms per century: the size of the non-tidal part of the
#: observed rate (+1.8 ms/cy observed against +2.3 ms/cy from tidal friction,
#: Stephenson, Morrison & Hohenkerk 2016, abstract), which no model predicts.
FORECAST_LOD_RATE_ERROR_MS_PER_CY = 0.5

# Seconds of ΔT per century accumulated by a 1 ms error in the length of day.
_S_PER_CY_PER_MS = 36525.0 / 1000.0


# ---------------------------------------------------------------------------
# Small helpers
# ---------------------------------------------------------------------------

def _as_array(values):
    """Return ``(float64 array, is_scalar)`` for any float or array-like."""
    arr = np.asarray(values, dtype=np.float64)
    return arr, arr.ndim == 0


def _out(arr: np.ndarray, scalar: bool):
    """Return ``arr`` as a numpy scalar for scalar input, else as an array."""
    return arr[()] if scalar else arr


def julian_epoch(jd_tt):
    """Return the Julian epoch of a Julian Day: ``2000 + (jd_tt - 2451545) / 365.25``.

    This is the year variable of skyfield's ΔT code (``smh2016``).  Julian
    epoch ``Y.0`` falls about 12.5 days before January 1 of the Julian
    calendar year ``Y``, and within a day of Gregorian January 1 near 2000.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Day (TT).

    Returns
    -------
    year : numpy.float64 or ndarray
        Julian epoch (astronomical years, year 0 = 1 BC).
    """
    arr, scalar = _as_array(jd_tt)
    return _out(2000.0 + (arr - J2000) / JULIAN_YEAR, scalar)


def jd_from_julian_epoch(year):
    """Return the TT Julian Day of a Julian epoch (inverse of :func:`julian_epoch`).

    Parameters
    ----------
    year : float or array_like
        Julian epoch.

    Returns
    -------
    jd_tt : numpy.float64 or ndarray
        Julian Day (TT).
    """
    arr, scalar = _as_array(year)
    return _out(J2000 + (arr - 2000.0) * JULIAN_YEAR, scalar)


#: JD of 1582 October 15.0 (Gregorian), the first day of the Gregorian calendar.
_GREGORIAN_START_JD = 2299160.5


def _calendar_year_start(year: np.ndarray) -> np.ndarray:
    # JD of January 1.0 of astronomical year ``year`` (whole numbers): Julian
    # calendar up to 1582, Gregorian from 1583 (Meeus, Astronomical
    # Algorithms, eq. 7.1, with month 13 of the year before).
    base = np.floor(365.25 * (year + 4715.0)) - 1095.5
    century = np.floor((year - 1.0) / 100.0)
    gregorian = 2.0 - century + np.floor(century / 4.0)
    return np.where(year > 1582.0, base + gregorian, base)


def decimal_year(jd_tt):
    """Return the calendar decimal year of a Julian Day.

    ``year + (jd_tt - JD of January 1.0) / (length of that year in days)``,
    in the Julian calendar before 1582 October 15 and the Gregorian calendar
    from then on (1582 has 355 days).  This is the "year" of the published
    polynomial and parabola models, read as the Espenak & Meeus canon reads
    it (their ``y = year + (month - 0.5)/12`` is the middle of the month in
    this scale), and the year every other part of this module reports.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Day (TT), for any epoch after -4712.

    Returns
    -------
    year : numpy.float64 or ndarray
        Astronomical decimal year (year 0 = 1 BC); 2000.0 is 2000 January
        1.0, 1000.0 is 1000 January 1.0 of the Julian calendar.
    """
    arr, scalar = _as_array(jd_tt)
    guess = np.floor(2000.0 + (arr - J2000) / JULIAN_YEAR)
    guess = np.where(np.isfinite(guess), guess, 0.0)
    year = np.where(arr < _calendar_year_start(guess), guess - 1.0, guess)
    year = np.where(arr >= _calendar_year_start(year + 1.0), year + 1.0, year)
    start = _calendar_year_start(year)
    length = _calendar_year_start(year + 1.0) - start
    return _out(np.where(np.isfinite(arr), year + (arr - start) / length, np.nan), scalar)


def jd_from_decimal_year(year):
    """Return the TT Julian Day of a calendar decimal year (inverse of :func:`decimal_year`).

    Parameters
    ----------
    year : float or array_like
        Astronomical decimal year (Julian calendar before 1582 October 15,
        Gregorian after).

    Returns
    -------
    jd_tt : numpy.float64 or ndarray
        Julian Day (TT).
    """
    arr, scalar = _as_array(year)
    whole = np.floor(np.where(np.isfinite(arr), arr, 0.0))
    start = _calendar_year_start(whole)
    length = _calendar_year_start(whole + 1.0) - start
    return _out(np.where(np.isfinite(arr), start + (arr - whole) * length, np.nan), scalar)


def _format_seconds(seconds: float) -> str:
    """Human-readable duration: '45 s', '640 s (10.7 min)', '2.1 h'."""
    if not math.isfinite(seconds):
        return "unknown"
    if seconds < 1.0:
        return f"{seconds:.2g} s"
    if seconds < 120.0:
        return f"{seconds:.0f} s"
    if seconds < 7200.0:
        return f"{seconds:.0f} s ({seconds / 60.0:.1f} min)"
    return f"{seconds:.0f} s ({seconds / 3600.0:.1f} h)"


# ---------------------------------------------------------------------------
# Published formulas shared by several models
# ---------------------------------------------------------------------------

def ms2004_parabola(year):
    """ΔT of Morrison & Stephenson's (2004) long-term parabola.

    ``ΔT = -20 + 32 u²`` with ``u = (year - 1820) / 100``.

    Parameters
    ----------
    year : float or array_like
        Astronomical decimal year.

    Returns
    -------
    seconds : numpy.float64 or ndarray
        ΔT in seconds.
    """
    arr, scalar = _as_array(year)
    u = (arr - MS2004_EPOCH) / 100.0
    return _out(-20.0 + 32.0 * u * u, scalar)


def ms2004_sigma(year):
    """Morrison & Stephenson's (2004) rule for the standard error of ΔT.

    ``σ = 0.8 t²`` seconds with ``t = (year - 1820) / 100``; the authors give
    it for 1000 BC to AD 1200 (about 640 s at -1000, 265 s at 0, 54 s at
    1000).  :func:`standard_sigma` uses it before 1600 and adds the floors of
    later eras.

    Parameters
    ----------
    year : float or array_like
        Astronomical decimal year.

    Returns
    -------
    sigma : numpy.float64 or ndarray
        1-sigma uncertainty of ΔT in seconds.
    """
    arr, scalar = _as_array(year)
    t = (arr - MS2004_EPOCH) / 100.0
    return _out(0.8 * t * t, scalar)


def _sigma_before_end(year: np.ndarray) -> np.ndarray:
    """Uncertainty rule up to the end of the data (no forecast term)."""
    ancient = np.maximum(ms2004_sigma(year), SIGMA_MEDIEVAL_FLOOR)
    years, values = zip(*SIGMA_TELESCOPIC)
    telescopic = np.exp(np.interp(year, years, np.log(values)))
    return np.where(year < years[0], ancient, telescopic)


def standard_sigma(year, data_end=PRESENT_DATA_END):
    """calendra's 1-sigma uncertainty of ΔT as a function of the year.

    The rule, in seconds, by era:

    * before 1600: ``max(0.8 t², 20)``, ``t = (year - 1820)/100`` -- the
      parabolic rule of Morrison & Stephenson (2004), which they give for
      -1000..1200 and which is continued here into the more distant past
      (it reaches 1.9e3 s, about 31 min, at -3000), with the 20 s that decade
      fluctuations leave in 1300-1600 as a floor;
    * 1600..1900: logarithmic interpolation of 20 s (1600), 5 s (1700), 1 s
      (1800), 0.1 s (1900) (Morrison & Stephenson 2004; Stephenson & Houlden
      1986);
    * 1900..``data_end``: 0.1 s;
    * after ``data_end`` (a forecast): ``sqrt(σ_end² + (a d)² + (b d²)²)``
      with ``d`` the centuries since ``data_end``, ``σ_end`` the value at
      ``data_end``, ``a = 36.5 s/cy`` from a persistent 1 ms error in the
      length of day and ``b = 9.1 s/cy²`` from a 0.5 ms/cy error in its
      secular rate (see :data:`FORECAST_LOD_ERROR_MS` and
      :data:`FORECAST_LOD_RATE_ERROR_MS_PER_CY`).  It gives about 28 s in
      2100 and 0.9e3 s in 3000.

    The result is continuous, never below 0.1 s, and does not decrease into
    the past before 1600 (it grows strictly before about 1320).  It is the
    uncertainty of ΔT itself, i.e. of our knowledge of the Earth's rotation,
    not the difference between two models; in the 17th and 18th centuries
    published compilations differ from one another by more than it (SMH 2016
    is about 5 s above older tables around 1750), which is one reason to
    compare models.

    Parameters
    ----------
    year : float or array_like
        Astronomical decimal year.
    data_end : float
        Last year of measured ΔT behind the model; later years are forecast.

    Returns
    -------
    sigma : numpy.float64 or ndarray
        1-sigma uncertainty of ΔT in seconds.
    """
    arr, scalar = _as_array(year)
    data_end = float(data_end)
    base = _sigma_before_end(arr)
    sigma_end = float(_sigma_before_end(np.array(data_end)))
    d = np.maximum(arr - data_end, 0.0) / 100.0
    a = FORECAST_LOD_ERROR_MS * _S_PER_CY_PER_MS
    b = 0.5 * FORECAST_LOD_RATE_ERROR_MS_PER_CY * _S_PER_CY_PER_MS
    forecast = np.sqrt(sigma_end ** 2 + (a * d) ** 2 + (b * d * d) ** 2)
    return _out(np.where(arr > data_end, forecast, base), scalar)


# ---------------------------------------------------------------------------
# Model base class
# ---------------------------------------------------------------------------

class DeltaTModel:
    """A ΔT model: ΔT and its uncertainty as functions of TT.

    Subclasses set :attr:`name`, :attr:`title`, :attr:`reference` and
    implement ``_seconds(jd_tt)`` and ``_sigma(jd_tt)`` on 1-d float64
    arrays of finite TT Julian Days.

    Attributes
    ----------
    name : str
        Short id, accepted by :func:`get_model`.
    title : str
        One-line human title.
    reference : str
        The publication (or the user's file) the model comes from.
    """

    name: str = ""
    title: str = ""
    reference: str = ""
    #: Optional caveat reported by :meth:`provenance` at every epoch.
    note: str | None = None

    # -- to be provided by subclasses ------------------------------------
    def _seconds(self, jd_tt: np.ndarray) -> np.ndarray:  # pragma: no cover
        raise NotImplementedError

    def _sigma(self, jd_tt: np.ndarray) -> np.ndarray:  # pragma: no cover
        raise NotImplementedError

    @property
    def valid_span(self) -> tuple[float, float]:
        """``(first, last)`` astronomical years in which the model rests on data.

        Outside it the model extrapolates (a long-term formula for the past,
        a forecast for the future); :meth:`provenance` then warns.
        """
        raise NotImplementedError  # pragma: no cover

    # -- public vectorised interface --------------------------------------
    def _apply(self, func, jd_tt):
        arr, scalar = _as_array(jd_tt)
        flat = arr.reshape(-1)
        out = np.full(flat.shape, np.nan)
        ok = np.isfinite(flat)
        if ok.any():
            out[ok] = func(flat[ok])
        return _out(out.reshape(arr.shape), scalar)

    def seconds(self, jd_tt):
        """ΔT = TT - UT1.

        Parameters
        ----------
        jd_tt : float or array_like
            Julian Day (TT).

        Returns
        -------
        delta_t : numpy.float64 or ndarray
            ΔT in seconds, same shape as ``jd_tt``.
        """
        return self._apply(self._seconds, jd_tt)

    __call__ = seconds

    def sigma(self, jd_tt):
        """1-sigma uncertainty of ΔT.

        Parameters
        ----------
        jd_tt : float or array_like
            Julian Day (TT).

        Returns
        -------
        sigma : numpy.float64 or ndarray
            Uncertainty in seconds, same shape as ``jd_tt``.
        """
        return self._apply(self._sigma, jd_tt)

    def ut_from_tt(self, jd_tt):
        """UT1 Julian Day of a TT Julian Day: ``jd_tt - ΔT(jd_tt) / 86400``.

        Parameters
        ----------
        jd_tt : float or array_like
            Julian Day (TT).

        Returns
        -------
        jd_ut : numpy.float64 or ndarray
            Julian Day (UT1).
        """
        arr, scalar = _as_array(jd_tt)
        return _out(arr - np.asarray(self.seconds(arr)) / DAY_S, scalar)

    def tt_from_ut(self, jd_ut, iterations: int = 3):
        """TT Julian Day of a UT1 Julian Day (inverse of :meth:`ut_from_tt`).

        Solves ``jd_tt = jd_ut + ΔT(jd_tt) / 86400`` by fixed-point
        iteration, vectorised over all times.  ΔT changes by at most about
        30 s per year in -3000..3000, so each step shrinks the error by a
        factor of about 1e-6: the first estimate ``jd_ut + ΔT(jd_ut)/86400``
        is off by < 0.1 s, and after ``iterations=3`` further steps the
        remaining error (< 1e-12 s) is far below the resolution of a float64
        Julian Day (about 40 µs near the present, 10 µs at -3000): a round
        trip ``tt_from_ut(ut_from_tt(jd))`` gives back ``jd``, to well under
        a microsecond.

        Where a model is discontinuous (the Espenak & Meeus polynomials at
        their piece boundaries jump by up to 0.25 s; skyfield's spline knots
        by about a millisecond), a UT instant within that jump of the
        boundary has two TT preimages or none, and the result may lie on
        either side of the boundary.

        Parameters
        ----------
        jd_ut : float or array_like
            Julian Day (UT1).
        iterations : int
            Fixed-point steps after the first estimate.

        Returns
        -------
        jd_tt : numpy.float64 or ndarray
            Julian Day (TT).
        """
        ut, scalar = _as_array(jd_ut)
        tt = ut + np.asarray(self.seconds(ut)) / DAY_S
        for _ in range(int(iterations)):
            tt = ut + np.asarray(self.seconds(tt)) / DAY_S
        return _out(tt, scalar)

    def is_extrapolated(self, jd_tt):
        """True where ``jd_tt`` lies outside :attr:`valid_span`.

        Parameters
        ----------
        jd_tt : float or array_like
            Julian Day (TT).

        Returns
        -------
        mask : numpy.bool_ or ndarray of bool
        """
        arr, scalar = _as_array(jd_tt)
        lo, hi = self.valid_span
        year = decimal_year(arr)
        return _out((year < lo) | (year > hi), scalar)

    def provenance(self, jd_tt) -> dict:
        """Where the ΔT of an epoch comes from and how far to trust it.

        Parameters
        ----------
        jd_tt : float or array_like
            Julian Day (TT).  For an array, ``delta_t``, ``sigma``, ``year``
            and ``extrapolated`` are arrays and ``warning`` speaks of the
            least certain epoch.

        Returns
        -------
        info : dict
            ``model`` (name), ``title``, ``reference``, ``jd_tt``, ``year``
            (decimal year), ``delta_t`` and ``sigma`` (seconds),
            ``valid_span`` (years), ``extrapolated`` (bool), ``note`` (a
            standing caveat of the model or None) and ``warning`` (a
            sentence, or None when the epoch is after 1600 and within the
            model's data).
        """
        arr, scalar = _as_array(jd_tt)
        value = self.seconds(arr)
        sig = self.sigma(arr)
        year = decimal_year(arr)
        extrapolated = self.is_extrapolated(arr)
        lo, hi = self.valid_span
        warnings = []
        sig_arr = np.asarray(sig).reshape(-1)
        year_arr = np.asarray(year).reshape(-1)
        ext_arr = np.asarray(extrapolated).reshape(-1)
        known = np.isfinite(sig_arr)
        early = known & (year_arr < 1600.0)
        if early.any():
            j = int(np.argmax(np.where(early, sig_arr, -np.inf)))
            s = float(sig_arr[j])
            warnings.append(
                f"delta T before 1600 is uncertain: 1 sigma = {_format_seconds(s)} "
                f"at year {year_arr[j]:.1f} (2 sigma = {_format_seconds(2 * s)}); "
                "anything in UT (local times, horizons, visibility, eclipse tracks) "
                "moves with it")
        outside = known & ext_arr
        if outside.any():
            k = int(np.argmax(np.where(outside, sig_arr, -np.inf)))
            direction = "a forecast" if year_arr[k] > hi else "an extrapolation into the past"
            warnings.append(
                f"model {self.name} is extrapolating at year {year_arr[k]:.1f} "
                f"({direction}; it rests on data for {lo:g}..{hi:g}); "
                f"1 sigma = {_format_seconds(float(sig_arr[k]))}")
        return {
            "model": self.name,
            "title": self.title,
            "reference": self.reference,
            "jd_tt": _out(arr, scalar),
            "year": _out(year, scalar),
            "delta_t": value,
            "sigma": sig,
            "valid_span": (lo, hi),
            "extrapolated": extrapolated,
            "note": self.note,
            "warning": "; ".join(warnings) if warnings else None,
        }

    def __repr__(self) -> str:
        return f"<{type(self).__name__} {self.name!r}>"


# ---------------------------------------------------------------------------
# Model 1: SMH 2016 through skyfield (default)
# ---------------------------------------------------------------------------

@functools.lru_cache(maxsize=1)
def builtin_timescale():
    """skyfield's Timescale built from its bundled data (no network, cached).

    Its ``delta_t_function`` is skyfield's ΔT: IERS daily values since 1973,
    the Stephenson-Morrison-Hohenkerk splines (Table S15.2020) before, the
    SMH 2016 parabola far outside, joined by smooth patches.

    Returns
    -------
    skyfield.timelib.Timescale
    """
    from skyfield.api import load

    return load.timescale(builtin=True)


class SkyfieldSMH2016(DeltaTModel):
    """Stephenson, Morrison & Hohenkerk (2016) ΔT, as implemented by skyfield.

    skyfield's built-in ΔT (``skyfield.timelib.build_delta_t``) evaluates:

    * the IERS daily ΔT table it bundles, from 1973 to about a year past its
      release (the last year being IERS predictions);
    * before that, the cubic splines of the 2021 addendum (Morrison,
      Stephenson, Hohenkerk & Zawilski, Table S15.2020, -720..2019), with the
      last spline adjusted to meet the daily table;
    * before -720 an 800-year patch to, and beyond -1520 the pure, long-term
      parabola of SMH 2016, ``ΔT = -320 + 32.5 u²``, ``u = (year-1825)/100``;
      after the daily table a similar patch and the same parabola.

    Uncertainty: :func:`standard_sigma` (the Morrison & Stephenson 2004 rule
    and the telescopic floors), with forecasts counted from the end of the
    measured part of skyfield's daily table.  SMH 2016 plot their own error
    band for the spline fit; its values are not used here because they were
    not available as numbers.
    """

    name = "smh2016"
    title = "Stephenson, Morrison & Hohenkerk 2016 (2020 splines, via skyfield)"
    reference = (
        "F. R. Stephenson, L. V. Morrison, C. Y. Hohenkerk, 'Measurement of the "
        "Earth's rotation: 720 BC to AD 2015', Proc. R. Soc. A 472: 20160404 (2016); "
        "L. V. Morrison, F. R. Stephenson, C. Y. Hohenkerk, M. Zawilski, 'Addendum 2020 "
        "to ...', Proc. R. Soc. A 477 (2021), Table S15.2020; IERS daily values; "
        "implementation: skyfield.timelib.build_delta_t")

    #: First year of the spline fit (the earliest observations used).
    SPLINE_START = -720.0
    #: Length of the IERS prediction part of skyfield's daily table, years
    #: (finals2000A carries about one year of predictions -- from memory).
    PREDICTION_YEARS = 1.0

    def _function(self):
        return builtin_timescale().delta_t_function

    @functools.cached_property
    def data_end(self) -> float:
        """Last year of measured ΔT in skyfield's bundled table."""
        table_tt = builtin_timescale().delta_t_table[0]
        return float(decimal_year(table_tt[-1])) - self.PREDICTION_YEARS

    @property
    def valid_span(self) -> tuple[float, float]:
        return (self.SPLINE_START, self.data_end)

    def _seconds(self, jd_tt):
        return np.asarray(self._function()(jd_tt), dtype=np.float64)

    def _sigma(self, jd_tt):
        return standard_sigma(decimal_year(jd_tt), self.data_end)


# ---------------------------------------------------------------------------
# Model 2: Espenak & Meeus 2006 polynomials
# ---------------------------------------------------------------------------

# Pieces of the canon's ΔT, each valid from its lower bound (inclusive) to
# the next piece's: (lower bound, origin, scale, ascending coefficients) for
# ΔT = sum c_k ((y - origin)/scale)^k.  NASA/TP-2006-214141 section 2.7.
_EM_POLYNOMIALS = (
    (-500.0, 0.0, 100.0, (10583.6, -1014.41, 33.78311, -5.952053,
                          -0.1798452, 0.022174192, 0.0090316521)),
    (500.0, 1000.0, 100.0, (1574.2, -556.01, 71.23472, 0.319781,
                            -0.8503463, -0.005050998, 0.0083572073)),
    (1600.0, 1600.0, 1.0, (120.0, -0.9808, -0.01532, 1.0 / 7129.0)),
    (1700.0, 1700.0, 1.0, (8.83, 0.1603, -0.0059285, 0.00013336, -1.0 / 1174000.0)),
    (1800.0, 1800.0, 1.0, (13.72, -0.332447, 0.0068612, 0.0041116, -0.00037436,
                           0.0000121272, -0.0000001699, 0.000000000875)),
    (1860.0, 1860.0, 1.0, (7.62, 0.5737, -0.251754, 0.01680668, -0.0004473624,
                           1.0 / 233174.0)),
    (1900.0, 1900.0, 1.0, (-2.79, 1.494119, -0.0598939, 0.0061966, -0.000197)),
    (1920.0, 1920.0, 1.0, (21.20, 0.84493, -0.076100, 0.0020936)),
    (1941.0, 1950.0, 1.0, (29.07, 0.407, -1.0 / 233.0, 1.0 / 2547.0)),
    (1961.0, 1975.0, 1.0, (45.45, 1.067, -1.0 / 260.0, -1.0 / 718.0)),
    (1986.0, 2000.0, 1.0, (63.86, 0.3345, -0.060374, 0.0017275, 0.000651814,
                           0.00002373599)),
    (2005.0, 2000.0, 1.0, (62.92, 0.32217, 0.005589)),
)
_EM_BLEND_START = 2050.0   # parabola minus 0.5628 (2150 - y) from here ...
_EM_BLEND_END = 2150.0     # ... to here, then the pure parabola.

#: Coefficient of the canon's correction for ṅ = -25.858"/cy², s per year².
EM_NDOT_COEFFICIENT = -0.000012932
EM_NDOT_EPOCH = 1955.0


def espenak_meeus_2006(year, ndot_correction: bool = False):
    """ΔT from the Espenak & Meeus (2006) polynomials.

    Piecewise in the decimal year ``y``: the Morrison & Stephenson (2004)
    parabola ``-20 + 32 u²`` before -500 and after 2150, sixth-degree fits to
    the MS2004 table in -500..500 and 500..1600, fits to telescopic and
    modern values up to 2005, an extrapolating quadratic for 2005..2050 and
    a blend to the parabola for 2050..2150.  Each piece holds from its lower
    bound inclusive (y = -500 uses the -500..500 polynomial).

    Parameters
    ----------
    year : float or array_like
        Astronomical decimal year.
    ndot_correction : bool
        Add ``c = -0.000012932 (y - 1955)²`` seconds, the canon's correction
        from the ṅ = -26"/cy² assumed by the ΔT data to the ṅ = -25.858"/cy²
        of its lunar ephemeris.  The canon's tables add it at every epoch;
        so does this function.

    Returns
    -------
    seconds : numpy.float64 or ndarray
        ΔT in seconds.
    """
    y, scalar = _as_array(year)
    out = np.asarray(ms2004_parabola(y), dtype=np.float64).copy()
    bounds = [p[0] for p in _EM_POLYNOMIALS] + [_EM_BLEND_START]
    for (lower, origin, scale, coeffs), upper in zip(_EM_POLYNOMIALS, bounds[1:]):
        mask = (y >= lower) & (y < upper)
        if mask.any():
            out[mask] = np.polynomial.polynomial.polyval((y[mask] - origin) / scale, coeffs)
    blend = (y >= _EM_BLEND_START) & (y < _EM_BLEND_END)
    out[blend] -= 0.5628 * (_EM_BLEND_END - y[blend])
    if ndot_correction:
        out += EM_NDOT_COEFFICIENT * (y - EM_NDOT_EPOCH) ** 2
    return _out(out, scalar)


class EspenakMeeus2006(DeltaTModel):
    """The Espenak & Meeus (2006) ΔT polynomials, with or without the ṅ correction.

    See :func:`espenak_meeus_2006`.  The fits rest on data for -500..2005
    (:attr:`valid_span`); before -500 they are the MS2004 parabola and after
    2005 a 2006 forecast.  Uncertainty: :func:`standard_sigma` with forecasts
    counted from 2005.
    """

    DATA_END = 2005.0

    def __init__(self, ndot_correction: bool = False):
        self.ndot_correction = bool(ndot_correction)
        if self.ndot_correction:
            self.name = "espenak-meeus-2006-nd"
            self.title = ("Espenak & Meeus 2006 polynomials with the ṅ = -25.858\"/cy² "
                          "correction (as in the Five Millennium Canons)")
        else:
            self.name = "espenak-meeus-2006"
            self.title = "Espenak & Meeus 2006 polynomials"
        self.reference = (
            "F. Espenak, J. Meeus, Five Millennium Canon of Solar Eclipses: -1999 to "
            "+3000, NASA/TP-2006-214141 (2006), section 2.7")

    @property
    def valid_span(self) -> tuple[float, float]:
        return (-500.0, self.DATA_END)

    def _seconds(self, jd_tt):
        return espenak_meeus_2006(decimal_year(jd_tt), self.ndot_correction)

    def _sigma(self, jd_tt):
        return standard_sigma(decimal_year(jd_tt), self.DATA_END)


# ---------------------------------------------------------------------------
# Model 3: Morrison & Stephenson 2004 parabola
# ---------------------------------------------------------------------------

class MorrisonStephenson2004(DeltaTModel):
    """Morrison & Stephenson's (2004) long-term parabola ``ΔT = -20 + 32 u²``.

    ``u = (year - 1820) / 100``.  It is a mean curve: it ignores the
    fluctuations about the trend, which reach several hundred seconds in the
    Middle Ages, so it is meant for epochs outside the tabulated ΔT.
    :attr:`valid_span` is the span of Morrison & Stephenson's 2004 table,
    -1000..1700.  Uncertainty: :func:`standard_sigma`.
    """

    name = "ms2004"
    title = "Morrison & Stephenson 2004 long-term parabola"
    reference = ("L. V. Morrison, F. R. Stephenson, 'Historical values of the Earth's "
                 "clock error ΔT and the calculation of eclipses', J. Hist. Astron. 35, "
                 "327-336 (2004)")
    note = ("a long-term mean curve: real delta T departs from it by up to several "
            "hundred seconds in the Middle Ages and by tens of seconds today")

    @property
    def valid_span(self) -> tuple[float, float]:
        return (-1000.0, 1700.0)

    def _seconds(self, jd_tt):
        return ms2004_parabola(decimal_year(jd_tt))

    def _sigma(self, jd_tt):
        return standard_sigma(decimal_year(jd_tt))


# ---------------------------------------------------------------------------
# Model 4: constant
# ---------------------------------------------------------------------------

def _check_sigma(value, what: str) -> float | None:
    if value is None:
        return None
    try:
        s = float(value)
    except (TypeError, ValueError):
        raise ParameterError(f"{what}: sigma must be a number of seconds, got {value!r}") from None
    if not math.isfinite(s) or s < 0:
        raise ParameterError(f"{what}: sigma must be a finite number >= 0 seconds, got {value!r}")
    return s


class ConstantDeltaT(DeltaTModel):
    """A constant ΔT chosen by the user.

    Parameters
    ----------
    seconds : float
        ΔT in seconds at every epoch.
    sigma : float or None
        Its 1-sigma uncertainty in seconds at every epoch; None (default)
        uses :func:`standard_sigma` of the epoch.
    """

    def __init__(self, seconds: float, sigma: float | None = None):
        try:
            value = float(seconds)
        except (TypeError, ValueError):
            raise ParameterError(f"constant delta T must be a number of seconds, got {seconds!r}") from None
        if not math.isfinite(value):
            raise ParameterError(f"constant delta T must be finite, got {seconds!r}")
        self.value = value
        self.user_sigma = _check_sigma(sigma, "constant delta T")
        self.name = f"constant:{value:g}" + ("" if self.user_sigma is None else f"+-{self.user_sigma:g}")
        self.title = f"constant delta T = {value:g} s"
        self.reference = "user-supplied constant"

    @property
    def valid_span(self) -> tuple[float, float]:
        return (-math.inf, math.inf)

    def _seconds(self, jd_tt):
        return np.full(jd_tt.shape, self.value)

    def _sigma(self, jd_tt):
        if self.user_sigma is not None:
            return np.full(jd_tt.shape, self.user_sigma)
        return standard_sigma(decimal_year(jd_tt))


# ---------------------------------------------------------------------------
# Model 5: user table
# ---------------------------------------------------------------------------

def _read_table(path: str):
    """Parse a ``year, seconds[, sigma]`` CSV file; return float arrays."""
    try:
        with open(path, encoding="utf-8") as fh:
            lines = fh.readlines()
    except OSError as exc:
        raise ParameterError(f"{path}: cannot read delta T table: {exc.strerror or exc}") from None
    except UnicodeDecodeError:
        raise ParameterError(f"{path}: delta T table is not UTF-8 text") from None
    rows = []
    ncols = None
    first_line = True
    for lineno, raw in enumerate(lines, start=1):
        text = raw.split("#", 1)[0].strip()
        if not text:
            continue
        fields = [f.strip() for f in text.split(",")]
        header_allowed, first_line = first_line, False
        try:
            numbers = [float(f) for f in fields]
        except ValueError:
            if header_allowed and len(fields) in (2, 3) and not any(map(_looks_numeric, fields)):
                continue  # a line of column names, e.g. 'year, seconds'
            raise ParameterError(
                f"{path}:{lineno}: expected 'year, seconds[, sigma]' numbers, got {text!r}") from None
        if len(numbers) not in (2, 3):
            raise ParameterError(
                f"{path}:{lineno}: expected 2 or 3 columns (year, seconds[, sigma]), "
                f"got {len(numbers)}")
        if ncols is None:
            ncols = len(numbers)
        elif len(numbers) != ncols:
            raise ParameterError(f"{path}:{lineno}: expected {ncols} columns like the first row, "
                                 f"got {len(numbers)}")
        if not all(math.isfinite(v) for v in numbers):
            raise ParameterError(f"{path}:{lineno}: values must be finite, got {text!r}")
        if ncols == 3 and numbers[2] < 0:
            raise ParameterError(f"{path}:{lineno}: sigma must be >= 0, got {numbers[2]:g}")
        if rows and numbers[0] <= rows[-1][0]:
            raise ParameterError(
                f"{path}:{lineno}: years must increase, {numbers[0]:g} follows {rows[-1][0]:g}")
        rows.append(numbers)
    if len(rows) < 2:
        raise ParameterError(f"{path}: a delta T table needs at least 2 rows, found {len(rows)}")
    data = np.array(rows, dtype=np.float64)
    sig = data[:, 2] if ncols == 3 else None
    return data[:, 0], data[:, 1], sig


def _looks_numeric(field: str) -> bool:
    try:
        float(field)
    except ValueError:
        return False
    return True


class TableDeltaT(DeltaTModel):
    """ΔT from a user table, linearly interpolated in the decimal year.

    The file is CSV text: one ``year, seconds`` or ``year, seconds, sigma``
    row per line, years (astronomical decimal years, :func:`decimal_year`)
    strictly increasing, at least two rows.  ``#`` starts a comment; blank
    lines are ignored; an optional first line of column names (such as
    ``year, seconds``) is skipped.

    Between rows ΔT (and sigma) is interpolated linearly.  Outside the table
    ΔT follows the MS2004 parabola ``-20 + 32 u²`` shifted by a constant so
    that it meets the first (respectively last) row; the model is then
    extrapolating, and :meth:`provenance` says so.

    Uncertainty: the ``sigma`` argument if given (at every epoch); else the
    file's sigma column, interpolated, and outside the table the larger of
    the end row's sigma and :func:`standard_sigma`; else
    :func:`standard_sigma`.

    Parameters
    ----------
    path : str or os.PathLike
        The CSV file.
    sigma : float or None
        1-sigma uncertainty in seconds at every epoch.

    Raises
    ------
    calendra.errors.ParameterError
        If the file cannot be read or a line is malformed; the message names
        the file and line.
    """

    def __init__(self, path, sigma: float | None = None):
        self.path = os.fspath(path)
        self.years, self.values, self.table_sigma = _read_table(self.path)
        self.user_sigma = _check_sigma(sigma, self.path)
        self.name = f"table:{self.path}"
        self.title = f"user delta T table {os.path.basename(self.path)} ({len(self.years)} rows)"
        self.reference = f"user table {os.path.abspath(self.path)}"
        first, last = self.years[0], self.years[-1]
        self._offset_first = float(self.values[0] - ms2004_parabola(first))
        self._offset_last = float(self.values[-1] - ms2004_parabola(last))

    @property
    def valid_span(self) -> tuple[float, float]:
        return (float(self.years[0]), float(self.years[-1]))

    def _seconds(self, jd_tt):
        y = decimal_year(jd_tt)
        out = np.interp(y, self.years, self.values)
        before, after = y < self.years[0], y > self.years[-1]
        out[before] = ms2004_parabola(y[before]) + self._offset_first
        out[after] = ms2004_parabola(y[after]) + self._offset_last
        return out

    def _sigma(self, jd_tt):
        y = decimal_year(jd_tt)
        if self.user_sigma is not None:
            return np.full(y.shape, self.user_sigma)
        if self.table_sigma is None:
            return standard_sigma(y)
        out = np.interp(y, self.years, self.table_sigma)
        outside = (y < self.years[0]) | (y > self.years[-1])
        out[outside] = np.maximum(out[outside], standard_sigma(y[outside]))
        return out


# ---------------------------------------------------------------------------
# Registry
# ---------------------------------------------------------------------------

_BUILTIN_FACTORIES = {
    "smh2016": SkyfieldSMH2016,
    "espenak-meeus-2006": lambda: EspenakMeeus2006(ndot_correction=False),
    "espenak-meeus-2006-nd": lambda: EspenakMeeus2006(ndot_correction=True),
    "ms2004": MorrisonStephenson2004,
}
_PATTERNS = {
    "constant:SECONDS": "constant delta T in seconds (constant:SECONDS+-SIGMA gives its uncertainty)",
    "table:PATH": "user CSV table 'year, seconds[, sigma]', linearly interpolated",
}
_table_cache: dict = {}


@functools.lru_cache(maxsize=None)
def _builtin(name: str) -> DeltaTModel:
    return _BUILTIN_FACTORIES[name]()


def available_models() -> dict[str, str]:
    """The model names :func:`get_model` accepts, with their titles.

    Returns
    -------
    dict of str to str
        Name (or pattern, for ``constant:SECONDS`` and ``table:PATH``) to
        title, the default model first.
    """
    out = {name: _builtin(name).title for name in _BUILTIN_FACTORIES}
    out.update(_PATTERNS)
    return out


def _parse_constant(arg: str, sigma):
    text = arg.strip().replace("±", "+-")
    if "+-" in text:
        value_text, sigma_text = text.split("+-", 1)
        if sigma is not None:
            raise ParameterError(f"delta T model 'constant:{arg}': sigma given twice")
        sigma = sigma_text.strip()
    else:
        value_text = text
    try:
        value = float(value_text)
    except ValueError:
        raise ParameterError(
            f"delta T model 'constant:{arg}': expected constant:SECONDS or "
            f"constant:SECONDS+-SIGMA, seconds being a number") from None
    try:
        sigma = None if sigma is None else float(sigma)
    except ValueError:
        raise ParameterError(f"delta T model 'constant:{arg}': sigma {sigma!r} is not a number") from None
    return _constant(value, sigma)


@functools.lru_cache(maxsize=256)
def _constant(value: float, sigma: float | None) -> ConstantDeltaT:
    return ConstantDeltaT(value, sigma)


def get_model(spec=None, *, sigma: float | None = None) -> DeltaTModel:
    """Return the ΔT model named by ``spec``.

    Parameters
    ----------
    spec : str, DeltaTModel or None
        A model name (``smh2016``, ``espenak-meeus-2006``,
        ``espenak-meeus-2006-nd``, ``ms2004``; case-insensitive),
        ``constant:SECONDS`` or ``constant:SECONDS+-SIGMA``, ``table:PATH``,
        a model instance (returned as is) or None for :data:`DEFAULT_MODEL`.
    sigma : float or None
        1-sigma uncertainty in seconds for ``constant:`` and ``table:``
        models; not accepted for the published models.

    Returns
    -------
    DeltaTModel
        Named models are shared instances; tables are re-read when the file
        changes.

    Raises
    ------
    calendra.errors.UnknownNameError
        For an unknown name (the message suggests close names).
    calendra.errors.ParameterError
        For a malformed ``constant:`` value or ``table:`` file, or a sigma
        given to a published model.
    """
    if isinstance(spec, DeltaTModel):
        return spec
    if spec is None:
        spec = DEFAULT_MODEL
    if not isinstance(spec, str):
        raise ParameterError(f"delta T model must be a name or a model, got {type(spec).__name__}")
    text = spec.strip()
    kind, sep, arg = text.partition(":")
    key = kind.strip().lower()
    if sep and key == "constant":
        return _parse_constant(arg, sigma)
    if sep and key == "table":
        path = arg.strip()
        if not path:
            raise ParameterError("delta T model 'table:' needs a file path: table:PATH")
        try:
            st = os.stat(path)
            stamp = (os.path.abspath(path), st.st_mtime_ns, st.st_size, sigma)
        except OSError:
            stamp = None
        if stamp is not None and stamp in _table_cache:
            return _table_cache[stamp]
        model = TableDeltaT(path, sigma)
        if stamp is not None:
            _table_cache[stamp] = model
        return model
    name = text.lower()
    if name in _BUILTIN_FACTORIES:
        if sigma is not None:
            raise ParameterError(
                f"delta T model {name!r} has its own uncertainty; sigma applies to "
                "constant: and table: models only")
        return _builtin(name)
    raise UnknownNameError("delta-T model", text, list(_BUILTIN_FACTORIES) + list(_PATTERNS))


# ---------------------------------------------------------------------------
# Module-level conveniences (model=None means the default model)
# ---------------------------------------------------------------------------

def delta_t(jd_tt, model=None):
    """ΔT = TT - UT1 in seconds at TT Julian Day(s) ``jd_tt``.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Day (TT).
    model : str, DeltaTModel or None
        See :func:`get_model`.

    Returns
    -------
    seconds : numpy.float64 or ndarray
    """
    return get_model(model).seconds(jd_tt)


def sigma(jd_tt, model=None):
    """1-sigma uncertainty of ΔT in seconds at TT Julian Day(s) ``jd_tt``.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Day (TT).
    model : str, DeltaTModel or None
        See :func:`get_model`.

    Returns
    -------
    seconds : numpy.float64 or ndarray
    """
    return get_model(model).sigma(jd_tt)


def provenance(jd_tt, model=None) -> dict:
    """Source, value, uncertainty and warnings of ΔT at ``jd_tt`` (TT Julian Day).

    See :meth:`DeltaTModel.provenance`.
    """
    return get_model(model).provenance(jd_tt)


def ut_from_tt(jd_tt, model=None):
    """UT1 Julian Day of TT Julian Day(s) ``jd_tt``: ``jd_tt - ΔT/86400``.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Day (TT).
    model : str, DeltaTModel or None
        See :func:`get_model`.

    Returns
    -------
    jd_ut : numpy.float64 or ndarray
        Julian Day (UT1).
    """
    return get_model(model).ut_from_tt(jd_tt)


def tt_from_ut(jd_ut, model=None):
    """TT Julian Day of UT1 Julian Day(s) ``jd_ut`` (fixed-point inverse).

    See :meth:`DeltaTModel.tt_from_ut`.

    Parameters
    ----------
    jd_ut : float or array_like
        Julian Day (UT1).
    model : str, DeltaTModel or None
        See :func:`get_model`.

    Returns
    -------
    jd_tt : numpy.float64 or ndarray
        Julian Day (TT).
    """
    return get_model(model).tt_from_ut(jd_ut)


class DeltaTSweep(NamedTuple):
    """ΔT values across its uncertainty range (see :func:`sweep`).

    Attributes
    ----------
    k : ndarray, shape (steps,)
        Multiples of sigma, from ``-n_sigma`` to ``+n_sigma``.
    delta_t : ndarray, shape (steps,) + shape of jd_tt
        ``ΔT + k σ`` in seconds.
    jd_ut : ndarray, shape (steps,) + shape of jd_tt
        The UT1 Julian Day of ``jd_tt`` under each ΔT.
    """

    k: np.ndarray
    delta_t: np.ndarray
    jd_ut: np.ndarray


def sweep(jd_tt, n_sigma: float = 2.0, steps: int = 5, model=None) -> DeltaTSweep:
    """ΔT values spanning ``ΔT ± n_sigma σ``, to show how UT results move.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Day (TT).
    n_sigma : float
        Half-width of the range in units of sigma (>= 0).
    steps : int
        Number of evenly spaced values (>= 1; an odd number includes the
        nominal value; 1 gives the nominal value only).
    model : str, DeltaTModel or None
        See :func:`get_model`.

    Returns
    -------
    DeltaTSweep
        ``k`` (multiples of sigma), ``delta_t`` (seconds) and ``jd_ut`` (UT1
        Julian Days), the latter two of shape ``(steps,) + np.shape(jd_tt)``.
    """
    try:
        n_sigma = float(n_sigma)
        steps_int = int(steps)
    except (TypeError, ValueError):
        raise ParameterError(f"sweep: n_sigma must be a number and steps an integer, "
                             f"got {n_sigma!r}, {steps!r}") from None
    if steps_int != steps or steps_int < 1:
        raise ParameterError(f"sweep: steps must be an integer >= 1, got {steps!r}")
    if not math.isfinite(n_sigma) or n_sigma < 0:
        raise ParameterError(f"sweep: n_sigma must be a finite number >= 0, got {n_sigma!r}")
    m = get_model(model)
    arr = np.asarray(jd_tt, dtype=np.float64)
    k = np.zeros(1) if steps_int == 1 else np.linspace(-n_sigma, n_sigma, steps_int)
    value = np.asarray(m.seconds(arr))
    sig = np.asarray(m.sigma(arr))
    shape = (steps_int,) + (1,) * arr.ndim
    values = value[np.newaxis, ...] + k.reshape(shape) * sig[np.newaxis, ...]
    return DeltaTSweep(k=k, delta_t=values, jd_ut=arr[np.newaxis, ...] - values / DAY_S)


# ---------------------------------------------------------------------------
# skyfield
# ---------------------------------------------------------------------------

def skyfield_timescale(model=None):
    """A skyfield Timescale whose ΔT is ``model`` (bundled data, no network).

    For ``smh2016`` this is skyfield's own built-in timescale; for any other
    model a Timescale with skyfield's bundled leap-second table and the
    model's :meth:`~DeltaTModel.seconds` as its ΔT function.  Cached on the
    model instance.

    Parameters
    ----------
    model : str, DeltaTModel or None
        See :func:`get_model`.

    Returns
    -------
    skyfield.timelib.Timescale
    """
    m = get_model(model)
    ts = m.__dict__.get("_skyfield_timescale")
    if ts is None:
        base = builtin_timescale()
        if isinstance(m, SkyfieldSMH2016):
            ts = base
        else:
            from skyfield.timelib import Timescale

            ts = Timescale(m.seconds, base.leap_dates, base.leap_offsets)
        m._skyfield_timescale = ts
    return ts
