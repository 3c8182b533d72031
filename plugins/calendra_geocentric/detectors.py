"""Detectors: the Almagest models against DE406, as position tables and as stations.

``geocentric-positions``
    A table at every ``step_days`` from the start: model longitude and
    latitude, DE406 apparent longitude and latitude of date, the difference,
    Ptolemy's equinox offset and the difference with it removed (degrees).
``model-stations``
    The real (DE406) stations of a planet over the range, each with the
    nearest model station of the same kind: time and longitude differences
    and, at retrograde stations, the real and model retrograde arcs.
"""

from __future__ import annotations

import numpy as np

from calendra.detector import Detector, Parameter
from calendra.events import Column, EventTable

from .compare import BODIES, MODEL_TITLE, OFFSET_NOTE, PLANET_NAMES, TIME_NOTE

#: Most rows one position table may hold.
MAX_ROWS = 1_000_000


def _provenance(jd_tt, deltat, extra=None):
    from calendra.provenance import build

    models = {"geocentric model": MODEL_TITLE, "model time": TIME_NOTE}
    models.update(extra or {})
    return build(jd_tt=jd_tt, deltat=deltat, ephemeris=True, models=models)


class GeocentricPositions(Detector):
    """Positions from the Almagest models beside DE406, at a fixed step."""

    name = "geocentric-positions"
    title = "Almagest model positions against DE406 (degrees)"
    description = ("Longitude (and latitude) of a body from Ptolemy's models (Almagest, tr. Toomer) and "
                   "from DE406 (apparent, ecliptic of date), their difference, Ptolemy's equinox offset "
                   "and the difference with the offset removed.")
    parameters = (
        Parameter("body", "choice", "mars", "sun, moon, mercury, venus, mars, jupiter or saturn", BODIES),
        Parameter("step_days", "float", 10.0, "interval between rows, days"),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, body, step_days):
        from calendra.errors import ParameterError

        from .compare import compare

        if not step_days > 0:
            raise ParameterError("parameter step_days: must be positive")
        # a little slack: the ends of a range given in UT differ by the change of delta T
        n = int(np.floor((jd_tt_end - jd_tt_start) / step_days + 1e-6)) + 1
        if n > MAX_ROWS:
            raise ParameterError(f"{n} rows at step_days={step_days:g}; at most {MAX_ROWS} (use a larger step)")
        jd = jd_tt_start + step_days * np.arange(n)
        if progress is not None:
            progress(0, n, body)
        r = compare(body, jd, deltat)
        if progress is not None:
            progress(n, n, body)
        cols = {
            "jd_tt": jd, "jd_ut": deltat.ut_from_tt(jd), "kind": np.full(n, f"{body}-position", dtype=object),
            "model_lon": r["model_longitude"], "de406_lon": r["de406_longitude"],
            "difference": r["difference"], "offset": r["equinox_offset"],
            "corrected": r["corrected_difference"],
        }
        meta = {
            "model_lon": Column("model_lon", "deg", "Almagest model longitude, Ptolemy's frame", ".3f"),
            "de406_lon": Column("de406_lon", "deg", "DE406 apparent geocentric longitude, ecliptic of date", ".3f"),
            "difference": Column("difference", "deg", "model - DE406 longitude", ".3f"),
            "offset": Column("offset", "deg", "Ptolemy's equinox offset (his mean Sun - modern mean Sun)", ".3f"),
            "corrected": Column("corrected", "deg", "difference - offset: the model's own error", ".3f"),
        }
        if body != "sun":
            cols.update({"model_lat": r["model_latitude"], "de406_lat": r["de406_latitude"],
                         "lat_difference": r["latitude_difference"]})
            meta.update({
                "model_lat": Column("model_lat", "deg", "Almagest model latitude", ".3f"),
                "de406_lat": Column("de406_lat", "deg", "DE406 apparent geocentric latitude, ecliptic of date", ".3f"),
                "lat_difference": Column("lat_difference", "deg", "model - DE406 latitude", ".3f"),
            })
        return EventTable(cols, meta, _provenance(jd, deltat, {"equinox offset": OFFSET_NOTE}))


