"""Occultations of stars and planets by the Moon, seen from a site.

An occultation seen from a site begins (*immersion*) when the topocentric
angular distance between the Moon's centre and the object falls to the
Moon's topocentric semi-diameter, and ends (*emersion*) when it grows back.
Stars and planets are taken as points (a planet's disc, at most 33" for
Venus, makes its disappearance last up to a minute).

Method
------
1. Geocentric least separations of the Moon from each object
   (:func:`calendra_planets.appulses.find_roots`, frame ``minimum``); an
   occultation is possible somewhere on the Earth only when that separation
   is under the Moon's semi-diameter plus its horizontal parallax plus a
   margin (:data:`CANDIDATE_DEG` = 1.5 degrees).
2. For each candidate, the topocentric separation on a grid of
   :data:`GRID_MINUTES` minutes over +-:data:`WINDOW_HOURS` hours: the
   observer's GCRS position is that of skyfield's WGS84 site
   (``wgs84.latlon``) rotated by skyfield's ITRS frame at UT1 = TT - delta T
   of the chosen model (IAU 2006 precession, IAU 2000A nutation: its error at
   -3000, some tens of arcseconds, moves the observer by under a kilometre,
   the Moon by under 1").
3. Each sign change of ``separation - semi-diameter`` on the grid is
   refined by safeguarded Newton steps (derivative by central differences)
   to 0.01 s of TT.

The Moon's semi-diameter is ``asin(k R_E / d)`` with ``k = 0.2725076`` (the
ratio of the lunar to the terrestrial equatorial radius adopted for
eclipses and occultations by the IAU in 1982; from memory), ``R_E = 6378.1366``
km and ``d`` the topocentric distance.  The Moon's limb profile (up to 2"
of valleys and mountains) is ignored: contacts are uncertain by a few
seconds, grazes by more; before 1600 the uncertainty of delta T, which moves
the site under the sky, dominates (see the provenance).

Time scales: ``jd_tt`` are Julian Days in TT; UT1 through the delta-T model.
"""

from __future__ import annotations

import numpy as np

from .states import apparent, dot, norm, unit

#: Ratio of the Moon's radius to the Earth's equatorial radius (IAU 1982).  [from memory]
MOON_K = 0.2725076
#: Earth's equatorial radius, km (IERS 2003).
EARTH_RADIUS_KM = 6378.1366
#: Geocentric least separation below which a topocentric search is made, degrees.
CANDIDATE_DEG = 1.5
#: Half-width of the topocentric search window around the geocentric least separation, hours.
WINDOW_HOURS = 4.0
#: Spacing of the topocentric grid, minutes.
GRID_MINUTES = 4.0
_H = 2e-5          # central-difference half-width, days (1.7 s)


class Observer:
    """A site's GCRS position and zenith at TT instants (skyfield ``wgs84.latlon``)."""

    def __init__(self, site, deltat):
        from skyfield.api import wgs84

        from calendra.deltat import skyfield_timescale

        self.site = site
        self.deltat = deltat
        self.ts = skyfield_timescale(deltat)
        self.topos = wgs84.latlon(site.latitude_deg, site.longitude_deg, elevation_m=site.elevation_m)
        lat, lon = np.radians(site.latitude_deg), np.radians(site.longitude_deg)
        self.itrs_km = np.asarray(self.topos.itrs_xyz.km, dtype=np.float64)
        self.up_itrs = np.array([np.cos(lat) * np.cos(lon), np.cos(lat) * np.sin(lon), np.sin(lat)])

    def at(self, jd_tt):
        """GCRS position (km) and geodetic zenith (unit vector) at TT instants, shapes (3, N)."""
        from skyfield.framelib import itrs

        jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
        rot = itrs.rotation_at(self.ts.tt_jd(jd))
        if rot.ndim == 2:
            rot = rot[:, :, None]
        return (np.einsum("jin,j->in", rot, self.itrs_km), np.einsum("jin,j->in", rot, self.up_itrs))


