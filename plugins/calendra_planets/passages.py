"""Passages of the Moon and the planets by reference stars, as ancient observers reported them.

The Babylonian diaries say, night by night, that the Moon (or a planet) was
"1 cubit 8 fingers below beta Geminorum" or "2 cubits in front of the
King": a distance in ecliptic latitude (above = north, below = south) or in
longitude (in front of = west, ahead in the daily motion; behind = east) from
a Normal Star, judged at a moment of the night, often the first part of the
night after sunset (these readings of the terms follow Sachs & Hunger 1988,
from memory).

For every conjunction in ecliptic longitude of a body with a reference star
(:func:`calendra_planets.appulses.find_roots`), this module gives the two
differences at a chosen moment:

``conjunction``
    the moment of the conjunction itself (geocentric, or seen from the site
    when one is given);
``evening``
    the evening watch: ``offset_hours`` after sunset on the evening nearest
    to the conjunction, seen from the site;
``morning``
    ``offset_hours`` before sunrise on the morning nearest to it.

Sunrise and sunset are those of :func:`calendra.riseset.sun_crossing_on_days`
(upper limb on the site's horizon, standard refraction).  The Moon is taken
topocentric (its parallax, up to a degree, is as large as the distances
reported); the differences are in apparent ecliptic longitude and latitude
of date, in degrees and in cubits and fingers (:mod:`.refstars`).

Time scales: ``jd_tt`` are Julian Days in TT; sunsets come in UT1 and are
turned into TT with the delta-T model.
"""

from __future__ import annotations

import numpy as np

from .refstars import CUBIT_DEG, cubits_and_fingers

RULES = ("conjunction", "evening", "morning")


def watch_times(jd_tt, site, deltat, rule: str, offset_hours: float):
    """The evening (or morning) watch nearest to each instant, TT.

    Parameters
    ----------
    jd_tt : ndarray
        Instants, Julian Days (TT).
    site : calendra.sites.Site
    deltat : delta-T model
    rule : {'evening', 'morning'}
    offset_hours : float
        Hours after sunset (evening) or before sunrise (morning).

    Returns
    -------
    ndarray
        Julian Days (TT); NaN where the Sun neither rises nor sets nearby.
    """
    from calendra.riseset import sun_crossing_on_days

    jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
    ut = np.asarray(deltat.ut_from_tt(jd), dtype=np.float64)
    day = np.floor(ut + site.offset_days + 0.5).astype(np.int64)
    days = day[:, None] + np.arange(-1, 2)[None, :]
    rising = rule == "morning"
    sun = sun_crossing_on_days(days.ravel(), site, deltat, rising=rising).reshape(days.shape)
    watch = sun + (-1.0 if rising else 1.0) * offset_hours / 24.0
    gap = np.where(np.isfinite(watch), np.abs(watch - ut[:, None]), np.inf)
    pick = np.argmin(gap, axis=1)
    chosen = watch[np.arange(jd.size), pick]
    found = np.isfinite(chosen)
    return np.where(found, np.asarray(deltat.tt_from_ut(np.where(found, chosen, ut)), dtype=float), np.nan)


def describe_offset(d_lon_deg, d_lat_deg, star_labels, cubit_deg: float = CUBIT_DEG):
    """Words for the position of a body relative to a star.

    ``"1 cubit 4 fingers below, 6 fingers in front of Regulus"``: below/above
    for the latitude difference (south/north), in front of/behind for the
    longitude difference (west/east), to the nearest finger.

    Returns
    -------
    ndarray of str
    """
    out = []
    lat_c, lat_f = cubits_and_fingers(d_lat_deg, cubit_deg)
    lon_c, lon_f = cubits_and_fingers(d_lon_deg, cubit_deg)
    for dl, db, bc, bf, lc, lf, star in zip(np.asarray(d_lon_deg), np.asarray(d_lat_deg), lat_c, lat_f,
                                            lon_c, lon_f, star_labels):
        parts = []
        if bc or bf:
            parts.append(f"{_amount(bc, bf)} {'above' if db > 0 else 'below'}")
        if lc or lf:
            parts.append(f"{_amount(lc, lf)} {'behind' if dl > 0 else 'in front of'}")
        out.append(f"{', '.join(parts) if parts else 'on'} {star}")
    return np.asarray(out, dtype=object)


def _amount(cubits, fingers):
    words = []
    if cubits:
        words.append(f"{cubits} cubit" + ("s" if cubits != 1 else ""))
    if fingers:
        words.append(f"{fingers} finger" + ("s" if fingers != 1 else ""))
    return " ".join(words)


