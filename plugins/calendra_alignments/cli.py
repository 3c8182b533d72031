"""The ``calendra align`` command: alignments against the sky at their epochs.

Modes (chosen by the options given)::

    calendra align --site S --azimuth 118.5 --azimuth-error 0.5 --altitude 1.2 --epoch -2500
                   [--targets sun,moon,stars,venus] [--horizon FILE] [--both-directions] [--plot FILE]
    calendra align --batch structures.csv [--long] [--epoch-step 100] [--plot FILE]
    calendra align --star Aldebaran --rising --azimuth 72 --site S [--epoch -3000..0]
    calendra align --sun-date "-2500-06-21" [--site S]
    calendra align --list-targets --epoch -2500 [--site S]

Every mode prints a table (default), JSON or CSV (``--format``) with the
provenance: the refraction and obliquity formulas, the precession, the
ephemeris, and the cautions (refraction at the horizon, low skylines, stars
whose motion is extrapolated, the uncertainty of intent).
"""

from __future__ import annotations

import re

import click

_EPOCH_RE = re.compile(r"^\s*([+-]?\d+(?:\.\d*)?)\s*(?:(?:\.\.|:|/)\s*([+-]?\d+(?:\.\d*)?)\s*)?$")

INTENT = ("a measured azimuth of an old structure carries an uncertainty of intent (which direction was meant, "
          "which event, which part of the disc, whether it was aligned at all) that no computation removes")
REFRACTION_CAUTION = ("refraction near the horizon varies with the weather (inversions, mirages) by several "
                      "arcminutes and more: declinations from low skylines are uncertain by tenths of a degree "
                      "beyond the stated errors")


def parse_epochs(text, step=None):
    """Return the epoch grid of ``-2500`` or ``-3000..-1500`` (with ``step`` years, default 100)."""
    from calendra.errors import ParameterError

    from .targets import check_epochs

    m = _EPOCH_RE.match(str(text))
    if not m:
        raise ParameterError(f"--epoch {text!r}: give a year (-2500) or a range (-3000..-1500), astronomical years")
    a = float(m.group(1))
    if m.group(2) is None:
        return check_epochs([a]), a, a
    b = float(m.group(2))
    if b < a:
        raise ParameterError(f"--epoch {text!r}: the range must run forwards")
    from .batch import epoch_grid

    return epoch_grid([a], [b], 100.0 if step is None else float(step)), a, b


def _weather(site, temperature, pressure):
    from .geometry import STANDARD_PRESSURE_MBAR, standard_pressure

    t = float(site.temperature_C) if temperature is None and site is not None else (
        10.0 if temperature is None else float(temperature))
    if pressure is not None:
        p = float(pressure)
    elif site is not None and float(site.pressure_mbar) != STANDARD_PRESSURE_MBAR:
        p = float(site.pressure_mbar)
    else:
        p = float(standard_pressure(site.elevation_m if site is not None else 0.0))
    return t, p


def _horizon(site, altitude, horizon_file):
    """(Horizon of the skyline, altitude override at the azimuth or None)."""
    from calendra.errors import ParameterError

    from .geometry import Horizon

    if horizon_file:
        hz = Horizon.from_csv(horizon_file)
    elif site is not None:
        hz = Horizon.from_site(site)
    else:
        hz = Horizon.constant(0.0)
    if altitude is None:
        return hz, None
    if str(altitude).strip().lower() == "sea":
        if site is None:
            raise ParameterError("--altitude sea needs --site (the dip comes from its elevation)")
        h = site.eye_height_m if site.eye_height_m > 0 else site.elevation_m
        sea = Horizon.sea(h)
        return (hz if horizon_file else sea), float(sea.constant_deg)
    try:
        a = float(altitude)
    except ValueError:
        raise ParameterError(f"--altitude {altitude!r}: give degrees or 'sea'") from None
    if not -10.0 <= a <= 60.0:
        raise ParameterError(f"--altitude {a:g} is outside -10..60 degrees")
    return (hz if horizon_file else Horizon.constant(a)), a


def _models(opts, hz_text, t, p, intervals=None, targets=None, bodies=None):
    from .geometry import REFRACTION_MODELS

    m = {}
    refr = REFRACTION_MODELS[opts["refraction"]]
    m["refraction"] = refr + (f"; at {t:g} C, {p:.0f} mbar" if opts["refraction"] != "none" else "")
    m["geometry"] = ("sin dec = sin phi sin h + cos phi cos h cos A (Meeus eq. 13.5-13.6); parallax "
                     "sin p = sin pi cos h (spherical Earth); dip 1.76' sqrt(h / m) for sea horizons")
    m["horizon"] = hz_text
    if bodies:
        m["discs"] = "; ".join(bodies)
    if intervals:
        m["uncertainty"] = next(iter(intervals.values())).describe()
    if targets is not None:
        m.update({k: v for k, v in targets.models.items()})
        m["precession"] = ("Vondrak, Capitaine & Wallace (2011) long-term precession (ERFA ltpb/ltpecl/ltpequ)")
    return m


