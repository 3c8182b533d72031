"""Benchmark of the alignment analysis: 10 000 structures x all targets x 61 epochs as one array job.

Run:  python bench/bench_alignments.py [--quick]     (markdown table on standard output)

Rows
----
* targets: the declinations of every default target (18 solar, 4 lunar, 2 Venus, 28 stars) at 61
  epochs (-3000..3000 every 100 years) -- DE406 season instants, Venus scans, star space motion;
* intervals: the point, Sun and Moon declination intervals of 10 000 invented structures (analytic
  propagation; the Moon at its mean distance, as in the pure-Python baseline);
* matching: every structure against every target at the grid epochs inside its own epoch range;
* the issue's case: 10 000 structures against all targets at one epoch (targets included) --
  target < 10 s;
* reading the same 10 000 structures from a CSV file;
* baselines in the same run: (a) a per-structure Python loop calling the same library functions with
  one structure at a time, (b) a per-structure pure-Python loop (``math``) over the same formulas and
  comparisons.  Both are timed on a sample and scaled to 10 000.

Timings are the best of a few runs after one warm-up (the kernel is loaded and verified once per
process, before the timings), with the process CPU time of the same run.  Single-threaded BLAS.
"""

from __future__ import annotations

import math
import os
import sys
import tempfile
import time
from pathlib import Path

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "plugins"))


def best(fn, repeat=3):
    """Best wall time of ``repeat`` runs, and the process CPU time of that run (seconds)."""
    runs = []
    for _ in range(repeat):
        c0, t0 = time.process_time(), time.perf_counter()
        fn()
        runs.append((time.perf_counter() - t0, time.process_time() - c0))
    return min(runs)


def invented_structures(n, seed=2024):
    """``n`` invented structures: random sites, azimuths, skylines, errors and epoch ranges (fixed seed)."""
    from calendra_alignments import geometry as G
    from calendra_alignments.matching import Alignments

    rng = np.random.default_rng(seed)
    lat = rng.uniform(-55.0, 62.0, n)
    lon = rng.uniform(-180.0, 180.0, n)
    elev = rng.uniform(0.0, 1500.0, n)
    az = rng.uniform(0.0, 360.0, n)
    alt = rng.uniform(-0.3, 4.0, n)
    saz = rng.uniform(0.2, 1.5, n)
    salt = rng.uniform(0.05, 0.5, n)
    e0 = np.round(rng.uniform(-3000.0, 2000.0, n), 0)
    e1 = np.minimum(e0 + np.round(rng.uniform(0.0, 2000.0, n)), 3000.0)
    hz = [G.Horizon.constant(float(a)) for a in alt]
    return Alignments([f"S{i:05d}" for i in range(n)], lat, lon, elev, az, saz, alt, salt, np.zeros(n), hz,
                      e0, e1, np.full(n, 10.0), np.asarray(G.standard_pressure(elev)), [""] * n)


def write_csv(al, path):
    with open(path, "w") as f:
        f.write("id,lat,lon,elevation,azimuth,azimuth_sigma,altitude,altitude_sigma,epoch_from,epoch_to\n")
        for i in range(len(al)):
            f.write(f"{al.ids[i]},{al.latitude_deg[i]:.4f},{al.longitude_deg[i]:.4f},{al.elevation_m[i]:.0f},"
                    f"{al.azimuth_deg[i]:.3f},{al.azimuth_sigma_deg[i]:.3f},{al.altitude_deg[i]:.3f},"
                    f"{al.altitude_sigma_deg[i]:.3f},{al.epoch_from[i]:.0f},{al.epoch_to[i]:.0f}\n")


def _subset(al, idx):
    from calendra_alignments.matching import Alignments

    kw = {}
    for f in Alignments.__dataclass_fields__:
        v = getattr(al, f)
        kw[f] = v[idx] if isinstance(v, np.ndarray) else [v[i] for i in idx]
    return Alignments(**kw)


def pure_python_loop(al, tg, idx):
    """Per-structure pure-Python version of the same computation: declinations, errors, comparisons."""
    from calendra_alignments.matching import bodies

    body = bodies("upper", "mean", 0.0)
    d2r = math.pi / 180.0
    kinds = [("star" if k in ("star", "planet") else str(k)) for k in tg.kinds]
    dec_t = tg.dec.tolist()
    hw_t = tg.halfwidth.tolist()
    epochs = tg.epochs.tolist()
    found = 0
    for i in idx:
        lat, az, alt = float(al.latitude_deg[i]), float(al.azimuth_deg[i]), float(al.altitude_deg[i])
        sa, sh = float(al.azimuth_sigma_deg[i]), float(al.altitude_sigma_deg[i])
        t, p = float(al.temperature_C[i]), float(al.pressure_mbar[i])
        lo_e, hi_e = float(al.epoch_from[i]), float(al.epoch_to[i])
        if not any(lo_e <= ep <= hi_e for ep in epochs):       # the nearest grid epoch, as the library does
            mid = 0.5 * (lo_e + hi_e)
            lo_e = hi_e = min(epochs, key=lambda ep: abs(ep - mid))
        iv = {}
        for kind in ("star", "sun", "moon"):
            b = body[kind]

            def dec_of(a, h):
                hc = max(h, 0.0)
                r = 1.0 / math.tan(d2r * (hc + 7.31 / (hc + 4.4))) / 60.0 * (p / 1010.0) * (283.0 / (273.0 + t))
                h_c = h - r - b.sign * b.semidiameter_deg
                h_g = h_c + math.degrees(math.asin(math.sin(b.parallax_deg * d2r) * math.cos(h_c * d2r)))
                s = (math.sin(lat * d2r) * math.sin(h_g * d2r)
                     + math.cos(lat * d2r) * math.cos(h_g * d2r) * math.cos(a * d2r))
                return math.degrees(math.asin(max(-1.0, min(1.0, s))))

            d = dec_of(az, alt)
            e = 1e-4
            da = (dec_of(az + e, alt) - dec_of(az - e, alt)) / (2 * e)
            dh = (dec_of(az, alt + e) - dec_of(az, alt - e)) / (2 * e)
            sg = math.hypot(da * sa, dh * sh)
            iv[kind] = (d - 2 * sg, d + 2 * sg, d)
        for j, kind in enumerate(kinds):
            lo, hi, d = iv[kind]
            row, w = dec_t[j], hw_t[j]
            first = last = best = None
            best_dist = math.inf
            for k, ep in enumerate(epochs):
                if not lo_e <= ep <= hi_e:
                    continue
                if row[k] + w[k] >= lo and row[k] - w[k] <= hi:
                    first = ep if first is None else first
                    last = ep
                dist = max(abs(row[k] - d) - w[k], 0.0)
                if dist < best_dist:
                    best_dist, best = dist, k
            if first is not None:
                off = row[best] - d
                margin = (hi - d if off >= 0 else d - lo) + w[best] - abs(off)
                found += 1
                _ = (first, last, epochs[best], off, margin)     # what the vectorized job reports
    return found


