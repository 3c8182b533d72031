"""Throughput of the arithmetic and era calendars, next to convertdate's scalar functions.

Each calendar converts 1,000,000 random day numbers to fields (``from_jdn``)
and the fields back (``to_jdn``, which also validates them), one array call
each, best of ``--repeat`` (on a shared machine the best of many short runs
is the stable figure).  convertdate converts the same kind of dates one at a
time in a plain Python loop (its API is scalar) over up to ``--loop`` dates,
cut to about ``--budget`` seconds for its slow astronomical calendars, best
of ``--peer-repeat``, and its rate is scaled from there.  Everything runs in one
process, single-threaded; a markdown table goes to standard output.

Usage::

    python bench/bench_arithmetic.py [--n 1000000] [--loop 20000] [--budget 2]
                                     [--repeat 15] [--peer-repeat 5] [--only CAL ...]

Day numbers are drawn from -3000..+3000 (Gregorian years), or from the part
of it that convertdate accepts for that calendar (column "span").
"""

from __future__ import annotations

import argparse
import platform
import time
import warnings

import numpy as np

warnings.filterwarnings("ignore")   # convertdate's own DeprecationWarnings

import convertdate  # noqa: E402
from convertdate import (armenian, bahai, coptic, french_republican, hebrew, indian_civil,  # noqa: E402
                         islamic, iso, mayan, persian)

from calendra import julian_gregorian as jg  # noqa: E402
from calendra_arithmetic.plugin import arithmetic_calendars  # noqa: E402
from calendra_eras.plugin import builtin_calendars as era_calendars  # noqa: E402


def greg(y, m=1, d=1):
    return int(jg.gregorian_to_jdn(y, m, d))


LO, HI = greg(-3000), greg(3001)
HAAB = [n.lower() for n in mayan.HAAB]


def _haab(jd):
    day, month = mayan.to_haab(jd)
    return HAAB.index(month.lower()) + 1, day


# calendar -> (convertdate from_jd, convertdate to_jd or None, (lo, hi) day numbers, note)
PEERS = {
    "hebrew": (hebrew.from_jd, hebrew.to_jd, (LO, HI), ""),
    "islamic-tabular": (islamic.from_jd, islamic.to_jd, (LO, HI), ""),
    "persian-arithmetic": (persian.from_jd, persian.to_jd, (greg(622), HI),
                           "convertdate.persian is astronomical (equinox), not the 2820-year rule"),
    "coptic": (coptic.from_jd, coptic.to_jd, (LO, HI), ""),
    "ethiopic": (None, None, (LO, HI), "not in convertdate"),
    "armenian": (armenian.from_jd, armenian.to_jd, (greg(553), HI), "convertdate: from AE 1"),
    "french-arithmetic": (lambda jd: french_republican.from_jd(jd, method="romme"),
                          lambda *f: french_republican.to_jd(*f, method="romme"), (greg(1793), HI),
                          "convertdate method=romme, from an II"),
    "mayan-long-count": (mayan.from_jd, mayan.to_jd, (584283, HI), "convertdate: from 0.0.0.0.0"),
    "mayan-haab": (_haab, None, (584283, HI), "cyclic: from_jdn only"),
    "mayan-tzolkin": (mayan.to_tzolkin, None, (584283, HI), "cyclic: from_jdn only"),
    "indian-national": (indian_civil.from_jd, indian_civil.to_jd, (LO, HI), ""),
    "bahai-arithmetic": (bahai.from_jd, bahai.to_jd, (greg(1845), HI),
                         "convertdate.bahai computes the equinox Naw-Ruz (another rule)"),
    "iso-week": (iso.from_jd, iso.to_jd, (greg(1, 1, 8), HI), "convertdate via datetime: years >= 1"),
}
# The calendars of the eras plugin are not in convertdate: their own rates only.
ERA_NOTE = "not in convertdate (eras plugin)"


def best_of(fn, repeat):
    """Shortest of ``repeat`` timings of ``fn()`` (seconds) and its last result."""
    times = []
    out = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


