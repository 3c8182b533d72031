"""Eclipse catalogues as :class:`calendra.events.EventTable` (the ``eclipses`` detector's output).

Columns (UT1 through the run's delta-T model; ``jd_tt`` of greatest eclipse):

lunar
    ``kind`` (penumbral/partial/total), ``saros``, ``lunation``, ``gamma``,
    ``penumbral_mag``, ``umbral_mag``, contact times ``P1 .. P4`` (UT,
    HH:MM:SS), durations ``penumbral_min``, ``partial_min``, ``total_min``,
    ``moon_zenith_lat``/``moon_zenith_lon`` (where the Moon stands at the
    zenith at greatest eclipse).  With a site: ``local_date``,
    ``local_time`` (greatest eclipse, civil time), ``seen``,
    ``moon_alt_max``, ``moon_alt_P1 .. moon_alt_P4``, ``phases_up``,
    ``horizon`` (rose/set eclipsed, local time and umbral magnitude).
solar
    ``kind`` (partial/annular/total/hybrid), ``central``, ``saros``,
    ``lunation``, ``gamma``, ``magnitude``, ``lat``/``lon`` of greatest
    eclipse, ``sun_alt``, ``path_width_km``, ``central_duration_s``.  With a
    site: ``seen``, ``local_type``, ``local_mag``, ``obscuration``,
    ``local_date``, ``local_max`` and ``C1 .. C4`` (civil time),
    ``sun_alt_C1 .. sun_alt_C4``, ``sun_alt_max``, ``sun_az_max``,
    ``horizon`` (rose/set eclipsed).
"""

from __future__ import annotations

import numpy as np

from calendra.events import Column, EventTable

DAY_S = 86400.0

TRACK_WARNING = ("before 1600 delta T is uncertain by minutes to hours: the geographic longitude of a solar "
                 "eclipse track moves by about 15 deg per hour of delta-T error (0.25 deg per minute), "
                 "and with it every local circumstance (whether and how an eclipse was seen, and when); "
                 "the TT times, types, gamma and magnitudes do not depend on delta T")
LUNAR_WARNING = ("lunar eclipse contacts are the same for every observer; only the Moon's altitude at a site "
                 "depends on delta T (about 15 deg of hour angle per hour of delta-T error)")
HORIZON_NOTE = ("altitudes are airless and topocentric; a body counts as up when its upper limb clears the "
                "visible horizon with Bennett refraction (34.5' at 0 deg; uncertain by several arcminutes)")


def hhmmss(jd, offset_days=0.0):
    """Format Julian Days as HH:MM:SS of the day (plus ``offset_days``); '-' for NaN."""
    jd = np.atleast_1d(np.asarray(jd, dtype=float))
    frac = (jd + offset_days + 0.5) % 1.0
    secs = np.rint(np.nan_to_num(frac) * DAY_S).astype(np.int64) % 86400
    return np.array([f"{s // 3600:02d}:{s % 3600 // 60:02d}:{s % 60:02d}" if np.isfinite(j) else "-"
                     for s, j in zip(secs.tolist(), jd.tolist())], dtype=object)


def local_dates(jd_ut, offset_days):
    """Civil dates (western calendar, astronomical years) of UT1 Julian Days at a site."""
    from calendra.pluginmanager import get_host

    jd = np.atleast_1d(np.asarray(jd_ut, dtype=float))
    if jd.size == 0:
        return np.zeros(0, dtype=object)
    western = get_host().calendars.get("western")
    days = np.floor(jd + offset_days + 0.5).astype(np.int64)
    fields = western.from_jdn(days)
    cols = [np.atleast_1d(fields[f]).tolist() for f in western.fields]
    return np.array([western.format(*vals) for vals in zip(*cols)], dtype=object)


def _r(x, nd):
    return np.round(np.asarray(x, dtype=float), nd)


