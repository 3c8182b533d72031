"""The ``calendra eclipse DATE --site S`` command: one eclipse, seen from one site.

Finds the eclipse nearest DATE (of ``--kind``, or of either kind), prints its
global circumstances, every contact with the local civil time and the
Sun's or Moon's altitude and azimuth, whether it was seen and whether the
body rose or set eclipsed; ``--delta-t-window`` adds the ranges of ΔT for
which it was seen, central (solar) or total (lunar) at the site, or rose
or set eclipsed (:mod:`.windows`); ``--plot FILE`` draws the central line
on a longitude/latitude grid with the site marked (solar) or the Moon's
altitude through the eclipse against the horizon (lunar).
"""

from __future__ import annotations

import numpy as np

DAY_S = 86400.0


def _when(jd_ut, site):
    from .tables import hhmmss, local_dates

    if not np.isfinite(jd_ut):
        return "-", "-", "-"
    ut_date = local_dates(np.array([jd_ut]), 0.0)[0]
    return (f"{ut_date} {hhmmss(jd_ut)[0]}", str(local_dates(np.array([jd_ut]), site.offset_days)[0]),
            hhmmss(jd_ut, site.offset_days)[0])


def find(jd_tt, kind, deltat, shadow):
    """The eclipse nearest ``jd_tt`` (TT): ``(kind, table)`` with a one-row table."""
    from calendra.errors import CalendraError

    from .lunar import nearest_lunar_eclipse
    from .solar import nearest_solar_eclipse

    found = []
    if kind in (None, "solar"):
        try:
            found.append(("solar", nearest_solar_eclipse(jd_tt, deltat=deltat)))
        except CalendraError:
            if kind == "solar":
                raise
    if kind in (None, "lunar"):
        try:
            found.append(("lunar", nearest_lunar_eclipse(jd_tt, shadow=shadow)))
        except CalendraError:
            if kind == "lunar":
                raise
    return min(found, key=lambda kv: abs(float(kv[1].jd_tt[0]) - jd_tt))


def solar_report(ecl, site, deltat, windows=False, span_s=None, min_magnitude=0.0, horizon_magnitude=0.0):
    """Global and local circumstances of a one-row solar table, as a dict of plain values."""
    from .solar import central_line
    from .solar_local import solar_local

    loc = solar_local(ecl.elements, site.latitude_deg, site.east_longitude_deg, site.elevation_m, site=site)
    dt = float(ecl.delta_t_s[0])
    g_ut = float(ecl.jd_tt[0]) - dt / DAY_S
    info = {"kind": "solar", "type": str(ecl.type_names[0]), "central": bool(ecl.central[0]),
            "greatest_eclipse_tt_jd": float(ecl.jd_tt[0]), "greatest_eclipse_ut": _when(g_ut, site)[0],
            "delta_t_s": dt, "saros": int(ecl.saros[0]), "lunation": int(ecl.lunation[0]),
            "gamma": round(float(ecl.gamma[0]), 4), "magnitude": round(float(ecl.magnitude[0]), 4),
            "greatest_latitude_deg": round(float(ecl.latitude_deg[0]), 3),
            "greatest_longitude_deg": round(float(ecl.longitude_deg[0]), 3),
            "sun_altitude_at_greatest_deg": round(float(ecl.sun_altitude_deg[0]), 1),
            "path_width_km": _num(ecl.path_width_km[0], 1), "central_duration_s": _num(ecl.central_duration_s[0], 1),
            "site_seen": bool(loc.visible[0]), "site_type": str(loc.local_type[0]) or "none",
            "site_magnitude": round(float(loc.magnitude[0]), 4), "site_obscuration": round(float(loc.obscuration[0]), 4),
            "site_visible_magnitude": _num(loc.visible_magnitude[0], 4),
            "site_central_duration_s": _num(loc.central_duration_s[0], 1)}
    events = []
    for name, label in (("C1", "first contact (C1)"), ("C2", "second contact (C2)"), ("max", "maximum"),
                        ("C3", "third contact (C3)"), ("C4", "last contact (C4)")):
        t = float(loc.jd_ut[name][0])
        if not np.isfinite(t):
            continue
        ut, ld, lt = _when(t, site)
        events.append({"event": label, "ut": ut, "local_date": ld, "local_time": lt,
                       "altitude_deg": round(float(loc.sun_altitude_deg[name][0]), 2),
                       "azimuth_deg": round(float(loc.sun_azimuth_deg[name][0]), 2),
                       "up": bool(loc.sun_up[name][0])})
    for tau, mag, label in ((loc.sunrise_tau[0], loc.sunrise_magnitude[0], "sunrise, eclipsed"),
                            (loc.sunset_tau[0], loc.sunset_magnitude[0], "sunset, eclipsed")):
        if np.isfinite(tau):
            t = float(ecl.elements.t0[0] + tau / 24.0 - dt / DAY_S)
            ut, ld, lt = _when(t, site)
            events.append({"event": label, "ut": ut, "local_date": ld, "local_time": lt, "altitude_deg": None,
                           "azimuth_deg": None, "up": True, "magnitude": round(float(mag), 4)})
    events.sort(key=lambda r: r["ut"])
    jd_ut, lat, lon, l2 = central_line(ecl, 0, step_min=5.0)
    line = [{"ut_jd": round(float(a), 6), "latitude_deg": round(float(b), 3), "longitude_deg": round(float(c), 3),
             "type": "total" if d < 0 else "annular"} for a, b, c, d in zip(jd_ut, lat, lon, l2)]
    out = {"eclipse": info, "events": events, "central_line": line}
    if windows:
        from .windows import solar_windows

        out["delta_t_windows"] = _windows(solar_windows(ecl, 0, site, deltat, span_s=span_s,
                                                        min_magnitude=min_magnitude,
                                                        horizon_magnitude=horizon_magnitude))
    return out


