"""Figures: the model's epicycle loop beside the real track, and the model error over centuries.

Matplotlib is imported when a figure is drawn (Agg backend, no display).
Drawing the error panel evaluates DE406 at 20,000 instants (about 2 s).
"""

from __future__ import annotations

import numpy as np

from ._common import days_from_jd_tt, wrap180
from .compare import compare, de406_position, equinox_offset_deg, model_position_days, synodic_period_days

#: Shortest span of the error panel, years: centred on the requested range when that is shorter.
ERROR_SPAN_YEARS = 1000.0
#: Instants in the error panel.
ERROR_SAMPLES = 20_000


def _retrograde_inset(ax, jd, model_lon, model_lat, real_lon, real_lat):
    """Zoom on the retrograde part of the track (real or model), if the period has one."""
    back = (np.diff(real_lon) < 0) | (np.diff(model_lon) < 0)
    if not back.any():
        return
    i = np.nonzero(back)[0]
    pad = max(int(0.6 * (i[-1] - i[0])), 5)
    lo, hi = max(i[0] - pad, 0), min(i[-1] + pad + 2, jd.size)
    inset = ax.inset_axes([0.27, 0.05, 0.40, 0.40])
    inset.plot(model_lon[lo:hi], model_lat[lo:hi], color="tab:red", lw=1.2)
    inset.plot(real_lon[lo:hi], real_lat[lo:hi], color="k", lw=0.9, ls="--")
    inset.invert_xaxis()
    inset.tick_params(labelsize=6)
    from matplotlib.ticker import FuncFormatter

    inset.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"{v % 360:.0f}"))
    inset.set_title("retrograde loop", fontsize=7)
    inset.grid(alpha=0.3)


def error_span(jd_tt_start: float, jd_tt_end: float):
    """Return the (start, end) TT Julian Days of the error panel: at least :data:`ERROR_SPAN_YEARS`, inside DE406."""
    from calendra.ephemeris import SPAN_JD

    half = 0.5 * ERROR_SPAN_YEARS * 365.25
    mid = 0.5 * (jd_tt_start + jd_tt_end)
    lo, hi = min(jd_tt_start, mid - half), max(jd_tt_end, mid + half)
    lo, hi = max(lo, SPAN_JD[0] + 1.0), min(hi, SPAN_JD[1] - 1.0)
    return lo, hi


