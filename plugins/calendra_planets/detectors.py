"""Event detectors of the planets plugin (registered through ``calendra_detectors``).

``stations``            stations, retrograde loops and the nearest reference star
``oppositions``         oppositions of Mars, Jupiter and Saturn
``solar-conjunctions``  conjunctions with the Sun (inferior and superior for Mercury and Venus)
``elongations``         greatest eastern and western elongations of Mercury and Venus
``conjunctions``        conjunctions in longitude or right ascension, or least separations, of pairs
``occultations``        stars and planets behind the Moon, from a site
``star-passages``       the Moon and planets by reference stars, in cubits and fingers

Every search runs over the whole range as array jobs; see the modules for the methods.
"""

from __future__ import annotations

import numpy as np

from calendra.detector import Detector, Parameter
from calendra.events import Column, EventTable

_EPHEMERIS_NOTE = ("DE406 apparent geocentric places: light time and annual aberration (first order), "
                   "no light deflection; ecliptic of date from the Vondrak et al. (2011) long-term "
                   "precession with the IAU 2000A luni-solar nutation (77 terms)")
_STAR_NOTE = ("Hipparcos new reduction (van Leeuwen 2007) with linear space motion, annual parallax "
              "and aberration (calendra_stars)")


def _table(cols, meta, jd_tt, deltat, models, site=None, warnings=()):
    from calendra.provenance import build

    jd = np.asarray(jd_tt, dtype=np.float64)
    cols = {"jd_tt": jd, "jd_ut": np.asarray(deltat.ut_from_tt(jd), dtype=np.float64) if jd.size else jd, **cols}
    prov = build(jd_tt=jd if jd.size else None, deltat=deltat, ephemeris=True, models=models, site=site,
                 extra_warnings=warnings)
    return EventTable(cols, {k: Column(k, *v) for k, v in meta.items()}, prov)


def _r(x, n):
    return np.round(np.asarray(x, dtype=np.float64), n) + 0.0      # + 0.0: no "-0"


def _planets(text, allowed, what):
    from calendra.errors import ParameterError

    from .states import PLANETS, planet_list

    names = planet_list(text, PLANETS)
    bad = [p for p in names if p not in allowed]
    if bad:
        raise ParameterError(f"{bad[0].capitalize()} has no {what} (only {', '.join(allowed)})")
    return names


class StationsDetector(Detector):
    """Stations and retrograde loops."""

    name = "stations"
    title = "Planetary stations and retrograde loops (DE406, apparent longitude of date)"
    description = ("The moments the apparent geocentric ecliptic longitude of date of a planet stops "
                   "and reverses: station-retrograde (direct motion ends) and station-direct.  Each row "
                   "gives the longitude, the retrograde loop it opens or closes (days, degrees) and the "
                   "nearest reference star.  --plot PATH draws the first retrograde loop among the stars.")
    parameters = (
        Parameter("planet", "str", "mars", "planet or comma list (mercury,venus,mars,jupiter,saturn; all)"),
        Parameter("stars", "choice", "normal", "reference stars for the nearest star: Babylonian Normal "
                  "Stars, bright ecliptic stars (V<=3.5, |beta|<=10 deg), both, or none",
                  choices=("normal", "bright", "both", "none")),
        Parameter("plot", "str", None, "also draw the first retrograde loop with nearby stars into this PNG"),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, planet, stars, plot):
        from . import refstars
        from .states import PLANETS, apparent, unit
        from .stations import concat_stations, find_stations, retrograde_loops

        names = _planets(planet, PLANETS, "stations")
        st = concat_stations([find_stations(p, jd_tt_start, jd_tt_end, progress=progress) for p in names])
        loops = retrograde_loops(st)
        n = st.jd_tt.size
        days, arc = np.full(n, np.nan), np.full(n, np.nan)
        key = {(b, t): i for i, (b, t) in enumerate(zip(st.body, st.jd_tt))}
        for k in range(loops.body.size):          # a loop over loops (hundreds per millennium), not instants
            for t in (loops.start_jd_tt[k], loops.end_jd_tt[k]):
                i = key[(loops.body[k], t)]
                days[i], arc[i] = loops.duration_days[k], loops.arc_deg[k]
        cols = {"kind": st.kind, "planet": st.body, "longitude_deg": _r(st.longitude_deg, 4),
                "latitude_deg": _r(st.latitude_deg, 4), "loop_days": _r(days, 2), "loop_arc_deg": _r(arc, 3)}
        meta = {"planet": ("", "planet"),
                "longitude_deg": ("deg", "apparent geocentric ecliptic longitude of date at the station"),
                "latitude_deg": ("deg", "apparent geocentric ecliptic latitude of date"),
                "loop_days": ("d", "length of the retrograde loop this station opens or closes"),
                "loop_arc_deg": ("deg", "longitude travelled backwards in that loop")}
        models = {"ephemeris positions": _EPHEMERIS_NOTE,
                  "method": "synodic-cycle brackets and offsets, safeguarded Newton on the longitude rate"}
        if stars != "none" and n:
            ss = refstars.star_set(stars)
            u = np.empty((3, n))
            for p in names:
                sel = st.body == p
                u[:, sel] = unit(apparent(p, st.jd_tt[sel])[0])
            idx, sep = refstars.nearest_stars(ss, st.jd_tt, u)
            cols["nearest_star"] = np.asarray(ss.names, dtype=object)[idx]
            cols["star_separation_deg"] = _r(sep, 3)
            meta["nearest_star"] = ("", f"nearest star of the {stars} set")
            meta["star_separation_deg"] = ("deg", "angular distance to that star")
            models["stars"] = _STAR_NOTE
        table = _table(cols, meta, st.jd_tt, deltat, models)
        if plot and loops.body.size:
            from .plot import plot_retrograde

            centre = 0.5 * (float(loops.start_jd_tt[0]) + float(loops.end_jd_tt[0]))
            plot_retrograde(str(loops.body[0]), centre, plot, stars="normal" if stars == "none" else stars)
        return table


