"""Which sky targets could an alignment have pointed at, and when?

Three questions, each one array job:

* :func:`match` -- which targets fall within the declination interval of each
  alignment for epochs in its range, with the margin of each;
* :func:`star_years` -- in which years did a star rise (or set) at a given
  azimuth on a given skyline;
* :func:`sun_declination_on` -- the Sun's declination on a given date.

Declinations are compared, not azimuths: an alignment's azimuth and skyline
altitude give one declination for a point target (a star or planet, with the
extinction angle), one for the Sun (its limb, semi-diameter and 8.8"
parallax) and one for the Moon (its limb, semi-diameter and about one degree
of parallax, at its mean distance, with the interval widened to cover the
perigee and apogee parallaxes when ``moon_distance='range'``).  Each target
is compared with the declination of its kind.

A target *matches* at an epoch when its declination (widened by its own
half-width: 0.15 degrees for the lunar limits) overlaps the alignment's
interval.  For each matching (alignment, target) pair the result gives the
first and last epoch of the grid at which it matched, the best epoch (the
smallest distance), the offset ``dec_target - dec_alignment`` there in
degrees and in standard errors, and the **margin**: how far inside the
interval (positive) the target lies at the best epoch, degrees.

A match says only that the geometry allows the target; it says nothing about
intent, and with many targets and wide intervals some matches are expected
by chance alone (see the caveats of the batch histogram).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from calendra.errors import ParameterError

from . import geometry as G
from . import targets as T
from .uncertainty import DEFAULT_DRAWS, DEFAULT_SEED, DeclinationInterval, declination_interval

#: Moon distance modes of the alignment's lunar declination.
MOON_DISTANCES = ("range", "mean", "perigee", "apogee")
#: Declination kinds of alignments (planets are compared with the point-source declination).
KINDS = ("star", "sun", "moon")


def bodies(limb: str = "upper", moon_distance: str = "mean", extinction_deg: float = 0.0) -> dict:
    """Return the :class:`~calendra_alignments.geometry.Body` of each target kind.

    Parameters
    ----------
    limb : {'upper', 'centre', 'lower'}
        Point of the Sun's and Moon's disc at the skyline.
    moon_distance : {'mean', 'perigee', 'apogee'} or float
        Distance for the Moon's parallax and semi-diameter (``range`` is read as ``mean``).
    extinction_deg : float
        Apparent altitude above the skyline at which stars and planets are seen, degrees.
    """
    md = "mean" if moon_distance == "range" else moon_distance
    star = G.Body.star(extinction_deg)
    return {"star": star, "planet": star, "sun": G.Body.sun(limb), "moon": G.Body.moon(limb, md)}


@dataclass
class Alignments:
    """Surveyed directions, as arrays of one length N.

    Attributes
    ----------
    ids : list of str
    latitude_deg, longitude_deg, elevation_m : ndarray
        Site of each alignment (degrees north and east, metres).
    azimuth_deg : ndarray
        True azimuth, degrees from north through east.
    azimuth_sigma_deg : ndarray
        Standard error of the true azimuth (the magnetic declination's error included), degrees.
    altitude_deg, altitude_sigma_deg : ndarray
        Apparent skyline altitude at the azimuth and its error, degrees.
    slope : ndarray
        Slope of the skyline at the azimuth (degrees per degree; 0 for a constant horizon).
    horizons : list of Horizon
        The skyline of each alignment (for Monte Carlo draws and plots).
    epoch_from, epoch_to : ndarray
        Epoch range of each alignment (Julian epochs).
    temperature_C, pressure_mbar : ndarray
        Weather for refraction.
    names : list of str
    """

    ids: list
    latitude_deg: np.ndarray
    longitude_deg: np.ndarray
    elevation_m: np.ndarray
    azimuth_deg: np.ndarray
    azimuth_sigma_deg: np.ndarray
    altitude_deg: np.ndarray
    altitude_sigma_deg: np.ndarray
    slope: np.ndarray
    horizons: list
    epoch_from: np.ndarray
    epoch_to: np.ndarray
    temperature_C: np.ndarray
    pressure_mbar: np.ndarray
    names: list = field(default_factory=list)

    def __len__(self):
        return len(self.ids)

    @classmethod
    def single(cls, azimuth_deg, latitude_deg, horizon=0.0, *, longitude_deg=0.0, elevation_m=0.0,
               azimuth_sigma_deg=0.0, altitude_sigma_deg=0.0, altitude_deg=None, epoch_from=-3000.0,
               epoch_to=3000.0, temperature_C=G.STANDARD_TEMPERATURE_C, pressure_mbar=None, name="alignment"):
        """One alignment.  ``pressure_mbar=None`` takes the standard atmosphere at ``elevation_m``."""
        hz = G.as_horizon(horizon)
        az = float(azimuth_deg) % 360.0
        alt = float(hz.altitude(az)) if altitude_deg is None else float(altitude_deg)
        slope = float(hz.slope(az)) if altitude_deg is None else 0.0
        p = float(G.standard_pressure(elevation_m)) if pressure_mbar is None else float(pressure_mbar)
        a = lambda v: np.array([float(v)])  # noqa: E731
        _check_latitude(latitude_deg)
        return cls([name], a(latitude_deg), a(longitude_deg), a(elevation_m), a(az), a(azimuth_sigma_deg),
                   a(alt), a(altitude_sigma_deg), a(slope), [hz], a(epoch_from), a(epoch_to), a(temperature_C),
                   a(p), [name])

    def direction(self) -> np.ndarray:
        """``rising`` east of the meridian (azimuth 0..180), ``setting`` west of it."""
        return np.where((self.azimuth_deg % 360.0) < 180.0, "rising", "setting")


def _check_latitude(lat):
    la = np.asarray(lat, dtype=float)
    if np.any(~np.isfinite(la)) or np.any(np.abs(la) > 89.0):
        raise ParameterError("latitudes must lie within -89..89 degrees")


def alignment_intervals(al: Alignments, *, limb: str = "upper", moon_distance: str = "range",
                        extinction_deg: float = 0.0, level: float = 2.0, method: str = "analytic",
                        draws: int = DEFAULT_DRAWS, seed: int = DEFAULT_SEED, refraction_model: str = "bennett",
                        kinds=KINDS) -> dict:
    """Return the declination interval of every alignment for each target kind.

    Parameters
    ----------
    al : Alignments
    limb : str
        Sun's and Moon's limb at the skyline.
    moon_distance : {'range', 'mean', 'perigee', 'apogee'}
        ``range``: the mean-distance interval widened to contain the perigee and apogee intervals.
    extinction_deg : float
        Extinction angle of point targets, degrees.
    level, method, draws, seed
        See :func:`calendra_alignments.uncertainty.declination_interval`.
    refraction_model : str
    kinds : iterable of str
        Some of ``star``, ``sun``, ``moon``.

    Returns
    -------
    dict
        kind -> :class:`~calendra_alignments.uncertainty.DeclinationInterval` of shape (N,).
    """
    if moon_distance not in MOON_DISTANCES:
        raise ParameterError(f"moon distance {moon_distance!r} is not one of {', '.join(MOON_DISTANCES)}")
    _check_latitude(al.latitude_deg)
    body = bodies(limb, moon_distance, extinction_deg)
    out = {}
    for kind in kinds:
        out[kind] = _interval(al, body[kind], level, method, draws, seed, refraction_model)
        if kind == "moon" and moon_distance == "range":
            ends = [_interval(al, G.Body.moon(limb, d), level, method, draws, seed, refraction_model)
                    for d in ("perigee", "apogee")]
            iv = out[kind]
            iv.lo = np.minimum.reduce([iv.lo] + [e.lo for e in ends])
            iv.hi = np.maximum.reduce([iv.hi] + [e.hi for e in ends])
    return out


def _interval(al: Alignments, body, level, method, draws, seed, refraction_model) -> DeclinationInterval:
    kw = dict(azimuth_sigma_deg=al.azimuth_sigma_deg, altitude_sigma_deg=al.altitude_sigma_deg, body=body,
              level=level, refraction_model=refraction_model)
    if method == "analytic":
        return declination_interval(al.azimuth_deg, al.latitude_deg, altitude_deg=al.altitude_deg,
                                    slope=al.slope, temperature_C=al.temperature_C,
                                    pressure_mbar=al.pressure_mbar, method="analytic", **kw)
    # Monte Carlo: the skyline is drawn along each alignment's own horizon; group alignments by horizon.
    n = len(al)
    res = {k: np.empty(n) for k in ("dec", "sigma", "lo", "hi", "d_dec_d_az", "d_dec_d_alt")}
    groups: dict = {}
    for i, hz in enumerate(al.horizons):
        groups.setdefault(id(hz) if hz.points else ("constant",), (hz, []))[1].append(i)
    for hz, idx in groups.values():
        idx = np.array(idx)
        sub = {k: (v[idx] if isinstance(v, np.ndarray) and v.shape == (n,) else v) for k, v in kw.items()}
        if hz.points:
            iv = declination_interval(al.azimuth_deg[idx], al.latitude_deg[idx], hz,
                                      temperature_C=al.temperature_C[idx], pressure_mbar=al.pressure_mbar[idx],
                                      method="montecarlo", draws=draws, seed=seed, **sub)
        else:
            iv = declination_interval(al.azimuth_deg[idx], al.latitude_deg[idx], altitude_deg=al.altitude_deg[idx],
                                      temperature_C=al.temperature_C[idx], pressure_mbar=al.pressure_mbar[idx],
                                      method="montecarlo", draws=draws, seed=seed, **sub)
        for k in res:
            res[k][idx] = getattr(iv, k)
    return DeclinationInterval(res["dec"], res["sigma"], res["lo"], res["hi"], res["d_dec_d_az"],
                               res["d_dec_d_alt"], "montecarlo", float(level))


def epoch_mask(epochs, epoch_from, epoch_to) -> np.ndarray:
    """Return (N, E): the grid epochs inside each alignment's range (the nearest one if none is)."""
    ep = np.asarray(epochs, dtype=float)
    lo = np.asarray(epoch_from, dtype=float)[:, None]
    hi = np.asarray(epoch_to, dtype=float)[:, None]
    m = (ep[None, :] >= lo - 1e-9) & (ep[None, :] <= hi + 1e-9)
    empty = ~m.any(axis=1)
    if np.any(empty):
        near = np.argmin(np.abs(ep[None, :] - 0.5 * (lo[empty] + hi[empty])), axis=1)
        m[np.nonzero(empty)[0], near] = True
    return m


@dataclass
class Matches:
    """Matching (alignment, target) pairs, as arrays of one length M.

    Attributes
    ----------
    alignment, target : ndarray of int
        Row of the alignment and of the target.
    epoch_first, epoch_last, epoch_best : ndarray
        First and last grid epoch of the overlap, and the epoch of the smallest distance.
    dec_target, dec_alignment, sigma : ndarray
        Declinations at the best epoch and the alignment's standard error, degrees.
    offset_deg, offset_sigma : ndarray
        ``dec_target - dec_alignment`` at the best epoch, in degrees and in standard errors.
    margin_deg : ndarray
        How far inside the alignment's interval the target lies at the best
        epoch (its half-width included), degrees; >= 0 for a match.
    """

    alignment: np.ndarray
    target: np.ndarray
    epoch_first: np.ndarray
    epoch_last: np.ndarray
    epoch_best: np.ndarray
    dec_target: np.ndarray
    dec_alignment: np.ndarray
    sigma: np.ndarray
    offset_deg: np.ndarray
    offset_sigma: np.ndarray
    margin_deg: np.ndarray

    def __len__(self):
        return len(self.alignment)


def match(intervals: dict, targets: T.Targets, epoch_from, epoch_to, *, block: int = 2048) -> Matches:
    """Find the targets within the declination interval of each alignment over its epoch range.

    Parameters
    ----------
    intervals : dict
        kind -> DeclinationInterval (N,), from :func:`alignment_intervals`.
    targets : Targets
        Declinations (T, E) at the grid epochs.
    epoch_from, epoch_to : array_like, shape (N,)
        Epoch range of each alignment; grid epochs inside it are tested (the
        nearest grid epoch when none is).
    block : int
        Alignments compared at once (bounds the memory: block x T x E).

    Returns
    -------
    Matches
        Sorted by alignment, then target.
    """
    some = next(iter(intervals.values()))
    n = len(some.dec)
    inr = epoch_mask(targets.epochs, epoch_from, epoch_to)
    ep = targets.epochs
    parts = []
    for kind in ("star", "sun", "moon"):
        sel = np.nonzero(np.isin(targets.kinds, ("star", "planet") if kind == "star" else (kind,)))[0]
        if sel.size == 0:
            continue
        if kind not in intervals:
            raise ParameterError(f"no declination interval of kind {kind!r} for targets {targets.ids[sel[0]]}")
        iv = intervals[kind]
        d_t = targets.dec[sel]            # (Tk, E)
        w_t = targets.halfwidth[sel]
        for b in range(0, n, block):
            s = slice(b, min(n, b + block))
            lo, hi = iv.lo[s, None, None], iv.hi[s, None, None]
            m = inr[s, None, :]
            over = (d_t[None] + w_t[None] >= lo) & (d_t[None] - w_t[None] <= hi) & m
            hit = over.any(axis=2)
            ii, jj = np.nonzero(hit)
            if ii.size == 0:
                continue
            # Only the matching pairs go further: offsets and distances of shape (M, E).
            off = d_t[jj] - iv.dec[s][ii, None]
            dist = np.maximum(np.abs(off) - w_t[jj], 0.0)
            dist = np.where(inr[s][ii], dist + 1e-9 * np.abs(off), np.inf)
            ov = over[ii, jj]                                        # (M, E)
            first = np.argmax(ov, axis=1)
            last = ov.shape[1] - 1 - np.argmax(ov[:, ::-1], axis=1)
            best = np.argmin(dist, axis=1)
            o = off[np.arange(ii.size), best]
            half_lo = (iv.dec[s][ii] - iv.lo[s][ii])
            half_hi = (iv.hi[s][ii] - iv.dec[s][ii])
            margin = np.where(o >= 0, half_hi, half_lo) + w_t[jj, best] - np.abs(o)
            sig = iv.sigma[s][ii]
            with np.errstate(divide="ignore", invalid="ignore"):
                osig = np.where(sig > 0, o / sig, np.where(o == 0, 0.0, np.inf * np.sign(o)))
            parts.append((ii + b, sel[jj], ep[first], ep[last], ep[best], d_t[jj, best], iv.dec[s][ii], sig,
                          o, osig, margin))
    if not parts:
        e = np.array([])
        return Matches(e.astype(int), e.astype(int), e, e, e, e, e, e, e, e, e)
    cols = [np.concatenate([p[k] for p in parts]) for k in range(11)]
    order = np.lexsort((cols[1], cols[0]))
    return Matches(*(c[order] for c in cols))


# ---------------------------------------------------------------- star years

@dataclass
class StarYears:
    """Rising or setting azimuths of a star over years, and when they met an azimuth.

    Attributes
    ----------
    star : str
    years : ndarray
        Julian epochs evaluated.
    declination : ndarray
        Mean declination of date, degrees.
    azimuth : ndarray
        Rising (setting) azimuth on the skyline, degrees (NaN: the star does not rise or set there).
    target_azimuth, tolerance_deg : float
    within : ndarray of bool
        ``|azimuth - target| <= tolerance``.
    runs : list of (float, float)
        First and last year of each run of consecutive years within the tolerance.
    crossings : ndarray
        Years (interpolated) at which the azimuth equals the target.
    rate_deg_per_century : ndarray
        d(azimuth)/d(year) x 100 at the crossings.
    """

    star: str
    rising: bool
    years: np.ndarray
    declination: np.ndarray
    azimuth: np.ndarray
    target_azimuth: float
    tolerance_deg: float
    within: np.ndarray
    runs: list
    crossings: np.ndarray
    rate_deg_per_century: np.ndarray


def star_years(star: str, latitude_deg: float, azimuth_deg: float, horizon=0.0, *, rising: bool = True,
               years=None, tolerance_deg: float = 0.5, extinction_deg: float = 0.0,
               refraction_model: str = "bennett", temperature_C: float = G.STANDARD_TEMPERATURE_C,
               pressure_mbar: float = G.STANDARD_PRESSURE_MBAR) -> StarYears:
    """Return the years in which a star rose (or set) at an azimuth on a skyline.

    Parameters
    ----------
    star : str
        Star name (anything :func:`calendra_stars.names.resolve` accepts).
    latitude_deg : float
        Latitude, degrees north.
    azimuth_deg : float
        True azimuth of the alignment, degrees.
    horizon : Horizon, float or path
        The skyline.
    rising : bool
        Rising (True) or setting.
    years : array_like, optional
        Julian epochs to evaluate (default every year from -3000 to 3000).
    tolerance_deg : float
        Half-width of the azimuth window, degrees.
    extinction_deg : float
        Apparent altitude above the skyline at which the star is seen, degrees.
    refraction_model, temperature_C, pressure_mbar
        As for :func:`calendra_alignments.geometry.declination`.

    Returns
    -------
    StarYears
    """
    yrs = T.check_epochs(np.arange(-3000.0, 3000.5, 1.0) if years is None else years)
    if not tolerance_deg >= 0:
        raise ParameterError("the azimuth tolerance must be >= 0 degrees")
    _check_latitude(latitude_deg)
    rec = T.star_records([star])[0]
    dec = T.star_mean_declinations([rec], yrs)[0]
    az = np.asarray(G.azimuth_from_declination(dec, latitude_deg, horizon, G.Body.star(extinction_deg),
                                               rising=rising, refraction_model=refraction_model,
                                               temperature_C=temperature_C, pressure_mbar=pressure_mbar))
    target = float(azimuth_deg) % 360.0
    diff = (az - target + 180.0) % 360.0 - 180.0
    within = np.abs(diff) <= tolerance_deg
    runs = []
    if within.any():
        edges = np.diff(np.concatenate([[0], within.astype(int), [0]]))
        starts = np.nonzero(edges == 1)[0]
        stops = np.nonzero(edges == -1)[0] - 1
        runs = [(float(yrs[a]), float(yrs[b])) for a, b in zip(starts, stops)]
    s = np.sign(diff)
    k = np.nonzero((s[:-1] * s[1:] <= 0) & np.isfinite(diff[:-1]) & np.isfinite(diff[1:]) & (s[:-1] != 0))[0]
    k = k[np.abs(diff[k] - diff[k + 1]) < 90.0]
    frac = diff[k] / (diff[k] - diff[k + 1])
    cross = yrs[k] + frac * (yrs[k + 1] - yrs[k])
    rate = (diff[k + 1] - diff[k]) / (yrs[k + 1] - yrs[k]) * 100.0
    return StarYears(rec.name, bool(rising), yrs, dec, az, target, float(tolerance_deg), within, runs, cross, rate)


# ---------------------------------------------------------------- the Sun on a date

def sun_declination_on(jd_tt, latitude_deg=None, horizon=0.0, *, limb="upper", refraction_model="bennett",
                       temperature_C=G.STANDARD_TEMPERATURE_C, pressure_mbar=G.STANDARD_PRESSURE_MBAR) -> dict:
    """Return the Sun's apparent geocentric declination at instants, with rising and setting azimuths.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT.
    latitude_deg : float, optional
        With a latitude, also the azimuths at which the Sun (``limb`` at the
        skyline) rises and sets with that declination on ``horizon``.
    horizon, limb, refraction_model, temperature_C, pressure_mbar
        As for :func:`calendra_alignments.geometry.azimuth_from_declination`.

    Returns
    -------
    dict
        ``dec`` (degrees), ``distance_au``, ``daily_change_deg`` (over 24 h
        centred on the instant), and with a latitude ``azimuth_rise``, ``azimuth_set``.
    """
    jd = np.asarray(jd_tt, dtype=float)
    _, dec, dist = T.apparent_radec("sun", np.stack([jd - 0.5, jd, jd + 0.5]))
    out = {"dec": dec[1], "distance_au": dist[1], "daily_change_deg": dec[2] - dec[0]}
    if latitude_deg is not None:
        _check_latitude(latitude_deg)
        body = G.Body.sun(limb, float(np.mean(dist[1])))
        kw = dict(refraction_model=refraction_model, temperature_C=temperature_C, pressure_mbar=pressure_mbar)
        out["azimuth_rise"] = G.azimuth_from_declination(dec[1], latitude_deg, horizon, body, rising=True, **kw)
        out["azimuth_set"] = G.azimuth_from_declination(dec[1], latitude_deg, horizon, body, rising=False, **kw)
    return out
