"""Conjunctions in longitude and in right ascension, and close approaches (appulses).

Pairs
-----
Planet-planet, planet-star, Moon-planet and Moon-star, geocentric: the
apparent places of :mod:`.states` (DE406) and :mod:`.refstars` (Hipparcos
with space motion, annual parallax and aberration).  Stars are any
catalogue star or the ready sets of reference stars.

Frames
------
``longitude``
    The apparent ecliptic longitudes of date are equal (the two bodies on one
    circle of latitude; nutation and precession shift both alike).
``ra``
    The right ascensions of date (true equator and equinox) are equal.
``minimum``
    The angular separation is least (an *appulse*).

Method
------
A coarse grid, ``step`` days apart (2 days for pairs with the Moon or
Mercury, 4 with Venus, 5 with Mars, 8 otherwise), carries the difference of
the two coordinates and its rate (from the ephemeris velocities), or for
``minimum`` the rate of the separation.  The step is below half the shortest
interval between two turns of the difference (a planet's stations are at
least 19 days apart, the Moon's nearest approach and farthest recession
from a star 13 days), so:

* a change of sign of the rate between two grid points is a turn, found by
  safeguarded Newton steps on the rate and used to split the interval, so
  that the difference is monotonic in every piece -- the triple
  conjunctions around a station are all found;
* a piece whose ends differ in sign (and by less than 180 degrees, which
  excludes the wrap of the angle) holds one root, found by safeguarded
  Newton steps (:mod:`.solver`) on DE406 to 1e-6 day.

Two turns closer together than one step (two planets tangent in their
motions) are not split; the conjunctions they could hide lie within
that step of each other and within a fraction of a degree of the
turning point, and the ``minimum`` frame reports the close approach there.

Time scales: every ``jd_tt`` is a Julian Day in TT.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .states import PLANETS, apparent, dot, unit, unit_rate

FRAMES = ("longitude", "ra", "minimum")
#: Grid step by member, days.
STEP_DAYS = {"moon": 2.0, "mercury": 2.0, "venus": 4.0, "mars": 5.0, "jupiter": 8.0, "saturn": 8.0,
             "star": 1e9}
#: Grid points per block (memory: about 50 bytes per point and member).
BLOCK = 8192
TOLERANCE_DAYS = 1e-6
#: Half-width of the central difference of a rate, days.
_H = 0.005


@dataclass
class Track:
    """Objects of one kind whose apparent geocentric directions can be evaluated.

    Attributes
    ----------
    kind : str
        ``body`` (planets and the Moon) or ``star``.
    labels : tuple of str
    keys : tuple
        Body names, or indices into ``stars``.
    stars : StarSet or None
    """

    kind: str
    labels: tuple
    keys: tuple
    stars: object = None

    def __len__(self):
        return len(self.labels)

    def step(self, member: int) -> float:
        return STEP_DAYS[self.keys[member]] if self.kind == "body" else STEP_DAYS["star"]

    def evaluate(self, member, jd_tt):
        """Unit directions and their rates (per day) of members at instants, shapes (3, N)."""
        jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
        member = np.broadcast_to(np.asarray(member, dtype=np.int64), jd.shape)
        if self.kind == "star":
            keys = np.asarray(self.keys, dtype=np.int64)[member]
            return self.stars.directions(keys, jd), np.zeros((3, jd.size))
        u, du = np.empty((3, jd.size)), np.empty((3, jd.size))
        for m in np.unique(member):               # a loop over bodies (at most six), not instants
            sel = member == m
            r, v = apparent(self.keys[m], jd[sel])
            u[:, sel], du[:, sel] = unit(r), unit_rate(r, v)
        return u, du


def body_track(names) -> Track:
    names = tuple(names)
    return Track("body", tuple(n.capitalize() for n in names), names)


def star_track(stars) -> Track:
    return Track("star", tuple(stars.names), tuple(range(len(stars))), stars)


def parse_side(text: str) -> Track:
    """One side of ``--between``: a planet, ``moon``, ``planets``, ``normal-stars``,
    ``bright-stars`` or any star name (also ``+``-joined lists such as ``mars+venus``)."""
    from calendra.errors import ParameterError

    from . import refstars

    key = text.strip().lower()
    if key == "planets":
        return body_track(PLANETS)
    if key in ("normal-stars", "normal", "reference-stars"):
        return star_track(refstars.normal_stars())
    if key in ("bright-stars", "bright"):
        return star_track(refstars.bright_stars())
    parts = [p.strip() for p in text.split("+") if p.strip()]
    if not parts:
        raise ParameterError("an empty side in --between")
    bodies = [p.lower() for p in parts if p.lower() in PLANETS + ("moon",)]
    stars = [p for p in parts if p.lower() not in PLANETS + ("moon",)]
    if bodies and stars:
        raise ParameterError("one side of --between holds either bodies or stars, not both")
    if bodies:
        return body_track(bodies)
    return star_track(refstars.stars_from_names(stars))


def parse_between(text: str):
    """``"mars,regulus"`` -> (Track, Track, pairs (P, 2) of member indices)."""
    from calendra.errors import ParameterError

    sides = [s for s in str(text or "").split(",")]
    if len(sides) != 2:
        raise ParameterError("--between takes two objects separated by a comma, e.g. mars,regulus "
                             "(sides: a planet, moon, planets, normal-stars, bright-stars, a star; "
                             "join several with +)")
    a, b = parse_side(sides[0]), parse_side(sides[1])
    if a.kind == "star" and b.kind == "star":
        raise ParameterError("--between needs a planet or the Moon on at least one side")
    if a.kind == "star":
        a, b = b, a
    ia, ib = np.meshgrid(np.arange(len(a)), np.arange(len(b)), indexing="ij")
    pairs = np.column_stack([ia.ravel(), ib.ravel()])
    if b.kind == "body":
        ka = np.asarray(a.keys, dtype=object)[pairs[:, 0]]
        kb = np.asarray(b.keys, dtype=object)[pairs[:, 1]]
        pairs = pairs[ka != kb]
        if a.keys == b.keys:
            pairs = pairs[pairs[:, 0] < pairs[:, 1]]
    if pairs.size == 0:
        raise ParameterError("--between names no pair of distinct objects")
    return a, b, pairs


_ANGLE_UNITS = {"": 1.0, "deg": 1.0, "d": 1.0, "°": 1.0, "degree": 1.0, "degrees": 1.0,
                "arcmin": 1 / 60, "'": 1 / 60, "am": 1 / 60, "arcsec": 1 / 3600, '"': 1 / 3600, "as": 1 / 3600}


def parse_angle(text) -> float:
    """Degrees from ``1``, ``1deg``, ``1.5°``, ``30arcmin``, ``30'``, ``20arcsec`` or ``20"``."""
    import re

    from calendra.errors import ParameterError

    if isinstance(text, (int, float)) and not isinstance(text, bool):
        return float(text)
    m = re.match(r"^\s*([0-9]*\.?[0-9]+(?:[eE][+-]?[0-9]+)?)\s*([a-z°'\"]*)\s*$", str(text).lower())
    if not m or m.group(2) not in _ANGLE_UNITS:
        raise ParameterError(f"{text!r} is not an angle (e.g. 1, 1deg, 30arcmin, 30', 20arcsec)")
    return float(m.group(1)) * _ANGLE_UNITS[m.group(2)]


