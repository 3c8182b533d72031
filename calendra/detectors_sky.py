"""Detectors of the lunisolar cycle: lunar phases, equinoxes and solstices, solar longitudes.

Registered through the same ``calendra_detectors`` hook as any plugin (the
plugin host imports this module as a core hook module).  The command line
``calendra events NAME`` is generated from the declared parameters, e.g.::

    calendra events lunar-phases --from -1000 --to -990 --phase new
    calendra events seasons --from 1996 --to 2006
    calendra events solar-longitude --from 2000 --to 2001 --longitude 45 --step 90

Every table has the columns ``jd_tt``, ``jd_ut`` (through the delta-T model
passed in), ``kind``, ``delta_t_s`` and ``delta_t_sigma_s`` (the model's
1-sigma uncertainty, which UT and every local time inherit); with a site,
``local_jdn``, ``local_date`` and ``local_time`` give the civil day and
time at the site (``site.offset_days`` after UT; the western calendar,
Julian before 1582-10-15, astronomical years).  The computations are
those of :mod:`calendra.lunations` and :mod:`calendra.solarterms`.
"""

from __future__ import annotations

import numpy as np

from .detector import Detector, Parameter
from .errors import ParameterError
from .events import Column, EventTable
from .hookspecs import hookimpl

_PRECESSION = Parameter(
    "precession", "choice", "vondrak2011",
    "precession model of the ecliptic of date: vondrak2011 (long-term) or iau2006 (as skyfield)",
    choices=("vondrak2011", "iau2006"))

#: Julian Day (TT) of AD 1000: before it the IAU 2006 polynomials depart from the long-term model.
_IAU2006_GOOD_FROM_JD = 2086307.5


def _iso_dates(year, month, day):
    """Format date fields as ISO-like text with astronomical years (vectorised)."""
    y = np.asarray(year, dtype=np.int64)
    digits = np.char.zfill(np.abs(y).astype(str), 4)
    years = np.where(y < 0, np.char.add("-", digits), digits)
    mm = np.char.zfill(np.asarray(month).astype(str), 2)
    dd = np.char.zfill(np.asarray(day).astype(str), 2)
    return np.char.add(np.char.add(np.char.add(np.char.add(years, "-"), mm), "-"), dd)