class _Topocentric:
    """Topocentric separation minus the Moon's semi-diameter, for (target, instant) pairs."""

    def __init__(self, observer, track):
        self.observer, self.track = observer, track

    def parts(self, member, jd):
        pos, up = self.observer.at(jd)
        rm, _ = apparent("moon", jd)
        moon = rm - pos
        if self.track.kind == "star":
            u, _ = self.track.evaluate(member, jd)
        else:
            u = np.empty((3, jd.size))
            for m in np.unique(member):
                sel = member == m
                r, _ = apparent(self.track.keys[m], jd[sel])
                u[:, sel] = unit(r - pos[:, sel])
        d = norm(moon)
        um = moon / d
        sep = np.arctan2(norm(np.cross(um, u, axis=0)), dot(um, u))
        sd = np.arcsin(MOON_K * EARTH_RADIUS_KM / d)
        return sep - sd, sep, sd, um, u, up

    def value(self, member, jd):
        return self.parts(member, jd)[0]

    def turn(self, member):
        """evaluate(t, k) -> (d/dt, d2/dt2) of the value, for its least."""
        def evaluate(t, k):
            lo, mid, hi = (self.value(member[k], t + d) for d in (-_H, 0.0, _H))
            return (hi - lo) / (2 * _H), (hi - 2 * mid + lo) / (_H * _H)
        return evaluate

    def newton(self, member):
        def evaluate(t, k):
            lo, hi = self.value(member[k], t - _H), self.value(member[k], t + _H)
            mid = self.value(member[k], t)
            return mid, (hi - lo) / (2 * _H)
        return evaluate


def _altitude(u, up):
    return np.degrees(np.arcsin(np.clip(dot(u, up), -1.0, 1.0)))