def _wrap(x):
    return (x + math.pi) % (2.0 * math.pi) - math.pi


def frame_of_date(frame: str, jd):
    """The axes of the frame at instants: ecliptic axes (longitude) or the NPB matrices (ra)."""
    if frame == "longitude":
        from calendra.solarterms import ecliptic_axes

        return ecliptic_axes(jd)
    from calendra_stars.positions import npb_matrix

    return npb_matrix(jd)


def coordinate(frame: str, u, du, jd, axes=None):
    """Longitude of date or right ascension of date (rad) and its rate (rad/day).

    ``axes`` is :func:`frame_of_date` at ``jd`` if already computed (broadcast over ``u``).
    """
    axes = frame_of_date(frame, jd) if axes is None else axes
    if frame == "longitude":
        x, y, _ = axes
        ux, uy, dx, dy = dot(x, u), dot(y, u), dot(x, du), dot(y, du)
    else:
        e, de = np.einsum("nij,jn->in", axes, u), np.einsum("nij,jn->in", axes, du)
        ux, uy, dx, dy = e[0], e[1], de[0], de[1]
    return np.arctan2(uy, ux), (ux * dy - uy * dx) / (ux * ux + uy * uy)


class _PairFunction:
    """f(t) and df/dt of every pair: coordinate difference, or the rate of the separation."""

    def __init__(self, a: Track, b: Track, pairs, frame: str):
        self.a, self.b, self.pairs, self.frame = a, b, pairs, frame

    def members(self, p):
        return self.pairs[p, 0], self.pairs[p, 1]

    def directions(self, p, t):
        ia, ib = self.members(p)
        return self.a.evaluate(ia, t), self.b.evaluate(ib, t)

    def value(self, p, t):
        """(f, df/dt) at pairs ``p`` and instants ``t``."""
        if self.frame == "minimum":
            # f = (ua - ub).(dua - dub), half the rate of the squared chord; df/dt by central differences
            x = np.concatenate([t, t - _H, t + _H])
            q = np.concatenate([p, p, p])
            (ua, dua), (ub, dub) = self.directions(q, x)
            f = dot(ua - ub, dua - dub)
            n = t.size
            return f[:n], (f[2 * n:] - f[n:2 * n]) / (2 * _H)
        (ua, dua), (ub, dub) = self.directions(p, t)
        axes = frame_of_date(self.frame, t)
        ca, ra = coordinate(self.frame, ua, dua, t, axes)
        cb, rb = coordinate(self.frame, ub, dub, t, axes)
        return _wrap(ca - cb), ra - rb

    def turn(self, p):
        """evaluate(t) -> (df/dt, d2f/dt2) for locating turns of the difference."""
        def evaluate(t):
            _, lo = self.value(p, t - _H)
            _, hi = self.value(p, t + _H)
            return 0.5 * (lo + hi), (hi - lo) / (2 * _H)
        return evaluate


