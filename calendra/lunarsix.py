"""The Babylonian "lunar six": six intervals between the rising and setting of the Sun and the Moon.

Definitions (Huber & Steele, "Babylonian Lunar Six Tablets", SCIAMVS 8 (2007) 3-36, section I;
the names after Sachs 1948):

On the first day of the month

``NA`` (evening)
    sunset to moonset, on the evening the crescent was first seen after conjunction.

Around the middle of the month, near full moon

``ŠÚ`` (morning; ``SU`` here)
    moonset to sunrise, when the Moon set for the last time before sunrise;
``na`` (morning)
    sunrise to moonset, when the Moon set for the first time after sunrise;
``ME`` (evening)
    moonrise to sunset, when the Moon rose for the last time before sunset;
``GE6`` (evening; GE₆)
    sunset to moonrise, when the Moon rose for the first time after sunset.

At the end of the month

``KUR`` (morning)
    moonrise to sunrise, on the morning the Moon was seen for the last time.

The intervals were recorded in UŠ ("time degrees": 1 UŠ = 4 minutes of time,
60 NINDA to the UŠ).  Here they are given in minutes and UŠ.

How they are computed
---------------------
Sunrise, sunset, moonrise and moonset are those of the upper limb on the
site's horizon with standard refraction, topocentric (:mod:`calendra.riseset`).

* NA and KUR: the first visible evening after each conjunction and the last
  visible morning before the next one, by a crescent criterion
  (:mod:`calendra.crescent`, default Yallop's q); NA = moonset - sunset on
  that evening, KUR = sunrise - moonrise on that morning.
* ŠÚ and na: on the mornings from 3 days before to 3 days after the local
  day of opposition, the moonset nearest each sunrise; moonset - sunrise
  grows by about 50 minutes a day and changes sign once: ŠÚ is on the last
  morning on which it is negative, na on the next one.
* ME and GE6: the same with the moonrise nearest each sunset: ME on the last
  evening on which the Moon rose before sunset, GE6 on the next one.

Whether an event was actually observable (clouds, the horizon, the
crescent's visibility on the NA and KUR days) is not judged beyond the
crescent criterion: these are the computed intervals.  Full moons come from
the same private syzygy helper as the crescent's conjunctions (mean phase of
Meeus eq. 49.1 refined on the ephemeris).
"""

from __future__ import annotations

import numpy as np

from .detector import Detector, Parameter

#: Minutes of time in one UŠ (time degree).
MINUTES_PER_US = 4.0
#: The six intervals in the order of the month; ``SU`` stands for ŠÚ.
NAMES = ("NA", "SU", "na", "ME", "GE6", "KUR")
TITLES = {
    "NA": "sunset to moonset, first evening of visibility",
    "SU": "moonset to sunrise (ŠÚ), last moonset before sunrise",
    "na": "sunrise to moonset, first moonset after sunrise",
    "ME": "moonrise to sunset, last moonrise before sunset",
    "GE6": "sunset to moonrise (GE₆), first moonrise after sunset",
    "KUR": "moonrise to sunrise, last morning of visibility",
}
FULL_MOON_OFFSETS = np.arange(-3, 4)


def full_moon_intervals(site, jd_tt_start, jd_tt_end, *, deltat, horizon=None):
    """Return ŠÚ, na, ME and GE6 around every opposition in a span.

    Parameters
    ----------
    site : calendra.sites.Site
    jd_tt_start, jd_tt_end : float
        Span of the oppositions, TT Julian Days.
    deltat : delta-T model
    horizon : calendra.riseset.Horizon, optional
        Definition of rising and setting (default: upper limb, standard refraction).

    Returns
    -------
    dict
        ``opposition_tt``, ``lunation`` (Meeus k of the month's conjunction),
        and for each of ``SU``, ``na``, ``ME``, ``GE6`` a dict with ``minutes``,
        ``sun_ut``, ``moon_ut`` and ``day`` (civil day of the morning/evening);
        NaN (day -1) where the sequence is not found within +-3 days.
    """
    from .crescent import _syzygies
    from .riseset import Horizon, _Engine, _civil_day, _local_noon_ut

    horizon = horizon or Horizon()
    opp, k = _syzygies(jd_tt_start, jd_tt_end, 0.5, deltat)
    n, m = opp.size, FULL_MOON_OFFSETS.size
    d0 = _civil_day(np.asarray(deltat.ut_from_tt(opp), dtype=float), site).astype(np.int64) if n else np.zeros(0, np.int64)
    days = (d0[:, None] + FULL_MOON_OFFSETS[None, :]).ravel()
    sun = _Engine("sun", site, deltat)
    moon = _Engine("moon", site, deltat)
    tr = sun.transits_guide(_local_noon_ut(days, site))
    out = {"opposition_tt": opp, "lunation": np.floor(k).astype(np.int64)}
    for morning in (True, False):
        t_sun, _, _ = sun.crossings(tr, -1 if morning else 1, horizon)
        # Morning: the moonset nearest sunrise; evening: the moonrise nearest sunset.
        t_moon, _, _ = moon.crossings(t_sun, 1 if morning else -1, horizon, around="nearest")
        x = ((t_moon - t_sun) * 1440.0).reshape(n, m)
        ts, tm, dd = t_sun.reshape(n, m), t_moon.reshape(n, m), days.reshape(n, m)
        pos = x > 0
        # First day on which the Moon's event follows the Sun's, preceded by one on which it came first.
        first_pos = np.argmax(pos, axis=1)
        rows = np.arange(n)
        ok = pos.any(axis=1) & (first_pos > 0)
        prev = np.maximum(first_pos - 1, 0)
        ok &= np.isfinite(x[rows, prev]) & (x[rows, prev] < 0)
        before, after = ("SU", "na") if morning else ("ME", "GE6")
        for name, col, sign in ((before, prev, -1.0), (after, first_pos, 1.0)):
            out[name] = {"minutes": np.where(ok, sign * x[rows, col], np.nan),
                         "sun_ut": np.where(ok, ts[rows, col], np.nan),
                         "moon_ut": np.where(ok, tm[rows, col], np.nan),
                         "day": np.where(ok, dd[rows, col], -1)}
    return out