class _AlignmentDetector(Detector):
    allowed: tuple = ()
    what = ""
    default = ""

    def _rows(self, ph, deltat, jd_tt_start):
        from .magnitude import SOURCE

        cols = {"kind": ph.kind, "planet": ph.body, "longitude_deg": _r(ph.longitude_deg, 4),
                "latitude_deg": _r(ph.latitude_deg, 4), "elongation_deg": _r(ph.elongation_deg, 4),
                "distance_au": _r(ph.distance_au, 5), "magnitude": _r(ph.magnitude, 2)}
        meta = {"planet": ("", "planet"),
                "longitude_deg": ("deg", "apparent geocentric ecliptic longitude of date of the planet"),
                "latitude_deg": ("deg", "apparent geocentric ecliptic latitude of date"),
                "elongation_deg": ("deg", "angular distance planet-Sun"),
                "distance_au": ("au", "geocentric distance"),
                "magnitude": ("mag", "V magnitude (NaN outside the phase angles of the formula)")}
        models = {"ephemeris positions": _EPHEMERIS_NOTE, "magnitudes": SOURCE,
                  "definitions": "Meeus, Astronomical Algorithms (1998) ch. 36"}
        return _table(cols, meta, ph.jd_tt, deltat, models)


class OppositionsDetector(_AlignmentDetector):
    name = "oppositions"
    title = "Oppositions of the superior planets (apparent longitude planet - Sun = 180 deg)"
    parameters = (Parameter("planet", "str", "mars,jupiter,saturn", "superior planet or comma list"),)

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, planet):
        from .phenomena import OPPOSITION, _concat, solar_alignments

        names = _planets(planet, ("mars", "jupiter", "saturn"), "oppositions (an inferior planet)")
        ph = _concat([solar_alignments(p, jd_tt_start, jd_tt_end, progress=progress) for p in names])
        ph = type(ph)(*(c[ph.kind == OPPOSITION] for c in ph))
        return self._rows(ph, deltat, jd_tt_start)


class SolarConjunctionsDetector(_AlignmentDetector):
    name = "solar-conjunctions"
    title = "Conjunctions of the planets with the Sun (inferior and superior for Mercury and Venus)"
    parameters = (Parameter("planet", "str", "all", "planet or comma list"),)

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, planet):
        from .phenomena import OPPOSITION, _concat, solar_alignments
        from .states import PLANETS

        names = _planets(planet, PLANETS, "conjunctions")
        ph = _concat([solar_alignments(p, jd_tt_start, jd_tt_end, progress=progress) for p in names])
        ph = type(ph)(*(c[ph.kind != OPPOSITION] for c in ph))
        return self._rows(ph, deltat, jd_tt_start)


class ElongationsDetector(_AlignmentDetector):
    name = "elongations"
    title = "Greatest eastern and western elongations of Mercury and Venus"
    parameters = (Parameter("planet", "str", "mercury,venus", "mercury, venus or both"),)

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, planet):
        from .phenomena import _concat, greatest_elongations

        names = _planets(planet, ("mercury", "venus"), "greatest elongations (a superior planet)")
        ph = _concat([greatest_elongations(p, jd_tt_start, jd_tt_end, progress=progress) for p in names])
        return self._rows(ph, deltat, jd_tt_start)