def _grid_values(fn: _PairFunction, t):
    """f and df/dt on a grid for every pair, shapes (P, n)."""
    n, npairs = t.size, len(fn.pairs)
    used_a, used_b = np.unique(fn.pairs[:, 0]), np.unique(fn.pairs[:, 1])

    def members(track, used):
        if track.kind == "star":           # all stars at once, the Earth's state computed once
            from .states import earth_barycentric

            earth = earth_barycentric(t)
            tiled = tuple(np.tile(e, (1, used.size)) for e in earth)
            keys = np.asarray(track.keys, dtype=np.int64)[np.repeat(used, n)]
            u = track.stars.directions(keys, np.tile(t, used.size), tiled)
            return {m: (u[:, i * n:(i + 1) * n], np.zeros((3, n))) for i, m in enumerate(used)}
        return {m: track.evaluate(m, t) for m in used}

    ev_a, ev_b = members(fn.a, used_a), members(fn.b, used_b)
    if fn.frame != "minimum":
        axes = frame_of_date(fn.frame, t)
        co_a = {m: coordinate(fn.frame, *ev_a[m], t, axes) for m in used_a}
        co_b = {m: coordinate(fn.frame, *ev_b[m], t, axes) for m in used_b}
    f, fp = np.empty((npairs, n)), np.empty((npairs, n))
    for k, (ia, ib) in enumerate(fn.pairs):     # a loop over pairs; each row is a whole grid
        if fn.frame == "minimum":
            (ua, dua), (ub, dub) = ev_a[ia], ev_b[ib]
            d, dd = ua - ub, dua - dub
            f[k], fp[k] = dot(d, dd), dot(dd, dd)
        else:
            f[k] = _wrap(co_a[ia][0] - co_b[ib][0])
            fp[k] = co_a[ia][1] - co_b[ib][1]
    return f, fp