def occultations(targets, site, jd_tt_start: float, jd_tt_end: float, deltat, *,
                 min_moon_altitude_deg=0.0, progress=None):
    """Immersions and emersions of stars or planets behind the Moon, seen from a site.

    Parameters
    ----------
    targets : str
        One or more sides of :func:`calendra_planets.appulses.parse_side`
        separated by commas: ``normal-stars``, ``bright-stars``, ``planets``,
        a star or planet name, ``regulus+spica`` ...
    site : calendra.sites.Site
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT).
    deltat : delta-T model
    min_moon_altitude_deg : float or None
        Drop contacts with the Moon's centre lower than this (airless
        altitude, degrees); None keeps them all.
    progress : callable or None

    Returns
    -------
    dict of str -> ndarray
        One row per contact, in time order: ``jd_tt``, ``contact``
        (``immersion``/``emersion``), ``target``, ``event`` (number shared by
        the two contacts of one occultation), ``moon_altitude_deg``,
        ``sun_altitude_deg``, ``limb`` (``dark``/``bright``: the Moon's limb
        at the contact), ``least_separation_arcmin`` (topocentric, of the
        Moon's centre), ``semidiameter_arcmin``.
    """
    from calendra.errors import ParameterError

    from .appulses import body_track, find_roots, parse_side
    from .solver import bracketed_newton

    if site is None:
        raise ParameterError("occultations are seen from a site: give --site")
    observer = Observer(site, deltat)
    rows = []
    event0 = 0
    moon = body_track(["moon"])
    for side in [s for s in str(targets).split(",") if s.strip()]:
        track = parse_side(side)
        if track.kind == "body" and "moon" in track.keys:
            raise ParameterError("the Moon cannot occult itself")
        pairs = np.column_stack([np.zeros(len(track), dtype=np.int64), np.arange(len(track))])
        p, tg = find_roots(moon, track, pairs, "minimum", jd_tt_start - 0.5, jd_tt_end + 0.5, progress)
        if tg.size == 0:
            continue
        (um, _), (ut, _) = moon.evaluate(0, tg), track.evaluate(pairs[p, 1], tg)
        near = np.degrees(np.arctan2(norm(np.cross(um, ut, axis=0)), dot(um, ut))) < CANDIDATE_DEG
        member, tg = pairs[p[near], 1], tg[near]
        if tg.size == 0:
            continue
        topo = _Topocentric(observer, track)
        k = int(round(2 * WINDOW_HOURS * 60 / GRID_MINUTES))
        offsets = np.linspace(-WINDOW_HOURS / 24, WINDOW_HOURS / 24, k + 1)
        grid = tg[:, None] + offsets[None, :]
        g = topo.value(np.repeat(member, k + 1), grid.ravel()).reshape(grid.shape)
        # the least topocentric distance, refined between the grid points around the grid's least
        j = np.clip(np.argmin(g, axis=1), 1, k - 1)
        rows_i = np.arange(tg.size)
        t_min, ok = bracketed_newton(topo.turn(member), grid[rows_i, j - 1], grid[rows_i, j + 1],
                                     tolerance_days=1e-7, with_index=True, label="occultations")
        g_min = np.where(ok, topo.value(member, t_min), g[rows_i, j])
        t_min = np.where(ok, t_min, grid[rows_i, j])
        hit = np.nonzero(g_min < 0)[0]
        if hit.size == 0:
            continue
        positive = g[hit] > 0
        before = positive & (np.arange(k + 1)[None, :] < j[hit, None])
        after = positive & (np.arange(k + 1)[None, :] > j[hit, None])
        a = k - np.argmax(before[:, ::-1], axis=1)          # last positive point before the least
        b = np.argmax(after, axis=1)                         # first positive point after it
        whole = before.any(axis=1) & after.any(axis=1)
        hit, a, b = hit[whole], a[whole], b[whole]
        cand = np.concatenate([hit, hit])
        who = member[cand]
        lo = np.concatenate([grid[hit, a], t_min[hit]])
        hi = np.concatenate([t_min[hit], grid[hit, b]])
        sign = np.concatenate([np.ones(hit.size), -np.ones(hit.size)])
        t, _ = bracketed_newton(topo.newton(who), lo, hi, tolerance_days=1e-7, sign_lo=sign,
                                with_index=True, label="occultations")
        entering = sign > 0
        least = g_min[cand]
        _, sep, sd, um_t, u_t, up = topo.parts(who, t)
        sun, _ = apparent("sun", t)
        pos, _ = observer.at(t)
        usun = unit(sun - pos)
        waxing = _waxing(um_t, usun, t)
        dark = np.where(entering, waxing, ~waxing)
        rows.append({
            "jd_tt": t, "contact": np.where(entering, "immersion", "emersion").astype(object),
            "target": np.asarray(track.labels, dtype=object)[who],
            "event": event0 + cand, "moon_altitude_deg": _altitude(um_t, up),
            "sun_altitude_deg": _altitude(usun, up),
            "limb": np.where(dark, "dark", "bright").astype(object),
            "least_separation_arcmin": np.degrees(least + sd) * 60.0,     # sd changes by < 0.1" meanwhile
            "semidiameter_arcmin": np.degrees(sd) * 60.0,
        })
        event0 += len(tg)
    if not rows:
        e = np.empty(0)
        return {"jd_tt": e, "contact": np.empty(0, dtype=object), "target": np.empty(0, dtype=object),
                "event": np.empty(0, dtype=np.int64), "moon_altitude_deg": e, "sun_altitude_deg": e,
                "limb": np.empty(0, dtype=object), "least_separation_arcmin": e, "semidiameter_arcmin": e}
    out = {key: np.concatenate([r[key] for r in rows]) for key in rows[0]}
    keep = (out["jd_tt"] >= jd_tt_start) & (out["jd_tt"] < jd_tt_end)
    if min_moon_altitude_deg is not None:
        keep &= out["moon_altitude_deg"] >= min_moon_altitude_deg
    order = np.argsort(out["jd_tt"][keep], kind="stable")
    return {key: v[keep][order] for key, v in out.items()}


def _waxing(u_moon, u_sun, jd_tt):
    """True where the Moon is east of the Sun in ecliptic longitude (waxing)."""
    from .states import ecliptic_of_date

    lm, _ = ecliptic_of_date(u_moon, jd_tt, nutation=False)
    ls, _ = ecliptic_of_date(u_sun, jd_tt, nutation=False)
    return np.remainder(lm - ls, 2 * np.pi) < np.pi
