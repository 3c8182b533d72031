"""Benchmark of sweeps on Dask (plugin calendra_sweep).

Run:  python bench/bench_sweep.py [--quick]      (markdown on standard output)

Rows
----
1. First-crescent evenings (Yallop) on a latitude/longitude raster of 30
   cells (0..50 N every 10 degrees x 10..50 E every 10 degrees), years
   -700..-300 in 50-year chunks: 240 chunks, over a minute in one process.
   Timed serially in this process (no Dask), then on a LocalCluster of 1
   worker process and on one of 2 worker processes (loopback, one thread
   each), alternately, three times each.  The speed-up of 2 workers over 1
   is the ratio of their best wall times, without
   the cluster start-up (start, plugins and ephemeris loaded in every
   worker: reported separately).  The three outputs are
   checked to be byte-identical.
2. Cost per chunk of the atlas job (heliacal rising of a star at a site,
   arcus visionis and physical model, 500-year chunks) and the memory of a
   worker process (resident, unique and proportional set sizes; the DE406
   kernel is a memory-mapped file shared by all workers of a machine).

``--quick`` shrinks row 1 to a few seconds (for checking the script).
"""

from __future__ import annotations

import os
import statistics
import sys
import tempfile
import textwrap
import time
from pathlib import Path

for _v in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "plugins"))

from calendra_sweep.runner import make_plan, run_sweep  # noqa: E402
from calendra_sweep.spec import load_spec  # noqa: E402

#: Runs of each cluster size (alternating), the best counting.
REPEATS = 3

CRESCENT = """
title = "bench: first crescents on a raster"
[job]
detector = "crescent"
[job.parameters]
criterion = "yallop"
[grid]
years = [{y0}, {y1}]
chunk_years = {chunk}
[grid.latlon]
latitude = [0, {lat1}]
longitude = [10, 50]
step = 10
[output]
folder = "out"
"""

HELIACAL = """
title = "bench: heliacal risings, cost per chunk"
[job]
detector = "heliacal"
[job.parameters]
method = "{method}"
[grid]
sites = ["Babylon", "45.0,10.0"]
objects = ["Sirius", "Spica", "Aldebaran"]
years = [-2000, -1000]
chunk_years = 500
[output]
folder = "out"
"""


def memory_of_this_process() -> dict:
    """Resident, unique and proportional set sizes of the calling process, MiB."""
    import psutil

    info = psutil.Process().memory_full_info()
    return {k: getattr(info, k) / 2**20 for k in ("rss", "uss", "pss") if hasattr(info, k)}


def cpu_of_this_process() -> float:
    """User + system CPU time of the calling process so far, s."""
    import psutil

    t = psutil.Process().cpu_times()
    return t.user + t.system


def warm_up() -> int:
    """Load the plugins, the ephemeris and the star catalogue of the calling process; return its pid."""
    from calendra.ephemeris import load_ephemeris
    from calendra.pluginmanager import get_host

    get_host().detectors
    load_ephemeris()
    return os.getpid()


def chunks_files(folder: Path) -> dict:
    return {p.name: p.read_bytes() for p in sorted((folder / "chunks").glob("*.csv"))}


def cluster(n: int):
    from distributed import Client, LocalCluster

    t0 = time.perf_counter()
    lc = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=":0", silence_logs=50)
    cl = Client(lc)
    cl.wait_for_workers(n)
    cl.run(warm_up)
    return lc, cl, time.perf_counter() - t0


