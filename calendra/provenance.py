"""Provenance: what every result was computed with, and how far to trust it.

Every result of calendra carries a dict saying which ephemeris (and its
span), which delta-T model (with the value used and its uncertainty), which
calendars and year numbering, which precession/refraction models, and any
validity warning.  Table output shows it in a footer; JSON output in a
``provenance`` field.
"""

from __future__ import annotations

import numpy as np

#: Day number of Julian AD 8 March 1: before it the proleptic Julian calendar is a convention.
JULIAN_CONVENTION_END_JDN = 1724061
#: JD of 1600 January 1 (Gregorian): before it delta T is known from eclipses and occultations only.
DELTAT_TELESCOPIC_JD = 2305447.5

TIME_SCALE_NOTE = ("instants are held in TT (Terrestrial Time, the ephemeris' uniform time); "
                   "UT = TT - delta T")


def warnings_for(jd_tt, deltat=None) -> list[str]:
    """Return validity warnings for instants ``jd_tt`` (Julian Days, TT)."""
    jd = np.atleast_1d(np.asarray(jd_tt, dtype=float))
    out = []
    if np.any(jd < JULIAN_CONVENTION_END_JDN - 0.5):
        out.append("before AD 8 the proleptic Julian calendar is a convention: Roman leap years were "
                   "irregular from 45 BC to AD 8, and the republican calendar before 45 BC is not computable")
    if deltat is not None and np.any(jd < DELTAT_TELESCOPIC_JD):
        early = jd[jd < DELTAT_TELESCOPIC_JD]
        sig = np.max(np.atleast_1d(deltat.sigma(early)))
        out.append(f"before 1600 delta T is uncertain: up to +-{format_seconds(sig)} (1 sigma) here; "
                   "local times, day boundaries and anything seen from a site move with it")
    if np.any(jd < 0):
        out.append("before -4712 January 1 (julian) Julian Days are negative")
    return out


def format_seconds(seconds: float) -> str:
    """Format a duration in seconds as text with a sensible unit (s, min, h)."""
    s = abs(float(seconds))
    if s < 120:
        return f"{seconds:.1f} s" if s < 10 else f"{seconds:.0f} s"
    if s < 7200:
        return f"{seconds / 60:.1f} min"
    return f"{seconds / 3600:.2f} h"


def build(jd_tt=None, deltat=None, calendars=(), ephemeris: bool = False, models: dict | None = None,
          site=None, extra_warnings=()) -> dict:
    """Assemble the provenance dict of a result.

    Parameters
    ----------
    jd_tt : array_like or None
        The instants (Julian Days, TT) the result depends on.
    deltat : delta-T model or None
        The model used to convert TT to UT.
    calendars : iterable of Calendar
        Calendars whose dates appear in the result.
    ephemeris : bool
        Whether the DE406 ephemeris was used.
    models : dict, optional
        Other models by role, e.g. ``{"refraction": "Bennett 1982, 10 C, 1010 mbar"}``.
    site : Site or None
    extra_warnings : iterable of str
    """
    prov: dict = {"time_scales": TIME_SCALE_NOTE}
    if ephemeris:
        from .ephemeris import provenance as eph_prov

        prov["ephemeris"] = eph_prov()
    if deltat is not None:
        entry = {"model": deltat.name, "title": getattr(deltat, "title", ""),
                 "reference": getattr(deltat, "reference", "")}
        if jd_tt is not None:
            jd = np.atleast_1d(np.asarray(jd_tt, dtype=float))
            vals = np.atleast_1d(deltat.seconds(jd))
            sig = np.atleast_1d(deltat.sigma(jd))
            if jd.size == 1:
                entry["value_s"] = round(float(vals[0]), 1)
                entry["sigma_s"] = round(float(sig[0]), 1)
            else:
                entry["range_s"] = [round(float(vals.min()), 1), round(float(vals.max()), 1)]
                entry["max_sigma_s"] = round(float(sig.max()), 1)
        prov["delta_t"] = entry
    cals = []
    for cal in calendars:
        cals.append({"name": cal.label, "year_numbering": cal.year_numbering, "day_start": cal.day_start})
    if cals:
        prov["calendars"] = cals
    if models:
        prov["models"] = dict(models)
    if site is not None:
        prov["site"] = site.describe()
    warns = list(extra_warnings)
    if jd_tt is not None:
        warns += warnings_for(jd_tt, deltat)
    prov["warnings"] = warns
    return prov


def footer_lines(prov: dict) -> list[str]:
    """Return the provenance as short lines for a table footer."""
    lines = []
    eph = prov.get("ephemeris")
    if eph:
        span = " to ".join(eph.get("span_dates", []))
        lines.append(f"ephemeris: JPL {eph.get('ephemeris', '?')} ({eph.get('source_package', '')} "
                     f"{eph.get('source_version', '')}), covering {span}")
    dt = prov.get("delta_t")
    if dt:
        text = f"delta T: {dt['model']}"
        if "value_s" in dt:
            text += f" = {format_seconds(dt['value_s'])} +- {format_seconds(dt['sigma_s'])} (1 sigma)"
        elif "range_s" in dt and dt["range_s"][1] - dt["range_s"][0] < max(1.0, 0.1 * dt["max_sigma_s"]):
            text += f" = {format_seconds(dt['range_s'][0])} +- {format_seconds(dt['max_sigma_s'])} (1 sigma)"
        elif "range_s" in dt:
            text += (f" from {format_seconds(dt['range_s'][0])} to {format_seconds(dt['range_s'][1])}, "
                     f"uncertainty up to +-{format_seconds(dt['max_sigma_s'])}")
        if dt.get("reference"):
            text += f"; {dt['reference']}"
        lines.append(text)
    lines.append(prov.get("time_scales", TIME_SCALE_NOTE))
    cals = prov.get("calendars") or []
    numberings = sorted({c["year_numbering"] for c in cals if c["year_numbering"]})
    for n in numberings:
        names = ", ".join(c["name"] for c in cals if c["year_numbering"] == n)
        lines.append(f"years ({names}): {n}")
    starts = [c for c in cals if c["day_start"] != "midnight"]
    if starts:
        lines.append("day begins: " + ", ".join(f"{c['name']} at {c['day_start']}" for c in starts))
    for role, text in (prov.get("models") or {}).items():
        lines.append(f"{role}: {text}")
    site = prov.get("site")
    if site:
        lines.append(f"site: {site['name']} {site['latitude_deg']:+.4f} {site['longitude_deg']:+.4f} "
                     f"{site['elevation_m']:g} m, civil time {site['time']}")
    for w in prov.get("warnings", []):
        lines.append(f"WARNING: {w}")
    return lines