def main(quick=False):
    from calendra_alignments import batch as B
    from calendra_alignments import targets as T
    from calendra_alignments.matching import alignment_intervals, match

    n = 2000 if quick else 10_000
    epochs = np.arange(-3000.0, 3000.1, 100.0)
    al = invented_structures(n)
    T.build_targets([0.0])                      # warm-up: kernel, catalogue, caches

    state = {}

    def targets_job():
        state["tg"] = T.build_targets(epochs)

    def intervals_job():
        state["iv"] = alignment_intervals(al, moon_distance="mean")

    def match_job():
        state["m"] = match(state["iv"], state["tg"], al.epoch_from, al.epoch_to)

    t_tg = best(targets_job)
    t_iv = best(intervals_job)
    t_m = best(match_job)
    tg, m = state["tg"], state["m"]

    def one_epoch_job():
        tg1 = T.build_targets([-2000.0])
        iv = alignment_intervals(al, moon_distance="mean")
        match(iv, tg1, np.full(n, -2000.0), np.full(n, -2000.0))

    t_one = best(one_epoch_job)

    with tempfile.TemporaryDirectory() as d:
        path = Path(d) / "structures.csv"
        write_csv(al, path)
        t_read = best(lambda: B.read_structures(path), repeat=2)

    # Baselines on a sample, scaled.
    sample = np.arange(0, n, max(1, n // (50 if quick else 200)))

    def per_structure_library():
        for i in sample:
            sub = _subset(al, [int(i)])
            match(alignment_intervals(sub, moon_distance="mean"), tg, sub.epoch_from, sub.epoch_to)

    t_lib = best(per_structure_library, repeat=1)
    t_py = best(lambda: pure_python_loop(al, tg, sample), repeat=1)
    n_py = pure_python_loop(al, tg, sample)
    n_vec = int(np.isin(m.alignment, sample).sum())
    scale = n / sample.size

    rows = [
        ("targets: %d targets x %d epochs (DE406, stars)" % (len(tg), epochs.size), t_tg, None),
        ("intervals: %d structures x 3 kinds" % n, t_iv, None),
        ("matching: %d x %d targets x %d epochs (%d matches)" % (n, len(tg), epochs.size, len(m)), t_m, None),
        ("whole job (targets + intervals + matching)", tuple(a + b + c for a, b, c in zip(t_tg, t_iv, t_m)), None),
        ("issue case: %d structures x all targets at one epoch" % n, t_one, None),
        ("reading %d structures from CSV" % n, t_read, None),
        ("baseline (a): per-structure loop over the library, scaled from %d" % sample.size,
         (t_lib[0] * scale, t_lib[1] * scale), None),
        ("baseline (b): per-structure pure-Python loop, scaled from %d" % sample.size,
         (t_py[0] * scale, t_py[1] * scale), None),
    ]
    whole = t_iv[1] + t_m[1]          # CPU seconds (the machine may be shared)
    print("| task | wall s | CPU s |")
    print("|---|---:|---:|")
    for label, (w, c), _ in rows:
        print(f"| {label} | {w:.3f} | {c:.3f} |")
    print()
    print(f"CPU time of intervals + matching, vectorized: {whole:.3f} s; per-structure library loop "
          f"{t_lib[1] * scale:.1f} s ({t_lib[1] * scale / whole:.0f}x); pure-Python loop {t_py[1] * scale:.1f} s "
          f"({t_py[1] * scale / whole:.0f}x)")
    print(f"same matches on the sample: pure-Python loop {n_py}, vectorized {n_vec} (the loop's partial "
          "derivatives are finite differences, so a pair exactly on an interval's edge could differ)")
    print(f"issue target ({n} structures x all targets at one epoch < 10 s for 10 000): "
          f"{'met' if t_one[0] < 10 else 'NOT met'} ({t_one[0]:.2f} s)")


if __name__ == "__main__":
    main(quick="--quick" in sys.argv)