def _warnings(altitudes, targets=None, extra=(), matched=None):
    """The cautions of a result; ``matched`` (target rows) restricts the star cautions to those targets."""
    import numpy as np

    w = [INTENT, REFRACTION_CAUTION]
    alts = np.atleast_1d(np.asarray(altitudes, dtype=float))
    if alts.size and np.nanmin(alts) < 2.0:
        w.append(f"skyline altitude {np.nanmin(alts):+.2f} deg: below about 2 degrees refraction is least "
                 "predictable and extinction hides faint stars; treat star matches there with care")
    if targets is not None and matched is None:
        w += targets.warnings
    elif targets is not None:
        fast = sorted({targets.labels[j].split(" (")[0] for j in matched if targets.notes[j].startswith("nearby star")})
        if fast:
            w.append("proper motion extrapolated linearly over millennia for nearby fast stars: " + ", ".join(fast))
    return w + list(extra)


def _emit(fmt, tables, payload, provenance, title=""):
    """Print tables (list of (rows, columns, title)); JSON payload; CSV of the first table."""
    from calendra.output import render_csv, render_json, render_table

    if fmt == "json":
        payload = dict(payload)
        payload["provenance"] = provenance
        click.echo(render_json(payload))
        return
    if fmt == "csv":
        rows, cols, _ = tables[0]
        click.echo(render_csv(rows, cols), nl=False)
        return
    out = [title] if title else []
    for k, (rows, cols, sub) in enumerate(tables):
        last = k == len(tables) - 1
        if not rows:
            out.append(f"{sub}: none")
            if last:
                from calendra.provenance import footer_lines

                out += [""] + footer_lines(provenance)
            continue
        out.append(render_table(rows, cols, title=sub, provenance=provenance if last else None))
        out.append("")
    click.echo("\n".join(out).rstrip())