def crescent_intervals(site, jd_tt_start, jd_tt_end, *, deltat, criterion="yallop", threshold=None, horizon=None,
                       **params):
    """Return NA (first evening) and KUR (last morning) of the months in a span, by a crescent criterion.

    NA belongs to the month opened by each conjunction in the span; KUR to
    the month closed by it (its ``lunation`` is the conjunction's k - 1).

    Parameters
    ----------
    site : calendra.sites.Site
    jd_tt_start, jd_tt_end : float
        Span of the conjunctions, TT Julian Days.
    deltat : delta-T model
    criterion : str or CrescentCriterion
        Decides the first visible evening and the last visible morning.
    threshold : float, optional
        The criterion's visibility threshold (default: its own).
    horizon : calendra.riseset.Horizon, optional
    **params
        Passed to the criterion's constructor (e.g. ``lag_min``).

    Returns
    -------
    dict
        ``NA`` and ``KUR``: dicts of ``minutes``, ``sun_ut``, ``moon_ut``
        (UT1 Julian Days), ``day``, ``lunation``, ``criterion_value``; and
        ``criterion``.
    """
    from .crescent import crescent_nights, get_criterion, visibility

    crit = get_criterion(criterion, **params) if isinstance(criterion, str) else criterion
    out = {}
    for name, morning in (("NA", False), ("KUR", True)):
        nights = crescent_nights(site, jd_tt_start, jd_tt_end, deltat=deltat, morning=morning, horizon=horizon,
                                 at=(crit.at,))
        vis = visibility(nights, crit, threshold)
        rows = np.arange(nights.day.shape[0])
        col = np.maximum(vis.index, 0)
        ok = vis.index >= 0
        out[name] = {"minutes": np.where(ok, nights.lag_min[rows, col], np.nan),
                     "sun_ut": np.where(ok, nights.sun_ut[rows, col], np.nan),
                     "moon_ut": np.where(ok, nights.moon_ut[rows, col], np.nan),
                     "day": np.where(ok, nights.day[rows, col], -1),
                     "lunation": np.round(nights.lunation).astype(np.int64) - (1 if morning else 0),
                     "criterion_value": np.where(ok, vis.result.value[rows, col], np.nan)}
    out["criterion"] = crit
    return out


def lunar_six(site, jd_tt_start, jd_tt_end, *, deltat=None, criterion="yallop", threshold=None, horizon=None,
              **params) -> dict:
    """Return the lunar six of the months in a span at a site.

    Parameters
    ----------
    site : calendra.sites.Site
    jd_tt_start, jd_tt_end : float
        Span, TT Julian Days: conjunctions (NA, KUR) and oppositions (ŠÚ, na, ME, GE6) within it.
    deltat : delta-T model or name, optional
    criterion, threshold, params
        Crescent criterion for the NA and KUR days (:func:`calendra.crescent.visibility`).
    horizon : calendra.riseset.Horizon, optional

    Returns
    -------
    dict of name -> dict of arrays
        For each of :data:`NAMES`: ``minutes``, ``us`` (minutes / 4), ``sun_ut``,
        ``moon_ut``, ``day`` and ``lunation`` (Meeus k of the month's first conjunction).
    """
    from .deltat import DEFAULT_MODEL, get_model

    model = deltat if deltat is not None and not isinstance(deltat, str) else get_model(deltat or DEFAULT_MODEL)
    full = full_moon_intervals(site, jd_tt_start, jd_tt_end, deltat=model, horizon=horizon)
    cres = crescent_intervals(site, jd_tt_start, jd_tt_end, deltat=model, criterion=criterion, threshold=threshold,
                              horizon=horizon, **params)
    out = {}
    for name in NAMES:
        src = cres[name] if name in ("NA", "KUR") else dict(full[name], lunation=full["lunation"])
        out[name] = dict(src, us=src["minutes"] / MINUTES_PER_US)
    out["criterion"] = cres["criterion"]
    return out


