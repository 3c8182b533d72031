"""Hook implementations of the stars plugin: the ``heliacal`` detector and the ``stars`` command.

``calendra events heliacal --object Sirius --site 31.2,29.9 --from -3000 --to 0
--phase rising --method arcus [--k 0.25] [--arcus 9] [--plot out.png]
[--calendar egyptian]``

One row per occurrence (normally one a year).  ``--plot PATH`` also draws the
day of the year of each event against the year (PNG, needs matplotlib), with
the band of dates across ``--k-min`` .. ``--k-max`` for the physical method.
"""

from __future__ import annotations

from calendra.detector import Detector, Parameter
from calendra.hookspecs import hookimpl

_PHASES = ("rising", "setting", "acronychal", "cosmical", "first-east", "last-east", "first-west", "last-west")


class HeliacalDetector(Detector):
    """Heliacal, acronychal and cosmical phenomena of a star or planet at a site."""

    name = "heliacal"
    title = "Heliacal, acronychal and cosmical risings and settings of stars and planets"
    description = (
        "rising: first morning the object is seen rising before sunrise (heliacal rising); "
        "setting: last evening it is seen setting after sunset (heliacal setting); "
        "acronychal: last evening it is seen rising after sunset; "
        "cosmical: first morning it is seen setting before sunrise; "
        "first-east/last-east/first-west/last-west: first/last morning rising and evening setting "
        "of a planet.  Method arcus: seen when the Sun's centre is at least the arcus visionis "
        "below the horizon at the object's apparent rising/setting (default Krauss 1985 "
        "10.5 + 1.4 V for stars, Ptolemy's values for planets).  Method physical: extinction, "
        "sky brightness and eye threshold after Schaefer; the band of dates for k-min..k-max "
        "is reported.  Dates are the local (mean time) civil day of the event.")
    needs_site = True
    parameters = (
        Parameter("object", "str", None, "star name, Bayer/Flamsteed designation, 'HIP n', or a planet", required=True),
        Parameter("phase", "choice", "rising", "which phenomenon", choices=_PHASES),
        Parameter("method", "choice", "arcus", "visibility method", choices=("arcus", "physical")),
        Parameter("k", "float", 0.25, "extinction coefficient, V mag per air mass (physical method)"),
        Parameter("k_min", "float", 0.15, "lower end of the extinction band (physical method)"),
        Parameter("k_max", "float", 0.40, "upper end of the extinction band (physical method)"),
        Parameter("arcus", "float", None, "arcus visionis in degrees (arcus method; default by magnitude)"),
        Parameter("altitude", "float", 0.0, "apparent altitude above the horizon at which the object counts as risen, deg"),
        Parameter("plot", "str", None, "also draw date against year into this PNG file"),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, object, phase, method, k,
                k_min, k_max, arcus, altitude, plot):
        import numpy as np

        from calendra.errors import ParameterError
        from calendra.events import Column, EventTable
        from calendra.provenance import build

        from . import catalogue, heliacal, positions

        target = heliacal.Target.from_name(object)
        if phase in ("last-east", "first-west") and target.kind == "star":
            raise ParameterError(f"phase {phase} applies to planets (an inner planet around superior conjunction)")
        if method == "physical" and not (0.0 < k_min <= k <= k_max):
            raise ParameterError("the physical method needs 0 < k-min <= k <= k-max")
        opts = {"arcus": arcus} if method == "arcus" else {"k": k}
        ev = heliacal.find_phases(target, site, jd_tt_start, jd_tt_end, phase, method, deltat=deltat,
                                  extra_alt=altitude, progress=progress, **opts)
        cols = {"jd_tt": ev["jd_tt"], "jd_ut": ev["jd_ut"],
                "kind": np.array([phase] * len(ev["jd_tt"]), dtype="O")}
        cal_year, local = _local_dates(ev["event_jdn"])
        cols["local_date"] = local
        cols["year"] = cal_year
        cols["sun_alt"] = np.round(ev["sun_alt"], 2)
        cols["obj_alt"] = np.round(ev["obj_alt"], 2)
        cols["obj_az"] = np.round(ev["obj_az"], 2)
        cols["v_mag"] = np.round(ev["v_mag"], 2)
        meta = {
            "jd_tt": Column("jd_tt", "d", "instant of the object's apparent rising/setting that night, TT"),
            "jd_ut": Column("jd_ut", "d", "the same instant, UT1"),
            "local_date": Column("local_date", "", "civil day of the event, local mean time at the site "
                                 "(julian before 1582-10-15, gregorian after; astronomical years)"),
            "year": Column("year", "", "astronomical year of local_date"),
            "sun_alt": Column("sun_alt", "deg", "true altitude of the Sun's centre at the object's rising/setting"),
            "obj_alt": Column("obj_alt", "deg", "apparent altitude of the object at that instant"),
            "obj_az": Column("obj_az", "deg", "azimuth of the object, from north through east"),
            "v_mag": Column("v_mag", "mag", "V magnitude of the object"),
        }
        meth = heliacal.get_method(method)
        if method == "arcus":
            cols["arcus"] = np.round(ev["arcus_deg"], 2)
            cols["margin"] = np.round(ev["margin"], 2)
            meta["arcus"] = Column("arcus", "deg", "arcus visionis used")
            meta["margin"] = Column("margin", "deg", "Sun's depression minus the arcus visionis")
        else:
            lo, hi = heliacal.k_band(target, site, jd_tt_start, jd_tt_end, phase, ev, (k_min, k_max),
                                     deltat=deltat, extra_alt=altitude)
            a, b = np.fmin(lo, hi), np.fmax(lo, hi)
            cols["best_alt"] = np.round(ev["best_alt"], 2)
            cols["best_sun_alt"] = np.round(ev["best_sun_alt"], 2)
            cols["k_band_first"] = np.round(a - ev["jd_tt"], 1)
            cols["k_band_last"] = np.round(b - ev["jd_tt"], 1)
            meta["best_alt"] = Column("best_alt", "deg", "apparent altitude of the object at its best moment")
            meta["best_sun_alt"] = Column("best_sun_alt", "deg", "Sun's altitude at that moment")
            meta["k_band_first"] = Column("k_band_first", "d", f"earliest date across k = {k_min:g}..{k_max:g}, "
                                          "days from the date (NaN: not seen at that k)")
            meta["k_band_last"] = Column("k_band_last", "d", f"latest date across k = {k_min:g}..{k_max:g}, days from the date")
        models = dict(positions.MODELS)
        models["phenomenon"] = heliacal.PHASE_TITLES[phase]
        models["visibility"] = meth.describe(target, **({"arcus": arcus} if method == "arcus" else
                                                        {"k": k, "k_range": (k_min, k_max)}))
        models["object"] = _object_text(target)
        models.update(catalogue.provenance())
        horizon = ("Site.horizon_altitude (surveyed profile, or the dip of a flat horizon)"
                   if positions.horizon_altitude_function(site) else
                   "flat horizon at eye level (the Site gives no horizon)")
        models["horizon"] = horizon
        warnings = [
            "visibility criteria are empirical and extinction varies from night to night: "
            "dates are uncertain by a few days (see the k band of the physical method)",
            "refraction at the horizon varies with the weather by several arcminutes",
        ]
        if method == "physical":
            warnings.append("physical model: coefficients checked against transcriptions of Schaefer's 1998 "
                            "program and his 1990 threshold law, not against the printed articles; one air mass "
                            "for the total k; the Moon and the object's colour are ignored")
        prov = build(jd_tt=ev["jd_tt"] if len(ev["jd_tt"]) else [jd_tt_start, jd_tt_end], deltat=deltat,
                     ephemeris=True, models=models, site=site, extra_warnings=warnings)
        table = EventTable(cols, meta, prov)
        if plot:
            plot_phases(table, plot, target.label, phase, method)
        return table


