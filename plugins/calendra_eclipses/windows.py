"""Delta-T windows: for which values of ΔT an eclipse was seen from a site.

A record that an eclipse was seen (or was total, or the Sun rose eclipsed)
at a place constrains ΔT, because the eclipse geometry is fixed in TT and
only the Earth's rotation angle at a TT instant depends on ΔT
(:mod:`.geometry`).  This module scans ΔT offsets from the model's value,
with the TT geometry computed once:

* solar: the Besselian elements are fitted once; a ΔT offset ``δ`` only
  shifts ``mu`` by ``-ω δ`` (:meth:`.besselian.BesselianElements.shifted`),
  and the local circumstances of all offsets are one array job
  (:func:`.solar_local.solar_local`);
* lunar: the Moon's apparent positions at 361 instants from P1 to P4 are
  computed once; each offset only turns the site about the true pole
  (:func:`.horizon.topocentric_altaz`).

Conditions (each gives a list of ΔT intervals, seconds)
--------------------------------------------------------
solar
    ``seen`` - some moment of the eclipse with the Sun up and magnitude
    >= ``min_magnitude``; ``central`` - total or annular at the site with the
    Sun up during the central phase; ``rise``/``set`` - the Sun rose/set
    eclipsed with magnitude >= ``horizon_magnitude``.
lunar
    ``seen`` - some moment of the umbral phase (the penumbral phase for a
    penumbral eclipse) with the Moon up; ``total`` - some moment of
    totality with the Moon up; ``rise``/``set`` - the Moon rose/set during the
    umbral phase with umbral magnitude >= ``horizon_magnitude``.

The scan covers ``model value ± span_s`` (default ``max(4 sigma, 1 h)``, at
most half a sidereal day, beyond which the site has turned to another
civil day) in 2001 steps; every edge is then refined by 24 bisections
(under 0.01 s for the largest spans).  Each interval is also expressed in
units of the model's sigma from its value.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from calendra.errors import ParameterError

DAY_S = 86400.0
SCAN_POINTS = 2001
BISECTIONS = 24
MAX_SPAN_S = 43082.0
LUNAR_SAMPLES = 361


@dataclass
class DeltaTWindow:
    """Intervals of ΔT (seconds) for which one condition holds."""

    condition: str
    description: str
    intervals: list

    def as_dict(self, model_value, sigma):
        out = []
        for lo, hi in self.intervals:
            out.append({"from_s": lo, "to_s": hi, "from_sigma": (lo - model_value) / sigma if sigma else None,
                        "to_sigma": (hi - model_value) / sigma if sigma else None,
                        "open_below": bool(lo == -np.inf), "open_above": bool(hi == np.inf)})
        return {"condition": self.condition, "description": self.description, "intervals": out,
                "contains_model_value": any(lo <= model_value <= hi for lo, hi in self.intervals)}


def _default_span(sigma):
    return float(min(max(4.0 * sigma, 3600.0), MAX_SPAN_S))


def _intervals(offsets, mask, evaluate, dt0):
    """Runs of True in ``mask`` over ``offsets`` with edges refined by bisection on ``evaluate``."""
    idx = np.flatnonzero(np.diff(mask.astype(np.int8)) != 0)
    lo, hi = offsets[idx], offsets[idx + 1]
    lo_val = mask[idx]
    for _ in range(BISECTIONS):
        if idx.size == 0:
            break
        mid = 0.5 * (lo + hi)
        val = evaluate(mid)
        same = val == lo_val
        lo = np.where(same, mid, lo)
        hi = np.where(same, hi, mid)
    edges = 0.5 * (lo + hi)
    bounds = list(zip(edges.tolist(), lo_val.tolist()))
    out, start = [], (-np.inf if mask[0] else None)
    for edge, was_true in bounds:
        if was_true:
            out.append((start, edge))
            start = None
        else:
            start = edge
    if start is not None:
        out.append((start, np.inf))
    return [(dt0 + a if np.isfinite(a) else a, dt0 + b if np.isfinite(b) else b) for a, b in out]


def solar_windows(ecl, index: int, site, deltat, *, span_s=None, min_magnitude: float = 0.0,
                  horizon_magnitude: float = 0.0):
    """ΔT windows of one solar eclipse at a site.

    Parameters
    ----------
    ecl : .solar.SolarEclipses
    index : int
        Row of ``ecl``.
    site : calendra.sites.Site
    deltat : delta-T model
        The reference value and sigma.
    span_s : float or None
        Half-width of the scan, seconds.
    min_magnitude, horizon_magnitude : float
        Thresholds of ``seen`` and of ``rise``/``set``.

    Returns
    -------
    dict
        ``model`` value and sigma (s), ``span_s``, and ``windows``: a list of
        :class:`DeltaTWindow`.
    """
    from .solar_local import solar_local

    jd = float(ecl.jd_tt[index])
    dt0, sigma = float(deltat.seconds(jd)), float(deltat.sigma(jd))
    span = _default_span(sigma) if span_s is None else float(span_s)
    if not 0 < span <= MAX_SPAN_S * 2:
        raise ParameterError(f"delta-T scan half-width must be in (0, {MAX_SPAN_S * 2:.0f}] s")
    base = ecl.elements.select(np.array([index]))
    base = base.shifted(dt0 - float(base.delta_t_s[0]))
    lat, lon, elev = site.latitude_deg, site.east_longitude_deg, site.elevation_m

    def run(offsets):
        el = base.select(np.zeros(offsets.size, dtype=np.int64)).shifted(offsets)
        loc = solar_local(el, lat, lon, elev, site=site)
        up_central = loc.sun_up["C2"] | loc.sun_up["max"] | loc.sun_up["C3"]
        return {
            "seen": loc.visible & (np.nan_to_num(loc.visible_magnitude) >= max(min_magnitude, 1e-12)),
            "central": np.isin(loc.local_type, ("total", "annular")) & up_central,
            "rise": np.isfinite(loc.sunrise_tau) & (np.nan_to_num(loc.sunrise_magnitude) >= max(horizon_magnitude, 1e-12)),
            "set": np.isfinite(loc.sunset_tau) & (np.nan_to_num(loc.sunset_magnitude) >= max(horizon_magnitude, 1e-12)),
        }

    texts = {"seen": f"seen at all (Sun up, magnitude >= {min_magnitude:g})",
             "central": "total or annular at the site with the Sun up",
             "rise": f"the Sun rose eclipsed (magnitude >= {horizon_magnitude:g} at sunrise)",
             "set": f"the Sun set eclipsed (magnitude >= {horizon_magnitude:g} at sunset)"}
    return _scan(run, texts, dt0, sigma, span)


def _scan(run, texts, dt0, sigma, span):
    offsets = np.linspace(-span, span, SCAN_POINTS)
    masks = run(offsets)
    windows = []
    for name, text in texts.items():
        windows.append(DeltaTWindow(name, text, _intervals(offsets, masks[name],
                                                           lambda o, n=name: run(o)[n], dt0)))
    return {"model_value_s": dt0, "sigma_s": sigma, "span_s": span, "windows": windows}


def lunar_windows(ecl, index: int, site, deltat, *, span_s=None, horizon_magnitude: float = 0.0):
    """ΔT windows of one lunar eclipse at a site (see the module docstring).

    Parameters
    ----------
    ecl : .lunar.LunarEclipses
    index : int
    site : calendra.sites.Site
    deltat : delta-T model
    span_s : float or None
    horizon_magnitude : float
        Umbral magnitude the Moon must show at rising/setting for ``rise``/``set``.

    Returns
    -------
    dict
        As :func:`solar_windows`.
    """
    from .geometry import EARTH_RADIUS_KM, MOON_K_PENUMBRA, Orientation
    from .horizon import horizon_crossings, threshold_deg, topocentric_altaz
    from .lunar import shadow_geometry

    jd = float(ecl.jd_tt[index])
    dt0, sigma = float(deltat.seconds(jd)), float(deltat.sigma(jd))
    span = _default_span(sigma) if span_s is None else float(span_s)
    c = {k: float(v[index]) for k, v in ecl.contacts.items()}
    times = np.linspace(c["P1"], c["P4"], LUNAR_SAMPLES)
    g = shadow_geometry(times, ecl.shadow)
    umag = (g.umbra + g.moon - g.distance) / (2.0 * g.moon)
    orient = Orientation(times)
    vec = np.einsum("nij,jn->in", orient.true, g.moon_km)
    lon = np.radians(site.east_longitude_deg)
    umbral = np.isfinite(c["U1"])
    t_in = (c["U1"], c["U4"]) if umbral else (c["P1"], c["P4"])
    in_phase = (times >= t_in[0]) & (times <= t_in[1])
    in_total = (times >= c["U2"]) & (times <= c["U3"]) if np.isfinite(c["U2"]) else np.zeros(times.size, bool)

    def run(offsets):
        theta = orient.gast(times[None, :] - (dt0 + offsets[:, None]) / DAY_S) + lon
        alt, az, dist = topocentric_altaz(vec[:, None, :], theta, site.latitude_deg, site.elevation_m)
        sd = np.degrees(np.arcsin(MOON_K_PENUMBRA * EARTH_RADIUS_KM / dist))
        margin = alt - threshold_deg(site, az, sd)
        up = margin > 0
        grid = np.broadcast_to(times, margin.shape)
        rise, sett = horizon_crossings(grid, margin)

        def mag_at(t):
            return np.where(np.isfinite(t), np.interp(np.nan_to_num(t), times, umag), np.nan)

        def during(t):
            return np.isfinite(t) & (np.nan_to_num(t) >= t_in[0]) & (np.nan_to_num(t) <= t_in[1])

        thr = max(horizon_magnitude, 1e-12) if umbral else -np.inf
        return {"seen": np.any(up & in_phase, axis=1), "total": np.any(up & in_total, axis=1),
                "rise": during(rise) & (np.nan_to_num(mag_at(rise), nan=-9) >= thr),
                "set": during(sett) & (np.nan_to_num(mag_at(sett), nan=-9) >= thr)}

    phase = "umbral" if umbral else "penumbral"
    texts = {"seen": f"some of the {phase} phase with the Moon up",
             "total": "some of totality with the Moon up",
             "rise": f"the Moon rose during the {phase} phase (umbral magnitude >= {horizon_magnitude:g})",
             "set": f"the Moon set during the {phase} phase (umbral magnitude >= {horizon_magnitude:g})"}
    return _scan(run, texts, dt0, sigma, span)
