"""Detectors of events seen from a site, and the ``sites`` command (a core hook module).

Detectors (``calendra events NAME --site SITE --from DATE --to DATE``):

``sun``
    Sunrise, transit, sunset and twilight: one row per civil day (or one per
    event with ``--layout event``).
``moon``
    Moonrise, transit and moonset: one row per event (or per day).
``crescent``
    First visibility of the crescent in the evening (or last in the morning)
    for each lunation, with the evening before and after, by a registered
    criterion (:mod:`calendra.crescent`).
``lunar-six``
    The Babylonian lunar six of each month (:mod:`calendra.lunarsix`).

Times in the extra columns are the site's civil time (its zone, or local
mean time), written ``HH:MM:SS``; the ``date_ut``/``time_ut`` columns of the
event renderer are UT.
"""

from __future__ import annotations

import numpy as np

from .detector import Detector, Parameter
from .errors import ParameterError
from .hookspecs import hookimpl

_LIMB = Parameter("limb", "choice", "upper", "point of the disc that meets the horizon",
                  choices=("upper", "centre", "lower"))
_REFRACTION = Parameter("refraction", "choice", "standard",
                        "refraction: standard (34' at altitude 0), bennett (site's temperature and pressure), none",
                        choices=("standard", "bennett", "none"))
_HORIZON = Parameter("horizon", "choice", "site",
                     "site: the site's horizon profile or its dip; flat: astronomical horizon",
                     choices=("site", "flat"))
_ALTITUDE = Parameter("altitude", "float", None,
                      "airless altitude of the centre at rising/setting, degrees (overrides limb/refraction/horizon)")
_EYE = Parameter("eye_height", "float", None, "height of the eye above a flat visible horizon, m (dip 1.76' sqrt(h))")


def hhmmss(jd_ut, site) -> list:
    """Format UT1 Julian Days as ``HH:MM:SS`` in the site's civil time ('-' for NaN)."""
    jd = np.atleast_1d(np.asarray(jd_ut, dtype=float))
    frac = (jd + site.offset_days + 0.5) % 1.0
    secs = np.rint(np.nan_to_num(frac) * 86400.0).astype(np.int64) % 86400
    text = [f"{s // 3600:02d}:{s % 3600 // 60:02d}:{s % 60:02d}" for s in secs.tolist()]
    return [t if np.isfinite(j) else "-" for t, j in zip(text, jd.tolist())]


def civil_dates(days) -> list:
    """Format civil day numbers as dates of the western calendar (astronomical years)."""
    from .pluginmanager import get_host

    western = get_host().calendars.get("western")
    fields = western.from_jdn(np.asarray(days, dtype=np.int64))
    cols = [np.atleast_1d(fields[f]).tolist() for f in western.fields]
    return [western.format(*vals) for vals in zip(*cols)]


def _site_for(site, eye_height):
    from dataclasses import replace

    if eye_height is None:
        return site
    if eye_height < 0:
        raise ParameterError("eye height must be >= 0 m")
    return replace(site, eye_height_m=float(eye_height))


def _horizon(limb, refraction, horizon, altitude):
    from .riseset import Horizon

    return Horizon(limb=limb, refraction=refraction, horizon=horizon, altitude_deg=altitude)


def _days_of_range(jd_tt_start, jd_tt_end, site, deltat):
    from .riseset import _civil_day

    ut0, ut1 = deltat.ut_from_tt(np.array([jd_tt_start, jd_tt_end]))
    return np.arange(int(_civil_day(ut0, site)), int(_civil_day(ut1, site)) + 1, dtype=np.int64)


def _flag_text(t, flags) -> list:
    from .riseset import FLAG_NAMES

    return [FLAG_NAMES[f] if not np.isfinite(x) else "" for x, f in zip(np.asarray(t).tolist(), flags.tolist())]


def _table(columns, meta, jd_ut, deltat, site, models, warnings):
    from .events import Column, EventTable
    from .provenance import build

    jd_tt = np.asarray(deltat.tt_from_ut(jd_ut), dtype=float) if len(jd_ut) else np.zeros(0)
    cols = {"jd_tt": jd_tt, "jd_ut": np.asarray(jd_ut, dtype=float), **columns}
    metas = {k: Column(k, u, d) for k, (u, d) in meta.items()}
    from .pluginmanager import get_host

    western = get_host().calendars.get("western")      # the calendar of the date columns
    prov = build(jd_tt=jd_tt if len(jd_tt) else None, deltat=deltat, calendars=[western], ephemeris=True,
                 models=models, site=site, extra_warnings=warnings)
    return EventTable(cols, metas, prov)


def _twilight_list(text):
    from .riseset import twilight_depression

    if text is None or str(text).strip().lower() in ("", "none", "no"):
        return []
    return [twilight_depression(part.strip()) for part in str(text).split(",") if part.strip()]