def find_roots(a: Track, b: Track, pairs, frame: str, jd_tt_start: float, jd_tt_end: float, progress=None):
    """Instants of conjunction (``longitude``, ``ra``) or least separation (``minimum``) of pairs.

    Parameters
    ----------
    a, b : Track
    pairs : ndarray, shape (P, 2)
        Member indices into ``a`` and ``b``.
    frame : {'longitude', 'ra', 'minimum'}
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT).
    progress : callable or None

    Returns
    -------
    pair : ndarray of int
        Row of ``pairs`` of each event.
    jd_tt : ndarray
        Julian Days, TT.
    """
    from calendra.errors import ParameterError
    from calendra.ephemeris import SPAN_JD

    from .solver import bracketed_newton

    if frame not in FRAMES:
        raise ParameterError(f"frame {frame!r} is not one of {', '.join(FRAMES)}")
    pairs = np.asarray(pairs, dtype=np.int64).reshape(-1, 2)
    steps = np.array([min(a.step(i), b.step(j)) for i, j in pairs])
    out_p, out_t = [], []
    for step in np.unique(steps):               # one grid per step size
        sel = np.nonzero(steps == step)[0]
        fn = _PairFunction(a, b, pairs[sel], frame)
        lo = max(jd_tt_start - step, SPAN_JD[0])
        hi = min(jd_tt_end + step, SPAN_JD[1])
        grid = np.append(np.arange(lo, hi, step), hi)
        for i0 in range(0, grid.size - 1, BLOCK):
            t = grid[i0:i0 + BLOCK + 1]
            if progress is not None:
                progress(i0, grid.size, f"{frame} conjunctions")
            p, r = _block_roots(fn, t, frame, bracketed_newton)
            out_p.append(sel[p])
            out_t.append(r)
    if not out_p:
        return np.empty(0, dtype=np.int64), np.empty(0)
    p, t = np.concatenate(out_p), np.concatenate(out_t)
    keep = (t >= jd_tt_start) & (t < jd_tt_end)
    order = np.lexsort((p[keep], t[keep]))
    return p[keep][order], t[keep][order]


def _block_roots(fn, t, frame, bracketed_newton):
    f, fp = _grid_values(fn, t)
    npairs, n = f.shape
    lo_t = np.broadcast_to(t[:-1], (npairs, n - 1))
    hi_t = np.broadcast_to(t[1:], (npairs, n - 1))
    pidx = np.broadcast_to(np.arange(npairs)[:, None], (npairs, n - 1))
    if frame == "minimum":
        # least separation: the rate of the (chord) separation turns from - to +
        hit = (f[:, :-1] < 0) & (f[:, 1:] >= 0)
        p, a, b = pidx[hit], lo_t[hit], hi_t[hit]
        fa = np.full(p.size, -1.0)
    else:
        turn = np.sign(fp[:, :-1]) != np.sign(fp[:, 1:])
        seg_p, seg_a, seg_b = pidx[~turn], lo_t[~turn], hi_t[~turn]
        seg_fa, seg_fb = f[:, :-1][~turn], f[:, 1:][~turn]
        if np.any(turn):
            tp, ta, tb = pidx[turn], lo_t[turn], hi_t[turn]
            te = _turn_points(fn, tp, ta, tb, bracketed_newton)
            fe = fn.value(tp, te)[0]
            seg_p = np.concatenate([seg_p, tp, tp])
            seg_a = np.concatenate([seg_a, ta, te])
            seg_b = np.concatenate([seg_b, te, tb])
            seg_fa = np.concatenate([seg_fa, f[:, :-1][turn], fe])
            seg_fb = np.concatenate([seg_fb, fe, f[:, 1:][turn]])
        hit = (np.sign(seg_fa) != np.sign(seg_fb)) & (np.abs(seg_fb - seg_fa) < math.pi)
        p, a, b, fa = seg_p[hit], seg_a[hit], seg_b[hit], seg_fa[hit]
    if p.size == 0:
        return p, np.empty(0)
    root, _ = bracketed_newton(lambda x, k: fn.value(p[k], x), a, b, tolerance_days=TOLERANCE_DAYS,
                               sign_lo=np.sign(fa), with_index=True, label="conjunctions")
    return p, root