def _hms(seconds):
    s = np.asarray(seconds, dtype=np.int64)
    parts = [np.char.zfill(v.astype(str), 2) for v in (s // 3600, s % 3600 // 60, s % 60)]
    return np.char.add(np.char.add(np.char.add(np.char.add(parts[0], ":"), parts[1]), ":"), parts[2])


def local_civil(jd_ut, site):
    """Return the civil day number, date and time at a site of UT instants.

    Parameters
    ----------
    jd_ut : array_like
        Julian Days, UT1.
    site : calendra.sites.Site
        Its ``offset_days`` (civil time minus UT, days) gives the civil time.

    Returns
    -------
    jdn : ndarray of int
        Chronological Julian Day Number of the civil day (midnight to midnight).
    date : ndarray of str
        That day in the western calendar (Julian before 1582-10-15), ``YYYY-MM-DD``
        with astronomical years.
    time : ndarray of str
        Civil time ``HH:MM:SS``, rounded to the second.
    """
    from .calendars_core import WesternCalendar

    local = np.asarray(jd_ut, dtype=np.float64).reshape(-1) + site.offset_days
    if local.size == 0:        # numpy's string functions reject empty arrays
        return np.zeros(0, dtype=np.int64), np.zeros(0, dtype=str), np.zeros(0, dtype=str)
    total = np.floor((local + 0.5) * 86400.0 + 0.5).astype(np.int64)
    jdn, secs = total // 86400, total % 86400
    fields = WesternCalendar().from_jdn(jdn)
    return jdn, _iso_dates(fields["year"], fields["month"], fields["day"]), _hms(secs)


def _table(jd_tt, kind, extra, meta, deltat, site, models, warnings):
    """Assemble an EventTable with the UT, delta-T and local-date columns and the provenance."""
    from .provenance import build

    jd_tt = np.asarray(jd_tt, dtype=np.float64)
    cols = {"jd_tt": jd_tt, "jd_ut": np.asarray(deltat.ut_from_tt(jd_tt), dtype=np.float64),
            "kind": np.asarray(kind, dtype=str)}
    cols.update(extra)
    cols["delta_t_s"] = np.round(np.asarray(deltat.seconds(jd_tt), dtype=np.float64), 1)
    cols["delta_t_sigma_s"] = np.round(np.asarray(deltat.sigma(jd_tt), dtype=np.float64), 1)
    meta = dict(meta)
    meta["delta_t_s"] = Column("delta_t_s", "s", "delta T = TT - UT1 of the model")
    meta["delta_t_sigma_s"] = Column("delta_t_sigma_s", "s",
                                     "1-sigma uncertainty of delta T, carried by jd_ut and local times")
    if site is not None:
        jdn, date, time = local_civil(cols["jd_ut"], site)
        cols["local_jdn"], cols["local_date"], cols["local_time"] = jdn, date, time
        meta["local_jdn"] = Column("local_jdn", "d", "Julian Day Number of the civil day at the site")
        meta["local_date"] = Column("local_date", "", "civil date at the site, western calendar "
                                    "(Julian before 1582-10-15), astronomical years")
        meta["local_time"] = Column("local_time", "", f"civil time at the site ({site.time_rule})")
        models = dict(models, **{"local date": "civil day from midnight of site time "
                                 f"({site.time_rule}); western calendar"})
    prov = build(jd_tt if jd_tt.size else None, deltat, ephemeris=True, models=models, site=site,
                 extra_warnings=warnings)
    return EventTable(cols, meta, prov)


def _precession_warnings(jd_tt, precession):
    if precession == "iau2006" and np.any(np.asarray(jd_tt) < _IAU2006_GOOD_FROM_JD):
        return ["precession iau2006 (P03 polynomials) used before AD 1000: its ecliptic and equinox of "
                "date depart from the long-term model (1.3 arcsec at -1000, 12 arcsec at -3000), "
                "which moves equinoxes by up to minutes and lunar phases by up to seconds"]
    return []


def _residual_text(residual):
    worst = float(np.max(residual)) if np.size(residual) else 0.0
    return f"largest last correction {worst:.2g} s"


class LunarPhases(Detector):
    """New moons, first quarters, full moons and last quarters, with lunation numbers."""

    name = "lunar-phases"
    aliases = ("moon-phases",)
    title = "Lunar phases: new moon, first quarter, full moon, last quarter"
    description = ("Moments the apparent geocentric ecliptic longitude of the Moon minus that of the Sun "
                   "is 0, 90, 180 or 270 degrees (DE406), with Meeus' lunation number (0 = new moon of "
                   "2000 January 6) and Brown's (Meeus + 953).")
    parameters = (
        Parameter("phase", "choice", "all", "which phases",
                  choices=("all", "new", "first-quarter", "full", "last-quarter")),
        _PRECESSION,
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, phase, precession):
        from .lunations import PHASE_NAMES, lunar_phases
        from .solarterms import PRECESSION_MODELS

        table = lunar_phases(jd_tt_start, jd_tt_end, None if phase == "all" else phase,
                             precession=precession, progress=progress)
        extra = {"lunation": table.lunation, "brown_lunation": table.brown_lunation}
        meta = {
            "lunation": Column("lunation", "", "Meeus' lunation number: k of the new moon that begins "
                               "the lunation, 0 = 2000 January 6"),
            "brown_lunation": Column("brown_lunation", "", "Brown's lunation number = lunation + 953"),
        }
        models = {
            "lunar phases": "apparent geocentric ecliptic longitude of the Moon minus the Sun = 0/90/180/270 "
                            "deg in the mean ecliptic of date (nutation cancels in the difference); "
                            "light time and annual aberration to first order",
            "method": "Meeus (1998) ch. 49 mean phases with the leading corrections as predictor, "
                      "vectorised Newton steps on the DE406 elongation until every last correction "
                      f"is under 0.1 s ({_residual_text(table.residual_s)})",
            "precession": PRECESSION_MODELS[precession],
            "nutation": "none needed: it shifts both longitudes equally",
            "lunation numbers": "Meeus k (0 = new moon of 2000 Jan 6); Brown = Meeus + 953",
        }
        kind = np.asarray(PHASE_NAMES)[table.phase]
        return _table(table.jd_tt, kind, extra, meta, deltat, site, models,
                      _precession_warnings(table.jd_tt, precession))


def _solar_models(precession, residual):
    from .solarterms import NUTATION_TERMS, PRECESSION_MODELS

    return {
        "solar longitude": "apparent geocentric ecliptic longitude of the Sun, true ecliptic and equinox "
                           "of date; light time and annual aberration to first order",
        "method": "Meeus (1998) ch. 25 mean longitude and equation of centre as predictor, vectorised "
                  f"Newton steps on DE406 until every last correction is under 0.1 s "
                  f"({_residual_text(residual)})",
        "precession": PRECESSION_MODELS[precession],
        "nutation": f"IAU 2000A luni-solar series truncated to its {NUTATION_TERMS} largest terms (the "
                    "IAU 2000B selection), planetary terms omitted, full polynomial fundamental arguments; "
                    "the omitted terms are about 1 mas, 0.025 s of solar motion",
    }


class Seasons(Detector):
    """Equinoxes and solstices."""

    name = "seasons"
    aliases = ("equinoxes-solstices",)
    title = "Equinoxes and solstices (apparent solar longitude 0, 90, 180, 270 degrees)"
    description = ("Moments the Sun's apparent geocentric ecliptic longitude of date is 0 (vernal equinox), "
                   "90 (summer solstice), 180 (autumnal equinox) or 270 degrees (winter solstice); the "
                   "names are those of the northern hemisphere.")
    parameters = (_PRECESSION,)

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, precession):
        from .solarterms import SEASON_NAMES, equinoxes_solstices

        found = equinoxes_solstices(jd_tt_start, jd_tt_end, precession=precession, progress=progress)
        kind = np.asarray(SEASON_NAMES)[np.rint(found.longitude_deg / 90.0).astype(np.int64) % 4]
        extra = {"longitude_deg": found.longitude_deg}
        meta = {"longitude_deg": Column("longitude_deg", "deg", "apparent solar longitude crossed")}
        return _table(found.jd_tt, kind, extra, meta, deltat, site,
                      _solar_models(precession, found.residual_s),
                      _precession_warnings(found.jd_tt, precession))


def parse_longitudes(text):
    """Read a comma-separated list of longitudes in degrees.

    Parameters
    ----------
    text : str or None
        E.g. ``"45"`` or ``"45, 135, 225, 315"``.

    Returns
    -------
    list of float or None
    """
    if text is None or not str(text).strip():
        return None
    try:
        values = [float(v) for v in str(text).replace(";", ",").split(",") if v.strip()]
    except ValueError:
        raise ParameterError(f"longitude: expected degrees or a comma-separated list of degrees, "
                             f"got {text!r}") from None
    if not values or not all(np.isfinite(values)):
        raise ParameterError(f"longitude: expected finite degrees, got {text!r}")
    return values


def longitude_set(longitude=None, step=None):
    """Return the longitudes a solar-longitude search crosses, degrees in [0, 360).

    Parameters
    ----------
    longitude : str, float, sequence or None
        One longitude or a list (degrees); with ``step``, the offsets of the series.
    step : float or None
        Spacing in degrees, ``0 < step <= 360``: every ``longitude + n step``.

    Returns
    -------
    ndarray
        Sorted unique longitudes.  Neither argument: the 24 solar terms (step 15).
    """
    if isinstance(longitude, str) or longitude is None:
        base = parse_longitudes(longitude)
    else:
        base = [float(v) for v in np.atleast_1d(longitude)]
    if step is None:
        if base is None:
            step = 15.0
        else:
            return np.unique(np.mod(base, 360.0))
    step = float(step)
    if not (np.isfinite(step) and 0.0 < step <= 360.0):
        raise ParameterError(f"step must be in (0, 360] degrees, got {step!r}")
    multiples = step * np.arange(int(np.ceil(360.0 / step - 1e-9)))
    offsets = np.asarray(base if base is not None else [0.0])
    values = np.mod(offsets[:, None] + multiples[None, :], 360.0).reshape(-1)
    return np.unique(np.round(values, 9) % 360.0)


class SolarLongitude(Detector):
    """Crossings of given apparent solar longitudes: solar terms, cross-quarter days, any list."""

    name = "solar-longitude"
    aliases = ("solar-terms",)
    title = "The Sun at given apparent ecliptic longitudes (solar terms, cross-quarter days, ...)"
    description = ("Moments the Sun's apparent geocentric ecliptic longitude of date crosses the given "
                   "values.  --longitude takes one value or a list (45,135); --step N adds every N "
                   "degrees from those values (or from 0).  With neither: the 24 solar terms (step 15), "
                   "named in pinyin; --longitude 45 --step 90 gives the cross-quarter days.")
    parameters = (
        Parameter("longitude", "str", None, "longitude(s) in degrees, comma-separated (default 0 with --step)"),
        Parameter("step", "float", None, "spacing in degrees, 0 < step <= 360 (default 15 without --longitude)"),
        _PRECESSION,
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, longitude, step, precession):
        from .solarterms import solar_longitude_crossings, solar_term_names

        targets = longitude_set(longitude, step)
        found = solar_longitude_crossings(jd_tt_start, jd_tt_end, targets, precession=precession,
                                          progress=progress)
        names = solar_term_names(found.longitude_deg)
        if found.longitude_deg.size:
            generic = np.char.add("longitude-", np.char.mod("%g", found.longitude_deg))
            kind = np.where(names != "", names, generic)
        else:
            kind = np.zeros(0, dtype=str)
        extra = {"longitude_deg": found.longitude_deg}
        meta = {"longitude_deg": Column("longitude_deg", "deg", "apparent solar longitude crossed")}
        models = _solar_models(precession, found.residual_s)
        models["names"] = "multiples of 15 deg: the 24 solar terms in pinyin (modern order; 315 = lichun)"
        return _table(found.jd_tt, kind, extra, meta, deltat, site, models,
                      _precession_warnings(found.jd_tt, precession))


@hookimpl
def calendra_detectors():
    """The lunisolar detectors of the core."""
    return [LunarPhases(), Seasons(), SolarLongitude()]