def row_speedup(tmp: Path, quick: bool) -> list[str]:
    y0, y1, chunk, lat1 = (-700, -680, 10, 10) if quick else (-700, -300, 50, 50)
    spec = tmp / "crescent.toml"
    spec.write_text(textwrap.dedent(CRESCENT.format(y0=y0, y1=y1, chunk=chunk, lat1=lat1)))
    n_chunks = len(make_plan(load_spec(spec)).chunks)
    load_before = os.getloadavg()

    c0, t0 = cpu_of_this_process(), time.perf_counter()
    serial = run_sweep(spec, serial=True, output=tmp / "serial")
    t_serial = time.perf_counter() - t0
    cpu_serial = cpu_of_this_process() - c0

    # 1 and 2 workers alternately, REPEATS times each; the best wall time of each counts (the machine
    # may be shared: other processes slow single runs down, never speed them up)
    walls, starts, mems, reports, worker_cpu, client_cpu = {1: [], 2: []}, {}, {}, {}, {1: [], 2: []}, {}
    for rep in range(1 if quick else REPEATS):
        for n in (1, 2):
            lc, cl, t_start = cluster(n)
            try:
                w0 = sum(cl.run(cpu_of_this_process).values())
                c0, t0 = cpu_of_this_process(), time.perf_counter()
                reports[n] = run_sweep(spec, client=cl, output=tmp / f"dask{n}")
                walls[n].append(time.perf_counter() - t0)
                client_cpu[n] = cpu_of_this_process() - c0
                worker_cpu[n].append(sum(cl.run(cpu_of_this_process).values()) - w0)
                starts[n] = t_start
                mems[n] = list(cl.run(memory_of_this_process).values())
            finally:
                cl.close()
                lc.close()
    load_after = os.getloadavg()
    ref = chunks_files(tmp / "serial")
    same = all(chunks_files(tmp / f"dask{n}") == ref for n in (1, 2))
    per_chunk = list(serial.chunk_seconds.values())
    site_years = 5 * (lat1 // 10 + 1) * (y1 - y0)
    lines = [
        f"### Crescent raster: {n_chunks} chunks, {serial.rows} rows, {site_years} site-years",
        "",
        "| run | wall (s) | cluster start (s) | chunks/s | CPU s of workers | CPU s of client+scheduler |",
        "|---|---:|---:|---:|---:|---:|",
        f"| serial, in-process | {t_serial:.1f} | - | {n_chunks / t_serial:.2f} | - | {cpu_serial:.1f} |",
    ]
    best = {n: min(walls[n]) for n in (1, 2)}
    for n in (1, 2):
        i = walls[n].index(best[n])
        lines.append(f"| LocalCluster, {n} worker{'s' if n > 1 else ''} (best of {len(walls[n])}) | {best[n]:.1f} | "
                     f"{starts[n]:.1f} | {n_chunks / best[n]:.2f} | {worker_cpu[n][i]:.1f} | {client_cpu[n]:.1f} |")
    lines += [
        "",
        f"- speed-up of 2 workers over 1: **{best[1] / best[2]:.2f}x** "
        f"(over the serial run: {t_serial / best[2]:.2f}x; with start-up: "
        f"{(best[1] + starts[1]) / (best[2] + starts[2]):.2f}x); all wall times: 1 worker "
        f"{', '.join(f'{w:.1f}' for w in walls[1])} s, 2 workers {', '.join(f'{w:.1f}' for w in walls[2])} s; "
        f"machine: {os.cpu_count()} CPUs, "
        f"load average {load_before[0]:.2f} before, {load_after[0]:.2f} after (other processes compete "
        "for the cores when it is above 0)",
        f"- CPU use of the workers in their best run: 2 workers "
        f"{worker_cpu[2][walls[2].index(best[2])] / (2 * best[2]):.0%} of 2 cores, 1 worker "
        f"{worker_cpu[1][walls[1].index(best[1])] / best[1]:.0%} of 1 core",
        f"- outputs of serial, 1-worker and 2-worker runs byte-identical: {same}",
        f"- cost per chunk ({chunk} years at one cell): median {statistics.median(per_chunk):.3f} s, "
        f"max {max(per_chunk):.3f} s; {1000 * sum(per_chunk) / site_years:.2f} ms per site-year",
        f"- output: {sum(len(b) for b in ref.values()) / 2**20:.2f} MiB of CSV, "
        f"{sum(len(b) for b in ref.values()) / max(serial.rows, 1):.0f} bytes per row",
    ]
    for n in (1, 2):
        m = mems[n]
        lines.append(f"- worker memory after the run ({n} worker{'s' if n > 1 else ''}): " + "; ".join(
            ", ".join(f"{k} {v:.0f} MiB" for k, v in w.items()) for w in m))
    if not same:
        raise SystemExit("the outputs differ")
    return lines


def row_atlas_chunks(tmp: Path) -> list[str]:
    lines = ["", "### Atlas job: heliacal rising, one star at one site per chunk of 500 years", "",
             "| method | chunks | median s/chunk | ms per star-site-year | bytes per row |", "|---|---:|---:|---:|---:|"]
    for method in ("arcus", "physical"):
        spec = tmp / f"heliacal-{method}.toml"
        spec.write_text(textwrap.dedent(HELIACAL.format(method=method)))
        rep = run_sweep(spec, serial=True, output=tmp / f"hel-{method}")
        secs = list(rep.chunk_seconds.values())
        size = sum(p.stat().st_size for p in (tmp / f"hel-{method}" / "chunks").glob("*.csv"))
        lines.append(f"| {method} | {len(secs)} | {statistics.median(secs):.3f} | "
                     f"{1000 * statistics.median(secs) / 500:.2f} | {size / max(rep.rows, 1):.0f} |")
    lines.append("")
    lines.append("- memory of this process after the heliacal runs: "
                 + ", ".join(f"{k} {v:.0f} MiB" for k, v in memory_of_this_process().items()))
    return lines


def main():
    quick = "--quick" in sys.argv
    with tempfile.TemporaryDirectory(prefix="calendra-bench-sweep-") as tmp:
        tmp = Path(tmp)
        warm_up()      # so that the serial run is not charged for loading either
        lines = ["## Sweeps on Dask (bench/bench_sweep.py)", ""]
        lines += row_speedup(tmp, quick)
        if not quick:
            lines += row_atlas_chunks(tmp)
        print("\n".join(lines))


if __name__ == "__main__":
    main()
