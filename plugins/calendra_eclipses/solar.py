"""Solar eclipses over the span of DE406 (-3000..3000) from Besselian elements, vectorised over eclipses.

Search
------
1. Every new moon of the range (:func:`calendra.lunations.lunar_phases`);
   those with the Moon within ``asin(R / r_M) + s_M + s_S + 0.25 deg`` of
   the Sun (geocentric, apparent) are candidates.
2. Their Besselian elements (:mod:`.besselian`) are fitted around the new moon.
3. *Greatest eclipse* is the instant the shadow axis passes closest to the
   Earth's centre, the minimum of ``m^2 = x^2 + y^2`` (Newton steps on
   ``x x' + y y'`` with the polynomial derivatives); ``gamma = m`` there,
   signed as ``y`` (positive: the axis passes north of the centre).
4. The axis meets the Earth if ``m`` is less than the radius of the Earth's
   outline in that direction (:func:`.besselian.limb_radius`, WGS84).

Type and magnitude
------------------
*Central* eclipses: the umbral radius at a point of the central line is
``L2 = l2 - zeta tan f2``; the eclipse is ``total`` where ``L2 < 0`` and
``annular`` where ``L2 > 0``.  ``L2`` is evaluated along the whole central
line (every 2 minutes, and at its two ends, where ``zeta = 0``, found by
bisection); an eclipse with both signs is ``hybrid``.  Magnitude is the
ratio of the apparent diameters ``(L1 - L2) / (L1 + L2)`` at the point of
greatest eclipse, on the central line.

*Non-central* eclipses: the point of greatest eclipse is the point of the
Earth's limb nearest the axis, at ``Delta = m - r_limb``; magnitude
``(L1 - Delta) / (L1 + L2)`` (fraction of the Sun's diameter covered there).
If ``Delta < |l2|`` the umbra (``l2 < 0``) or antumbra touches the Earth:
a non-central ``total`` or ``annular`` eclipse (flag ``central = False``);
otherwise ``partial``.  No eclipse when ``Delta >= l1``.

Path width at greatest eclipse (Explanatory Supplement):
``W = 2 |L2| / sqrt(zeta^2 + (xi v_x + eta v_y)^2)`` Earth radii, ``(v_x, v_y)``
the unit velocity of the axis relative to the ground point on the plane.

The geographic point of greatest eclipse and the central line need UT1,
hence ΔT: the longitude moves 15 deg east per hour of ΔT *decrease*.
Every ``jd_tt`` is TT.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from calendra.errors import CalendraError, ParameterError

from .besselian import (VALID_HOURS, BesselianElements, fit_elements, limb_radius, plane_to_geographic,
                        surface_zeta)
from .common import SOLAR_SAROS_ANCHOR, saros_numbers, span_tt
from .geometry import EARTH_RADIUS_KM, SUN_RADIUS_KM, MOON_K_PENUMBRA, angle_between, apparent_states, norm

DAY_S = 86400.0
SOLAR_TYPES = ("partial", "annular", "total", "hybrid")
PATH_STEP_MIN = 2.0


def _greatest_tau(el: BesselianElements):
    tau = np.zeros(len(el))
    for _ in range(8):
        e = el.at(tau, names=("x", "y"), derivative=True)
        # second derivatives by a symmetric difference of the first
        e2 = el.at(tau + 1e-3, names=("x", "y"), derivative=True)
        xdd = (e2["x_dot"] - e["x_dot"]) / 1e-3
        ydd = (e2["y_dot"] - e["y_dot"]) / 1e-3
        f = e["x"] * e["x_dot"] + e["y"] * e["y_dot"]
        fp = e["x_dot"] ** 2 + e["y_dot"] ** 2 + e["x"] * xdd + e["y"] * ydd
        step = -f / fp
        tau = np.clip(tau + step, -VALID_HOURS, VALID_HOURS)
        if np.all(np.abs(step) * 3600.0 < 0.01):
            break
    return tau


def _axis_on_earth(el, tau, rows=None):
    """``m - r_limb`` (negative: the axis meets the Earth) at hours ``tau``."""
    e = el.at(tau, names=("x", "y", "d"), rows=rows)
    r, _ = limb_radius(np.arctan2(e["y"], e["x"]), e["d"])
    return np.hypot(e["x"], e["y"]) - r


def _path_ends(el, tau_g, rows):
    """Hours of the first and last instants the axis meets the Earth (bisection from greatest eclipse)."""
    ends = []
    for side in (-1.0, 1.0):
        lo = tau_g[rows].copy()                                  # inside (axis on the Earth)
        # outside: the axis crosses the Earth in under 4 h, and greatest eclipse is within 1 h of t0
        hi = np.clip(lo + side * VALID_HOURS, -VALID_HOURS, VALID_HOURS)
        for _ in range(40):
            mid = 0.5 * (lo + hi)
            inside = _axis_on_earth(el, mid, rows) < 0
            lo = np.where(inside, mid, lo)
            hi = np.where(inside, hi, mid)
        ends.append(0.5 * (lo + hi))
    return ends[0], ends[1]


def _l2_at(el, tau, rows):
    e = el.at(tau, names=("x", "y", "d", "l2", "tan_f2"), rows=rows)
    zeta = surface_zeta(e["x"], e["y"], e["d"])
    zeta = np.where(np.isfinite(zeta), zeta, 0.0)
    return e["l2"] - zeta * e["tan_f2"]


@dataclass
class SolarEclipses:
    """Solar eclipses in time order (arrays of equal length).

    Attributes
    ----------
    jd_tt : ndarray
        Greatest eclipse, Julian Day TT.
    kind : ndarray of int
        0 partial, 1 annular, 2 total, 3 hybrid (:data:`SOLAR_TYPES`).
    central : ndarray of bool
        The shadow axis meets the Earth.
    lunation, saros : ndarray of int
        Meeus' lunation number of the new moon, and saros series (canon numbering).
    gamma : ndarray
        Least distance of the axis from the Earth's centre, Earth radii, signed as y.
    magnitude : ndarray
        At the point of greatest eclipse (see the module docstring).
    latitude_deg, longitude_deg : ndarray
        Point of greatest eclipse (geodetic, east positive), for ``delta_t_s``.
    sun_altitude_deg, sun_azimuth_deg : ndarray
        The Sun there (airless).
    path_width_km : ndarray
        Width of the umbral/antumbral path at greatest eclipse (NaN when not central).
    central_duration_s : ndarray
        Duration of the central phase at the point of greatest eclipse (NaN when not central).
    delta_t_s : ndarray
        ΔT used for the geographic quantities.
    elements : BesselianElements
    """

    jd_tt: np.ndarray
    kind: np.ndarray
    central: np.ndarray
    lunation: np.ndarray
    saros: np.ndarray
    gamma: np.ndarray
    magnitude: np.ndarray
    latitude_deg: np.ndarray
    longitude_deg: np.ndarray
    sun_altitude_deg: np.ndarray
    sun_azimuth_deg: np.ndarray
    path_width_km: np.ndarray
    central_duration_s: np.ndarray
    delta_t_s: np.ndarray
    elements: BesselianElements
    meta: dict = field(default_factory=dict)

    def __len__(self):
        return int(self.jd_tt.size)

    @property
    def type_names(self) -> np.ndarray:
        return np.array(SOLAR_TYPES)[self.kind]

    @property
    def tau_greatest(self) -> np.ndarray:
        """Hours from the elements' ``t0`` to greatest eclipse (TT)."""
        return (self.jd_tt - self.elements.t0) * 24.0

    def select(self, mask) -> "SolarEclipses":
        names = ("jd_tt", "kind", "central", "lunation", "saros", "gamma", "magnitude", "latitude_deg",
                 "longitude_deg", "sun_altitude_deg", "sun_azimuth_deg", "path_width_km", "central_duration_s",
                 "delta_t_s")
        vals = {n: getattr(self, n)[mask] for n in names}
        return SolarEclipses(**vals, elements=self.elements.select(mask), meta=dict(self.meta))