class LunarSix(Detector):
    """The lunar six of each month at a site."""

    name = "lunar-six"
    aliases = ("lunar6",)
    title = "The Babylonian lunar six (NA, ŠÚ, na, ME, GE₆, KUR) at a site"
    description = ("Intervals between the rising/setting of the Sun and the Moon at the beginning, middle and end "
                   "of each month (Huber & Steele 2007), in minutes and UŠ (1 UŠ = 4 min). NA and KUR on the first "
                   "and last days of crescent visibility by the chosen criterion. kind SU stands for ŠÚ.")
    needs_site = True
    parameters = (
        Parameter("criterion", "str", "yallop", "crescent criterion for the NA and KUR days: yallop, odeh, lag"),
        Parameter("threshold", "float", None, "test value counted as visible (default: the criterion's)"),
        Parameter("lag_min", "float", 48.0, "lag rule: minimum moonset lag, minutes"),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, criterion, threshold, lag_min):
        from .detectors_site import _table, civil_dates, hhmmss
        from .riseset import Horizon, provenance_models, provenance_warnings

        params = {"lag_min": lag_min} if criterion.lower() == "lag" else {}
        if progress:
            progress(0, 2, "lunar six")
        six = lunar_six(site, jd_tt_start, jd_tt_end, deltat=deltat, criterion=criterion, threshold=threshold,
                        **params)
        if progress:
            progress(2, 2, "lunar six")
        kinds, moon, sunt, minutes, lun, days = [], [], [], [], [], []
        for name in NAMES:
            e = six[name]
            ok = np.isfinite(e["minutes"])
            kinds.append(np.full(int(ok.sum()), name))
            moon.append(e["moon_ut"][ok])
            sunt.append(e["sun_ut"][ok])
            minutes.append(e["minutes"][ok])
            lun.append(np.broadcast_to(e["lunation"], ok.shape)[ok])
            days.append(e["day"][ok])
        kind, moon, sunt, minutes, lun, days = (np.concatenate(x) for x in (kinds, moon, sunt, minutes, lun, days))
        tt = np.asarray(deltat.tt_from_ut(moon), dtype=float) if moon.size else moon
        inside = (tt >= jd_tt_start) & (tt < jd_tt_end)
        order = np.argsort(moon[inside], kind="stable")
        kind, moon, sunt, minutes, lun, days = (x[inside][order] for x in (kind, moon, sunt, minutes, lun, days))
        cols = {"kind": kind, "lunation": lun.astype(np.int64),
                "local_date": np.array(civil_dates(days)) if days.size else np.zeros(0, str),
                "sun_event": np.array(hhmmss(sunt, site)) if sunt.size else np.zeros(0, str),
                "moon_event": np.array(hhmmss(moon, site)) if moon.size else np.zeros(0, str),
                "minutes": np.round(minutes, 1), "us": np.round(minutes / MINUTES_PER_US, 2),
                "meaning": np.array([TITLES[k] for k in kind.tolist()]) if kind.size else np.zeros(0, str)}
        meta = {"lunation": ("", "Meeus lunation number k of the month's first conjunction"),
                "local_date": ("civil date", "of the morning or evening (midnight-based civil day)"),
                "sun_event": ("civil time", "sunrise or sunset"), "moon_event": ("civil time", "moonrise or moonset"),
                "minutes": ("min", "the interval"), "us": ("UŠ", "time degrees, 1 UŠ = 4 min")}
        hz = Horizon()
        models = {"lunar six": "Huber & Steele, SCIAMVS 8 (2007) 3-36, section I",
                  "NA and KUR days": six["criterion"].describe()}
        models.update(provenance_models(hz, site, "rising and setting"))
        warnings = provenance_warnings(hz) + [
            "the lunar six are short intervals between horizon events: refraction and delta T errors go into "
            "them directly (1 h of delta T moves the Moon's events by about 2 min); before about -700 delta T "
            "is uncertain by more than that"]
        return _table(cols, meta, moon, deltat, site, models, warnings)