def lunar_report(ecl, site, deltat, windows=False, span_s=None, horizon_magnitude=0.0):
    """Global and local circumstances of a one-row lunar table, as a dict of plain values."""
    from .lunar_local import LOCAL_EVENTS, lunar_local

    loc = lunar_local(ecl, site, deltat)
    dt = float(loc.delta_t_s[0])
    dur = ecl.durations_min()
    g_ut = float(ecl.jd_tt[0]) - dt / DAY_S
    info = {"kind": "lunar", "type": str(ecl.type_names[0]), "greatest_eclipse_tt_jd": float(ecl.jd_tt[0]),
            "greatest_eclipse_ut": _when(g_ut, site)[0], "delta_t_s": dt, "saros": int(ecl.saros[0]),
            "lunation": int(ecl.lunation[0]), "gamma": round(float(ecl.gamma[0]), 4),
            "penumbral_magnitude": round(float(ecl.penumbral_magnitude[0]), 4),
            "umbral_magnitude": round(float(ecl.umbral_magnitude[0]), 4), "shadow": ecl.shadow,
            "penumbral_duration_min": _num(dur["penumbral"][0], 1), "partial_duration_min": _num(dur["partial"][0], 1),
            "total_duration_min": _num(dur["total"][0], 1), "site_seen": bool(loc.seen[0]),
            "site_total_seen": bool(loc.total_seen[0]), "site_phases_up": loc.visible_events()[0]}
    labels = {"P1": "penumbral eclipse begins (P1)", "U1": "partial eclipse begins (U1)",
              "U2": "total eclipse begins (U2)", "max": "greatest eclipse", "U3": "total eclipse ends (U3)",
              "U4": "partial eclipse ends (U4)", "P4": "penumbral eclipse ends (P4)"}
    events = []
    for name in LOCAL_EVENTS:
        t_tt = float(ecl.jd_tt[0] if name == "max" else ecl.contacts[name][0])
        if not np.isfinite(t_tt):
            continue
        ut, ld, lt = _when(t_tt - dt / DAY_S, site)
        events.append({"event": labels[name], "ut": ut, "local_date": ld, "local_time": lt,
                       "altitude_deg": round(float(loc.altitude_deg[name][0]), 2),
                       "azimuth_deg": round(float(loc.azimuth_deg[name][0]), 2), "up": bool(loc.above[name][0])})
    for t, mag, label in ((loc.moonrise_tt[0], loc.rise_magnitude[0], "moonrise, eclipsed"),
                          (loc.moonset_tt[0], loc.set_magnitude[0], "moonset, eclipsed")):
        if np.isfinite(t):
            ut, ld, lt = _when(float(t) - dt / DAY_S, site)
            events.append({"event": label, "ut": ut, "local_date": ld, "local_time": lt, "altitude_deg": None,
                           "azimuth_deg": None, "up": True, "umbral_magnitude": round(float(mag), 4)})
    events.sort(key=lambda r: r["ut"])
    out = {"eclipse": info, "events": events}
    if windows:
        from .windows import lunar_windows

        out["delta_t_windows"] = _windows(lunar_windows(ecl, 0, site, deltat, span_s=span_s,
                                                        horizon_magnitude=horizon_magnitude))
    return out


def _num(x, nd):
    x = float(x)
    return round(x, nd) if np.isfinite(x) else None


def _windows(result):
    v, s = result["model_value_s"], result["sigma_s"]
    return {"model_value_s": round(v, 1), "sigma_s": round(s, 1), "scan_s": [round(v - result["span_s"], 1),
                                                                               round(v + result["span_s"], 1)],
            "conditions": [w.as_dict(v, s) for w in result["windows"]]}