class ConjunctionsDetector(Detector):
    name = "conjunctions"
    title = "Conjunctions in longitude or right ascension, and close approaches, of planets, Moon and stars"
    description = ("Pairs from --between A,B where each side is a planet, moon, planets (all five), "
                   "normal-stars (the Babylonian reference stars), bright-stars, any star name, or a "
                   "+ list (mars+venus).  frame longitude: equal apparent ecliptic longitudes of date; ra: "
                   "equal right ascensions of date; minimum: least angular separation (appulse).")
    parameters = (
        Parameter("between", "str", None, "two objects, e.g. mars,regulus or moon,normal-stars", required=True),
        Parameter("max_separation", "str", "1deg", "keep events with an angular separation up to this "
                  "(1deg, 30arcmin, 0.5; degrees without a unit)"),
        Parameter("frame", "choice", "longitude", "conjunction in longitude, in RA, or least separation",
                  choices=("longitude", "ra", "minimum")),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, between, max_separation, frame):
        from .appulses import conjunctions

        r = conjunctions(between, jd_tt_start, jd_tt_end, frame, max_separation, progress)
        kind = {"longitude": "conjunction-longitude", "ra": "conjunction-ra", "minimum": "appulse"}[frame]
        cols = {"kind": np.full(r["jd_tt"].size, kind, dtype=object), "body1": r["body1"], "body2": r["body2"],
                "separation_deg": _r(r["separation_deg"], 4), "d_lon_deg": _r(r["d_lon_deg"], 4),
                "d_lat_deg": _r(r["d_lat_deg"], 4), "d_dec_deg": _r(r["d_dec_deg"], 4),
                "longitude_deg": _r(r["longitude_deg"], 4), "sun_elongation_deg": _r(r["sun_elongation_deg"], 2)}
        meta = {"body1": ("", "first object"), "body2": ("", "second object"),
                "separation_deg": ("deg", "geocentric angular separation"),
                "d_lon_deg": ("deg", "body1 - body2, apparent ecliptic longitude of date"),
                "d_lat_deg": ("deg", "body1 - body2, ecliptic latitude (positive: body1 north)"),
                "d_dec_deg": ("deg", "body1 - body2, declination of date"),
                "longitude_deg": ("deg", "apparent ecliptic longitude of date of body1"),
                "sun_elongation_deg": ("deg", "angular distance of body1 from the Sun")}
        models = {"ephemeris positions": _EPHEMERIS_NOTE, "stars": _STAR_NOTE,
                  "method": "coarse grid split at turns, safeguarded Newton on DE406 (calendra_planets.appulses)"}
        return _table(cols, meta, r["jd_tt"], deltat, models)


class OccultationsDetector(Detector):
    name = "occultations"
    title = "Occultations of stars and planets by the Moon seen from a site (immersion, emersion)"
    needs_site = True
    parameters = (
        Parameter("targets", "str", "normal-stars", "objects: normal-stars, bright-stars, planets, names "
                  "joined by + (regulus+spica); several lists separated by commas"),
        Parameter("min_moon_altitude", "float", 0.0, "drop contacts with the Moon lower than this, deg"),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, targets, min_moon_altitude):
        from .occultations import MOON_K, occultations

        r = occultations(targets, site, jd_tt_start, jd_tt_end, deltat,
                         min_moon_altitude_deg=min_moon_altitude, progress=progress)
        cols = {"kind": r["contact"], "target": r["target"], "event": r["event"],
                "moon_alt_deg": _r(r["moon_altitude_deg"], 2), "sun_alt_deg": _r(r["sun_altitude_deg"], 2),
                "limb": r["limb"], "least_sep_arcmin": _r(r["least_separation_arcmin"], 2)}
        meta = {"target": ("", "occulted object"), "event": ("", "number shared by the two contacts"),
                "moon_alt_deg": ("deg", "airless topocentric altitude of the Moon's centre"),
                "sun_alt_deg": ("deg", "airless altitude of the Sun"),
                "limb": ("", "the Moon's limb at the contact: dark or bright"),
                "least_sep_arcmin": ("arcmin", "least topocentric distance Moon centre - object")}
        models = {"ephemeris positions": _EPHEMERIS_NOTE, "stars": _STAR_NOTE,
                  "observer": "skyfield wgs84.latlon, ITRS rotation at UT1 = TT - delta T",
                  "moon radius": f"k = {MOON_K} Earth equatorial radii; limb profile ignored"}
        warns = ["contacts move with delta T: before 1600 its uncertainty moves the site under the sky "
                 "and can make an occultation a near miss or the reverse"]
        return _table(cols, meta, r["jd_tt"], deltat, models, site=site, warnings=warns)