def _local_dates(jdn):
    """(astronomical year, 'YYYY-MM-DD (cal)') of civil day numbers: julian before 1582-10-15, gregorian after."""
    import numpy as np

    from calendra.julian_gregorian import gregorian_from_jdn, julian_from_jdn

    jdn = np.asarray(jdn, dtype=np.int64)
    jy, jm, jd = julian_from_jdn(jdn)
    gy, gm, gd = gregorian_from_jdn(jdn)
    greg = jdn >= 2299161
    y = np.where(greg, gy, jy)
    m = np.where(greg, gm, jm)
    d = np.where(greg, gd, jd)
    text = np.array([f"{int(a):+05d}-{int(b):02d}-{int(c):02d} ({'greg' if g else 'jul'})"
                     for a, b, c, g in zip(y, m, d, greg)], dtype="O")
    return y.astype(np.int64), text


def _object_text(target) -> str:
    if target.kind == "planet":
        return f"{target.label} (DE406; magnitude Mallama & Hilton 2018 via skyfield)"
    s = target.star
    return (f"{target.label}: ICRS {s.ra_deg:.5f} {s.dec_deg:+.5f} at J1991.25, parallax {s.plx_mas:.2f} mas, "
            f"pm {s.pmra_mas_yr:.2f} {s.pmdec_mas_yr:.2f} mas/yr, rv {s.rv_km_s:g} km/s, V {s.v:.2f} ({s.v_source})")


