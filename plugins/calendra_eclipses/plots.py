"""Plots of one eclipse (matplotlib, Agg backend, imported only when a plot is asked for).

* :func:`plot_solar` - the central line on a longitude/latitude grid with the
  point of greatest eclipse and the site; the central lines for the model's
  ΔT ± 1 sigma are drawn dashed (a change of ΔT moves the line east or west).
* :func:`plot_lunar` - the Moon's airless altitude at the site from P1 to P4
  with the contacts marked, and the horizon.
"""

from __future__ import annotations

import numpy as np

DAY_S = 86400.0


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt


def plot_solar(ecl, site, report, path, deltat):
    """Draw the central line of a one-row solar table and the site; write a PNG to ``path``."""
    from .solar import central_line

    plt = _pyplot()
    fig, ax = plt.subplots(figsize=(9, 5), dpi=110)
    dt = float(ecl.delta_t_s[0])
    sigma = float(deltat.sigma(ecl.jd_tt[0]))
    lons = [site.east_longitude_deg]
    lats = [site.latitude_deg]
    shifts = [(0.0, "-", "central line (model delta T)")]
    if sigma:
        shifts += [(-sigma, "--", f"delta T - 1 sigma ({sigma:.0f} s)"), (sigma, ":", "delta T + 1 sigma")]
    for off, style, label in shifts:
        _, lat, lon, l2 = central_line(ecl, 0, step_min=2.0, delta_t_s=dt + off)
        if lat.size == 0:
            continue
        lon_plot = np.unwrap(np.radians(lon))
        lon_plot = np.degrees(lon_plot)
        ax.plot(lon_plot, lat, style, color="black" if off == 0 else "grey", label=label)
        lons.extend(lon_plot.tolist())
        lats.extend(lat.tolist())
    ax.plot([ecl.longitude_deg[0]], [ecl.latitude_deg[0]], "o", color="tab:red", label="greatest eclipse")
    ax.plot([site.east_longitude_deg], [site.latitude_deg], "*", color="tab:blue", markersize=12, label=site.name)
    pad = 10.0
    ax.set_xlim(max(min(lons) - pad, -200), min(max(lons) + pad, 200))
    ax.set_ylim(max(min(lats) - pad, -90), min(max(lats) + pad, 90))
    ax.set_xlabel("longitude (deg, east positive)")
    ax.set_ylabel("latitude (deg)")
    ax.grid(True, alpha=0.4)
    info = report["eclipse"]
    ax.set_title(f"{info['type']} solar eclipse, greatest {info['greatest_eclipse_ut']} UT "
                 f"(delta T {dt:.0f} s)", fontsize=10)
    ax.legend(fontsize=8, loc="best")
    fig.tight_layout()
    fig.savefig(path)
    plt.close(fig)


def plot_lunar(ecl, site, deltat, path):
    """Draw the Moon's altitude at the site through a one-row lunar eclipse; write a PNG to ``path``."""
    from .horizon import body_altaz, threshold_deg
    from .lunar import CONTACT_ORDER

    plt = _pyplot()
    c = {k: float(v[0]) for k, v in ecl.contacts.items()}
    dt = float(deltat.seconds(ecl.jd_tt[0]))
    t = np.linspace(c["P1"] - 0.03, c["P4"] + 0.03, 300)
    alt, az, sd, _ = body_altaz("moon", t, site, dt)
    hours = (t - ecl.jd_tt[0]) * 24.0
    fig, ax = plt.subplots(figsize=(9, 5), dpi=110)
    ax.plot(hours, alt, color="black", label="Moon's altitude (airless, topocentric)")
    ax.plot(hours, threshold_deg(site, az, sd), color="tab:green", label="upper limb on the visible horizon")
    for name in CONTACT_ORDER + ("max",):
        tt = float(ecl.jd_tt[0]) if name == "max" else c[name]
        if np.isfinite(tt):
            h = (tt - ecl.jd_tt[0]) * 24.0
            ax.axvline(h, color="tab:red" if name.startswith("U") or name == "max" else "grey", alpha=0.6, lw=0.8)
            ax.text(h, ax.get_ylim()[1], name, ha="center", va="bottom", fontsize=8)
    ax.set_xlabel("hours from greatest eclipse (TT)")
    ax.set_ylabel("altitude (deg)")
    ax.grid(True, alpha=0.4)
    ax.set_title(f"{ecl.type_names[0]} lunar eclipse seen from {site.name} (delta T {dt:.0f} s)", fontsize=10,
                 pad=16)
    ax.legend(fontsize=8, loc="lower right")
    fig.tight_layout()
    fig.savefig(path)
    plt.close(fig)