def align_command() -> click.Command:
    """Build the click command ``align``."""

    @click.command("align", short_help="Alignments of structures against the sky at their epochs.")
    @click.option("--site", default=None, metavar="SITE", help="A gazetteer name or LAT,LON[,ELEVATION_M].")
    @click.option("--azimuth", type=float, default=None, metavar="DEG",
                  help="Azimuth of the alignment, degrees from true north (a compass bearing with "
                       "--magnetic-declination).")
    @click.option("--azimuth-error", type=float, default=None, metavar="DEG",
                  help="Standard error of the azimuth, degrees (default 0.5, stated in the output).")
    @click.option("--magnetic-declination", type=float, default=None, metavar="DEG",
                  help="The azimuth is a compass bearing: add this magnetic declination (degrees, east positive).")
    @click.option("--magnetic-declination-error", type=float, default=0.0, show_default=True, metavar="DEG",
                  help="Standard error of the magnetic declination, degrees.")
    @click.option("--altitude", default=None, metavar="DEG|sea",
                  help="Apparent altitude of the skyline at the azimuth, degrees, or 'sea' (dip from the "
                       "site's elevation).  Default: the --horizon profile or the site's horizon.")
    @click.option("--altitude-error", type=float, default=None, metavar="DEG",
                  help="Standard error of the altitude, degrees (default 0.2, stated in the output).")
    @click.option("--horizon", "horizon_file", default=None, metavar="FILE",
                  help="Horizon profile CSV (azimuth, altitude in degrees; linear, periodic interpolation).")
    @click.option("--epoch", default=None, metavar="YEAR|Y1..Y2",
                  help="Epoch or range of epochs, astronomical years (default -3000..3000).")
    @click.option("--epoch-step", type=float, default=None, metavar="YEARS",
                  help="Grid step of a range (default 100; 1 for --star).")
    @click.option("--targets", "targets_spec", default=None, metavar="LIST",
                  help="Targets: sun, moon, stars, venus, moon-de406, all, or star names (default "
                       "sun,moon,stars,venus).")
    @click.option("--limb", type=click.Choice(["upper", "centre", "lower"]), default="upper", show_default=True,
                  help="Point of the Sun's and Moon's disc at the skyline.")
    @click.option("--moon-distance", type=click.Choice(["range", "mean", "perigee", "apogee"]), default="range",
                  show_default=True, help="Moon distance for its parallax (range: perigee to apogee).")
    @click.option("--extinction-angle", type=float, default=0.0, show_default=True, metavar="DEG",
                  help="Apparent altitude above the skyline at which stars and planets are seen.")
    @click.option("--refraction", type=click.Choice(["bennett", "none"]), default="bennett", show_default=True,
                  help="Refraction model (Bennett 1982 with temperature and pressure).")
    @click.option("--temperature", type=float, default=None, metavar="C", help="Air temperature (default: the site's, 10 C).")
    @click.option("--pressure", type=float, default=None, metavar="MBAR",
                  help="Air pressure (default: the standard atmosphere at the site's elevation).")
    @click.option("--level", type=float, default=2.0, show_default=True, metavar="K",
                  help="The declination interval covers K standard errors.")
    @click.option("--method", type=click.Choice(["analytic", "montecarlo"]), default="analytic", show_default=True,
                  help="Error propagation: analytic partial derivatives or Monte Carlo (fixed seed).")
    @click.option("--obliquity", "obliquity_model", type=click.Choice(["vondrak2011", "laskar1986", "iau2006"]),
                  default="vondrak2011", show_default=True, help="Obliquity of the ecliptic.")
    @click.option("--both-directions", is_flag=True, help="Also test the opposite direction (azimuth + 180).")
    @click.option("--back-altitude", type=float, default=None, metavar="DEG",
                  help="Skyline altitude of the opposite direction (default: the profile, else --altitude).")
    @click.option("--batch", "batch_file", default=None, metavar="FILE", help="A CSV of structures (see the docs).")
    @click.option("--long", "long_rows", is_flag=True, help="Batch: one row per match instead of one per structure.")
    @click.option("--star", default=None, metavar="NAME", help="In which years did this star rise/set at --azimuth?")
    @click.option("--rising/--setting", default=True, help="With --star: rising (default) or setting.")
    @click.option("--tolerance", type=float, default=None, metavar="DEG",
                  help="With --star: half-width of the azimuth window (default LEVEL x azimuth error).")
    @click.option("--sun-date", default=None, metavar="DATE",
                  help="The Sun's declination on this date (local mean noon unless a time is given).")
    @click.option("--list-targets", is_flag=True, help="List the targets' declinations (and azimuths at --site).")
    @click.option("--plot", "plot_path", default=None, metavar="FILE",
                  help="Also draw a figure (PNG, PDF, SVG): horizon diagram and declination against epoch; "
                       "a declination histogram for --batch; azimuth against year for --star.")
    @click.option("--delta-t", "deltat", default=None, metavar="MODEL", help="Delta-T model (for civil days).")
    @click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table",
                  show_default=True, help="Output format.")
    def align(**o):
        """Alignment analysis: from a measured azimuth to the sky targets it could have pointed at.

        The azimuth and the apparent altitude of the skyline (a number, 'sea', or a profile) give a
        declination for a point target, for the Sun and for the Moon (limb, semi-diameter, parallax),
        with an interval from the survey errors.  Targets at the epochs: solstices, equinoxes (four
        definitions), cross-quarter days, lunar standstill limits, Venus' extremes and bright stars.
        """
        from calendra.deltat import DEFAULT_MODEL, get_model
        from calendra.errors import ParameterError

        o["deltat_model"] = get_model(o["deltat"] or DEFAULT_MODEL)
        site = None
        if o["site"]:
            from calendra.sites import parse_site

            site = parse_site(o["site"])
        o["site_obj"] = site
        modes = [k for k in ("batch_file", "star", "sun_date") if o[k]] + (["list_targets"] if o["list_targets"] else [])
        if len(modes) > 1:
            raise ParameterError("choose one of --batch, --star, --sun-date, --list-targets")
        for k in ("azimuth_error", "altitude_error", "magnetic_declination_error", "tolerance"):
            if o[k] is not None and not o[k] >= 0:
                raise ParameterError(f"--{k.replace('_', '-')} must be >= 0 degrees")
        if modes == ["batch_file"]:
            return _batch(o)
        if modes == ["star"]:
            return _star(o)
        if modes == ["sun_date"]:
            return _sun_date(o)
        if modes == ["list_targets"]:
            return _list_targets(o)
        if o["azimuth"] is None or site is None:
            raise ParameterError("give --site and --azimuth (or --batch, --star, --sun-date, --list-targets)")
        return _single(o)

    return align


# ---------------------------------------------------------------------------- modes

