"""Benchmark of site events: sunrise/sunset for a century, first crescents for a millennium.

Run:  python bench/bench_site_events.py [--quick]     (markdown table on standard output)

Rows
----
* sunrise and sunset on every day of 100 years at Babylon (36 525 days, 73 050
  events) with :func:`calendra.riseset.daily_events` -- target < 2 s;
  baseline: skyfield's ``almanac.find_risings`` + ``find_settings`` on the same
  DE406 kernel and timescale, timed on a sample of years and scaled to 100;
* the same with ``transit`` and three twilights (nine events a day);
* first-crescent evenings for 1000 years at Babylon (about 12 370 lunations,
  six evenings each: sunset, moonset, and the geometry at Yallop's best time)
  with :func:`calendra.crescent.crescent_nights` + Yallop's criterion -- target < 20 s.

Timings are the best of a few runs after one warm-up (the kernel is loaded
and verified once per process, before the timings), with the process CPU
time of the same run (on a shared machine the wall time includes waiting).
Single-threaded BLAS.
"""

from __future__ import annotations

import os
import sys
import time

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")

import numpy as np


def best(fn, repeat=3):
    """Best wall time of ``repeat`` runs, and the process CPU time of that run (seconds)."""
    runs = []
    for _ in range(repeat):
        c0, t0 = time.process_time(), time.perf_counter()
        fn()
        runs.append((time.perf_counter() - t0, time.process_time() - c0))
    return min(runs)


def main(quick=False):
    from skyfield import almanac
    from skyfield.api import wgs84

    from calendra.crescent import crescent_nights, visibility
    from calendra.deltat import get_model, skyfield_timescale
    from calendra.ephemeris import load_ephemeris
    from calendra.riseset import Horizon, daily_events
    from calendra.sites import parse_site

    site = parse_site("Babylon")
    model = get_model("smh2016")
    eph = load_ephemeris()
    ts = skyfield_timescale(model)
    years = 10 if quick else 100
    days = np.arange(2415021, 2415021 + int(round(years * 365.25)))
    hz = Horizon(altitude_deg=-0.8333)
    daily_events("sun", site, days[:30], deltat=model, horizon=hz, transit=False)     # warm-up

    rows = []
    t_ours = best(lambda: daily_events("sun", site, days, deltat=model, horizon=hz, transit=False))
    rows.append((f"sunrise + sunset, every day of {years} years (calendra)", t_ours, f"{2 * days.size} events",
                 "target < 2 s" if years == 100 else ""))

    sample_years = 2 if quick else 5
    obs = eph["earth"] + wgs84.latlon(site.latitude_deg, site.longitude_deg, site.elevation_m)
    t0, t1 = ts.ut1_jd(days[0] - 0.5), ts.ut1_jd(days[0] - 0.5 + sample_years * 365.25)

    def skyfield_run():
        almanac.find_risings(obs, eph["sun"], t0, t1, horizon_degrees=-0.8333)
        almanac.find_settings(obs, eph["sun"], t0, t1, horizon_degrees=-0.8333)

    t_sky = tuple(x * years / sample_years for x in best(skyfield_run, 2))
    rows.append((f"same with skyfield find_risings + find_settings (DE406; {sample_years} years scaled to {years})",
                 t_sky, f"{t_sky[0] / years:.3f} s per year", f"skyfield / calendra = {t_sky[0] / t_ours[0]:.1f}"))

    t_full = best(lambda: daily_events("sun", site, days, deltat=model,
                                       twilight=("civil", "nautical", "astronomical")), 2)
    rows.append((f"rise, transit, set and 3 twilights, every day of {years} years (calendra)", t_full,
                 f"{9 * days.size} events", ""))

    cres_years = 100 if quick else 1000
    j0 = 1538400.0          # -500
    span = (j0, j0 + cres_years * 365.25)

    def crescents():
        nights = crescent_nights(site, *span, deltat=model, at=("best",))
        return visibility(nights, "yallop")

    c0, t0c = time.process_time(), time.perf_counter()
    vis = crescents()
    t_cres = (time.perf_counter() - t0c, time.process_time() - c0)
    n_lun = vis.index.size
    rows.append((f"first-crescent evenings, {cres_years} years from -500 (calendra, Yallop)", t_cres,
                 f"{n_lun} lunations x {vis.nights.offsets.size} evenings",
                 "target < 20 s" if cres_years == 1000 else ""))

    print("| task | wall (s) | CPU (s) | size | note |")
    print("|---|---:|---:|---|---|")
    for name, (wall, cpu), size, note in rows:
        print(f"| {name} | {wall:.2f} | {cpu:.2f} | {size} | {note} |")
    print()
    print(f"Python {sys.version.split()[0]}, numpy {np.__version__}; site Babylon; delta T smh2016; "
          "events refined with skyfield on DE406.")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