def _candidates(start, end):
    from calendra.lunations import lunar_phases

    lo, hi = span_tt()
    new = lunar_phases(max(start - 1.0, lo), min(end + 1.0, hi), "new")
    m, _, s, _ = apparent_states(new.jd_tt)
    rm, rs = norm(m), norm(s)
    limit = (np.arcsin(EARTH_RADIUS_KM / rm) + np.arcsin(MOON_K_PENUMBRA * EARTH_RADIUS_KM / rm)
             + np.arcsin(SUN_RADIUS_KM / rs) + math.radians(0.25))
    near = angle_between(m, s) < limit
    return new.jd_tt[near], new.lunation[near]


def solar_eclipses(jd_tt_start, jd_tt_end, *, deltat=None, progress=None) -> SolarEclipses:
    """Find every solar eclipse whose greatest eclipse lies in ``[start, end)``.

    Parameters
    ----------
    jd_tt_start, jd_tt_end : float
        Julian Days, TT, within DE406.
    deltat : delta-T model or None
        For the geographic quantities (default model when None).
    progress : callable or None
        ``progress(done, total, label)``.

    Returns
    -------
    SolarEclipses
        In time order.
    """
    if deltat is None:
        from calendra.deltat import DEFAULT_MODEL, get_model
        deltat = get_model(DEFAULT_MODEL)
    lo, hi = span_tt()
    start, end = max(float(jd_tt_start), lo), min(float(jd_tt_end), hi)
    if not end > start:
        raise ParameterError("the end of the range must come after its start")
    if progress:
        progress(0, 4, "solar eclipses: new moons")
    t0, lunation = _candidates(start, end)
    if progress:
        progress(1, 4, "solar eclipses: Besselian elements")
    el = fit_elements(t0, deltat.seconds(t0))
    if progress:
        progress(2, 4, "solar eclipses: greatest eclipse")
    tau = _greatest_tau(el)
    if np.any(np.abs(tau) >= VALID_HOURS - 1e-9):
        raise CalendraError("solar eclipses: a greatest eclipse fell outside its elements' interval")
    e = el.at(tau, names=("x", "y", "d", "l1", "l2", "tan_f1", "tan_f2", "mu"))
    m = np.hypot(e["x"], e["y"])
    psi = np.arctan2(e["y"], e["x"])
    r_limb, zeta_limb = limb_radius(psi, e["d"])
    delta = m - r_limb
    exists = delta < e["l1"] - zeta_limb * e["tan_f1"]
    jd = el.t0 + tau / 24.0
    keep = exists & (jd >= start) & (jd < end)
    el, tau, lunation, jd, delta = el.select(keep), tau[keep], lunation[keep], jd[keep], delta[keep]
    e = {k: v[keep] for k, v in e.items()}
    central = delta < 0
    n = jd.size
    # point of greatest eclipse: on the central line, or the limb point nearest the axis
    zeta_c = surface_zeta(e["x"], e["y"], e["d"])
    r_l, z_l = limb_radius(np.arctan2(e["y"], e["x"]), e["d"])
    scale = np.where(central, 1.0, r_l / np.maximum(np.hypot(e["x"], e["y"]), 1e-12))
    px, py = e["x"] * scale, e["y"] * scale
    pz = np.where(central, np.nan_to_num(zeta_c), z_l)
    lat, lon, alt, az = plane_to_geographic(px, py, pz, e["d"], e["mu"])
    big_l1 = e["l1"] - pz * e["tan_f1"]
    big_l2 = e["l2"] - pz * e["tan_f2"]
    magnitude = np.where(central, (big_l1 - big_l2) / (big_l1 + big_l2),
                         (big_l1 - delta) / (big_l1 + big_l2))
    kind = np.zeros(n, dtype=np.int64)
    # non-central eclipses whose umbra or antumbra touches the Earth
    touch = ~central & (delta < np.abs(big_l2))
    kind[touch] = np.where(big_l2[touch] < 0, 2, 1)
    if progress:
        progress(3, 4, "solar eclipses: central lines")
    rows = np.flatnonzero(central)
    if rows.size:
        a, b = _path_ends(el, tau, rows)
        steps = np.arange(0.0, 2 * VALID_HOURS + 1e-9, PATH_STEP_MIN / 60.0)
        grid = a[:, None] + np.minimum(steps[None, :], (b - a)[:, None])
        l2_path = _l2_at(el, grid, rows)
        l2_path = np.concatenate([l2_path, _l2_at(el, a, rows)[:, None], _l2_at(el, b, rows)[:, None],
                                  big_l2[rows][:, None]], axis=1)
        lo2, hi2 = l2_path.min(axis=1), l2_path.max(axis=1)
        kind[rows] = np.where(hi2 < 0, 2, np.where(lo2 > 0, 1, 3))
    width, duration = _width_and_duration(el, tau, e, px, py, pz, big_l2, central)
    saros, _ = saros_numbers(lunation, SOLAR_SAROS_ANCHOR)
    if progress:
        progress(4, 4, "solar eclipses")
    gamma = np.sign(e["y"]) * np.hypot(e["x"], e["y"])
    out = SolarEclipses(jd, kind, central, lunation, saros, gamma, magnitude, lat, lon, alt, az, width, duration,
                        el.delta_t_s.copy(), el)
    return out.select(np.argsort(jd, kind="stable"))