class ModelStations(Detector):
    """Real stations of a planet with the Almagest model's stations beside them."""

    name = "model-stations"
    title = "Stations and retrograde arcs: Almagest model against DE406"
    description = ("Stations of a planet from DE406 (apparent longitude of date), each with the nearest "
                   "model station of the same kind: the model's time and longitude error, and the real "
                   "and model retrograde arcs.  Longitudes of the model are in Ptolemy's frame.")
    parameters = (
        Parameter("body", "choice", "mars", "mercury, venus, mars, jupiter or saturn", PLANET_NAMES),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, body):
        from calendra.ephemeris import SPAN_JD

        from .compare import equinox_offset_deg, synodic_period_days
        from .stations import STATION_RETROGRADE, de406_source, find_stations, match_stations, model_source

        # the model is searched with a margin on both sides so that every real
        # station inside the range can find its model counterpart
        margin = 0.5 * synodic_period_days(body)
        lo = max(jd_tt_start - margin, SPAN_JD[0] + 1.0)
        hi = min(jd_tt_end + margin, SPAN_JD[1] - 1.0)
        real = find_stations(de406_source(body, deltat), jd_tt_start, jd_tt_end, progress=progress)
        model = find_stations(model_source(body, deltat), lo, hi)
        idx = match_stations(real, model, max_days=margin)
        ok = idx >= 0
        take = np.where(ok, idx, 0)
        nan = np.full(real.jd_tt.size, np.nan)
        m_jd = np.where(ok, model.jd_tt[take], nan) if model.jd_tt.size else nan
        m_lon = np.where(ok, model.longitude_deg[take], nan) if model.jd_tt.size else nan
        offset = equinox_offset_deg(real.jd_tt, deltat) if real.jd_tt.size else nan
        dlon = (np.mod(m_lon - real.longitude_deg + 180.0, 360.0) - 180.0)

        def arcs(st):
            """Retrograde arc (deg) and duration (days) starting at each station (NaN elsewhere)."""
            arc = np.full(st.jd_tt.size, np.nan)
            dur = np.full(st.jd_tt.size, np.nan)
            kinds = np.asarray(st.kind)
            i = np.nonzero(kinds[:-1] == STATION_RETROGRADE)[0]
            i = i[kinds[i + 1] != STATION_RETROGRADE]
            arc[i] = np.mod(st.longitude_deg[i] - st.longitude_deg[i + 1], 360.0)
            dur[i] = st.jd_tt[i + 1] - st.jd_tt[i]
            return arc, dur

        r_arc, r_dur = arcs(real)
        m_arc_all, m_dur_all = arcs(model)
        m_arc = np.where(ok, m_arc_all[take], nan) if model.jd_tt.size else nan
        m_dur = np.where(ok, m_dur_all[take], nan) if model.jd_tt.size else nan
        cols = {
            "jd_tt": real.jd_tt, "jd_ut": deltat.ut_from_tt(real.jd_tt), "kind": real.kind,
            "de406_lon": real.longitude_deg, "model_jd_tt": m_jd, "model_lon": m_lon,
            "dt_days": m_jd - real.jd_tt, "dlon": dlon, "dlon_corrected": dlon - offset,
            "arc": r_arc, "model_arc": m_arc, "retro_days": r_dur, "model_retro_days": m_dur,
        }
        meta = {
            "de406_lon": Column("de406_lon", "deg", "longitude of the real station (DE406 apparent, of date)"),
            "model_jd_tt": Column("model_jd_tt", "", "Julian Day (TT) of the matching model station"),
            "model_lon": Column("model_lon", "deg", "longitude of the model station, Ptolemy's frame"),
            "dt_days": Column("dt_days", "d", "model station - real station"),
            "dlon": Column("dlon", "deg", "model - real station longitude"),
            "dlon_corrected": Column("dlon_corrected", "deg", "dlon - Ptolemy's equinox offset"),
            "arc": Column("arc", "deg", "real retrograde arc starting at this station"),
            "model_arc": Column("model_arc", "deg", "model retrograde arc"),
            "retro_days": Column("retro_days", "d", "real duration of the retrograde run"),
            "model_retro_days": Column("model_retro_days", "d", "model duration of the retrograde run"),
        }
        prov = _provenance(real.jd_tt if real.jd_tt.size else np.array([jd_tt_start, jd_tt_end]), deltat,
                           {"equinox offset": OFFSET_NOTE,
                            "stations": "daily samples, sign changes of the longitude rate, bisection to 1e-4 d"})
        return EventTable(cols, meta, prov)
