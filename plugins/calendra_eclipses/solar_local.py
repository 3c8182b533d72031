"""Local circumstances of solar eclipses from the Besselian elements, vectorised over cases.

A *case* is one eclipse seen from one site with one ΔT: the catalogue at a
site is N cases (one per eclipse), a ΔT scan is M cases of one eclipse.

Method (Explanatory Supplement; Meeus, *Elements of Solar Eclipses*)
--------------------------------------------------------------------
The site's coordinates on the fundamental plane ``(xi, eta, zeta)``
(:func:`.besselian.observer_plane`, WGS84, with its height) give
``u = x - xi``, ``v = y - eta``, the distance ``Delta = sqrt(u^2 + v^2)`` of
the site from the shadow axis, and the shadow radii at the site
``L1 = l1 - zeta tan f1``, ``L2 = l2 - zeta tan f2``.  In those units the
Sun's apparent radius is ``(L1 + L2) / 2`` and the Moon's ``(L1 - L2) / 2``.

* *Maximum* is the minimum of ``Delta``: sampled every 5 minutes over the
  elements' 9 hours, then Newton steps on ``u u' + v v'`` (derivatives by
  central differences of the polynomials) until the step is under 0.01 s.
* *Magnitude* ``(L1 - Delta) / (L1 + L2)`` (fraction of the Sun's diameter
  covered); *obscuration* the fraction of the Sun's disc area covered (the
  area of the lens where the discs overlap).
* *Contacts* C1, C4 where ``Delta = L1``, C2, C3 where ``Delta = |L2|``
  (when ``Delta_min < |L2|``: total if ``L2 < 0``, annular otherwise),
  from the linear-motion guess by Newton steps.
* The Sun's airless altitude and azimuth come from ``d`` and the hour angle
  ``mu + longitude`` (the Sun is taken along the shadow axis, within a few
  arcseconds of its direction from the site); it is *up* when its upper
  limb is above the visible horizon (:mod:`.horizon`).
* A site whose Sun stays more than 5 degrees below the horizon from C1 to C4
  is on the night side (its projection on the plane falls in the shadow
  through the Earth): no eclipse there.
* *Visible* when the Sun is up at some moment between C1 and C4 (sampled at
  48 instants and at the contacts); sunrise or sunset between C1 and C4 is
  found by interpolation between those samples and two secant steps, with
  the magnitude at that moment.

Times: TT hours ``tau`` from the elements' ``t0``; Julian Days in TT and UT1.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .besselian import VALID_HOURS, BesselianElements, observer_plane
from .horizon import threshold_deg

DAY_S = 86400.0
GRID_STEP_H = 5.0 / 60.0
SPAN_SAMPLES = 48
CONTACT_NAMES = ("C1", "C2", "max", "C3", "C4")
#: A site whose horizon the Sun stays more than this below (degrees) throughout C1..C4 is on the night
#: side: its projection on the fundamental plane falls in the shadow, but it sees no eclipse.
NIGHT_SIDE_DEG = 5.0


def _plane(el, tau, lat, lon, elev, rows):
    e = el.at(tau, names=("x", "y", "d", "mu", "l1", "l2", "tan_f1", "tan_f2"), rows=rows)
    xi, eta, zeta = observer_plane(lat, lon, elev, e["d"], e["mu"])
    u, v = e["x"] - xi, e["y"] - eta
    big_l1 = e["l1"] - zeta * e["tan_f1"]
    big_l2 = e["l2"] - zeta * e["tan_f2"]
    return u, v, big_l1, big_l2, zeta, e


def sun_altaz(e, lat, lon):
    """Airless altitude and azimuth (degrees) of the Sun (along the shadow axis) from elements ``e``."""
    phi = np.radians(lat)
    h = e["mu"] + np.radians(lon)
    sd, cd = np.sin(e["d"]), np.cos(e["d"])
    alt = np.degrees(np.arcsin(np.clip(np.sin(phi) * sd + np.cos(phi) * cd * np.cos(h), -1, 1)))
    az = np.degrees(np.arctan2(-cd * np.sin(h), np.cos(phi) * sd - np.sin(phi) * cd * np.cos(h))) % 360.0
    return alt, az


def obscuration(delta, r_sun, r_moon):
    """Fraction of the Sun's disc area covered by the Moon's (radii and separation in one unit)."""
    d = np.asarray(delta, dtype=float)
    r, s = np.asarray(r_sun, dtype=float), np.asarray(r_moon, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        c1 = np.clip((d * d + r * r - s * s) / (2 * d * r), -1, 1)
        c2 = np.clip((d * d + s * s - r * r) / (2 * d * s), -1, 1)
        lens = (r * r * np.arccos(c1) + s * s * np.arccos(c2)
                - 0.5 * np.sqrt(np.maximum((-d + r + s) * (d + r - s) * (d - r + s) * (d + r + s), 0.0)))
        frac = lens / (np.pi * r * r)
    full = d <= np.abs(r - s)
    frac = np.where(full, np.minimum(1.0, (s / r) ** 2), frac)
    return np.where(d >= r + s, 0.0, frac)


@dataclass
class SolarLocal:
    """Local circumstances of N cases (arrays of length N; contacts NaN where they do not occur).

    Attributes
    ----------
    eclipsed : ndarray of bool
        The penumbra reaches the site (whether or not the Sun is up).
    tau : dict of str -> ndarray
        Hours (TT) from the elements' ``t0`` of ``C1 C2 max C3 C4``.
    jd_tt, jd_ut : dict of str -> ndarray
        The same as Julian Days (UT1 with each case's ΔT).
    sun_altitude_deg, sun_azimuth_deg : dict of str -> ndarray
        The Sun at each contact (airless).
    sun_up : dict of str -> ndarray of bool
    magnitude, obscuration : ndarray
        At maximum (geometric, whether or not the Sun is up).
    local_type : ndarray of str
        'total', 'annular', 'partial' or '' (no eclipse at the site).
    visible : ndarray of bool
        The Sun is up at some moment of the eclipse.
    visible_magnitude : ndarray
        Largest magnitude with the Sun up (NaN if not visible).
    sunrise_tau, sunset_tau : ndarray
        Sunrise / sunset between C1 and C4, hours from ``t0`` (NaN if none).
    sunrise_magnitude, sunset_magnitude : ndarray
        Magnitude then.
    central_duration_s : ndarray
        C3 - C2 (NaN if not central at the site).
    delta_t_s : ndarray
    """

    eclipsed: np.ndarray
    tau: dict
    jd_tt: dict
    jd_ut: dict
    sun_altitude_deg: dict
    sun_azimuth_deg: dict
    sun_up: dict
    magnitude: np.ndarray
    obscuration: np.ndarray
    local_type: np.ndarray
    visible: np.ndarray
    visible_magnitude: np.ndarray
    sunrise_tau: np.ndarray
    sunset_tau: np.ndarray
    sunrise_magnitude: np.ndarray
    sunset_magnitude: np.ndarray
    central_duration_s: np.ndarray
    delta_t_s: np.ndarray


def _newton_max(el, tau, lat, lon, elev, rows, steps=8):
    h = 1e-4
    for _ in range(steps):
        u0, v0 = _plane(el, tau - h, lat, lon, elev, rows)[:2]
        u1, v1 = _plane(el, tau, lat, lon, elev, rows)[:2]
        u2, v2 = _plane(el, tau + h, lat, lon, elev, rows)[:2]
        f = u1 * (u2 - u0) + v1 * (v2 - v0)                       # ~ 2h (u u' + v v')
        fp = (u2 - u0) ** 2 / (2 * h) + (v2 - v0) ** 2 / (2 * h) + 2 * h * (
            u1 * (u2 - 2 * u1 + u0) + v1 * (v2 - 2 * v1 + v0)) / h ** 2
        step = -f / np.where(fp != 0, fp, 1.0)
        tau = np.clip(tau + step, -VALID_HOURS, VALID_HOURS)
        if np.all(np.abs(step) * 3600.0 < 0.01):
            break
    return tau


def _solve_contact(el, tau0, lat, lon, elev, rows, which, steps=10):
    """Newton steps on ``Delta - L`` (L1 for C1/C4, |L2| for C2/C3) from guesses ``tau0``."""
    h = 1e-4
    tau = tau0.copy()

    def f(t):
        u, v, l1, l2 = _plane(el, t, lat, lon, elev, rows)[:4]
        return np.hypot(u, v) - (l1 if which in ("C1", "C4") else np.abs(l2))

    for _ in range(steps):
        f0 = f(tau)
        fp = (f(tau + h) - f(tau - h)) / (2 * h)
        step = -f0 / np.where(fp != 0, fp, 1.0)
        step = np.clip(step, -0.5, 0.5)
        tau = np.clip(tau + step, -VALID_HOURS, VALID_HOURS)
        if np.all(np.abs(step) * 3600.0 < 0.01):
            break
    return tau


def solar_local(el: BesselianElements, lat, lon, elev=0.0, site=None) -> SolarLocal:
    """Local circumstances of each eclipse (case) of ``el`` at a site.

    Parameters
    ----------
    el : BesselianElements
        N cases (their ``delta_t_s`` sets UT1 and the Earth's rotation).
    lat, lon, elev : float or ndarray (N,)
        Geodetic latitude and east longitude (degrees), height (m).
    site : calendra.sites.Site or None
        For the visible horizon and the weather (flat horizon, 10 C, 1010 mbar when None).

    Returns
    -------
    SolarLocal
    """
    from calendra.sites import Site

    n = len(el)
    lat = np.broadcast_to(np.asarray(lat, dtype=float), (n,))
    lon = np.broadcast_to(np.asarray(lon, dtype=float), (n,))
    elev = np.broadcast_to(np.asarray(elev, dtype=float), (n,))
    if site is None:
        site = Site("point", float(lat[0]) if n else 0.0, float(lon[0]) if n else 0.0)
    rows = np.arange(n)
    grid = np.arange(-VALID_HOURS, VALID_HOURS + 1e-9, GRID_STEP_H)
    u, v = _plane(el, np.broadcast_to(grid, (n, grid.size)), lat[:, None], lon[:, None], elev[:, None], None)[:2]
    tau_max = grid[np.argmin(np.hypot(u, v), axis=1)]
    tau_max = _newton_max(el, tau_max, lat, lon, elev, rows)
    u, v, l1, l2, zeta, e = _plane(el, tau_max, lat, lon, elev, rows)
    delta = np.hypot(u, v)
    mag = (l1 - delta) / (l1 + l2)
    eclipsed = mag > 0
    r_sun, r_moon = (l1 + l2) / 2.0, (l1 - l2) / 2.0
    obsc = obscuration(delta, r_sun, r_moon)
    speed = _speed(el, tau_max, lat, lon, elev, rows)
    central = eclipsed & (delta < np.abs(l2))
    local_type = np.where(~eclipsed, "", np.where(central, np.where(l2 < 0, "total", "annular"), "partial"))
    taus = {"max": np.where(eclipsed, tau_max, np.nan)}
    for name, sign, radius, ok in (("C1", -1, l1, eclipsed), ("C4", 1, l1, eclipsed),
                                   ("C2", -1, np.abs(l2), central), ("C3", 1, np.abs(l2), central)):
        guess = tau_max + sign * np.sqrt(np.maximum(radius ** 2 - delta ** 2, 0.0)) / speed
        guess = np.clip(guess, -VALID_HOURS, VALID_HOURS)
        t = np.full(n, np.nan)
        if ok.any():
            t[ok] = _solve_contact(el, guess[ok], lat[ok], lon[ok], elev[ok], rows[ok], name)
        taus[name] = t
    # Sun at the contacts
    alt, az, up = {}, {}, {}
    for name in CONTACT_NAMES:
        t = np.nan_to_num(taus[name])
        ee = el.at(t, names=("d", "mu", "tan_f1", "tan_f2"))
        a, z = sun_altaz(ee, lat, lon)
        sd = np.degrees((ee["tan_f1"] + ee["tan_f2"]) / 2.0)
        ok = np.isfinite(taus[name])
        alt[name] = np.where(ok, a, np.nan)
        az[name] = np.where(ok, z, np.nan)
        up[name] = ok & (a > threshold_deg(site, z, sd))
    vis, vis_mag, rise, sett, rise_mag, set_mag, day = _visibility(el, taus, lat, lon, elev, rows, site, eclipsed)
    # a site on the night side projects into the shadow too: no eclipse there
    night = eclipsed & ~day
    if night.any():
        eclipsed = eclipsed & day
        local_type = np.where(eclipsed, local_type, "")
        for k in taus:
            taus[k] = np.where(eclipsed, taus[k], np.nan)
        for d_ in (alt, az):
            for k in d_:
                d_[k] = np.where(eclipsed, d_[k], np.nan)
        for k in up:
            up[k] = up[k] & eclipsed
    jd_tt = {k: el.t0 + v / 24.0 for k, v in taus.items()}
    jd_ut = {k: v - el.delta_t_s / DAY_S for k, v in jd_tt.items()}
    duration = (taus["C3"] - taus["C2"]) * 3600.0
    return SolarLocal(eclipsed, taus, jd_tt, jd_ut, alt, az, up, np.where(eclipsed, mag, 0.0),
                      np.where(eclipsed, obsc, 0.0), local_type, vis, vis_mag, rise, sett, rise_mag, set_mag,
                      duration, el.delta_t_s.copy())


def _speed(el, tau, lat, lon, elev, rows):
    h = 1e-4
    u0, v0 = _plane(el, tau - h, lat, lon, elev, rows)[:2]
    u1, v1 = _plane(el, tau + h, lat, lon, elev, rows)[:2]
    return np.maximum(np.hypot(u1 - u0, v1 - v0) / (2 * h), 1e-6)


def magnitude_at(el, tau, lat, lon, elev, rows=None):
    """Magnitude (fraction of the Sun's diameter covered, 0 when none) at hours ``tau``."""
    u, v, l1, l2 = _plane(el, tau, lat, lon, elev, rows)[:4]
    return np.maximum((l1 - np.hypot(u, v)) / (l1 + l2), 0.0)


def _sun_margin(el, tau, lat, lon, site, rows=None):
    ee = el.at(tau, names=("d", "mu", "tan_f1", "tan_f2"), rows=rows)
    a, z = sun_altaz(ee, lat, lon)
    sd = np.degrees((ee["tan_f1"] + ee["tan_f2"]) / 2.0)
    return a - threshold_deg(site, z, sd)


def _visibility(el, taus, lat, lon, elev, rows, site, eclipsed):
    from .horizon import horizon_crossings

    n = len(el)
    c1 = np.where(eclipsed, taus["C1"], 0.0)
    c4 = np.where(eclipsed, taus["C4"], 0.0)
    frac = np.linspace(0.0, 1.0, SPAN_SAMPLES)
    grid = c1[:, None] + (c4 - c1)[:, None] * frac[None, :]
    extra = np.stack([np.nan_to_num(taus[k], nan=0.0) for k in ("C2", "max", "C3")], axis=1)
    extra = np.where(eclipsed[:, None] & np.isfinite(np.stack([taus[k] for k in ("C2", "max", "C3")], 1)),
                     extra, c1[:, None])
    allt = np.sort(np.concatenate([grid, extra], axis=1), axis=1)
    la, lo, ev = lat[:, None], lon[:, None], elev[:, None]
    margin = _sun_margin(el, allt, la, lo, site)
    mags = magnitude_at(el, allt, la, lo, ev)
    rise, sett = horizon_crossings(allt, margin)
    for arr in (rise, sett):
        ok = np.isfinite(arr)
        if ok.any():
            t = arr[ok]
            for _ in range(2):
                f0 = _sun_margin(el, t, lat[ok], lon[ok], site, rows[ok])
                f1 = _sun_margin(el, t + 1e-3, lat[ok], lon[ok], site, rows[ok])
                slope = (f1 - f0) / 1e-3
                t = t - np.where(slope != 0, f0 / np.where(slope != 0, slope, 1.0), 0.0)
            arr[ok] = t
    up = margin > 0
    visible = eclipsed & np.any(up & (mags > 0), axis=1)
    vis_mag = np.where(up, mags, -np.inf).max(axis=1)
    for arr in (rise, sett):       # the magnitude at sunrise/sunset counts as seen
        ok = np.isfinite(arr)
        if ok.any():
            m_at = magnitude_at(el, arr[ok], lat[ok], lon[ok], elev[ok], rows[ok])
            vis_mag[ok] = np.maximum(vis_mag[ok], m_at)
    vis_mag = np.where(visible | np.isfinite(rise) | np.isfinite(sett), vis_mag, np.nan)
    visible = visible | (eclipsed & (np.isfinite(rise) | np.isfinite(sett)))
    rise_mag = np.full(n, np.nan)
    set_mag = np.full(n, np.nan)
    for arr, out in ((rise, rise_mag), (sett, set_mag)):
        ok = np.isfinite(arr)
        if ok.any():
            out[ok] = magnitude_at(el, arr[ok], lat[ok], lon[ok], elev[ok], rows[ok])
    rise = np.where(eclipsed, rise, np.nan)
    sett = np.where(eclipsed, sett, np.nan)
    # the Sun's centre within NIGHT_SIDE_DEG below the horizon at some sample: the site is not on the night side
    day_side = np.any(margin > -NIGHT_SIDE_DEG, axis=1)
    return visible, vis_mag, rise, sett, rise_mag, set_mag, day_side