def render(report, fmt, prov) -> str:
    """Render a report as text (table), JSON or CSV (the events only)."""
    from calendra.output import render_csv, render_json, render_table
    from calendra.provenance import footer_lines

    cols = ["event", "ut", "local_date", "local_time", "altitude_deg", "azimuth_deg", "up"]
    if fmt == "json":
        return render_json({**report, "provenance": prov})
    if fmt == "csv":
        return render_csv(report["events"], cols)
    lines = []
    width = max(len(k) for k in report["eclipse"])
    for k, v in report["eclipse"].items():
        lines.append(f"{k.ljust(width)}  {'-' if v is None else v}")
    lines.append("")
    lines.append(render_table(report["events"], cols, ["event", "UT", "local date", "local time", "alt (deg)",
                                                       "az (deg)", "up"]))
    win = report.get("delta_t_windows")
    if win:
        lines.append("")
        lines.append(f"delta T windows (model {win['model_value_s']:.1f} s +- {win['sigma_s']:.1f} s 1 sigma; "
                     f"scanned {win['scan_s'][0]:.0f}..{win['scan_s'][1]:.0f} s):")
        for c in win["conditions"]:
            spans = ", ".join(_interval_text(i) for i in c["intervals"]) or "never in the scanned range"
            mark = "  [model value inside]" if c["contains_model_value"] else ""
            lines.append(f"  {c['description']}: {spans}{mark}")
    line = report.get("central_line")
    if line:
        lines.append("")
        lines.append(f"central line: {len(line)} points from {line[0]['latitude_deg']:+.2f} {line[0]['longitude_deg']:+.2f} "
                     f"to {line[-1]['latitude_deg']:+.2f} {line[-1]['longitude_deg']:+.2f} (all points: --format json)")
    lines.append("")
    lines.extend(footer_lines(prov))
    return "\n".join(lines)


def _interval_text(i):
    def edge(x, sig):
        if x is None or not np.isfinite(x):
            return "..."
        return f"{x:.0f} s ({sig:+.2f} sigma)" if sig is not None else f"{x:.0f} s"

    return f"[{edge(i['from_s'], i['from_sigma'])}, {edge(i['to_s'], i['to_sigma'])}]"


def eclipse_command():
    """Build the click command ``eclipse``."""
    import click

    @click.command("eclipse")
    @click.argument("date")
    @click.option("--site", required=True, metavar="SITE", help="Observer: gazetteer name or LAT,LON[,ELEVATION_M].")
    @click.option("--kind", type=click.Choice(["lunar", "solar"]), default=None,
                  help="Kind of eclipse (default: the nearest of either kind).")
    @click.option("--delta-t", "deltat", default=None, metavar="MODEL", help="Delta-T model.")
    @click.option("--delta-t-window", "window", is_flag=True,
                  help="Also give the ranges of delta T for which the eclipse was seen, central/total, or rose/set eclipsed.")
    @click.option("--span", "span_s", type=float, default=None,
                  help="Half-width of the delta-T scan, seconds (default max(4 sigma, 1 h)).")
    @click.option("--min-magnitude", type=float, default=0.0, show_default=True,
                  help="Magnitude that counts as 'seen' in the delta-T windows (solar).")
    @click.option("--horizon-magnitude", type=float, default=0.0, show_default=True,
                  help="Magnitude required at sunrise/sunset (moonrise/moonset: umbral) in the windows.")
    @click.option("--shadow", type=click.Choice(["danjon", "chauvenet", "none"]), default="danjon", show_default=True,
                  help="Lunar shadow enlargement.")
    @click.option("--plot", "plot", default=None, metavar="FILE.png",
                  help="Draw the central line and the site (solar) or the Moon's altitude (lunar).")
    @click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table", show_default=True)
    def command(date, site, kind, deltat, window, span_s, min_magnitude, horizon_magnitude, shadow, plot, fmt):
        """Full local circumstances of the eclipse nearest DATE seen from SITE.

        DATE is any calendra date ('-584-05-28', '585 BC May 28', 'JD 1507900.3').
        """
        from calendra.dateparse import date_to_jd_tt
        from calendra.deltat import DEFAULT_MODEL, get_model
        from calendra.pluginmanager import get_host
        from calendra.provenance import build
        from calendra.sites import parse_site

        from .tables import HORIZON_NOTE, LUNAR_WARNING, TRACK_WARNING

        model = get_model(deltat or DEFAULT_MODEL)
        site_obj = parse_site(site)
        jd = date_to_jd_tt(date, get_host(), model)
        which, ecl = find(jd, kind, model, shadow)
        if which == "solar":
            report = solar_report(ecl, site_obj, model, window, span_s, min_magnitude, horizon_magnitude)
            warns = [TRACK_WARNING]
            models = {"eclipse geometry": "Besselian elements from apparent DE406 Sun and Moon"}
        else:
            report = lunar_report(ecl, site_obj, model, window, span_s, horizon_magnitude)
            warns = [LUNAR_WARNING]
            from .lunar import SHADOW_RULES
            models = {"eclipse shadow": SHADOW_RULES[shadow]}
        warns.append(HORIZON_NOTE)
        if window:
            warns.append("delta-T windows assume the eclipse is the one recorded and the site's position is right; "
                         "limb and refraction near the horizon move the rise/set edges by a few hundred seconds")
        prov = build(jd_tt=ecl.jd_tt, deltat=model, ephemeris=True, models=models, site=site_obj,
                     extra_warnings=warns)
        if plot:
            from .plots import plot_lunar, plot_solar

            if which == "solar":
                plot_solar(ecl, site_obj, report, plot, model)
            else:
                plot_lunar(ecl, site_obj, model, plot)
            click.echo(f"calendra: plot written to {plot}", err=True)
        click.echo(render(report, fmt, prov))

    return command