def _sigmas(o):
    from .batch import DEFAULT_ALTITUDE_SIGMA, DEFAULT_AZIMUTH_SIGMA

    notes = []
    sa = o["azimuth_error"]
    if sa is None:
        sa = DEFAULT_AZIMUTH_SIGMA
        notes.append(f"azimuth error not given: {sa} deg assumed")
    sh = o["altitude_error"]
    if sh is None:
        sh = DEFAULT_ALTITUDE_SIGMA
        notes.append(f"altitude error not given: {sh} deg assumed")
    return sa, sh, notes


def _true_azimuth(o):
    import math

    from .uncertainty import true_azimuth

    if o["magnetic_declination"] is None:
        return float(o["azimuth"]) % 360.0, 0.0, ""
    a = float(true_azimuth(o["azimuth"], o["magnetic_declination"]))
    return a, float(o["magnetic_declination_error"] or 0.0), (
        f"compass bearing {o['azimuth']:g} + magnetic declination {o['magnetic_declination']:+g} "
        f"= true azimuth {a:.3f}" + (f" (error {math.hypot(0, o['magnetic_declination_error']):g})"
                                     if o["magnetic_declination_error"] else ""))


def _single(o):
    import math

    import numpy as np

    from calendra.provenance import build

    from . import targets as T
    from .batch import BatchResult, Survey, run
    from .matching import Alignments, bodies

    site = o["site_obj"]
    hz, alt_over = _horizon(site, o["altitude"], o["horizon_file"])
    az, s_md, comp = _true_azimuth(o)
    sa, sh, notes = _sigmas(o)
    sa = math.hypot(sa, s_md)
    if comp:
        notes.insert(0, comp)
    grid, e0, e1 = parse_epochs(o["epoch"] or "-3000..3000", o["epoch_step"])
    t, p = _weather(site, o["temperature"], o["pressure"])
    dirs = [("forward", az, alt_over)]
    if o["both_directions"]:
        back = o["back_altitude"]
        if back is None and hz.is_constant and alt_over is not None:
            back = alt_over
            notes.append("back altitude taken equal to the forward one")
        dirs.append(("back", (az + 180.0) % 360.0, back))
    parts = [Alignments.single(a, site.latitude_deg, hz, longitude_deg=site.east_longitude_deg,
                               elevation_m=site.elevation_m, azimuth_sigma_deg=sa, altitude_sigma_deg=sh,
                               altitude_deg=alt, epoch_from=e0, epoch_to=e1, temperature_C=t, pressure_mbar=p,
                               name=d) for d, a, alt in dirs]
    al = _concat(parts)
    survey = Survey(al, [site.name] * len(al), [d for d, _, _ in dirs], ["; ".join(notes)] * len(al))
    groups, stars = T.parse_groups(o["targets_spec"])
    res: BatchResult = run(survey, epochs=grid, groups=groups, stars=stars, limb=o["limb"],
                           moon_distance=o["moon_distance"], extinction_deg=o["extinction_angle"], level=o["level"],
                           method=o["method"], obliquity_model=o["obliquity_model"], refraction_model=o["refraction"],
                           deltat=o["deltat_model"], longitude_deg=site.east_longitude_deg)
    tg, iv, m = res.targets, res.intervals, res.matches
    b = bodies(o["limb"], "mean" if o["moon_distance"] == "range" else o["moon_distance"], o["extinction_angle"])
    decl_rows = []
    events = al.direction()
    for i in range(len(al)):
        for kind in ("star", "sun", "moon"):
            if kind not in iv:
                continue
            x = iv[kind]
            decl_rows.append({"direction": dirs[i][0], "event": str(events[i]), "azimuth": round(float(al.azimuth_deg[i]), 3),
                              "altitude": round(float(al.altitude_deg[i]), 3), "kind": kind,
                              "dec": round(float(x.dec[i]), 3), "sigma": round(float(x.sigma[i]), 3),
                              "dec_lo": round(float(x.lo[i]), 3), "dec_hi": round(float(x.hi[i]), 3),
                              "d_dec_d_az": round(float(x.d_dec_d_az[i]), 4),
                              "d_dec_d_alt": round(float(x.d_dec_d_alt[i]), 4)})
    from .targets import rise_set_azimuths

    rs = rise_set_azimuths(tg, site.latitude_deg, hz, limb=o["limb"],
                           moon_distance="mean" if o["moon_distance"] == "range" else o["moon_distance"],
                           extinction_deg=o["extinction_angle"], refraction_model=o["refraction"],
                           temperature_C=t, pressure_mbar=p)
    mrows = []
    for k in range(len(m)):
        i, j = int(m.alignment[k]), int(m.target[k])
        e = int(np.nonzero(tg.epochs == m.epoch_best[k])[0][0])
        side = "rise" if events[i] == "rising" else "set"
        mrows.append({"direction": dirs[i][0], "event": str(events[i]), "target": tg.ids[j], "kind": str(tg.kinds[j]),
                      "epoch_first": float(m.epoch_first[k]), "epoch_last": float(m.epoch_last[k]),
                      "epoch_best": float(m.epoch_best[k]), "dec_target": round(float(m.dec_target[k]), 3),
                      "dec_alignment": round(float(m.dec_alignment[k]), 3),
                      "offset_deg": round(float(m.offset_deg[k]), 3), "offset_sigma": round(float(m.offset_sigma[k]), 2),
                      "margin_deg": round(float(m.margin_deg[k]), 3),
                      "target_azimuth": round(float(rs[f"az_{side}"][j, e]), 3), "label": tg.labels[j]})
    hz_text = hz.describe() + (f"; altitude {alt_over:+.3f} given at the azimuth" if alt_over is not None else "")
    prov = build(deltat=None, ephemeris=_uses_ephemeris(groups), site=site,
                 models=_models(o, hz_text, t, p, iv, tg, [bb.describe() for k, bb in b.items() if k in ("sun", "moon")]),
                 extra_warnings=_warnings(al.altitude_deg, tg, notes, matched=set(m.target.tolist())))
    title = (f"Alignment at {site.name} (latitude {site.latitude_deg:+.4f}): true azimuth {az:.3f} +- {sa:.3g}, "
             f"skyline {float(al.altitude_deg[0]):+.3f} +- {sh:.3g} deg; epochs {e0:g}..{e1:g} "
             f"({tg.epochs.size} grid epochs); interval +-{o['level']:g} sigma")
    dcols = ["direction", "event", "azimuth", "altitude", "kind", "dec", "sigma", "dec_lo", "dec_hi",
             "d_dec_d_az", "d_dec_d_alt"]
    mcols = ["direction", "event", "target", "kind", "epoch_first", "epoch_last", "epoch_best", "dec_target",
             "dec_alignment", "offset_deg", "offset_sigma", "margin_deg", "target_azimuth", "label"]
    payload = {"alignment": {"site": site.name, "latitude_deg": site.latitude_deg, "azimuth_deg": az,
                             "azimuth_sigma_deg": sa, "altitude_sigma_deg": sh, "epochs": [e0, e1],
                             "notes": notes},
               "declinations": decl_rows, "matches": mrows}
    _emit(o["fmt"], [(mrows, mcols, "Matching targets (degrees; offset = target - alignment)"),
                     (decl_rows, dcols, "Declinations of the alignment (degrees)")] if o["fmt"] == "csv" else
          [(decl_rows, dcols, "Declinations of the alignment (degrees)"),
           (mrows, mcols, "Matching targets (degrees; offset = target - alignment; margin > 0: inside)")],
          payload, prov, title)
    if o["plot_path"]:
        from .plots import plot_alignment

        ep = 0.5 * (e0 + e1)
        plot_alignment(o["plot_path"], al, 0, iv, tg, m, epoch_index=int(np.argmin(np.abs(tg.epochs - ep))),
                       limb=o["limb"], moon_distance="mean" if o["moon_distance"] == "range" else o["moon_distance"],
                       extinction_deg=o["extinction_angle"], refraction_model=o["refraction"],
                       title=f"{site.name}: azimuth {az:.2f}")
        _wrote(o["plot_path"])


