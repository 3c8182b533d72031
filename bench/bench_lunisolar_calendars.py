"""Speed of the sky calendars and festival tables of the lunisolar plugin.

Targets (issue 8): a 1000-year Babylonian calendar table in under 30 s; 100 years of a festival
table in under 5 s.  Each case runs in a fresh calendar object (nothing cached but the DE406 kernel,
which is loaded first), single process; a markdown table goes to standard output.

Usage::

    /work/venv/bin/python bench/bench_lunisolar_calendars.py [--years 1000]
"""

from __future__ import annotations

import argparse
import os
import platform
import time

for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")


def timed(fn):
    t = time.perf_counter()
    out = fn()
    return time.perf_counter() - t, out


def babylonian_table(years: int, first: int = -500):
    from calendra_lunisolar.babylonian import BabylonianCalendar

    cal = BabylonianCalendar()
    nk0 = int(cal._year_info(first)[0])
    nk1 = int(cal._year_info(first + years)[0])
    cal.prefetch(nk0, nk1)                 # all crescent evenings of the span in one array job
    rows = []
    for y in range(first, first + years):
        rows.extend(cal.year_rows(y))
    return rows


def chinese_table(years: int, first: int = 1000):
    from calendra_lunisolar.chinese import ChineseCalendar

    cal = ChineseCalendar()
    rows = []
    for y in range(first, first + years):
        rows.extend(cal.year_rows(y))
    return rows


def festival_100():
    from calendra_lunisolar.festivals import festival_table, load_rules_file

    here = os.path.dirname(os.path.abspath(__file__))
    data = load_rules_file(os.path.join(here, "..", "demo_events", "invented_festivals_kesh.toml"))
    return festival_table(data["festivals"], 1900, 1999, site=data["community"].get("site"))[0]


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--years", type=int, default=1000)
    args = ap.parse_args()
    from calendra.ephemeris import load_ephemeris

    load_ephemeris()
    cases = [
        (f"babylonian table, {args.years} years (SE -500..)", lambda: babylonian_table(args.years), 30.0),
        (f"chinese table, {args.years} years (1000..)", lambda: chinese_table(args.years), None),
        ("festival table, 100 years x demo rules", festival_100, 5.0),
    ]
    print(f"machine: {platform.processor() or platform.machine()}, python {platform.python_version()}\n")
    print("| case | rows | seconds | target |")
    print("|---|---|---|---|")
    for name, fn, target in cases:
        sec, rows = timed(fn)
        ok = "" if target is None else (f"< {target:g} s " + ("ok" if sec < target else "MISSED"))
        print(f"| {name} | {len(rows)} | {sec:.1f} | {ok} |")


if __name__ == "__main__":
    main()