def lunar_table(ecl, deltat, site=None, models=None) -> EventTable:
    """EventTable of lunar eclipses (with local circumstances when ``site`` is given)."""
    from calendra.provenance import build

    from .lunar import SHADOW_RULES

    dt = np.asarray(deltat.seconds(ecl.jd_tt), dtype=float) if len(ecl) else np.zeros(0)
    jd_ut = ecl.jd_tt - dt / DAY_S
    dur = ecl.durations_min()
    cols = {"jd_tt": ecl.jd_tt, "jd_ut": jd_ut, "kind": ecl.type_names.astype(object),
            "saros": ecl.saros, "lunation": ecl.lunation, "gamma": _r(ecl.gamma, 4),
            "penumbral_mag": _r(ecl.penumbral_magnitude, 4), "umbral_mag": _r(ecl.umbral_magnitude, 4)}
    for name in ("P1", "U1", "U2", "U3", "U4", "P4"):
        cols[name] = hhmmss(ecl.contacts[name] - dt / DAY_S)
    cols.update({"penumbral_min": _r(dur["penumbral"], 1), "partial_min": _r(dur["partial"], 1),
                 "total_min": _r(dur["total"], 1)})
    if len(ecl):
        from .geometry import Orientation
        gast = Orientation(ecl.jd_tt).gast(jd_ut)
        zlon = (ecl.moon_ra_deg - np.degrees(gast) + 180.0) % 360.0 - 180.0
    else:
        zlon = np.zeros(0)
    cols["moon_zenith_lat"] = _r(ecl.moon_dec_deg, 2)
    cols["moon_zenith_lon"] = _r(zlon, 2)
    meta = {"gamma": ("Earth radii", "Moon's centre from the shadow axis at greatest eclipse, + north"),
            "penumbral_mag": ("", "fraction of the Moon's diameter in the penumbra"),
            "umbral_mag": ("", "fraction of the Moon's diameter in the umbra"),
            "penumbral_min": ("min", "P4 - P1"), "partial_min": ("min", "U4 - U1"),
            "total_min": ("min", "U3 - U2"), "moon_zenith_lat": ("deg", ""), "moon_zenith_lon": ("deg", "east")}
    meta.update({c: ("UT", "contact") for c in ("P1", "U1", "U2", "U3", "U4", "P4")})
    warnings = [LUNAR_WARNING]
    if site is not None and len(ecl):
        from .lunar_local import lunar_local

        loc = lunar_local(ecl, site, deltat)
        off = site.offset_days
        cols["local_date"] = local_dates(jd_ut, off)
        cols["local_time"] = hhmmss(jd_ut, off)
        cols["seen"] = np.where(loc.seen, "yes", "no").astype(object)
        for k in ("P1", "U1", "U2", "max", "U3", "U4", "P4"):
            cols[f"moon_alt_{k}"] = _r(loc.altitude_deg[k], 2)
            meta[f"moon_alt_{k}"] = ("deg", "airless topocentric altitude of the Moon")
        cols["phases_up"] = np.array(loc.visible_events(), dtype=object)
        cols["horizon"] = _horizon_notes(loc.moonrise_tt - dt / DAY_S, loc.rise_magnitude,
                                         loc.moonset_tt - dt / DAY_S, loc.set_magnitude, off, "umbral mag")
        meta["local_time"] = ("civil time", "greatest eclipse, the site's civil time")
        warnings.append(HORIZON_NOTE)
    elif site is not None:
        for k in ("local_date", "local_time", "seen", "phases_up", "horizon"):
            cols[k] = np.zeros(0, dtype=object)
    metas = {k: Column(k, u, d) for k, (u, d) in meta.items()}
    mod = {"eclipse shadow": SHADOW_RULES[ecl.shadow],
           "eclipse geometry": "apparent geocentric Sun and Moon from DE406; Moon radius k = 0.2725076"}
    mod.update(models or {})
    prov = build(jd_tt=ecl.jd_tt if len(ecl) else None, deltat=deltat, ephemeris=True, models=mod, site=site,
                 extra_warnings=warnings)
    return EventTable(cols, metas, prov)


def _horizon_notes(rise_ut, rise_mag, set_ut, set_mag, offset, label):
    out = []
    rt, st = hhmmss(rise_ut, offset), hhmmss(set_ut, offset)
    for r, rm, s, sm, a, b in zip(rise_ut.tolist(), rise_mag.tolist(), set_ut.tolist(), set_mag.tolist(), rt, st):
        parts = []
        if np.isfinite(r):
            parts.append(f"rose eclipsed {a} ({label} {rm:.2f})")
        if np.isfinite(s):
            parts.append(f"set eclipsed {b} ({label} {sm:.2f})")
        out.append("; ".join(parts))
    return np.array(out, dtype=object)