def plot_comparison(body: str, jd_tt_start: float, jd_tt_end: float, path, deltat=None):
    """Draw the model against DE406 for ``body`` and save the figure to ``path``.

    Panels: (1) the model's construction in the ecliptic plane over one
    synodic period from ``jd_tt_start`` (deferent, equant, the path of the
    epicycle centre and the body's loop; units of the deferent radius,
    R = 60); (2) the sky track over the same period, model (with Ptolemy's
    equinox offset removed) and DE406, longitude against latitude; (3) the
    model's longitude error against time over centuries, raw and with the
    offset removed.

    Parameters
    ----------
    body : str
        One of :data:`calendra_geocentric.compare.BODIES`.
    jd_tt_start, jd_tt_end : float
        The requested range, Julian Days (TT); the loop starts at ``jd_tt_start``.
    path : str or os.PathLike
        Output file; the format follows the extension.
    deltat : str, DeltaTModel or None
        Delta-T model.

    Returns
    -------
    pathlib.Path
    """
    from pathlib import Path

    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from calendra.deltat import decimal_year
    from calendra.errors import ParameterError

    period = synodic_period_days(body)
    jd = jd_tt_start + np.linspace(0.0, period, max(int(period * 2), 200))
    days = days_from_jd_tt(jd, deltat)
    geo = model_position_days(body, days)
    offset = equinox_offset_deg(jd, deltat)
    real_lon, real_lat = de406_position(body, jd, deltat)

    fig = plt.figure(figsize=(13, 9.5), layout="constrained")
    grid = fig.add_gridspec(2, 2, height_ratios=[1.25, 1])
    ax_geo = fig.add_subplot(grid[0, 0])
    ax_sky = fig.add_subplot(grid[0, 1])
    ax_err = fig.add_subplot(grid[1, :])
    y0, y1 = (float(v) for v in decimal_year(np.array([jd[0], jd[-1]])))
    fig.suptitle(f"{body.capitalize()}: Ptolemy's model (Almagest, tr. Toomer) against DE406 - "
                 f"one synodic period ({period:.1f} d) from {y0:.2f}")

    # (1) construction, ecliptic plane seen from the north, x towards longitude 0
    bx, by = geo.body_xy
    cx, cy = geo.centre_xy
    dx, dy = geo.deferent_centre_xy
    ex, ey = geo.equant_xy
    ax_geo.plot(bx, by, color="tab:red", lw=1.3, label="body (model)")
    if body != "sun":
        ax_geo.plot(cx, cy, color="tab:blue", lw=1.0, label="epicycle centre")
        r = np.hypot(bx[0] - cx[0], by[0] - cy[0])
        t = np.linspace(0, 2 * np.pi, 200)
        ax_geo.plot(cx[0] + r * np.cos(t), cy[0] + r * np.sin(t), color="tab:blue", lw=0.6, ls=":",
                    label="epicycle at the start")
    if body in ("venus", "mars", "jupiter", "saturn", "sun"):
        rad = np.hypot(cx[0] - dx[0], cy[0] - dy[0])
        t = np.linspace(0, 2 * np.pi, 400)
        ax_geo.plot(dx[0] + rad * np.cos(t), dy[0] + rad * np.sin(t), color="0.6", lw=0.7, label="deferent")
    else:
        ax_geo.plot(dx, dy, color="0.5", lw=0.8, label="moving deferent centre")
    ax_geo.plot([0], [0], "o", color="k", label="Earth")
    ax_geo.plot([dx[0]], [dy[0]], "+", color="0.3", ms=9, label="deferent centre")
    ax_geo.plot([ex[0]], [ey[0]], "x", color="tab:green", ms=8,
                label="prosneusis point" if body == "moon" else "equant")
    ax_geo.plot([bx[0]], [by[0]], "o", color="tab:red", ms=4)
    ax_geo.set_aspect("equal")
    ax_geo.set_xlabel("x (towards longitude 0), R = 60")
    ax_geo.set_ylabel("y (towards longitude 90)")
    ax_geo.set_title("model construction (geocentric, ecliptic plane)")
    ax_geo.legend(fontsize=7, loc="lower left", framealpha=0.85)
    ax_geo.grid(alpha=0.3)

    # (2) sky track, longitude increasing to the left (east on the left, as on a sky chart);
    # longitudes unwrapped along the period, ticks labelled modulo 360
    real_u = np.degrees(np.unwrap(np.radians(real_lon)))
    model_u = np.degrees(np.unwrap(np.radians(geo.longitude_deg - offset)))
    model_u += 360.0 * np.round((real_u[0] - model_u[0]) / 360.0)
    if body == "sun":
        ax_sky.plot(jd - jd[0], wrap180(geo.longitude_deg - offset - real_lon), color="tab:red")
        ax_sky.set_xlabel("days from the start")
        ax_sky.set_ylabel("model - offset - DE406 (deg)")
        ax_sky.set_title("Sun: longitude error over the year")
    else:
        from matplotlib.ticker import FuncFormatter

        ax_sky.plot(model_u, geo.latitude_deg, color="tab:red", lw=1.3, label="model - equinox offset")
        ax_sky.plot(real_u, real_lat, color="k", lw=1.0, ls="--", label="DE406 apparent, of date")
        ax_sky.plot([model_u[0]], [geo.latitude_deg[0]], "o", color="tab:red", ms=4)
        ax_sky.plot([real_u[0]], [real_lat[0]], "o", color="k", ms=4)
        ax_sky.invert_xaxis()
        ax_sky.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"{v % 360:.0f}"))
        ax_sky.set_xlabel("ecliptic longitude (deg)")
        ax_sky.set_ylabel("ecliptic latitude (deg)")
        ax_sky.set_title("sky track over the same period (dots: start)")
        ax_sky.legend(fontsize=8)
        _retrograde_inset(ax_sky, jd, model_u, geo.latitude_deg, real_u, real_lat)
    ax_sky.grid(alpha=0.3)

    # (3) error over centuries
    lo, hi = error_span(jd_tt_start, jd_tt_end)
    if not hi > lo:
        raise ParameterError("the requested range lies outside DE406")
    jd_e = np.linspace(lo, hi, ERROR_SAMPLES)
    res = compare(body, jd_e, deltat)
    years = decimal_year(jd_e)
    ax_err.plot(years, res["difference"], ".", ms=1.0, color="0.55", label="model - DE406 (raw)")
    ax_err.plot(years, res["corrected_difference"], ".", ms=1.0, color="tab:red",
                label="with Ptolemy's equinox offset removed")
    ax_err.plot(years, res["equinox_offset"], "-", lw=1.0, color="tab:blue", label="equinox offset")
    ax_err.axvline(137, color="k", lw=0.6, ls=":")
    ax_err.set_xlabel("year (astronomical numbering, 0 = 1 BC; dotted: AD 137)")
    ax_err.set_ylabel("longitude error (deg)")
    ax_err.set_title("model error against time")
    ax_err.legend(fontsize=8, markerscale=8, loc="best")
    ax_err.grid(alpha=0.3)

    out = Path(path)
    fig.savefig(out, dpi=110)
    plt.close(fig)
    return out
