"""Benchmark of heliacal sweeps (plugin calendra_stars).

Run:  python bench/bench_heliacal.py        (markdown table on standard output)

Rows
----
1. Sirius at Memphis, heliacal rising, arcus visionis method, -3000 .. +3000
   (one array job; target < 30 s).
2. Sirius at Memphis, heliacal rising, physical model for 1000 years, with the
   k band (three sweeps: k = 0.25, 0.15, 0.40; target < 60 s).
3. Baseline: a straightforward day-by-day loop over skyfield -- for every day,
   skyfield's rising time of the star (``almanac.find_risings``, refined
   search) and the Sun's altitude then, deciding arcus-visionis visibility --
   timed over a few years and extrapolated linearly to the span of row 1
   (stated in the table).  It uses skyfield's IAU 2006 precession, so it is a
   speed baseline, not an accuracy reference before about 1000.
"""

from __future__ import annotations

import os
import sys
import time
from pathlib import Path

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS"):
    os.environ.setdefault(_v, "1")

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "plugins"))

import numpy as np  # noqa: E402

from calendra.deltat import get_model  # noqa: E402
from calendra.sites import Site  # noqa: E402
from calendra_stars import heliacal as H  # noqa: E402

MEMPHIS = Site("Memphis", 29.85, 31.25, 30.0)


def J(year):
    return 2451545.0 + (year - 2000.0) * 365.25


def timed(fn):
    t0 = time.perf_counter()
    out = fn()
    return time.perf_counter() - t0, out


def skyfield_loop(years: int, start_year: float = -1000.0):
    """Day-by-day loop with skyfield: rising of Sirius each day, Sun altitude then."""
    from skyfield import almanac
    from skyfield.api import Star, wgs84

    from calendra.deltat import skyfield_timescale
    from calendra.ephemeris import load_ephemeris
    from calendra_stars.catalogue import HIP_EPOCH_JD, load_catalogue

    model = get_model("smh2016")
    ts = skyfield_timescale(model)
    eph = load_ephemeris()
    s = load_catalogue().star(32349)
    star = Star(ra_hours=s.ra_deg / 15, dec_degrees=s.dec_deg, ra_mas_per_year=s.pmra_mas_yr,
                dec_mas_per_year=s.pmdec_mas_yr, parallax_mas=s.plx_mas, radial_km_per_s=s.rv_km_s,
                epoch=ts.tt_jd(HIP_EPOCH_JD))
    topos = wgs84.latlon(MEMPHIS.latitude_deg, MEMPHIS.longitude_deg, MEMPHIS.elevation_m)
    observer = eph["earth"] + topos
    arcus = float(H.krauss_arcus(s.v))
    first = []
    seen_before = True
    day0 = J(start_year)
    for d in range(int(years * 365.25)):
        t0 = ts.tt_jd(day0 + d - 0.5)
        t1 = ts.tt_jd(day0 + d + 0.5)
        t, ok = almanac.find_risings(observer, star, t0, t1, horizon_degrees=-0.5667)
        seen = False
        if len(t) and ok[0]:
            alt, _, _ = observer.at(t[0]).observe(eph["sun"]).apparent().altaz()
            seen = alt.degrees < -arcus
        if seen and not seen_before:
            first.append(day0 + d)
        seen_before = seen
    return first


def main():
    model = get_model("smh2016")
    sirius = H.Target.from_name("Sirius")
    H.find_phases(sirius, MEMPHIS, J(0), J(2))         # warm-up: kernel, catalogue, caches
    rows = []
    t_arcus, ev = timed(lambda: H.find_phases(sirius, MEMPHIS, J(-3001), J(3001), "rising", "arcus",
                                              deltat=model))
    rows.append(("arcus visionis, Sirius, Memphis, -3000..+3000", f"{len(ev['jd_tt'])} events", t_arcus, "< 30 s"))

    def physical():
        ev = H.find_phases(sirius, MEMPHIS, J(-1000), J(0), "rising", "physical", deltat=model, k=0.25)
        lo, hi = H.k_band(sirius, MEMPHIS, J(-1000), J(0), "rising", ev, (0.15, 0.40), deltat=model)
        return ev, lo, hi
    t_phys, (evp, lo, hi) = timed(physical)
    band = np.nanmedian(hi - lo)
    rows.append(("physical model + k band 0.15-0.40, Sirius, Memphis, 1000 years",
                 f"{len(evp['jd_tt'])} events, median band {band:.1f} d", t_phys, "< 60 s"))
    sample_years = 2
    t_loop, _ = timed(lambda: skyfield_loop(sample_years))
    per_year = t_loop / sample_years
    rows.append((f"baseline: skyfield day-by-day loop ({sample_years} years timed, x3000 extrapolated)",
                 f"{per_year:.2f} s per year", per_year * 6000.0, "-"))
    print("| task | result | time (s) | target |")
    print("|---|---|---|---|")
    for task, res, t, target in rows:
        print(f"| {task} | {res} | {t:.1f} | {target} |")
    print()
    print(f"ratio skyfield loop / calendra (arcus, 6000 years): {per_year * 6000.0 / t_arcus:.0f}x")


if __name__ == "__main__":
    main()