class SunEvents(Detector):
    """Sunrise, transit, sunset and twilight at a site."""

    name = "sun"
    title = "Sunrise, transit, sunset and twilight at a site"
    description = ("One row per civil day (--layout event: one per event). Times in the site's civil time; "
                   "rising/setting of the upper limb with 34' refraction unless told otherwise; twilight "
                   "when the Sun's centre is 6/12/18 deg (or any depression) below the horizon, airless.")
    needs_site = True
    parameters = (
        Parameter("layout", "choice", "day", "day: one row per civil day; event: one row per event",
                  choices=("day", "event")),
        _LIMB, _REFRACTION, _HORIZON, _ALTITUDE, _EYE,
        Parameter("twilight", "str", "civil,nautical,astronomical",
                  "twilights to add: civil, nautical, astronomical, depressions in degrees, or none"),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, layout, limb, refraction, horizon,
                altitude, eye_height, twilight):
        from . import riseset

        site = _site_for(site, eye_height)
        hz = _horizon(limb, refraction, horizon, altitude)
        twl = _twilight_list(twilight)
        days = _days_of_range(jd_tt_start, jd_tt_end, site, deltat)
        if progress:
            progress(0, 1, "sun")
        d = riseset.daily_events("sun", site, days, deltat=deltat, horizon=hz, twilight=twl)
        if progress:
            progress(1, 1, "sun")
        models = riseset.provenance_models(hz, site)
        if twl:
            models["twilight"] = ("Sun's centre at " + ", ".join(f"-{v:g}" for v in twl)
                                  + " deg airless altitude (no refraction)")
        warnings = riseset.provenance_warnings(hz)
        twl_names = [k for k in d.extra]
        if layout == "day":
            length_h = (d.set_ut - d.rise_ut) * 24.0
            cols = {"kind": np.full(days.size, "day"), "date": np.array(civil_dates(days)),
                    "sunrise": np.array(hhmmss(d.rise_ut, site)), "transit": np.array(hhmmss(d.transit_ut, site)),
                    "sunset": np.array(hhmmss(d.set_ut, site)),
                    "day_length_h": np.round(np.where(length_h < 0, length_h + 24.0, length_h), 4),
                    "rise_azimuth": np.round(d.rise_azimuth_deg, 3), "set_azimuth": np.round(d.set_azimuth_deg, 3),
                    "transit_altitude": np.round(d.transit_altitude_deg, 3)}
            for name in twl_names:
                cols[name] = np.array(hhmmss(d.extra[name][0], site))
            notes = [", ".join(x for x in (a and f"rise: {a}", b and f"set: {b}") if x)
                     for a, b in zip(_flag_text(d.rise_ut, d.rise_flag), _flag_text(d.set_ut, d.set_flag))]
            cols["note"] = np.array(notes)
            meta = {"sunrise": ("civil time", "upper limb rises" if hz.altitude_deg is None else "Sun rises"),
                    "sunset": ("civil time", ""), "transit": ("civil time", "upper culmination"),
                    "day_length_h": ("h", "sunset - sunrise"), "rise_azimuth": ("deg", "from north through east"),
                    "set_azimuth": ("deg", ""), "transit_altitude": ("deg", "airless altitude of the centre")}
            meta.update({n: ("civil time", "twilight") for n in twl_names})
            jd_ut = np.where(np.isfinite(d.transit_ut), d.transit_ut, days - site.east_longitude_deg / 360.0)
            return _table(cols, meta, jd_ut, deltat, site, models, warnings)
        ev = [("sunrise", d.rise_ut, d.rise_azimuth_deg, np.full(days.size, np.nan)),
              ("transit", d.transit_ut, np.full(days.size, np.nan), d.transit_altitude_deg),
              ("sunset", d.set_ut, d.set_azimuth_deg, np.full(days.size, np.nan))]
        ev += [(name, d.extra[name][0], np.full(days.size, np.nan), np.full(days.size, np.nan)) for name in twl_names]
        return _event_rows(ev, days, jd_tt_start, jd_tt_end, deltat, site, models, warnings)


def _event_rows(ev, days, jd_tt_start, jd_tt_end, deltat, site, models, warnings):
    t = np.concatenate([e[1] for e in ev])
    kind = np.concatenate([np.full(e[1].size, e[0]) for e in ev])
    az = np.concatenate([e[2] for e in ev])
    alt = np.concatenate([e[3] for e in ev])
    day = np.concatenate([days for _ in ev])
    keep = np.isfinite(t)
    t, kind, az, alt, day = t[keep], kind[keep], az[keep], alt[keep], day[keep]
    tt = np.asarray(deltat.tt_from_ut(t), dtype=float) if t.size else t
    inside = (tt >= jd_tt_start) & (tt < jd_tt_end)
    order = np.argsort(t[inside], kind="stable")
    t, kind, az, alt, day = (x[inside][order] for x in (t, kind, az, alt, day))
    cols = {"kind": kind, "local_date": np.array(civil_dates(day)) if day.size else np.zeros(0, str),
            "local_time": np.array(hhmmss(t, site)) if t.size else np.zeros(0, str),
            "azimuth": np.round(az, 3), "altitude": np.round(alt, 3)}
    meta = {"local_time": ("civil time", "the site's zone or local mean time"),
            "azimuth": ("deg", "from north through east, at rising/setting"),
            "altitude": ("deg", "airless altitude of the centre, at transit")}
    return _table(cols, meta, t, deltat, site, models, warnings)