def _wrote(path):
    import sys

    sys.stdout.flush()
    click.echo(f"calendra: wrote {path}", err=True)


def _uses_ephemeris(groups) -> bool:
    return any(g in groups for g in ("sun", "venus", "moon-de406"))


def _concat(parts):
    import numpy as np

    from .matching import Alignments

    if len(parts) == 1:
        return parts[0]
    kw = {}
    for f in Alignments.__dataclass_fields__:
        vals = [getattr(p, f) for p in parts]
        kw[f] = np.concatenate(vals) if isinstance(vals[0], np.ndarray) else sum((list(v) for v in vals), [])
    return Alignments(**kw)


def _batch(o):
    import numpy as np

    from calendra.provenance import build

    from . import batch as B
    from . import targets as T

    survey = B.read_structures(o["batch_file"])
    groups, stars = T.parse_groups(o["targets_spec"])
    epochs = None
    if o["epoch"]:
        epochs, _, _ = parse_epochs(o["epoch"], o["epoch_step"])
    res = B.run(survey, step=o["epoch_step"] or 100.0, groups=groups, stars=stars, limb=o["limb"],
                moon_distance=o["moon_distance"], extinction_deg=o["extinction_angle"], level=o["level"],
                method=o["method"], obliquity_model=o["obliquity_model"], refraction_model=o["refraction"],
                epochs=epochs, deltat=o["deltat_model"])
    al = survey.alignments
    extra = []
    if survey.assumed.get("azimuth_sigma"):
        extra.append(f"{survey.assumed['azimuth_sigma']} structure(s) without an azimuth error: "
                     f"{B.DEFAULT_AZIMUTH_SIGMA} deg assumed")
    if survey.assumed.get("altitude_sigma"):
        extra.append(f"{survey.assumed['altitude_sigma']} structure(s) without an altitude error: "
                     f"{B.DEFAULT_ALTITUDE_SIGMA} deg assumed")
    if survey.assumed.get("back_altitude"):
        extra.append(f"{survey.assumed['back_altitude']} back direction(s) without their own skyline altitude: "
                     "the forward altitude was used")
    n_t = len(res.targets)
    extra.append(f"significance: {len(al)} directions x {n_t} targets x {res.targets.epochs.size} epochs were "
                 f"compared; matches at +-{o['level']:g} sigma occur by chance too -- a distribution of "
                 "declinations means something only against a null model (the histogram's dashed curve) and a "
                 "survey that chose its structures without regard to orientation")
    profiles = sorted({h.describe() for h in al.horizons if h.points})
    n_const = sum(1 for h in al.horizons if not h.points and not h.label.startswith("sea"))
    n_sea = sum(1 for h in al.horizons if h.label.startswith("sea"))
    hz_text = "; ".join(profiles + ([f"{n_const} direction(s) with a constant skyline altitude"] if n_const else [])
                        + ([f"{n_sea} sea horizon(s) (dip 1.76' sqrt(h))"] if n_sea else []))
    b = B.match_rows(res) if o["long_rows"] else B.summary_rows(res)
    cols = B.MATCH_COLUMNS if o["long_rows"] else B.SUMMARY_COLUMNS
    if o["fmt"] == "table" and not o["long_rows"]:
        cols = [c for c in cols if c not in ("structure", "notes")]
    models = _models({"refraction": o["refraction"]}, hz_text,
                     float(np.median(al.temperature_C)), float(np.median(al.pressure_mbar)), res.intervals,
                     res.targets)
    models["refraction"] = models["refraction"].split("; at ")[0] + "; per structure: its temperature and pressure"
    prov = build(ephemeris=_uses_ephemeris(groups), models=models,
                 extra_warnings=_warnings(al.altitude_deg, res.targets, extra))
    payload = {"source": survey.source, "structures": B.summary_rows(res), "matches": B.match_rows(res),
               "epochs": res.targets.epochs.tolist()}
    title = (f"{len(set(survey.structure))} structures ({len(al)} directions) from {survey.source}; "
             f"{n_t} targets at {res.targets.epochs.size} epochs; interval +-{o['level']:g} sigma")
    _emit(o["fmt"], [(b, cols, "Matches" if o["long_rows"] else "Structures")], payload, prov, title)
    if o["plot_path"]:
        from .plots import plot_histogram

        plot_histogram(o["plot_path"], al, res.intervals["star"], res.targets)
        _wrote(o["plot_path"])