def star_passages(bodies, stars, jd_tt_start: float, jd_tt_end: float, *, rule: str = "evening",
                  site=None, deltat=None, offset_hours: float = 1.0, max_latitude_deg: float = 10.0,
                  cubit_deg: float = CUBIT_DEG, progress=None):
    """Passages of bodies by stars, with their offsets at the moment of a time rule.

    Parameters
    ----------
    bodies : list of str
        ``moon`` and/or planets.
    stars : StarSet
        Reference stars (e.g. :func:`calendra_planets.refstars.normal_stars`).
    jd_tt_start, jd_tt_end : float
        Range of the conjunctions, Julian Days (TT).
    rule : {'conjunction', 'evening', 'morning'}
    site : calendra.sites.Site or None
        Needed for ``evening`` and ``morning``; with it positions are topocentric.
    deltat : delta-T model
    offset_hours : float
        Hours after sunset or before sunrise.
    max_latitude_deg : float
        Keep passages whose latitude difference at conjunction is at most this, degrees.
    cubit_deg : float
        Degrees in a cubit.
    progress : callable or None

    Returns
    -------
    dict of str -> ndarray
        ``jd_tt`` (the moment of the rule), ``conjunction_jd_tt``, ``body``,
        ``star``, ``d_lon_deg``, ``d_lat_deg`` (body - star, apparent ecliptic
        of date, degrees), ``d_lon_cubits``, ``d_lat_cubits``, ``description``,
        ``body_altitude_deg`` and ``sun_altitude_deg`` (NaN without a site).
    """
    from calendra.errors import ParameterError

    from .appulses import body_track, find_roots, star_track
    from .states import apparent, ecliptic_of_date, unit

    if rule not in RULES:
        raise ParameterError(f"time rule {rule!r} is not one of {', '.join(RULES)}")
    if rule != "conjunction" and site is None:
        raise ParameterError(f"the {rule} rule needs a site (--site)")
    if not cubit_deg > 0:
        raise ParameterError("the cubit must be a positive number of degrees")
    a, b = body_track(bodies), star_track(stars)
    ia, ib = np.meshgrid(np.arange(len(a)), np.arange(len(b)), indexing="ij")
    pairs = np.column_stack([ia.ravel(), ib.ravel()])
    p, tc = find_roots(a, b, pairs, "longitude", jd_tt_start, jd_tt_end, progress)
    ua, _ = a.evaluate(pairs[p, 0], tc)
    ub, _ = b.evaluate(pairs[p, 1], tc)
    keep = np.abs(ecliptic_of_date(ua, tc, nutation=False)[1] - ecliptic_of_date(ub, tc, nutation=False)[1]) \
        <= np.radians(max_latitude_deg)
    p, tc = p[keep], tc[keep]
    t = tc if rule == "conjunction" else watch_times(tc, site, deltat, rule, offset_hours)
    good = np.isfinite(t)
    p, tc, t = p[good], tc[good], t[good]
    ia, ib = pairs[p, 0], pairs[p, 1]
    ub, _ = b.evaluate(ib, t)
    alt_body = alt_sun = np.full(t.size, np.nan)
    if site is not None and t.size:
        from .occultations import Observer, _altitude

        pos, up = Observer(site, deltat).at(t)
        vec = np.empty((3, t.size))
        for m in np.unique(ia):                 # a loop over bodies, not instants
            sel = ia == m
            r, _ = apparent(a.keys[m], t[sel])
            vec[:, sel] = r - pos[:, sel]
        ua = unit(vec)
        alt_body = _altitude(ua, up)
        sun, _ = apparent("sun", t)
        alt_sun = _altitude(unit(sun - pos), up)
    else:
        ua, _ = a.evaluate(ia, t)
    la, ba = ecliptic_of_date(ua, t, nutation=False)
    lb, bb = ecliptic_of_date(ub, t, nutation=False)
    dlon = np.degrees((la - lb + np.pi) % (2 * np.pi) - np.pi)
    dlat = np.degrees(ba - bb)
    star_labels = np.asarray(b.labels, dtype=object)[ib]
    order = np.argsort(t, kind="stable")
    out = {
        "jd_tt": t, "conjunction_jd_tt": tc, "body": np.asarray(a.labels, dtype=object)[ia],
        "star": star_labels, "d_lon_deg": dlon, "d_lat_deg": dlat,
        "d_lon_cubits": dlon / cubit_deg, "d_lat_cubits": dlat / cubit_deg,
        "description": describe_offset(dlon, dlat, star_labels, cubit_deg),
        "body_altitude_deg": alt_body, "sun_altitude_deg": alt_sun,
    }
    return {k: np.asarray(v)[order] for k, v in out.items()}