def plot_phases(table, path, label, phase, method):
    """Draw the day of the year of each event against the year (PNG), with the k band if present."""
    import numpy as np

    try:
        import matplotlib
        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        from calendra.errors import CalendraError

        raise CalendraError("--plot needs matplotlib (pip install matplotlib)") from None
    years = np.asarray(table["year"], dtype=np.int64)
    doy = np.array([_doy(str(t)) for t in table["local_date"]], dtype=float)
    fig, ax = plt.subplots(figsize=(9, 4.5))
    ax.plot(years, doy, ".", ms=3, label=f"{phase} ({method})")
    if "k_band_first" in table.names:
        lo = doy + np.asarray(table["k_band_first"], dtype=float)
        hi = doy + np.asarray(table["k_band_last"], dtype=float)
        ax.fill_between(years, lo, hi, color="C1", alpha=0.3, lw=0, label="k band")
    ax.set_xlabel("year (astronomical)")
    ax.set_ylabel("day of the year (julian before 1582, gregorian after)")
    ax.set_title(f"{label}: {phase}")
    ax.legend(loc="best")
    fig.tight_layout()
    fig.savefig(path, dpi=120)
    plt.close(fig)


def _doy(text: str) -> int:
    import numpy as np

    from calendra.julian_gregorian import gregorian_to_jdn, julian_to_jdn

    date = text.split(" ")[0]
    sign = -1 if date.startswith("-") else 1
    y, m, d = date.lstrip("+-").split("-")
    y = sign * int(y)
    to = gregorian_to_jdn if "greg" in text else julian_to_jdn
    return int(np.asarray(to(y, int(m), int(d))) - np.asarray(to(y, 1, 1))) + 1


def stars_command():
    """The click command ``calendra stars``: list and search the named stars."""
    import click

    @click.command("stars", help="List or search the named stars (IAU names, Bayer/Flamsteed designations, HIP).")
    @click.argument("pattern", required=False, default="")
    @click.option("--limit", type=int, default=None, help="Show at most this many stars.")
    @click.option("--format", "fmt", type=click.Choice(["table", "csv"]), default="table", show_default=True)
    def stars(pattern, limit, fmt):
        from calendra.errors import CalendraError

        from .catalogue import load_catalogue
        from .names import resolve, search

        rows = search(pattern, limit)
        if not rows and pattern:
            try:
                kind, value, label = resolve(pattern)
            except CalendraError as exc:
                raise click.ClickException(str(exc)) from None
            if kind == "planet":
                click.echo(f"{label}: planet (DE406)")
                return
            s = load_catalogue().star(value)
            click.echo(f"{label}: RA {s.ra_deg:.5f} Dec {s.dec_deg:+.5f} (ICRS, J1991.25) V {s.v:.2f}")
            return
        cat = load_catalogue()
        lines = []
        header = ("name", "bayer", "HIP", "designation", "V", "RA_deg", "Dec_deg")
        for e in rows:
            try:
                s = cat.star(e.hip)
                ra, dec, v = f"{s.ra_deg:.4f}", f"{s.dec_deg:+.4f}", f"{s.v:.2f}"
            except CalendraError:
                ra, dec, v = "-", "-", (f"{e.v:.2f}" if e.v is not None else "-")
            lines.append((e.name, e.bayer or "-", str(e.hip), e.designation, v, ra, dec))
        if fmt == "csv":
            click.echo(",".join(header))
            for ln in lines:
                click.echo(",".join(ln))
            return
        widths = [max(len(h), *(len(ln[i]) for ln in lines)) if lines else len(h) for i, h in enumerate(header)]
        click.echo("  ".join(h.ljust(w) for h, w in zip(header, widths)))
        for ln in lines:
            click.echo("  ".join(c.ljust(w) for c, w in zip(ln, widths)))
        click.echo(f"{len(lines)} stars; names: IAU Catalog of Star Names (WGSN); positions: Hipparcos "
                   "new reduction (van Leeuwen 2007); any 'HIP n' is accepted too")

    return stars


@hookimpl
def calendra_detectors():
    return [HeliacalDetector()]


@hookimpl
def calendra_cli_commands():
    return [stars_command()]