def _star(o):
    import numpy as np

    from calendra.errors import ParameterError
    from calendra.provenance import build

    from . import targets as T
    from .matching import star_years

    site = o["site_obj"]
    if site is None or o["azimuth"] is None:
        raise ParameterError("--star needs --site and --azimuth")
    hz, alt_over = _horizon(site, o["altitude"], o["horizon_file"])
    if alt_over is not None:
        from .geometry import Horizon

        hz = Horizon.constant(alt_over) if not o["horizon_file"] else hz
    az, s_md, comp = _true_azimuth(o)
    sa = o["azimuth_error"]
    if o["tolerance"] is not None:
        tol = float(o["tolerance"])
        tol_text = f"tolerance {tol:g} deg (given)"
    else:
        from .batch import DEFAULT_AZIMUTH_SIGMA

        s = float(np.hypot(DEFAULT_AZIMUTH_SIGMA if sa is None else sa, s_md))
        tol = o["level"] * s
        tol_text = (f"tolerance {o['level']:g} x {s:.3g} = {tol:.3g} deg" +
                    (" (azimuth error 0.5 assumed)" if sa is None else ""))
    spec = o["epoch"] or "-3000..3000"
    _, e0, e1 = parse_epochs(spec, 1.0)
    step = o["epoch_step"] or 1.0
    years = np.arange(e0, e1 + 1e-9, step)
    t, p = _weather(site, o["temperature"], o["pressure"])
    sy = star_years(o["star"], site.latitude_deg, az, hz, rising=o["rising"], years=years, tolerance_deg=tol,
                    extinction_deg=o["extinction_angle"], refraction_model=o["refraction"], temperature_C=t,
                    pressure_mbar=p)
    rows = []
    for a, b in sy.runs:
        inside = [(c, r) for c, r in zip(sy.crossings, sy.rate_deg_per_century) if a - step <= c <= b + step]
        k0, k1 = np.searchsorted(sy.years, a), np.searchsorted(sy.years, b)
        rows.append({"from_year": a, "to_year": b, "years": int(round((b - a) / step)) + 1,
                     "crossing_year": round(float(inside[0][0]), 1) if inside else None,
                     "rate_deg_per_century": round(float(inside[0][1]), 4) if inside else None,
                     "azimuth_from": round(float(sy.azimuth[k0]), 3), "azimuth_to": round(float(sy.azimuth[k1]), 3),
                     "declination_at_from": round(float(sy.declination[k0]), 3)})
    finite = np.isfinite(sy.azimuth)
    closest = None
    if finite.any():
        d = np.abs((sy.azimuth - sy.target_azimuth + 180.0) % 360.0 - 180.0)
        d[~finite] = np.inf
        k = int(np.argmin(d))
        closest = {"year": float(sy.years[k]), "azimuth": float(sy.azimuth[k]), "difference_deg": float(d[k])}
    notes = [tol_text] + ([comp] if comp else [])
    rec = T.star_records([o["star"]])[0]
    fast = T.fast_star_note(rec)
    prov = build(site=site, models={**_models(o, hz.describe(), t, p),
                                    "star": T.build_targets([0.0], (), [o["star"]]).models["stars"],
                                    "precession": "Vondrak, Capitaine & Wallace (2011) (ERFA ltpb)"},
                 extra_warnings=_warnings(hz.altitude(az), None, notes + ([fast] if fast else [])))
    title = (f"{sy.star} {'rising' if sy.rising else 'setting'} at azimuth {az:.3f} at {site.name} "
             f"(latitude {site.latitude_deg:+.4f}), years {e0:g}..{e1:g} every {step:g}; {tol_text}")
    if not rows:
        near = (f"closest: year {closest['year']:g}, azimuth {closest['azimuth']:.3f} "
                f"({closest['difference_deg']:.3f} deg away)" if closest else
                f"{sy.star} does not {'rise' if sy.rising else 'set'} on this skyline in these years")
        title += "\n" + near
    payload = {"star": sy.star, "rising": sy.rising, "azimuth_deg": az, "tolerance_deg": tol, "runs": rows,
               "crossings": sy.crossings.tolist(), "closest": closest}
    _emit(o["fmt"], [(rows, ["from_year", "to_year", "years", "crossing_year", "rate_deg_per_century",
                             "azimuth_from", "azimuth_to", "declination_at_from"],
                      "Years within the azimuth window")], payload, prov, title)
    if o["plot_path"]:
        from .plots import plot_star_years

        plot_star_years(o["plot_path"], sy, title=f"{sy.star} at {site.name}")
        _wrote(o["plot_path"])