def loop_rate(fn, items, budget, repeat):
    """Dates per second of a plain loop calling ``fn`` on each item, and the results.

    A first pass over 200 items sizes the run so that one pass takes about
    ``budget`` seconds at most (all items when that is enough); the rate is
    the best of ``repeat`` passes.
    """
    call = (lambda it: fn(*it)) if isinstance(items[0], tuple) else fn
    t0 = time.perf_counter()
    [call(it) for it in items[:200]]
    per_item = (time.perf_counter() - t0) / 200
    n = max(200, min(len(items), int(budget / per_item)))
    chosen = items[:n]
    if isinstance(items[0], tuple):
        seconds, out = best_of(lambda: [fn(*it) for it in chosen], repeat)
    else:
        seconds, out = best_of(lambda: [fn(it) for it in chosen], repeat)
    return n / seconds, out


def rate(x):
    if x is None:
        return "-"
    if x >= 1e6:
        return f"{x / 1e6:,.1f} M/s"
    return f"{x / 1e3:,.1f} k/s"


def ratio(a, b):
    return "-" if a is None or b is None else f"{a / b:,.0f}x"


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--n", type=int, default=1_000_000, help="day numbers per calendar (vectorized)")
    ap.add_argument("--loop", type=int, default=20_000, help="dates per convertdate loop")
    ap.add_argument("--budget", type=float, default=2.0, help="seconds at most per convertdate loop")
    ap.add_argument("--repeat", type=int, default=15, help="timings per calendra measurement (the best is kept)")
    ap.add_argument("--peer-repeat", type=int, default=5, help="timings per convertdate loop (the best is kept)")
    ap.add_argument("--only", nargs="*", default=None, metavar="CAL", help="measure these calendars only")
    args = ap.parse_args()
    rng = np.random.default_rng(7)
    print(f"Arithmetic calendars: {args.n:,} day numbers per calendar, both directions (calendra: one "
          f"array call, best of {args.repeat}; convertdate {convertdate.__version__}: scalar loop over up to "
          f"{args.loop:,} dates or {args.budget:g} s, best of {args.peer_repeat}, scaled).  "
          f"Rates in dates per second; x = calendra / convertdate (round trip: from + to).  "
          f"Python {platform.python_version()}, numpy {np.__version__}, {platform.machine()}.\n")
    print("| calendar | span (JDN) | calendra from_jdn | calendra to_jdn | convertdate from_jd | "
          "convertdate to_jd | x from | x to | x round trip | note |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    for cal in arithmetic_calendars() + era_calendars():
        if args.only and cal.name not in args.only:
            continue
        span = (max(LO, cal.valid_jdn[0]), min(HI, cal.valid_jdn[1] + 1))
        peer_from, peer_to, (lo, hi), note = PEERS.get(cal.name, (None, None, span, ERA_NOTE))
        jdn = rng.integers(lo, hi, args.n)
        t_from, fields = best_of(lambda: cal.from_jdn(jdn), args.repeat)
        values = [fields[f] for f in cal.fields]
        ours_from = args.n / t_from
        ours_to = None
        if getattr(cal, "invertible", True):
            t_to, back = best_of(lambda: cal.to_jdn(*values), args.repeat)
            assert np.array_equal(back, jdn), cal.name
            ours_to = args.n / t_to
        cd_from = cd_to = None
        if peer_from is not None:
            sample = [float(j) - 0.5 for j in jdn[: args.loop]]
            cd_from, out = loop_rate(peer_from, sample, args.budget, args.peer_repeat)
            if peer_to is not None:
                cd_to, _ = loop_rate(peer_to, [tuple(o) for o in out], args.budget, args.peer_repeat)
        both = None if ours_to is None else 1 / (1 / ours_from + 1 / ours_to)
        cd_both = None if cd_to is None else 1 / (1 / cd_from + 1 / cd_to)
        print(f"| {cal.name} | {lo}..{hi} | {rate(ours_from)} | {rate(ours_to)} | {rate(cd_from)} | "
              f"{rate(cd_to)} | {ratio(ours_from, cd_from)} | {ratio(ours_to, cd_to)} | "
              f"{ratio(both, cd_both)} | {note} |")


if __name__ == "__main__":
    main()
