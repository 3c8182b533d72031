"""Local circumstances of lunar eclipses: what a site saw of each.

The eclipse itself is the same for every observer (:mod:`.lunar`); what
changes is whether the Moon was up.  For each eclipse and site this module
gives the Moon's topocentric airless altitude and azimuth at every contact
and at greatest eclipse, which of them happened with the Moon above the
horizon (upper limb above the visible horizon, :mod:`.horizon`), and whether
the Moon rose or set during the eclipse (between P1 and P4), with the
umbral magnitude at that moment.

The search for moonrise and moonset samples the Moon's margin above the
horizon at 64 instants from P1 to P4 for all eclipses at once and
interpolates linearly between samples (the Moon's altitude changes by under
3 degrees between samples, so the interpolation error is a few seconds),
then takes two secant steps on the ephemeris.

Times: ``jd_tt`` TT; local times are UT1 = TT - ΔT plus ``site.offset_days``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .horizon import body_altaz, horizon_crossings
from .lunar import CONTACT_ORDER, DEFAULT_SHADOW, LunarEclipses, shadow_geometry

DAY_S = 86400.0
SAMPLES = 64
#: Events reported, in time order.
LOCAL_EVENTS = ("P1", "U1", "U2", "max", "U3", "U4", "P4")


@dataclass
class LunarLocal:
    """What one site saw of each eclipse of a :class:`.lunar.LunarEclipses` table.

    Attributes
    ----------
    altitude_deg, azimuth_deg : dict of str -> ndarray
        Airless topocentric altitude/azimuth of the Moon at each event of
        :data:`LOCAL_EVENTS` (NaN where the contact does not occur).
    above : dict of str -> ndarray of bool
        Upper limb above the visible horizon at the event.
    moonrise_tt, moonset_tt : ndarray
        Moonrise / moonset between P1 and P4 (Julian Day TT), NaN if none.
    rise_magnitude, set_magnitude : ndarray
        Umbral magnitude at that moonrise / moonset.
    seen : ndarray of bool
        Some part of the eclipse (the umbral phase, or the penumbral one for
        a penumbral eclipse) with the Moon above the horizon.
    total_seen : ndarray of bool
        Some part of totality with the Moon above the horizon.
    delta_t_s : ndarray
        ΔT used (seconds).
    """

    altitude_deg: dict
    azimuth_deg: dict
    above: dict
    moonrise_tt: np.ndarray
    moonset_tt: np.ndarray
    rise_magnitude: np.ndarray
    set_magnitude: np.ndarray
    seen: np.ndarray
    total_seen: np.ndarray
    delta_t_s: np.ndarray

    def visible_events(self) -> list:
        """For each eclipse, the events that happened with the Moon up, as text (e.g. 'P1 U1 max')."""
        names = [n for n in LOCAL_EVENTS]
        cols = np.array([self.above[n] for n in names])
        return [" ".join(n for n, ok in zip(names, cols[:, i]) if ok) or "none" for i in range(cols.shape[1])]


def _event_times(ecl: LunarEclipses):
    return {n: (ecl.jd_tt if n == "max" else ecl.contacts[n]) for n in LOCAL_EVENTS}


def _refine(t, body, site, dt, steps=2):
    """Secant steps on the horizon margin from interpolated crossings (NaN kept)."""
    ok = np.isfinite(t)
    if not ok.any():
        return t
    t = t.copy()
    x0 = t[ok]
    h = 30.0 / DAY_S
    d = np.broadcast_to(dt, t.shape)[ok]
    for _ in range(steps):
        f0 = body_altaz(body, x0, site, d)[3]
        f1 = body_altaz(body, x0 + h, site, d)[3]
        slope = (f1 - f0) / h
        x0 = x0 - np.where(slope != 0, f0 / np.where(slope != 0, slope, 1.0), 0.0)
    t[ok] = x0
    return t


def lunar_local(ecl: LunarEclipses, site, deltat=None, delta_t_s=None) -> LunarLocal:
    """Local circumstances of lunar eclipses at a site.

    Parameters
    ----------
    ecl : LunarEclipses
    site : calendra.sites.Site
    deltat : delta-T model or None
        Gives ΔT at each greatest eclipse (default model when None and no
        ``delta_t_s``).
    delta_t_s : float or array_like or None
        ΔT in seconds, overriding the model (one value or one per eclipse).

    Returns
    -------
    LunarLocal
    """
    n = len(ecl)
    if delta_t_s is None:
        if deltat is None:
            from calendra.deltat import DEFAULT_MODEL, get_model
            deltat = get_model(DEFAULT_MODEL)
        delta_t_s = np.asarray(deltat.seconds(ecl.jd_tt), dtype=float)
    dt = np.broadcast_to(np.asarray(delta_t_s, dtype=float), (n,)).copy()
    times = _event_times(ecl)
    stack = np.array([times[k] for k in LOCAL_EVENTS])                 # (7, N)
    filled = np.where(np.isfinite(stack), stack, ecl.jd_tt[None, :])
    alt, az, _, margin = body_altaz("moon", filled, site, dt[None, :])
    present = np.isfinite(stack)
    alt = np.where(present, alt, np.nan)
    az = np.where(present, az, np.nan)
    above = present & (margin > 0)
    # moonrise / moonset within P1..P4
    p1, p4 = ecl.contacts["P1"], ecl.contacts["P4"]
    grid = p1[:, None] + (p4 - p1)[:, None] * np.linspace(0.0, 1.0, SAMPLES)[None, :]
    gm = body_altaz("moon", grid, site, dt[:, None])[3]
    rise, sett = horizon_crossings(grid, gm)
    rise, sett = _refine(rise, "moon", site, dt), _refine(sett, "moon", site, dt)

    def magnitude_at(t):
        out = np.full(t.shape, np.nan)
        ok = np.isfinite(t)
        if ok.any():
            g = shadow_geometry(t[ok], ecl.shadow)
            out[ok] = (g.umbra + g.moon - g.distance) / (2.0 * g.moon)
        return out

    # seen: the Moon up at some moment of the umbral phase (penumbral phase for a penumbral eclipse)
    u1 = np.where(np.isfinite(ecl.contacts["U1"]), ecl.contacts["U1"], p1)
    u4 = np.where(np.isfinite(ecl.contacts["U4"]), ecl.contacts["U4"], p4)
    seen = _up_during(grid, gm, u1, u4)
    u2, u3 = ecl.contacts["U2"], ecl.contacts["U3"]
    total_seen = np.isfinite(u2) & _up_during(grid, gm, np.nan_to_num(u2), np.nan_to_num(u3))
    seen |= above[1] | above[5] | above[3]
    total_seen |= above[2] | above[4]
    return LunarLocal({k: alt[i] for i, k in enumerate(LOCAL_EVENTS)},
                      {k: az[i] for i, k in enumerate(LOCAL_EVENTS)},
                      {k: above[i] for i, k in enumerate(LOCAL_EVENTS)},
                      rise, sett, magnitude_at(rise), magnitude_at(sett), seen, total_seen, dt)


def _up_during(grid, margin, t0, t1):
    """True where some sample in [t0, t1] of a row has a positive margin."""
    inside = (grid >= t0[:, None]) & (grid <= t1[:, None])
    return np.any(inside & (margin > 0), axis=1)


__all__ = ["LunarLocal", "lunar_local", "LOCAL_EVENTS", "CONTACT_ORDER", "DEFAULT_SHADOW"]