def _sun_date(o):
    from calendra.dateparse import parse_date, resolve_dates
    from calendra.pluginmanager import get_host
    from calendra.provenance import build

    from .matching import sun_declination_on

    site = o["site_obj"]
    host = get_host()
    spec = parse_date(o["sun_date"], host)
    res = resolve_dates([spec], host, o["deltat_model"], site)
    jd_tt = float(res.jd_tt[0])
    when = "at the time given"
    if spec.fraction is None and spec.jd is None:
        jd_tt += 0.5                 # 0h civil time -> noon
        when = "at local mean noon" if site is not None else "at 12h UT"
    hz = None
    lat = None
    t = p = None
    if site is not None:
        hz, alt_over = _horizon(site, o["altitude"], o["horizon_file"])
        if alt_over is not None and not o["horizon_file"]:
            from .geometry import Horizon

            hz = Horizon.constant(alt_over)
        lat = site.latitude_deg
        t, p = _weather(site, o["temperature"], o["pressure"])
    out = sun_declination_on(jd_tt, lat, hz if hz is not None else 0.0, limb=o["limb"],
                             refraction_model=o["refraction"], temperature_C=t or 10.0, pressure_mbar=p or 1010.0)
    jd_ut = float(o["deltat_model"].ut_from_tt(jd_tt))
    row = {"date": o["sun_date"], "when": when, "jd_tt": round(jd_tt, 5), "jd_ut": round(jd_ut, 5),
           "dec": round(float(out["dec"]), 4), "daily_change": round(float(out["daily_change_deg"]), 4),
           "distance_au": round(float(out["distance_au"]), 6)}
    cols = ["date", "when", "jd_tt", "jd_ut", "dec", "daily_change", "distance_au"]
    if lat is not None:
        row["azimuth_rise"] = round(float(out["azimuth_rise"]), 3)
        row["azimuth_set"] = round(float(out["azimuth_set"]), 3)
        cols += ["azimuth_rise", "azimuth_set"]
    models = {"sun": "apparent geocentric declination from DE406 (light time, aberration, Vondrak 2011 "
                     "precession, IAU 2000B nutation)"}
    if lat is not None:
        models.update(_models(o, hz.describe(), t, p))
    prov = build(jd_tt=[jd_tt], deltat=o["deltat_model"], ephemeris=True, site=site, models=models,
                 extra_warnings=[REFRACTION_CAUTION] if lat is not None else [])
    _emit(o["fmt"], [([row], cols, f"The Sun on {o['sun_date']} ({when}; degrees)")], {"sun": row}, prov)


