"""First and last visibility of the lunar crescent at a site, by pluggable published criteria.

For each lunation (conjunction of the Moon and the Sun in geocentric
apparent ecliptic longitude) this module computes, on a few evenings after
it, the circumstances of the young crescent, and on a few mornings before
it those of the old one:

* the Sun's event (sunset in the evening, sunrise in the morning) and the
  Moon's event nearest to it (moonset, moonrise), both for the upper limb
  on the site's horizon with standard refraction (:mod:`calendra.riseset`);
* the **lag** (minutes): moonset - sunset in the evening, sunrise - moonrise
  in the morning (negative: the Moon is not in the sky after sunset or
  before sunrise);
* the **best time** of Yallop (1997): sunset + 4/9 of the lag (morning, by
  the same rule mirrored: sunrise - 4/9 of the lag);
* at the best time and at the Sun's event: the Moon's **age** (hours since
  conjunction, negative before it), airless altitudes and azimuths of the
  Sun's and Moon's centres, topocentric and geocentric (the geocentric
  direction seen against the site's horizon), **ARCL** (Sun-Moon
  elongation), **ARCV** (arc of vision: airless altitude of the Moon's
  centre minus that of the Sun's), **DAZ** (azimuth of the Sun minus that of
  the Moon, -180..180), the Moon's topocentric semi-diameter ``SD`` and the
  crescent width ``W = SD (1 - cos ARCL)`` in arcminutes.

Yallop defines ARCL, ARCV and DAZ geocentrically (ARCL "the angle subtended
at the centre of the Earth by the centre of the Sun and the centre of the
Moon", the note's summary read in a stored copy; ARCV "ignoring the effects
of refraction", recalled) and W' from the topocentric semi-diameter; Odeh
(2004) uses topocentric ARCV and topocentric W.  Both sets are computed and
each criterion takes its own.

Criteria
--------
A criterion is a small object with a ``name``, ``title``, ``reference``,
the ``frame`` of its quantities (``geocentric`` or ``topocentric``), the
moment ``at`` which it is evaluated (``best`` or ``sun_event``) and an
``evaluate(geometry, threshold=None)`` method returning the test value, the
category and whether the crescent counts as visible.  Criteria live in a
module-level registry: :func:`register_criterion` adds one (a plugin calls
it on import, e.g. from its ``calendra_detectors`` hook), :func:`get_criterion`
finds one, :func:`criteria` lists them.  Built in:

``yallop``
    Yallop (1997), NAO Technical Note 69:
    ``q = (ARCV - (11.8371 - 6.3226 W + 0.7319 W^2 - 0.1018 W^3)) / 10``
    (geocentric ARCV, W' in arcmin), categories A (q > +0.216), B (> -0.014),
    C (> -0.160), D (> -0.232), E (> -0.293), F.  Visible by default when
    q > -0.014 (A or B: naked eye, perfect conditions at worst).
``odeh``
    Odeh (2004), *Experimental Astronomy* 18, 39-64:
    ``V = ARCV - (-0.1018 W^3 + 0.7319 W^2 - 6.3226 W + 7.1651)`` (topocentric
    ARCV and W), zones A (V >= 5.65, naked eye), B (>= 2.00, optical aid, may
    be seen by eye), C (>= -0.96, optical aid only), D; no crescent below the
    Danjon limit ARCL < 6.4 deg (zone D).  Visible by default when V >= 5.65.
``lag``
    A lag/elongation rule with adjustable thresholds, evaluated at sunset:
    visible when lag >= ``lag_min`` (default 48 min, the rule used in studies
    of Babylonian month beginnings) and geocentric elongation >=
    ``elongation_min`` (default 0: off) and age >= ``age_min`` hours
    (default 0).  The Babylonian-style lag rule is an empirical rule for the
    latitude of Babylon; it fails elsewhere.

Conjunctions
------------
A private helper computes them independently of the rest of calendra: the
mean phase of Meeus (*Astronomical Algorithms*, eq. 49.1) as a guess, then
Newton steps on the geocentric apparent elongation in ecliptic longitude of
date (DE406 through skyfield), with the exact rate from skyfield's
velocities, to 0.1 s.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .detector import Detector, Parameter
from .errors import ParameterError, UnknownNameError

#: Evenings examined after the local day of conjunction (offsets in days) and mornings before it.
EVENING_OFFSETS = (-1, 0, 1, 2, 3, 4)
MORNING_OFFSETS = (-4, -3, -2, -1, 0, 1)
BEST_TIME_FRACTION = 4.0 / 9.0


# ---------------------------------------------------------------- conjunctions


def _syzygies(jd_tt_start, jd_tt_end, phase=0.0, deltat=None):
    """Return the instants (TT) of new moons (phase 0) or full moons (phase 0.5) in a span.

    A thin view of :func:`calendra.lunations.lunar_phases` (mean phases of
    Meeus ch. 49 refined by vectorized Newton steps on the DE406 elongation).
    ``deltat`` is accepted for symmetry with the callers; conjunctions are TT
    events and do not depend on it.

    Returns
    -------
    jd_tt : float array
        Sorted TT Julian Days within ``[jd_tt_start, jd_tt_end)``.
    k : float array
        Lunation numbers of Meeus (k = 0: the new moon of 2000 January 6).
    """
    from .ephemeris import SPAN_JD
    from .lunations import lunar_phases

    start = max(jd_tt_start, SPAN_JD[0] + 1.0)
    end = min(jd_tt_end, SPAN_JD[1] - 1.0)
    table = lunar_phases(start, end, "new" if phase == 0.0 else "full")
    return table.jd_tt, table.k


# ------------------------------------------------------------------ geometry

GEOMETRY_UNITS = {
    "age_h": ("h", "Moon's age: time since conjunction"),
    "sun_alt_topo": ("deg", "airless topocentric altitude of the Sun's centre"),
    "moon_alt_topo": ("deg", "airless topocentric altitude of the Moon's centre"),
    "sun_az_topo": ("deg", "topocentric azimuth of the Sun"), "moon_az_topo": ("deg", "topocentric azimuth of the Moon"),
    "sun_alt_geo": ("deg", "airless altitude of the Sun's geocentric direction"),
    "moon_alt_geo": ("deg", "airless altitude of the Moon's geocentric direction"),
    "arcl_topo": ("deg", "topocentric Sun-Moon elongation"), "arcl_geo": ("deg", "geocentric Sun-Moon elongation"),
    "arcv_topo": ("deg", "topocentric arc of vision"), "arcv_geo": ("deg", "geocentric arc of vision"),
    "daz": ("deg", "azimuth of the Sun minus azimuth of the Moon"),
    "sd_arcmin": ("arcmin", "Moon's topocentric semi-diameter"),
    "w_topo": ("arcmin", "crescent width SD (1 - cos ARCL_topo)"),
    "w_geo": ("arcmin", "crescent width SD (1 - cos ARCL_geo), Yallop's W'"),
}


def crescent_geometry(site, jd_ut, conjunction_tt, deltat=None, engine=None) -> dict:
    """Return the circumstances of the crescent at instants ``jd_ut`` (UT1) at ``site``.

    Parameters
    ----------
    site : calendra.sites.Site
    jd_ut : float array
        Instants, UT1 Julian Days (NaN gives NaN).
    conjunction_tt : float array
        The conjunction each instant refers to, TT Julian Days (for the age).
    deltat : delta-T model, optional
    engine : optional
        A Moon rise/set engine of :mod:`calendra.riseset` for this site and
        model, to share its interpolation grids.

    Returns
    -------
    dict of str -> float array
        Keys and units in :data:`GEOMETRY_UNITS`.
    """
    from .riseset import BODY_RADIUS_KM, _Engine

    jd = np.asarray(jd_ut, dtype=float)
    out = {k: np.full(jd.shape, np.nan) for k in GEOMETRY_UNITS}
    ok = np.isfinite(jd)
    if not ok.any():
        return out
    eng = engine or _Engine("moon", site, deltat)
    t = eng.time(jd[ok], sidereal=True)
    from .ephemeris import check_span

    check_span(t.tt)
    eph = eng.eph
    topo_m = eng.observer.at(t).observe(eph["moon"]).apparent()
    topo_s = eng.observer.at(t).observe(eph["sun"]).apparent()
    geo = eph["earth"].at(t)
    geo_m = geo.observe(eph["moon"]).apparent()
    geo_s = geo.observe(eph["sun"]).apparent()
    alt_m, az_m, dist_m = topo_m.altaz()
    alt_s, az_s, _ = topo_s.altaz()
    galt_m = geo_m.frame_latlon(eng.topos)[0].degrees
    galt_s = geo_s.frame_latlon(eng.topos)[0].degrees
    sd = np.degrees(np.arcsin(BODY_RADIUS_KM["moon"] / dist_m.km)) * 60.0
    arcl_t = topo_m.separation_from(topo_s).degrees
    arcl_g = geo_m.separation_from(geo_s).degrees
    vals = {
        "age_h": (np.asarray(deltat.tt_from_ut(jd[ok]) if deltat is not None else t.tt) - np.asarray(conjunction_tt)[ok]) * 24.0,
        "sun_alt_topo": alt_s.degrees, "moon_alt_topo": alt_m.degrees,
        "sun_az_topo": az_s.degrees, "moon_az_topo": az_m.degrees,
        "sun_alt_geo": galt_s, "moon_alt_geo": galt_m,
        "arcl_topo": arcl_t, "arcl_geo": arcl_g,
        "arcv_topo": alt_m.degrees - alt_s.degrees, "arcv_geo": galt_m - galt_s,
        "daz": (az_s.degrees - az_m.degrees + 180.0) % 360.0 - 180.0,
        "sd_arcmin": sd,
        "w_topo": sd * (1.0 - np.cos(np.radians(arcl_t))),
        "w_geo": sd * (1.0 - np.cos(np.radians(arcl_g))),
    }
    for k, v in vals.items():
        out[k][ok] = v
    return out


# ------------------------------------------------------------------- criteria

@dataclass
class CriterionResult:
    """Outcome of a criterion: test value, category and visibility per evening."""

    value: np.ndarray
    category: np.ndarray
    visible: np.ndarray


class CrescentCriterion:
    """Base class of crescent visibility criteria (see the module notes).

    Attributes
    ----------
    name : str
        Registry name.
    title, reference : str
    value_name, value_unit : str
        Name and unit of the test value (``q``, ``V``, ``lag``).
    frame : str
        ``geocentric`` or ``topocentric``: which ARCL/ARCV/W the criterion uses.
    at : str
        ``best`` (Yallop's best time) or ``sun_event`` (sunset/sunrise).
    default_threshold : float
        The test value at or above which the crescent counts as visible.
    """

    name = ""
    title = ""
    reference = ""
    value_name = "value"
    value_unit = ""
    frame = "topocentric"
    at = "best"
    default_threshold = 0.0

    def value(self, g: dict) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError

    def category(self, value: np.ndarray, g: dict) -> np.ndarray:
        return np.where(value >= self.default_threshold, "visible", "not visible")

    def evaluate(self, g: dict, threshold=None) -> CriterionResult:
        """Return the test value, category and visibility for geometry ``g`` (see :func:`crescent_geometry`).

        Evenings without a crescent in the sky at the time (lag <= 0, or the
        Moon before conjunction in the evening) are never visible.
        """
        v = np.asarray(self.value(g), dtype=float)
        thr = self.default_threshold if threshold is None else float(threshold)
        ok = np.isfinite(v) & (g.get("lag_min", np.ones(v.shape)) > 0) & self.admissible(g)
        return CriterionResult(v, np.asarray(self.category(v, g)), ok & (v >= thr))

    def admissible(self, g: dict) -> np.ndarray:
        """Where the criterion may say visible at all (e.g. above a Danjon limit)."""
        return np.ones(np.shape(g["arcl_geo"]), dtype=bool)

    def describe(self) -> str:
        return f"{self.title}; {self.reference}"


def yallop_arcv_limit(w_arcmin):
    """Yallop's (1997) minimum ARCV for crescent width ``w_arcmin``: 11.8371 - 6.3226 W + 0.7319 W^2 - 0.1018 W^3 (deg)."""
    w = np.asarray(w_arcmin, dtype=float)
    return 11.8371 - 6.3226 * w + 0.7319 * w ** 2 - 0.1018 * w ** 3


def odeh_arcv_limit(w_arcmin):
    """Odeh's (2004) curve: -0.1018 W^3 + 0.7319 W^2 - 6.3226 W + 7.1651 (deg, W in arcmin)."""
    w = np.asarray(w_arcmin, dtype=float)
    return -0.1018 * w ** 3 + 0.7319 * w ** 2 - 6.3226 * w + 7.1651


class Yallop(CrescentCriterion):
    name = "yallop"
    title = "Yallop (1997) q test"
    reference = ("B. D. Yallop, 'A Method for Predicting the First Sighting of the New Crescent Moon', "
                 "NAO Technical Note 69 (1997, updated 1998)")
    value_name, value_unit = "q", ""
    frame = "geocentric"
    at = "best"
    default_threshold = -0.014
    #: Lower bounds of the categories A..E (q above the bound); below the last: F.
    BOUNDS = (("A", 0.216), ("B", -0.014), ("C", -0.160), ("D", -0.232), ("E", -0.293))

    def value(self, g):
        return (g["arcv_geo"] - yallop_arcv_limit(g["w_geo"])) / 10.0

    def category(self, value, g):
        cat = np.full(np.shape(value), "F", dtype="<U1")
        for letter, bound in reversed(self.BOUNDS):
            cat = np.where(value > bound, letter, cat)
        return np.where(np.isfinite(value), cat, "-")

    def evaluate(self, g, threshold=None):
        # Yallop's categories are open at their lower bounds (q > bound).
        res = super().evaluate(g, threshold)
        thr = self.default_threshold if threshold is None else float(threshold)
        res.visible &= res.value > thr
        return res


class Odeh(CrescentCriterion):
    name = "odeh"
    title = "Odeh (2004) V test"
    reference = ("M. Sh. Odeh, 'New criterion for lunar crescent visibility', Experimental Astronomy 18, "
                 "39-64 (2004)")
    value_name, value_unit = "V", "deg"
    frame = "topocentric"
    at = "best"
    default_threshold = 5.65
    DANJON_DEG = 6.4
    BOUNDS = (("A", 5.65), ("B", 2.00), ("C", -0.96))

    def value(self, g):
        return g["arcv_topo"] - odeh_arcv_limit(g["w_topo"])

    def category(self, value, g):
        cat = np.full(np.shape(value), "D", dtype="<U1")
        for letter, bound in reversed(self.BOUNDS):
            cat = np.where(value >= bound, letter, cat)
        cat = np.where(g["arcl_topo"] < self.DANJON_DEG, "D", cat)
        return np.where(np.isfinite(value), cat, "-")

    def admissible(self, g):
        return g["arcl_topo"] >= self.DANJON_DEG


class LagRule(CrescentCriterion):
    """Visible when the lag, the elongation and the age reach adjustable thresholds."""

    name = "lag"
    title = "lag/elongation rule"
    reference = ("moonset lag after sunset >= 48 min (12 time degrees), as used in studies of Babylonian month "
                 "beginnings; elongation and age thresholds adjustable (empirical, latitude-dependent)")
    value_name, value_unit = "lag", "min"
    frame = "geocentric"
    at = "sun_event"
    default_threshold = 48.0

    def __init__(self, lag_min=48.0, elongation_min=0.0, age_min=0.0):
        self.default_threshold = float(lag_min)
        self.elongation_min = float(elongation_min)
        self.age_min = float(age_min)

    def value(self, g):
        return g["lag_min"]

    def admissible(self, g):
        return (g["arcl_geo"] >= self.elongation_min) & (np.abs(g["age_h"]) >= self.age_min)

    def category(self, value, g):
        vis = (value >= self.default_threshold) & self.admissible(g)
        return np.where(np.isfinite(value), np.where(vis, "visible", "not visible"), "-")

    def describe(self):
        return (f"lag >= {self.default_threshold:g} min, elongation >= {self.elongation_min:g} deg, "
                f"|age| >= {self.age_min:g} h at sunset/sunrise ({self.reference})")


_CRITERIA: dict = {}


def register_criterion(criterion, replace: bool = False) -> None:
    """Add a criterion (an instance, or a class with a no-argument constructor) to the registry.

    Raises
    ------
    ParameterError
        If the name is taken (unless ``replace``) or the object lacks ``name``/``evaluate``.
    """
    obj = criterion() if isinstance(criterion, type) else criterion
    name = getattr(obj, "name", "")
    if not name or not callable(getattr(obj, "evaluate", None)):
        raise ParameterError(f"a crescent criterion needs a name and an evaluate method: {criterion!r}")
    key = name.lower()
    if key in _CRITERIA and not replace:
        raise ParameterError(f"crescent criterion {name!r} is already registered")
    _CRITERIA[key] = type(obj)


def get_criterion(name: str, **params):
    """Return a new instance of the criterion called ``name``; ``params`` go to its constructor."""
    try:
        cls = _CRITERIA[name.lower()]
    except KeyError:
        raise UnknownNameError("crescent criterion", name, _CRITERIA) from None
    return cls(**params)


def criteria() -> list[str]:
    """Names of the registered criteria."""
    return list(_CRITERIA)


for _c in (Yallop, Odeh, LagRule):
    register_criterion(_c)


# --------------------------------------------------------------- evenings

@dataclass
class CrescentNights:
    """Circumstances of the crescent on the evenings (or mornings) around each conjunction.

    Arrays have shape ``(n_lunations, n_offsets)``; times are UT1 Julian Days.

    Attributes
    ----------
    morning : bool
        False: evenings after conjunction (first visibility); True: mornings before it.
    conjunction_tt : (n,) float array
        TT Julian Days of the conjunctions; ``lunation`` their Meeus numbers k.
    offsets : (m,) int array
        Days from the local civil day of conjunction.
    day : (n, m) int array
        Civil day numbers of the evenings/mornings.
    sun_ut, moon_ut : (n, m) float arrays
        Sunset and the moonset nearest it (mornings: sunrise and moonrise).
    lag_min : (n, m) float array
        Minutes the Moon stays in the sky after sunset (before sunrise); negative if none.
    best_ut : (n, m) float array
        Yallop's best time (NaN when lag <= 0).
    at_best, at_sun : dict of (n, m) arrays
        :func:`crescent_geometry` at the best time and at the Sun's event (plus ``lag_min``).
    """

    site: object
    morning: bool
    conjunction_tt: np.ndarray
    lunation: np.ndarray
    offsets: np.ndarray
    day: np.ndarray
    sun_ut: np.ndarray
    moon_ut: np.ndarray
    lag_min: np.ndarray
    best_ut: np.ndarray
    at_best: dict = field(default_factory=dict)
    at_sun: dict = field(default_factory=dict)

    def geometry(self, at: str) -> dict:
        return self.at_best if at == "best" else self.at_sun


def crescent_nights(site, jd_tt_start, jd_tt_end, *, deltat=None, morning=False, horizon=None,
                    offsets=None, at=("best", "sun_event"), progress=None) -> CrescentNights:
    """Compute the crescent's circumstances around every conjunction in a span (one array job).

    Parameters
    ----------
    site : calendra.sites.Site
    jd_tt_start, jd_tt_end : float
        Span of the conjunctions, TT Julian Days.
    deltat : delta-T model or name, optional
    morning : bool
        Mornings before conjunction (last visibility) instead of evenings after it.
    horizon : calendra.riseset.Horizon, optional
        Definition of sunset/moonset (default: upper limb, standard refraction, site's horizon).
    offsets : sequence of int, optional
        Days from the local day of conjunction (default :data:`EVENING_OFFSETS`
        or :data:`MORNING_OFFSETS`).
    at : tuple of str
        Where to compute the geometry: ``best`` and/or ``sun_event``.
    progress : callable(done, total, label), optional
    """
    from .deltat import DEFAULT_MODEL, get_model
    from .riseset import BLOCK, Horizon, _Engine, _civil_day, _local_noon_ut

    model = deltat if deltat is not None and not isinstance(deltat, str) else get_model(deltat or DEFAULT_MODEL)
    horizon = horizon or Horizon()
    offsets = np.asarray(offsets if offsets is not None else (MORNING_OFFSETS if morning else EVENING_OFFSETS))
    conj, k = _syzygies(jd_tt_start, jd_tt_end, 0.0, model)
    n, m = conj.size, offsets.size
    sun = _Engine("sun", site, model)
    moon = _Engine("moon", site, model)
    sense = -1 if morning else 1
    per_block = max(BLOCK // m, 1)          # lunations per block: arrays that stay in the CPU caches
    parts = []
    for i in range(0, n, per_block):        # a loop over blocks of lunations, not over days
        c = conj[i:i + per_block]
        d0 = _civil_day(np.asarray(model.ut_from_tt(c), dtype=float), site).astype(np.int64)
        day = (d0[:, None] + offsets[None, :]).ravel()
        tr = sun.transits_guide(_local_noon_ut(day, site))
        t_sun, _, _ = sun.crossings(tr, sense, horizon)
        t_moon, _, _ = moon.crossings(t_sun, sense, horizon, around="nearest")
        lag = (t_moon - t_sun) * 1440.0 * sense
        best = np.where(lag > 0, t_sun + sense * BEST_TIME_FRACTION * lag / 1440.0, np.nan)
        geos = {}
        for where in at:
            g = crescent_geometry(site, best if where == "best" else t_sun, np.repeat(c, m), model, engine=moon)
            g["lag_min"] = lag
            geos[where] = g
        parts.append((day, t_sun, t_moon, lag, best, geos))
        if progress:
            progress(min(i + per_block, n), n, "crescent")

    def joined(j):
        return np.concatenate([p[j] for p in parts]).reshape(n, m) if parts else np.zeros((0, m))

    geometry = {where: ({key: np.concatenate([p[5][where][key] for p in parts]).reshape(n, m)
                         for key in parts[0][5][where]} if parts else {}) for where in at}
    return CrescentNights(site=site, morning=morning, conjunction_tt=conj, lunation=k, offsets=offsets,
                          day=joined(0).astype(np.int64), sun_ut=joined(1), moon_ut=joined(2), lag_min=joined(3),
                          best_ut=joined(4), at_best=geometry.get("best", {}), at_sun=geometry.get("sun_event", {}))


@dataclass
class Visibility:
    """A criterion applied to :class:`CrescentNights`.

    Attributes
    ----------
    result : CriterionResult
        Per evening, arrays of shape (n, m).
    index : (n,) int array
        Column of the first visible evening (last visible morning); -1 if none in the window.
    """

    criterion: object
    nights: CrescentNights
    result: CriterionResult
    index: np.ndarray


def visibility(nights: CrescentNights, criterion="yallop", threshold=None, **params) -> Visibility:
    """Apply a criterion to every evening (morning) and find the first (last) visible one per lunation.

    Parameters
    ----------
    nights : CrescentNights
    criterion : str or CrescentCriterion
        A registered name (``params`` go to its constructor) or an instance.
    threshold : float, optional
        Test value at or above which the crescent counts as visible (default: the criterion's).
    """
    crit = get_criterion(criterion, **params) if isinstance(criterion, str) else criterion
    g = nights.geometry(crit.at)
    if not g:
        raise ParameterError(f"criterion {crit.name} needs the geometry at {crit.at!r}, which was not computed")
    res = crit.evaluate(g, threshold)
    vis = res.visible
    # Evening: the Moon must be past conjunction; morning: before it.
    age = g["age_h"]
    vis = vis & ((age < 0) if nights.morning else (age > 0))
    res.visible = vis
    n, m = vis.shape
    if nights.morning:
        rev = vis[:, ::-1]
        idx = np.where(rev.any(axis=1), m - 1 - np.argmax(rev, axis=1), -1)
    else:
        idx = np.where(vis.any(axis=1), np.argmax(vis, axis=1), -1)
    return Visibility(crit, nights, res, idx)


# ------------------------------------------------------------------- detector

class Crescent(Detector):
    """First visibility of the evening crescent (or last of the morning crescent) per lunation."""

    name = "crescent"
    title = "First (or last) visibility of the lunar crescent at a site"
    description = ("For each conjunction in the range: the first evening on which the criterion says the crescent "
                   "is visible, with the evenings before and after (--phase morning: the last visible morning). "
                   "Criteria: yallop (q), odeh (V), lag (moonset lag and elongation thresholds), or any registered "
                   "by a plugin. Values at Yallop's best time (sunset + 4/9 lag); the lag rule at sunset.")
    needs_site = True
    parameters = (
        Parameter("criterion", "str", "yallop", "visibility criterion: yallop, odeh, lag (or a plugin's)"),
        Parameter("phase", "choice", "evening", "evening: first visibility; morning: last visibility",
                  choices=("evening", "morning")),
        Parameter("threshold", "float", None, "test value counted as visible (default: the criterion's; "
                                              "yallop q > -0.014, odeh V >= 5.65)"),
        Parameter("lag_min", "float", 48.0, "lag rule: minimum moonset lag, minutes"),
        Parameter("elongation_min", "float", 0.0, "lag rule: minimum geocentric elongation, degrees"),
        Parameter("age_min", "float", 0.0, "lag rule: minimum age of the Moon, hours"),
        Parameter("rows", "choice", "first", "first: the first visible evening and its neighbours; all: every "
                                             "evening examined", choices=("first", "all")),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, criterion, phase, threshold,
                lag_min, elongation_min, age_min, rows):
        params = {"lag_min": lag_min, "elongation_min": elongation_min, "age_min": age_min} \
            if criterion.lower() == "lag" else {}
        crit = get_criterion(criterion, **params)
        morning = phase == "morning"
        nights = crescent_nights(site, jd_tt_start, jd_tt_end, deltat=deltat, morning=morning, at=(crit.at,),
                                 progress=progress)
        vis = visibility(nights, crit, threshold)
        return crescent_table(vis, deltat, rows)


def crescent_table(vis: Visibility, deltat, rows="first"):
    """Build the event table of a :class:`Visibility` (rows ``first`` or ``all``)."""
    from .detectors_site import _table, civil_dates, hhmmss
    from .riseset import provenance_models, provenance_warnings, Horizon

    nights, crit, res = vis.nights, vis.criterion, vis.result
    site = nights.site
    n, m = nights.day.shape
    g = nights.geometry(crit.at)
    if rows == "all":
        li, ci = np.nonzero(np.ones((n, m), dtype=bool))
        role = np.where(res.visible[li, ci], "visible", "not visible")
    else:
        lis, cis, roles = [], [], []
        first = vis.index
        names = (("morning-before", "last-crescent", "morning-after") if nights.morning
                 else ("evening-before", "first-crescent", "evening-after"))
        for shift, label in zip((-1, 0, 1), names):
            c = first + shift
            ok = (first >= 0) & (c >= 0) & (c < m)
            lis.append(np.flatnonzero(ok))
            cis.append(c[ok])
            roles.append(np.full(int(ok.sum()), label))
        none = np.flatnonzero(first < 0)
        lis.append(none)
        cis.append(np.full(none.size, m - 1 if not nights.morning else 0))
        roles.append(np.full(none.size, "none-in-window"))
        li, ci, role = np.concatenate(lis), np.concatenate(cis), np.concatenate(roles)
        order = np.lexsort((ci, li))
        li, ci, role = li[order], ci[order], role[order]
    frame = "geo" if crit.frame == "geocentric" else "topo"
    when = nights.best_ut if crit.at == "best" else nights.sun_ut
    jd_ut = np.where(np.isfinite(when[li, ci]), when[li, ci], nights.sun_ut[li, ci])
    conj_ut = np.asarray(deltat.ut_from_tt(nights.conjunction_tt), dtype=float) if n else np.zeros(0)
    cols = {
        "kind": role, "lunation": nights.lunation[li].astype(np.int64),
        "conjunction_ut": np.array([f"{d} {t}" for d, t in zip(civil_dates(np.floor(conj_ut[li] + 0.5)),
                                                                hhmmss(conj_ut[li], _ut_site(site)))]) if li.size else np.zeros(0, str),
        "local_date": np.array(civil_dates(nights.day[li, ci])) if li.size else np.zeros(0, str),
        ("sunrise" if nights.morning else "sunset"): np.array(hhmmss(nights.sun_ut[li, ci], site)) if li.size else np.zeros(0, str),
        ("moonrise" if nights.morning else "moonset"): np.array(hhmmss(nights.moon_ut[li, ci], site)) if li.size else np.zeros(0, str),
        "lag_min": np.round(nights.lag_min[li, ci], 1),
        "age_h": np.round(g["age_h"][li, ci], 2),
        "arcl": np.round(g[f"arcl_{frame}"][li, ci], 3),
        "arcv": np.round(g[f"arcv_{frame}"][li, ci], 3),
        "daz": np.round(g["daz"][li, ci], 3),
        "w_arcmin": np.round(g[f"w_{frame}"][li, ci], 4),
        "moon_alt": np.round(g["moon_alt_topo"][li, ci], 3),
        "sun_alt": np.round(g["sun_alt_topo"][li, ci], 3),
        crit.value_name: np.round(res.value[li, ci], 4),
        "category": res.category[li, ci],
        "visible": res.visible[li, ci],
    }
    meta = {"lunation": ("", "Meeus lunation number k (0: new moon of 2000 January 6)"),
            "conjunction_ut": ("UT", "geocentric conjunction in ecliptic longitude"),
            "local_date": ("civil date", "the evening (morning) examined"),
            "lag_min": ("min", "moonset - sunset (sunrise - moonrise)"),
            "age_h": ("h", "at the time the criterion is evaluated"),
            "arcl": ("deg", f"{crit.frame} elongation"), "arcv": ("deg", f"{crit.frame} arc of vision"),
            "daz": ("deg", "Sun azimuth - Moon azimuth"), "w_arcmin": ("arcmin", "crescent width"),
            "moon_alt": ("deg", "airless topocentric altitude of the Moon's centre"),
            "sun_alt": ("deg", "airless topocentric altitude of the Sun's centre"),
            crit.value_name: (crit.value_unit, crit.title)}
    hz = Horizon()
    models = {"crescent criterion": crit.describe(),
              "evaluated at": ("Yallop's best time: sunset + 4/9 (moonset - sunset); mornings mirrored"
                               if crit.at == "best" else "sunset (sunrise in the morning)"),
              "conjunctions": "mean phase (Meeus eq. 49.1) refined by Newton steps on the geocentric apparent "
                              "elongation in ecliptic longitude (DE406)"}
    models.update(provenance_models(hz, site, "sunset and moonset"))
    warnings = provenance_warnings(hz) + [
        "crescent criteria are empirical fits to modern sightings; a borderline value (near the threshold) "
        "can go either way, and weather, the observer and the horizon decide",
        "an error of 1 h in delta T moves the Moon by about 0.5 deg against the horizon (the lag by about 2 min): "
        "before about -700 first visibility can move by a day with delta T",
    ]
    if crit.name == "lag":
        warnings.append("the lag rule was fitted at Babylon's latitude; it is not valid elsewhere")
    return _table(cols, meta, jd_ut, deltat, site, models, warnings)


def _ut_site(site):
    from dataclasses import replace

    return replace(site, utc_offset_hours=0.0)