class MoonEvents(Detector):
    """Moonrise, transit and moonset at a site."""

    name = "moon"
    title = "Moonrise, transit and moonset at a site"
    description = ("One row per event (--layout day: one row per civil day). Topocentric: the Moon's parallax "
                   "(about 1 deg) is included; upper limb with 34' refraction unless told otherwise.")
    needs_site = True
    parameters = (
        Parameter("layout", "choice", "event", "event: one row per event; day: one row per civil day",
                  choices=("event", "day")),
        _LIMB, _REFRACTION, _HORIZON, _ALTITUDE, _EYE,
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, layout, limb, refraction, horizon,
                altitude, eye_height):
        from . import riseset

        site = _site_for(site, eye_height)
        hz = _horizon(limb, refraction, horizon, altitude)
        days = _days_of_range(jd_tt_start, jd_tt_end, site, deltat)
        d = riseset.daily_events("moon", site, days, deltat=deltat, horizon=hz)
        models = riseset.provenance_models(hz, site)
        warnings = riseset.provenance_warnings(hz)
        if layout == "day":
            notes = [", ".join(x for x in (a and f"rise: {a}", b and f"set: {b}") if x)
                     for a, b in zip(_flag_text(d.rise_ut, d.rise_flag), _flag_text(d.set_ut, d.set_flag))]
            cols = {"kind": np.full(days.size, "day"), "date": np.array(civil_dates(days)),
                    "moonrise": np.array(hhmmss(d.rise_ut, site)), "transit": np.array(hhmmss(d.transit_ut, site)),
                    "moonset": np.array(hhmmss(d.set_ut, site)),
                    "rise_azimuth": np.round(d.rise_azimuth_deg, 3), "set_azimuth": np.round(d.set_azimuth_deg, 3),
                    "transit_altitude": np.round(d.transit_altitude_deg, 3), "note": np.array(notes)}
            meta = {"moonrise": ("civil time", ""), "moonset": ("civil time", ""), "transit": ("civil time", ""),
                    "rise_azimuth": ("deg", ""), "set_azimuth": ("deg", ""), "transit_altitude": ("deg", "")}
            jd_ut = days - site.east_longitude_deg / 360.0
            return _table(cols, meta, jd_ut, deltat, site, models, warnings)
        ev = [("moonrise", d.rise_ut, d.rise_azimuth_deg, np.full(days.size, np.nan)),
              ("transit", d.transit_ut, np.full(days.size, np.nan), d.transit_altitude_deg),
              ("moonset", d.set_ut, d.set_azimuth_deg, np.full(days.size, np.nan))]
        return _event_rows(ev, days, jd_tt_start, jd_tt_end, deltat, site, models, warnings)


# ------------------------------------------------------------------ hooks

@hookimpl
def calendra_detectors():
    from .crescent import Crescent
    from .lunarsix import LunarSix

    return [SunEvents(), MoonEvents(), Crescent(), LunarSix()]


@hookimpl
def calendra_cli_commands():
    import click

    @click.command("sites")
    @click.argument("names", nargs=-1)
    @click.option("--sites-file", "sites_file", multiple=True, type=click.Path(dir_okay=False),
                  help="A TOML file of your own sites (repeatable; also $CALENDRA_SITES).")
    @click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table",
                  show_default=True, help="Output format.")
    def sites_command(names, sites_file, fmt):
        """List the sites known by name (the gazetteer and your own files), or show NAMES.

        A NAME may also be LAT,LON[,ELEVATION_M]. Everywhere a site is asked for, give a name
        from this list or coordinates.
        """
        from .output import render_csv, render_json, render_table
        from .sites import gazetteer_sites, load_gazetteer, parse_site

        if names:
            gaz = load_gazetteer(list(sites_file) or None)
            chosen = [parse_site(n, gaz) for n in names]
        else:
            chosen = gazetteer_sites(list(sites_file) or None)
        rows = []
        for s in chosen:
            d = s.describe()
            d["aliases"] = ", ".join(d["aliases"])
            rows.append(d)
        cols = ["name", "region", "latitude_deg", "longitude_deg", "elevation_m", "time", "aliases", "source"]
        if fmt == "json":
            click.echo(render_json({"sites": rows}))
        elif fmt == "csv":
            click.echo(render_csv(rows, cols + ["horizon", "temperature_C", "pressure_mbar"]), nl=False)
        else:
            click.echo(render_table(rows, cols, ["name", "region", "lat (deg)", "lon (deg)", "elev (m)", "civil time",
                                                 "aliases", "source"],
                                    title="sites (latitude north, longitude east positive; WGS84)"))

    return [sites_command]
