"""A planet's retrograde loop on the ecliptic among the stars (matplotlib, imported lazily).

The track is the apparent geocentric ecliptic longitude and latitude of date
(DE406), from one loop-length before the retrograde station to one after
the direct station; the stars are those of a reference set inside the
frame, placed at the middle of the loop (their longitudes of date move by
under 0.01 degree over a loop).  East (increasing longitude) is to the
left, as on the sky facing the planet.
"""

from __future__ import annotations

import numpy as np


def retrograde_track(planet: str, jd_tt_center: float, margin_days: float | None = None, samples: int = 600):
    """The retrograde loop of a planet nearest to an instant, sampled for drawing.

    Parameters
    ----------
    planet : str
    jd_tt_center : float
        Julian Day (TT) near the loop.
    margin_days : float or None
        Days drawn before the first and after the second station (default: the loop's length).
    samples : int
        Points of the track.

    Returns
    -------
    dict
        ``jd_tt``, ``longitude_deg`` (unwrapped), ``latitude_deg`` of the track; ``stations``
        (two instants), ``station_longitude_deg``, ``station_latitude_deg``; ``centre_jd_tt``.
    """
    from calendra.errors import CalendraError
    from calendra.ephemeris import SPAN_JD

    from .kepler import SYNODIC_DAYS
    from .states import apparent, check_body, ecliptic_of_date
    from .stations import find_stations, retrograde_loops

    planet = check_body(planet)
    syn = SYNODIC_DAYS[planet]
    lo, hi = max(jd_tt_center - 1.2 * syn, SPAN_JD[0] + 1), min(jd_tt_center + 1.2 * syn, SPAN_JD[1] - 1)
    loops = retrograde_loops(find_stations(planet, lo, hi))
    if loops.body.size == 0:
        raise CalendraError(f"no complete retrograde loop of {planet} near JD {jd_tt_center:.1f} TT")
    k = int(np.argmin(np.abs(0.5 * (loops.start_jd_tt + loops.end_jd_tt) - jd_tt_center)))
    t0, t1 = float(loops.start_jd_tt[k]), float(loops.end_jd_tt[k])
    margin = (t1 - t0) if margin_days is None else float(margin_days)
    t = np.linspace(max(t0 - margin, SPAN_JD[0]), min(t1 + margin, SPAN_JD[1]), samples)
    both = np.concatenate([t, [t0, t1]])
    lon, lat = ecliptic_of_date(apparent(planet, both)[0], both)
    lon = np.degrees(np.unwrap(lon))
    lat = np.degrees(lat)
    return {"jd_tt": t, "longitude_deg": lon[:-2], "latitude_deg": lat[:-2], "stations": (t0, t1),
            "station_longitude_deg": lon[-2:], "station_latitude_deg": lat[-2:], "centre_jd_tt": 0.5 * (t0 + t1)}


def _date_label(jd_tt):
    from calendra.daylib import split_jd
    from calendra.julian_gregorian import gregorian_from_jdn, julian_from_jdn

    jdn, _ = split_jd(jd_tt)
    jdn = int(jdn)
    y, m, d = (int(v) for v in (gregorian_from_jdn(jdn) if jdn >= 2299161 else julian_from_jdn(jdn)))
    return f"{y}-{m:02d}-{d:02d}"


def plot_retrograde(planet: str, jd_tt_center: float, path, *, stars: str = "normal",
                    margin_days: float | None = None):
    """Draw the retrograde loop nearest to ``jd_tt_center`` with the nearby stars into ``path``.

    Parameters
    ----------
    planet : str
    jd_tt_center : float
        Julian Day (TT).
    path : str or Path
        Output file (PNG, PDF or SVG by its extension).
    stars : {'normal', 'bright', 'both'}
        Reference stars drawn.
    margin_days : float or None
        See :func:`retrograde_track`.

    Returns
    -------
    dict
        The track of :func:`retrograde_track`.
    """
    from calendra.errors import CalendraError

    from . import refstars
    from .states import ecliptic_of_date

    try:
        import matplotlib
        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        raise CalendraError("plots need matplotlib (pip install matplotlib)") from None
    tr = retrograde_track(planet, jd_tt_center, margin_days)
    lon, lat = tr["longitude_deg"], tr["latitude_deg"]
    x0, x1 = lon.min() - 4.0, lon.max() + 4.0
    y0, y1 = min(lat.min(), -1.0) - 6.0, max(lat.max(), 1.0) + 6.0
    ss = refstars.star_set(stars)
    centre = np.full(len(ss), tr["centre_jd_tt"])
    sl, sb = ecliptic_of_date(ss.directions(np.arange(len(ss)), centre), centre)
    sl, sb = np.degrees(sl), np.degrees(sb)
    mid = 0.5 * (x0 + x1)
    sl = sl + 360.0 * np.round((mid - sl) / 360.0)
    inside = (sl > x0) & (sl < x1) & (sb > y0) & (sb < y1)
    fig, ax = plt.subplots(figsize=(9, 5))
    ax.axhline(0.0, color="0.7", lw=0.8, label="ecliptic of date")
    ax.plot(lon, lat, "-", color="C0", lw=1.5, label=f"{planet.capitalize()} (DE406, apparent)")
    ax.plot(tr["station_longitude_deg"], tr["station_latitude_deg"], "v", color="C3", ms=8, label="stations")
    for x, y, t in zip(tr["station_longitude_deg"], tr["station_latitude_deg"], tr["stations"]):
        ax.annotate(_date_label(t), (x, y), textcoords="offset points", xytext=(4, 6), fontsize=8)
    for x, y, t in ((lon[0], lat[0], tr["jd_tt"][0]), (lon[-1], lat[-1], tr["jd_tt"][-1])):
        ax.annotate(_date_label(t), (x, y), textcoords="offset points", xytext=(4, -10), fontsize=7, color="0.4")
    sizes = np.clip(40.0 * 10 ** (-0.4 * (ss.v[inside] - 1.0)), 4.0, 120.0)
    ax.scatter(sl[inside], sb[inside], s=sizes, color="k", marker="*", label=f"stars ({stars})")
    for x, y, name in zip(sl[inside], sb[inside], np.asarray(ss.names, dtype=object)[inside]):
        ax.annotate(str(name), (x, y), textcoords="offset points", xytext=(5, 3), fontsize=8)
    ax.set_xlim(x1, x0)                 # east to the left
    ax.set_ylim(y0, y1)
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlabel("ecliptic longitude of date (deg), east to the left")
    ax.set_ylabel("ecliptic latitude (deg)")
    ax.set_title(f"{planet.capitalize()}: retrograde loop {_date_label(tr['stations'][0])} to "
                 f"{_date_label(tr['stations'][1])} (julian before 1582-10-15)")
    ax.legend(loc="best", fontsize=8)
    fig.tight_layout()
    fig.savefig(path, dpi=120)
    plt.close(fig)
    return tr