def _list_targets(o):
    import numpy as np

    from calendra.provenance import build

    from . import targets as T

    site = o["site_obj"]
    grid, e0, e1 = parse_epochs(o["epoch"] or "-2000", o["epoch_step"])
    groups, stars = T.parse_groups(o["targets_spec"])
    tg = T.build_targets(grid, groups, stars, obliquity_model=o["obliquity_model"],
                         longitude_deg=site.east_longitude_deg if site is not None else None,
                         deltat=o["deltat_model"])
    rs = None
    hz = None
    t = p = None
    if site is not None:
        hz, alt_over = _horizon(site, o["altitude"], o["horizon_file"])
        if alt_over is not None and not o["horizon_file"]:
            from .geometry import Horizon

            hz = Horizon.constant(alt_over)
        t, p = _weather(site, o["temperature"], o["pressure"])
        rs = T.rise_set_azimuths(tg, site.latitude_deg, hz, limb=o["limb"],
                                 moon_distance="mean" if o["moon_distance"] == "range" else o["moon_distance"],
                                 extinction_deg=o["extinction_angle"], refraction_model=o["refraction"],
                                 temperature_C=t, pressure_mbar=p)
    rows = []
    for j in range(len(tg)):
        for e in range(tg.epochs.size):
            r = {"target": tg.ids[j], "kind": str(tg.kinds[j]), "epoch": float(tg.epochs[e]),
                 "dec": round(float(tg.dec[j, e]), 4),
                 "halfwidth": round(float(tg.halfwidth[j, e]), 3) if tg.halfwidth[j, e] else None,
                 "dec_ephemeris": None if np.isnan(tg.dec_ephemeris[j, e]) else round(float(tg.dec_ephemeris[j, e]), 4),
                 "label": tg.labels[j]}
            if rs is not None:
                for k in ("az_rise", "az_set", "point_dec_rise"):
                    v = rs[k][j, e]
                    r[k] = None if np.isnan(v) else round(float(v), 3)
            rows.append(r)
    cols = ["target", "kind", "epoch", "dec", "halfwidth", "dec_ephemeris"]
    if rs is not None:
        cols += ["az_rise", "az_set", "point_dec_rise"]
    cols.append("label")
    models = dict(tg.models)
    if site is not None:
        models.update(_models(o, hz.describe(), t, p))
    prov = build(ephemeris=_uses_ephemeris(groups), site=site, models=models,
                 extra_warnings=tg.warnings + ([REFRACTION_CAUTION] if site is not None else []))
    title = (f"Targets at epoch{'s' if tg.epochs.size > 1 else ''} {e0:g}" + (f"..{e1:g}" if e1 != e0 else "")
             + (f" at {site.name} (latitude {site.latitude_deg:+.4f}; {o['limb']} limb of Sun and Moon)"
                if site is not None else " (geocentric declinations)"))
    _emit(o["fmt"], [(rows, cols, "Targets (degrees; point_dec_rise: declination of the skyline point where "
                                  "the target is seen rising)")], {"targets": rows}, prov, title)