def solar_table(ecl, deltat, site=None) -> EventTable:
    """EventTable of solar eclipses (with local circumstances when ``site`` is given)."""
    from calendra.provenance import build

    jd_ut = ecl.jd_tt - ecl.delta_t_s / DAY_S
    cols = {"jd_tt": ecl.jd_tt, "jd_ut": jd_ut, "kind": ecl.type_names.astype(object),
            "central": np.where(ecl.central, "yes", "no").astype(object), "saros": ecl.saros,
            "lunation": ecl.lunation, "gamma": _r(ecl.gamma, 4), "magnitude": _r(ecl.magnitude, 4),
            "lat": _r(ecl.latitude_deg, 2), "lon": _r(ecl.longitude_deg, 2), "sun_alt": _r(ecl.sun_altitude_deg, 1),
            "path_width_km": _r(ecl.path_width_km, 0), "central_duration_s": _r(ecl.central_duration_s, 1)}
    meta = {"gamma": ("Earth radii", "least distance of the shadow axis from the Earth's centre, + north"),
            "magnitude": ("", "at greatest eclipse: diameter ratio (central) or fraction of the Sun's diameter"),
            "lat": ("deg", "greatest eclipse, geodetic"), "lon": ("deg", "greatest eclipse, east (moves with delta T)"),
            "sun_alt": ("deg", "Sun's altitude at greatest eclipse"),
            "path_width_km": ("km", "umbral/antumbral path at greatest eclipse"),
            "central_duration_s": ("s", "central phase at the point of greatest eclipse")}
    warnings = [TRACK_WARNING]
    if site is not None and len(ecl):
        from .solar_local import solar_local

        loc = solar_local(ecl.elements, site.latitude_deg, site.east_longitude_deg, site.elevation_m, site=site)
        off = site.offset_days
        cols["seen"] = np.where(loc.visible, "yes", "no").astype(object)
        cols["local_type"] = loc.local_type.astype(object)
        cols["local_mag"] = _r(loc.magnitude, 4)
        cols["obscuration"] = _r(loc.obscuration, 4)
        cols["local_date"] = local_dates(np.where(loc.eclipsed, loc.jd_ut["max"], jd_ut), off)
        for k, label in (("C1", "C1"), ("C2", "C2"), ("max", "local_max"), ("C3", "C3"), ("C4", "C4")):
            cols[label] = hhmmss(loc.jd_ut[k], off)
            meta[label] = ("civil time", "the site's civil time")
        for k in ("C1", "C2", "max", "C3", "C4"):
            cols[f"sun_alt_{k}"] = _r(loc.sun_altitude_deg[k], 2)
            meta[f"sun_alt_{k}"] = ("deg", "airless altitude of the Sun")
        cols["sun_az_max"] = _r(loc.sun_azimuth_deg["max"], 1)
        rise = el_ut(ecl, loc.sunrise_tau)
        sett = el_ut(ecl, loc.sunset_tau)
        cols["horizon"] = _horizon_notes(rise, loc.sunrise_magnitude, sett, loc.sunset_magnitude, off, "mag")
        meta["local_mag"] = ("", "largest magnitude at the site (whether or not the Sun was up)")
        meta["obscuration"] = ("", "fraction of the Sun's area covered at maximum")
        meta["sun_az_max"] = ("deg", "from north through east")
        warnings.append(HORIZON_NOTE)
    metas = {k: Column(k, u, d) for k, (u, d) in meta.items()}
    mod = {"eclipse geometry": ("Besselian elements from apparent DE406 Sun and Moon (degree-6 fits over 9 h); "
                                "k1 = 0.2725076, k2 = 0.2722810, Sun 959.63\" at 1 au; WGS84 Earth")}
    prov = build(jd_tt=ecl.jd_tt if len(ecl) else None, deltat=deltat, ephemeris=True, models=mod, site=site,
                 extra_warnings=warnings)
    return EventTable(cols, metas, prov)


def el_ut(ecl, tau):
    """UT1 Julian Days of hours ``tau`` from each eclipse's elements ``t0``."""
    return ecl.elements.t0 + tau / 24.0 - ecl.elements.delta_t_s / DAY_S