def _width_and_duration(el, tau, e, px, py, pz, big_l2, central):
    """Path width (km) and central duration (s) at the point of greatest eclipse (NaN if not central)."""
    n = tau.size
    width = np.full(n, np.nan)
    duration = np.full(n, np.nan)
    if not central.any():
        return width, duration
    d = el.at(tau, names=("x", "y", "d", "mu"), derivative=True)
    sd, cd = np.sin(e["d"]), np.cos(e["d"])
    xi, eta = px, py
    # velocity of a fixed ground point on the plane (Explanatory Supplement): xi' = mu' (zeta cos d - eta sin d)...
    xi_dot = d["mu_dot"] * (pz * cd - eta * sd)
    eta_dot = d["mu_dot"] * xi * sd - pz * d["d_dot"]
    vx, vy = d["x_dot"] - xi_dot, d["y_dot"] - eta_dot
    speed = np.hypot(vx, vy)
    ux, uy = vx / speed, vy / speed
    w = 2.0 * np.abs(big_l2) / np.sqrt(pz ** 2 + (xi * ux + eta * uy) ** 2)
    width[central] = (w * EARTH_RADIUS_KM)[central]
    duration[central] = (2.0 * np.abs(big_l2) / speed * 3600.0)[central]
    return width, duration


def central_line(ecl: SolarEclipses, index: int, step_min: float = 5.0, delta_t_s=None):
    """The central line of one eclipse as (jd_ut, latitude, longitude) rows.

    Parameters
    ----------
    ecl : SolarEclipses
    index : int
        Row of ``ecl``.
    step_min : float
        Spacing of the points, minutes; the two ends of the line are added.
    delta_t_s : float or None
        ΔT (seconds) for UT and longitudes; None: the table's.

    Returns
    -------
    jd_ut, latitude_deg, longitude_deg, l2 : ndarray
        UT1 Julian Days, geodetic latitude and east longitude (degrees), and
        the umbral radius ``L2`` there (negative: total).  Empty for a
        non-central eclipse.
    """
    el = ecl.elements.select(np.array([index]))
    if delta_t_s is not None:
        el = el.shifted(float(delta_t_s) - float(el.delta_t_s[0]))
    if not ecl.central[index]:
        return (np.zeros(0),) * 4
    tau_g = np.array([(ecl.jd_tt[index] - el.t0[0]) * 24.0])
    a, b = _path_ends(el, tau_g, np.array([0]))
    a, b = float(a[0]), float(b[0])
    inner = np.arange(math.ceil(a * 60 / step_min) * step_min / 60, b, step_min / 60.0)
    # pull the ends a hair inside the Earth so that the line meets it
    tau = np.concatenate([[a + 1e-7], inner[(inner > a + 1e-7) & (inner < b - 1e-7)], [b - 1e-7]])
    e = el.at(tau[None, :], names=("x", "y", "d", "mu", "l2", "tan_f2"))
    zeta = surface_zeta(e["x"], e["y"], e["d"])
    ok = np.isfinite(zeta)
    lat, lon, _, _ = plane_to_geographic(e["x"], e["y"], np.nan_to_num(zeta), e["d"], e["mu"])
    l2 = e["l2"] - np.nan_to_num(zeta) * e["tan_f2"]
    jd_tt = el.t0[0] + tau / 24.0
    jd_ut = jd_tt - el.delta_t_s[0] / DAY_S
    ok = ok[0]
    return jd_ut[ok], lat[0][ok], lon[0][ok], l2[0][ok]


def nearest_solar_eclipse(jd_tt, *, deltat=None) -> SolarEclipses:
    """The solar eclipse whose greatest eclipse is nearest ``jd_tt`` (a one-row table)."""
    lo, hi = span_tt()
    for half in (200.0, 400.0):
        found = solar_eclipses(max(jd_tt - half, lo), min(jd_tt + half, hi), deltat=deltat)
        if len(found):
            return found.select(np.array([int(np.argmin(np.abs(found.jd_tt - jd_tt)))]))
    raise CalendraError(f"no solar eclipse found near JD {jd_tt:.1f} TT")