def _turn_points(fn, p, a, b, bracketed_newton):
    """Instants where the rate of the coordinate difference of pairs ``p`` changes sign in [a, b]."""
    def evaluate(x, k):
        return fn.turn(p[k])(x)

    sign = np.sign(fn.value(p, a)[1])
    root, _ = bracketed_newton(evaluate, a, b, tolerance_days=1e-5, sign_lo=sign, with_index=True,
                               label="turns of a conjunction search")
    return root


def describe_pairs(a: Track, b: Track, pairs, p, jd_tt):
    """Separation and coordinate differences of pairs at instants.

    Parameters
    ----------
    a, b : Track
    pairs : ndarray, shape (P, 2)
    p : ndarray of int
        Row of ``pairs`` of each instant.
    jd_tt : ndarray
        Julian Days, TT.

    Returns
    -------
    dict of str -> ndarray
        ``body1``, ``body2`` (labels), ``separation_deg``, ``d_lon_deg``,
        ``d_lat_deg`` (body1 - body2 in apparent ecliptic longitude and
        latitude of date), ``d_dec_deg`` (in declination of date),
        ``longitude_deg`` and ``latitude_deg`` of body1, ``sun_elongation_deg``
        of body1 (degrees).
    """
    from .states import ecliptic_of_date, equator_of_date, separation

    jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
    ia, ib = pairs[p, 0], pairs[p, 1]
    if jd.size == 0:
        e = np.empty(0)
        return {"body1": np.empty(0, dtype=object), "body2": np.empty(0, dtype=object), "separation_deg": e,
                "d_lon_deg": e, "d_lat_deg": e, "d_dec_deg": e, "longitude_deg": e, "latitude_deg": e,
                "sun_elongation_deg": e}
    ua, _ = a.evaluate(ia, jd)
    ub, _ = b.evaluate(ib, jd)
    la, ba = ecliptic_of_date(ua, jd)
    lb, bb = ecliptic_of_date(ub, jd)
    _, da = equator_of_date(ua, jd)
    _, db = equator_of_date(ub, jd)
    sun, _ = apparent("sun", jd)
    return {
        "body1": np.asarray(a.labels, dtype=object)[ia],
        "body2": np.asarray(b.labels, dtype=object)[ib],
        "separation_deg": np.degrees(separation(ua, ub)),
        "d_lon_deg": np.degrees(_wrap(la - lb)),
        "d_lat_deg": np.degrees(ba - bb),
        "d_dec_deg": np.degrees(da - db),
        "longitude_deg": np.degrees(la) % 360.0,
        "latitude_deg": np.degrees(ba),
        "sun_elongation_deg": np.degrees(separation(ua, unit(sun))),
    }


def conjunctions(between: str, jd_tt_start: float, jd_tt_end: float, frame: str = "longitude",
                 max_separation_deg: float = 10.0, progress=None):
    """Conjunctions (or least separations) of the pairs named by ``between`` in ``[start, end)``.

    Parameters
    ----------
    between : str
        Two sides separated by a comma (see :func:`parse_side`), e.g.
        ``"mars,regulus"``, ``"moon,normal-stars"``, ``"planets,planets"``.
    jd_tt_start, jd_tt_end : float
        Range, Julian Days (TT).
    frame : {'longitude', 'ra', 'minimum'}
    max_separation_deg : float or str
        Keep events whose angular separation is at most this, degrees (or
        a string with a unit, :func:`parse_angle`).
    progress : callable or None

    Returns
    -------
    dict of str -> ndarray
        ``jd_tt`` and the columns of :func:`describe_pairs`.
    """
    from calendra.errors import ParameterError

    max_separation_deg = parse_angle(max_separation_deg)
    if not max_separation_deg > 0:
        raise ParameterError("max_separation must be positive (degrees)")
    a, b, pairs = parse_between(between)
    p, t = find_roots(a, b, pairs, frame, jd_tt_start, jd_tt_end, progress)
    out = describe_pairs(a, b, pairs, p, t)
    keep = out["separation_deg"] <= max_separation_deg
    out = {k: v[keep] for k, v in out.items()}
    out["jd_tt"] = t[keep]
    return out
