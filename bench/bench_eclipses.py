"""Speed of calendra's eclipse catalogues against skyfield and astronomy-engine, in one run.

Usage::

    /work/venv/bin/python bench/bench_eclipses.py            # about 1 min on 2 cores
    /work/venv/bin/python bench/bench_eclipses.py --full     # baselines over the whole span too (~4 min)

calendra computes the whole -3000..+3000 catalogue of each kind in one call
(DE406 kernel already loaded; the first call also warms numpy and the
kernel's pages): lunar eclipses with contacts, magnitudes, saros numbers;
solar eclipses with Besselian elements, type, greatest eclipse point, path
width and central duration; plus the local circumstances of every solar
eclipse at one site.

Baselines (loops over events, cost linear in the span):

* skyfield ``eclipselib.lunar_eclipses`` on the same DE406 kernel (times,
  type and magnitudes only), timed over ``--centuries`` centuries around
  -1000, 1000 and 2000 and scaled to 60 centuries (``--full``: the whole span);
* astronomy-engine ``SearchGlobalSolarEclipse`` / ``NextGlobalSolarEclipse``
  (type, peak, greatest point), timed the same way.
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "plugins"))

J2000 = 2451545.0
SPAN = (625362.5, 2816846.5)
SPAN_CENTURIES = (SPAN[1] - SPAN[0]) / 36525.0


def timed(func, runs=1):
    times, result = [], None
    for _ in range(runs):
        t0 = time.perf_counter()
        result = func()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), result


def year_jd(year):
    return J2000 + (year - 2000) * 365.25


def windows(centuries):
    """Sample windows (jd_start, jd_end) of ``centuries`` each, around -1000, 1000 and 2000."""
    half = centuries * 36525.0 / 2
    return [(year_jd(y) - half, year_jd(y) + half) for y in (-1000, 1000, 2000)]


def skyfield_lunar(spans):
    from skyfield import eclipselib

    from calendra.deltat import skyfield_timescale
    from calendra.ephemeris import load_ephemeris

    ts, eph = skyfield_timescale(), load_ephemeris()
    n = 0
    for a, b in spans:
        t, _, _ = eclipselib.lunar_eclipses(ts.tt_jd(a), ts.tt_jd(b), eph)
        n += len(t)
    return n


def ae_solar(spans):
    import astronomy

    n = 0
    for a, b in spans:
        ev = astronomy.SearchGlobalSolarEclipse(astronomy.Time(a - J2000))
        while ev.peak.tt + J2000 < b:
            n += 1
            ev = astronomy.NextGlobalSolarEclipse(ev.peak)
    return n


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--centuries", type=float, default=2.0, help="centuries per baseline window (3 windows)")
    ap.add_argument("--full", action="store_true", help="run the baselines over the whole span")
    ap.add_argument("--runs", type=int, default=2, help="runs of each calendra job (median)")
    args = ap.parse_args()

    from calendra.deltat import get_model
    from calendra.ephemeris import load_ephemeris
    from calendra_eclipses.lunar import lunar_eclipses
    from calendra_eclipses.solar import solar_eclipses
    from calendra_eclipses.solar_local import solar_local

    load_ephemeris()
    model = get_model("smh2016")
    lunar_eclipses(2451545.0, 2451545.0 + 400)          # warm-up
    solar_eclipses(2451545.0, 2451545.0 + 400, deltat=model)
    t_lunar, lun = timed(lambda: lunar_eclipses(*SPAN), args.runs)
    t_solar, sol = timed(lambda: solar_eclipses(*SPAN, deltat=model), args.runs)
    t_local, loc = timed(lambda: solar_local(sol.elements, 30.5, 47.8, 0.0), args.runs)

    spans = [SPAN] if args.full else windows(args.centuries)
    covered = sum(b - a for a, b in spans) / 36525.0
    scale = SPAN_CENTURIES / covered
    t_sky, n_sky = timed(lambda: skyfield_lunar(spans))
    t_ae, n_ae = timed(lambda: ae_solar(spans))
    how = "measured over the whole span" if args.full else \
        f"measured over {covered:g} centuries (3 windows), scaled x{scale:.1f}"

    rows = [
        ("calendra lunar catalogue -3000..3000 (contacts, magnitudes, saros)", t_lunar, len(lun), "measured"),
        ("calendra solar catalogue -3000..3000 (Besselian elements, type, point, width)", t_solar, len(sol),
         "measured"),
        ("calendra both kinds", t_lunar + t_solar, len(lun) + len(sol), "measured"),
        ("calendra local circumstances of every solar eclipse at one site", t_local, int(loc.eclipsed.sum()),
         "measured (eclipses reaching the site)"),
        ("skyfield eclipselib.lunar_eclipses (same DE406 kernel)", t_sky * scale, int(round(n_sky * scale)), how),
        ("astronomy-engine SearchGlobalSolarEclipse", t_ae * scale, int(round(n_ae * scale)), how),
    ]
    print("| job | time for -3000..3000 (s) | eclipses | s per century | how |")
    print("|---|---:|---:|---:|---|")
    for name, t, n, note in rows:
        print(f"| {name} | {t:.2f} | {n} | {t / SPAN_CENTURIES:.4f} | {note} |")
    print()
    print(f"ratios: calendra lunar is {t_sky * scale / t_lunar:.1f}x faster than skyfield eclipselib; "
          f"calendra solar is {t_ae * scale / t_solar:.1f}x faster than astronomy-engine's global search; "
          f"both kinds together {t_lunar + t_solar:.1f} s (target < 60 s)")


if __name__ == "__main__":
    main()