class StarPassagesDetector(Detector):
    name = "star-passages"
    title = "The Moon and planets passing reference stars: above/below, in front of/behind, in cubits"
    description = ("For each conjunction in ecliptic longitude of a body with a reference star, the "
                   "differences in longitude and latitude at the moment of the time rule: conjunction, "
                   "evening (offset hours after sunset on the nearest evening) or morning (before "
                   "sunrise).  Above/below = north/south; in front of/behind = west/east.")
    parameters = (
        Parameter("body", "str", "moon", "moon and/or planets, comma list"),
        Parameter("stars", "str", "normal", "normal (Babylonian Normal Stars), bright, both, or star "
                  "names joined by +"),
        Parameter("rule", "choice", "evening", "moment of the report", choices=("conjunction", "evening", "morning")),
        Parameter("offset_hours", "float", 1.0, "hours after sunset (evening) or before sunrise (morning)"),
        Parameter("max_latitude", "float", 10.0, "largest latitude difference at conjunction, deg"),
        Parameter("cubit", "float", 2.0, "degrees in a cubit (KÙŠ; 24 fingers)"),
        Parameter("min_altitude", "float", None, "drop passages with the body lower than this, deg (site rules)"),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, body, stars, rule, offset_hours,
                max_latitude, cubit, min_altitude):
        from . import refstars
        from .passages import star_passages
        from .states import BODIES, planet_list

        bodies = planet_list(body, tuple(b for b in BODIES if b != "sun"))
        ss = refstars.star_set(stars) if stars in refstars.STAR_SETS else refstars.stars_from_names(stars.split("+"))
        r = star_passages(bodies, ss, jd_tt_start, jd_tt_end, rule=rule, site=site, deltat=deltat,
                          offset_hours=offset_hours, max_latitude_deg=max_latitude, cubit_deg=cubit,
                          progress=progress)
        if min_altitude is not None:
            keep = ~(r["body_altitude_deg"] < min_altitude)
            r = {k: v[keep] for k, v in r.items()}
        cols = {"kind": np.full(r["jd_tt"].size, f"passage-{rule}", dtype=object), "body": r["body"],
                "star": r["star"], "description": r["description"], "d_lon_deg": _r(r["d_lon_deg"], 3),
                "d_lat_deg": _r(r["d_lat_deg"], 3), "d_lon_cubits": _r(r["d_lon_cubits"], 2),
                "d_lat_cubits": _r(r["d_lat_cubits"], 2), "body_alt_deg": _r(r["body_altitude_deg"], 1),
                "sun_alt_deg": _r(r["sun_altitude_deg"], 1)}
        meta = {"body": ("", "Moon or planet"), "star": ("", "reference star"),
                "description": ("", f"position relative to the star, 1 cubit = {cubit:g} deg = 24 fingers"),
                "d_lon_deg": ("deg", "body - star, ecliptic longitude (+: behind = east)"),
                "d_lat_deg": ("deg", "body - star, ecliptic latitude (+: above = north)"),
                "d_lon_cubits": ("cubit", "the same in cubits"), "d_lat_cubits": ("cubit", "the same in cubits"),
                "body_alt_deg": ("deg", "airless altitude of the body at the site"),
                "sun_alt_deg": ("deg", "airless altitude of the Sun")}
        models = {"ephemeris positions": _EPHEMERIS_NOTE, "stars": _STAR_NOTE,
                  "units": f"cubit (KÙŠ) = {cubit:g} deg, finger (ŠU.SI) = 1/24 cubit (Sachs & Hunger 1988, "
                           "from memory; 2 to 2.5 deg in the literature)",
                  "time rule": rule + ("" if rule == "conjunction" else f", {offset_hours:g} h "
                                       f"{'after sunset' if rule == 'evening' else 'before sunrise'} "
                                       "(calendra.riseset, upper limb, standard refraction)"),
                  "positions": "topocentric at the site" if site is not None else "geocentric"}
        return _table(cols, meta, r["jd_tt"], deltat, models, site=site)


def all_detectors():
    return [StationsDetector(), OppositionsDetector(), SolarConjunctionsDetector(), ElongationsDetector(),
            ConjunctionsDetector(), OccultationsDetector(), StarPassagesDetector()]
