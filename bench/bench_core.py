"""Benchmark of the core engine: Julian/Gregorian conversions and command-line start-up.

Run:  python bench/bench_core.py            (figures go to standard output as markdown)

Baseline named in each row: a loop over convertdate (the general-purpose
calendar library), measured in the same process on a sample and scaled to
the same number of dates.  Timings are the best of several runs.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS"):
    os.environ.setdefault(_v, "1")

import numpy as np
from convertdate import gregorian as cd_gregorian
from convertdate import julian as cd_julian

from calendra import julian_gregorian as jg
from calendra.calendars_core import GregorianCalendar, JulianCalendar

N = 1_000_000
SAMPLE = 20_000


def best(fn, repeat=3):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def wall(cmd, repeat=5):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        subprocess.run(cmd, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        times.append(time.perf_counter() - t0)
    return min(times), float(np.median(times))


def main():
    rng = np.random.default_rng(1)
    jdn = rng.integers(625360, 2816848, N)          # days within -3000..3000
    rows = []
    for name, cal, mod in (("julian", JulianCalendar(), cd_julian), ("gregorian", GregorianCalendar(), cd_gregorian)):
        fields = cal.from_jdn(jdn)
        y, m, d = fields["year"], fields["month"], fields["day"]
        t_from = best(lambda: cal.from_jdn(jdn))
        t_to = best(lambda: cal.to_jdn(y, m, d))
        raw_to = jg.julian_to_jdn if name == "julian" else jg.gregorian_to_jdn
        t_raw = best(lambda: raw_to(y, m, d))
        sj = (jdn[:SAMPLE] - 0.5).tolist()
        sy, sm, sd = y[:SAMPLE].tolist(), m[:SAMPLE].tolist(), d[:SAMPLE].tolist()
        c_from = best(lambda: [mod.from_jd(j) for j in sj], 2) * N / SAMPLE
        c_to = best(lambda: [mod.to_jd(a, b, c) for a, b, c in zip(sy, sm, sd)], 2) * N / SAMPLE
        # Same answers as the reference library on the sample (convertdate JDs are at 0h: .5).
        assert all(tuple(mod.from_jd(j)) == (a, b, c) for j, a, b, c in zip(sj[:2000], sy, sm, sd))
        rows.append((name, "JD -> date", t_from, c_from))
        rows.append((name, "date -> JD, validated", t_to, c_to))
        rows.append((name, "date -> JD, arithmetic only", t_raw, c_to))
    print(f"## Core calendars: {N:,} dates (-3000..3000), one process\n")
    print("| calendar | direction | calendra (s) | dates/s | convertdate loop (s, scaled from 20k) | ratio |")
    print("|---|---|---|---|---|---|")
    for name, direction, t, c in rows:
        print(f"| {name} | {direction} | {t:.3f} | {N / t:,.0f} | {c:.1f} | {c / t:.0f}x |")
    exe = os.path.join(os.path.dirname(sys.executable), "calendra")
    print("\n## Command line wall time (best / median of 5)\n")
    print("| command | best (s) | median (s) |")
    print("|---|---|---|")
    for label, cmd in (("calendra --help", [exe, "--help"]),
                       ("calendra convert --help", [exe, "convert", "--help"]),
                       ("calendra convert '585 BC May 28' --to julian (warm cache)",
                        [exe, "convert", "585 BC May 28", "--to", "julian"]),
                       ("calendra convert '585 BC May 28', every calendar (warm cache)",
                        [exe, "convert", "585 BC May 28"])):
        b, med = wall(cmd)
        print(f"| `{label}` | {b:.3f} | {med:.3f} |")


if __name__ == "__main__":
    main()
